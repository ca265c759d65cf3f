"""Campaign covariances for other lengths and other schedules (the same visits a year, the same TOA errors).

The forecast's own baseline sweep keeps only the errors; the preposterior needs
the whole 5x5 astrometric covariance, so it is recomputed here with the
forecast's own pieces (:func:`kinage.timing.forecast.astrometric_covariance`,
the plan's cadence, Sun window and median TOA error), exactly as the sweep
makes it.
"""

import numpy as np

from ..timing import inputs
from ..timing.forecast import astrometric_covariance
from ..timing.model import TimeGrid, TimingModel
from ..timing.plan import SunWindow, regular_epochs

__all__ = ["sweep_lengths", "length_covariances", "to_today_epoch", "dates_covariance", "information_bits",
           "entropy_bits"]

_YEAR_D = 365.25
#: campaign lengths swept besides the scenario's own (log-spaced from 1 yr to max_baseline)
N_LENGTHS = 6


def sweep_lengths(max_baseline_yr, own_yr=None, n=N_LENGTHS):
    """Campaign lengths (yr) from 1 yr to ``max_baseline_yr``, log-spaced, with the scenario's own length.

    Returns
    -------
    ndarray
    """
    top = max(float(max_baseline_yr), 1.0)
    ls = list(np.round(np.geomspace(1.0, top, n), 1))
    if own_yr is not None and 1.0 <= own_yr <= top:
        ls.append(round(float(own_yr), 2))
    return np.unique(ls)


def _model(scenario):
    star, c = scenario.star, scenario.campaign
    freq, freq_dot, _ = inputs.spin_from_star(star)
    return TimingModel(star.value("ra", "deg"), star.value("dec", "deg"), freq, freq_dot, 0.0,
                       int(c.get("spin_terms", 2)))


def _epoch(scenario, mjd):
    from astropy.time import Time

    return scenario.star.get("epoch") or Time(np.round(0.5 * (mjd[0] + mjd[-1])), format="mjd", scale="tdb")


def length_covariances(scenario, forecast_result, lengths_yr):
    """Covariances of the campaign cut or extended to each length, at the plan's cadence.

    Parameters
    ----------
    scenario : Scenario
    forecast_result : ForecastResult
    lengths_yr : array of float, yr

    Returns
    -------
    list of (ndarray (5, 5) or None, Time or None)
        Covariance (mas, mas/yr) and its reference epoch; None where the length holds too few visits.
    """
    from astropy.time import Time

    c, star = scenario.campaign, scenario.star
    plan = forecast_result.plan
    start = float(plan.mjd[0])
    vpy = (plan.n_visits - 1) / plan.span_yr if plan.span_yr > 0 else 1.0
    vpy_sweep = min(vpy, 120.0)  # as the forecast's sweep: fewer visits with proportionally smaller errors
    top = float(np.max(lengths_yr))
    ra, dec = star.value("ra", "deg"), star.value("dec", "deg")
    window = getattr(forecast_result, "sun_window", None)
    if window is None or window.mjd[-1] < start + top * _YEAR_D:  # the forecast's own window, when it reaches
        window = SunWindow.compute(ra, dec, c.value("sun_avoidance", "deg", 45.0), start, start + top * _YEAR_D)
    nominal = regular_epochs(start, top, vpy_sweep)
    mjd_all = window.shift(nominal)
    err = float(np.median(forecast_result.toa_errors)) * np.sqrt(vpy_sweep / vpy)
    model = _model(scenario)
    out = []
    for length in lengths_yr:
        keep = nominal <= start + length * _YEAR_D + 1e-6
        if np.count_nonzero(keep) <= model.n_parameters:
            out.append((None, None))
            continue
        mjd = np.sort(mjd_all[keep])
        epoch = _epoch(scenario, mjd)
        try:
            grid = TimeGrid.from_times(Time(mjd, format="mjd", scale="tdb"), epoch)
            cov = astrometric_covariance(model, grid, np.full(mjd.size, err), c)
        except Exception:  # noqa: BLE001 - a degenerate short plan is skipped, as in the forecast's sweep
            out.append((None, None))
            continue
        out.append((cov, epoch))
    return out


def dates_covariance(scenario, forecast_result, mjd):
    """Covariance (mas, mas/yr) and epoch of the campaign's visits moved to the dates ``mjd`` (TDB)."""
    from astropy.time import Time

    mjd = np.sort(np.asarray(mjd, float))
    epoch = forecast_result.solution.epoch
    grid = TimeGrid.from_times(Time(mjd, format="mjd", scale="tdb"), epoch)
    errors = np.full(mjd.size, float(np.median(forecast_result.toa_errors)))
    return astrometric_covariance(_model(scenario), grid, errors, scenario.campaign), epoch


def entropy_bits(p):
    """Shannon entropy (bits) of probabilities along the last axis."""
    p = np.clip(np.asarray(p, float), 0.0, 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(p > 0, -p * np.log2(np.where(p > 0, p, 1.0)), 0.0)
    return t.sum(axis=-1)


def information_bits(p_now, p_after):
    """Expected information about the birthplace: H(today) - mean over outcomes of H(after), bits.

    Lindley 1956, Ann. Math. Stat. 27, 986: the expected information of an experiment is the expected
    reduction of the entropy of the quantity of interest (here the hypothesis probabilities).
    """
    return float(entropy_bits(p_now) - np.mean(entropy_bits(p_after)))


def to_today_epoch(cov, epoch_campaign, epoch_today):
    """A campaign covariance moved to today's reference epoch (positions carried back by the proper motion).

    Parameters
    ----------
    cov : ndarray (5, 5)
        mas, mas/yr at ``epoch_campaign``.
    epoch_campaign, epoch_today : astropy.time.Time

    Returns
    -------
    ndarray (5, 5)
        J C J^T with position(today) = position(campaign) - pm (t_campaign - t_today).
    """
    dt = float((epoch_campaign.tdb.jd - epoch_today.tdb.jd) / 365.25)
    jac = np.eye(5)
    jac[0, 2] = jac[1, 3] = -dt
    c = np.nan_to_num(np.asarray(cov, float), nan=0.0)
    out = jac @ c @ jac.T
    bad = ~np.isfinite(np.diag(np.asarray(cov, float)))
    out[bad, :] = np.nan
    out[:, bad] = np.nan
    return out
