"""Fisher forecast: can this timing campaign measure the proper motion?

The forecast linearises the full timing model (astrometric delays plus spin
phase, :mod:`kinage.timing.model`) at the scenario's values and inverts the
Fisher matrix M^T C^-1 M of :mod:`kinage.timing.gls` with the white + red
noise of :mod:`kinage.timing.noise`; the spin terms are marginalised by
taking the astrometric block of the inverse.  The proper-motion
significance is mu / sigma_mu, with sigma_mu the error along the direction of
motion when it is known, else the direction-averaged error
sqrt((sigma_ra^2 + sigma_dec^2)/2).

It also sweeps the baseline at the plan's cadence (the baseline needed for
``target_significance``, or None within ``max_baseline``) and answers the
reverse question: the TOA error — and, photon-limited, the exposure per visit
(sigma_TOA proportional to exposure^-1/2) — needed for ``target_pm_error``
(default: the error that gives ``target_significance`` for the expected
motion) at the plan's baseline.
"""

import numpy as np

from ..astrometry import AstrometricSolution
from ..errors import ConvergenceError, InputError
from ..progress import progress_bar
from . import inputs
from .gls import covariance_from_fisher, fisher_matrix
from .model import TimeGrid, TimingModel
from .noise import noise_from_campaign
from .plan import SCHEDULES, SunWindow, make_plan, regular_epochs, schedule_of
from .priors import prior_solution
from .forecast_result import ForecastResult

__all__ = ["forecast", "astrometric_covariance", "pm_error_along", "compare_schedules", "schedule_warnings",
           "ALIAS_FACTOR"]

_YEAR_D = 365.25
#: warn when the even plan's parallax error exceeds the optimised one by more than this factor
ALIAS_FACTOR = 2.0


def astrometric_covariance(model, grid, toa_errors, campaign, span_s=None, method="woodbury", astro=None):
    """5x5 covariance of (ra, dec, pm_ra_cosdec, pm_dec, parallax), spin marginalised.

    Parameters
    ----------
    model : TimingModel
    grid : TimeGrid
    toa_errors : ndarray, s
    campaign : Section
        Supplies the noise keys (error_scale, added_error, red_noise_*).
    span_s : float, optional
        Red-noise basis period, s (default: the TOA span).
    method : {'woodbury', 'dense'}
    astro : array, optional
        Astrometric values at which the model is linearised.

    Returns
    -------
    ndarray, shape (5, 5), units mas and mas/yr
    """
    theta = model.start_vector(np.zeros(5) if astro is None else astro)
    design = model.design_matrix(grid, theta)
    noise = noise_from_campaign(campaign, grid.seconds, toa_errors, span_s)
    return covariance_from_fisher(fisher_matrix(design, noise, method))[:5, :5]


def pm_error_along(cov, direction):
    """Proper-motion error along ``direction`` (unit 2-vector), or direction-averaged if None."""
    c = cov[2:4, 2:4]
    if direction is None:
        return float(np.sqrt(np.trace(c) / 2))
    return float(np.sqrt(direction @ c @ direction))


def _full_plan(scenario, ra, dec, max_b, direction=None):
    """Plan at the scenario's own baseline, the regular plan out to ``max_b`` for the sweep, and the window."""
    c = scenario.campaign
    from .plan import sun_avoidance

    angle = sun_avoidance(c)[0]
    plan = table_errors = None
    schedule = schedule_of(c)
    if c.get("toas") is not None and c.get("dates") is None and c.get("start") is None:
        if schedule != "even":
            raise InputError("[campaign] schedule", f"'{schedule}' needs start, baseline and visits_per_year; "
                             "the plan here is taken from the TOA table")
        plan, table_errors = _plan_from_toas(c, angle)
    elif c.get("dates") is not None:
        plan = make_plan(c, ra, dec)
    if plan is not None:
        start = float(plan.mjd[0])
        vpy = (plan.n_visits - 1) / plan.span_yr if plan.span_yr > 0 else 1.0
        top = max(max_b, plan.span_yr)
        window = SunWindow.compute(ra, dec, angle, start, start + top * _YEAR_D)
    else:
        start = float(c.get("start").tdb.mjd)
        vpy = c.get("visits_per_year")
        top = max(max_b, c.value("baseline", "yr"))
        window = SunWindow.compute(ra, dec, angle, start, start + top * _YEAR_D)
        plan = make_plan(c, ra, dec, window=window, direction=direction)
    # the sweep keeps at most 120 visits a year; a denser cadence is represented by fewer visits with
    # proportionally smaller errors (same information N / sigma^2 per year)
    vpy_sweep = min(vpy, 120.0)
    nominal = regular_epochs(start, top, vpy_sweep)
    return plan, window.shift(nominal), nominal, vpy_sweep, table_errors, np.sqrt(vpy_sweep / vpy), window


def _plan_from_toas(c, angle):
    """The epochs, exposures and errors of an existing TOA table (``[campaign] toas``)."""
    import astropy.units as u

    from .plan import ObservingPlan
    from .toas import read_toas

    tab = read_toas(c.get("toas"))
    mjd = tab["mjd"].tdb.to_value("mjd", "float")
    exp = u.Quantity(tab["exposure"]).to_value(u.s) if "exposure" in tab.colnames else np.full(mjd.size, np.nan)
    plan = ObservingPlan(mjd, exp, np.zeros(mjd.size), (mjd[-1] - mjd[0]) / _YEAR_D, angle,
                         ["plan taken from the TOA table"], schedule="dates")
    return plan, u.Quantity(tab["error"]).to_value(u.s)


def forecast(scenario, *, progress=False, method="woodbury"):
    """Forecast the astrometric precision of the scenario's timing campaign.

    Parameters
    ----------
    scenario : Scenario
        Needs ``[star]`` ra, dec and ``[campaign]``.
    progress : bool
        Show a progress bar over the baseline sweep.
    method : {'woodbury', 'dense'}
        Linear algebra of the noise covariance (dense is for testing).

    Returns
    -------
    ForecastResult
    """
    if method not in ("woodbury", "dense"):
        raise InputError("method", f"expected 'woodbury' or 'dense' (got {method!r})")
    c = scenario.campaign
    if c is None:
        raise InputError("[campaign]", "required for a forecast")
    star = scenario.star
    ra, dec = star.value("ra", "deg"), star.value("dec", "deg")
    freq, freq_dot, _ = inputs.spin_from_star(star)
    model = TimingModel(ra, dec, freq, freq_dot, 0.0, int(c.get("spin_terms", 2)))
    warnings = []
    max_b = c.value("max_baseline", "yr", 20.0)
    target_sig = c.get("target_significance", 3.0)

    motion = inputs.expected_proper_motion(scenario)
    plan, sweep_mjd, sweep_nominal, vpy, table_errors, sweep_scale, window = _full_plan(
        scenario, ra, dec, max_b, motion.direction)
    from dataclasses import replace as _replace

    from .plan import sun_avoidance

    plan = _replace(plan, sun_avoidance_source=sun_avoidance(scenario.campaign)[1])
    warnings += plan.notes
    if plan.n_visits <= model.n_parameters:
        # name the key that set the plan: explicit dates, the TOA table, or the regular cadence
        key, fix = (("[campaign] dates", "give more dates") if c.get("dates") is not None else
                    ("[campaign] toas", "the table needs more TOAs") if plan.schedule == "dates" else
                    ("[campaign] baseline", "lengthen the baseline or add visits"))
        raise InputError(key, f"the plan has only {plan.n_visits} visits but the timing model has "
                              f"{model.n_parameters} parameters (5 astrometric + phase + spin): {fix}")
    epoch = star.get("epoch") or _midpoint(plan.mjd)
    if table_errors is not None and c.get("toa_error") is None:
        errors, photon = table_errors, None
    else:
        errors, photon = inputs.visit_errors(scenario, plan.exposure)
    if photon is not None and not photon["detectable"]:
        warnings.append(f"a visit detects the pulsation at only {photon['detection_sigma_per_visit']:.1f} sigma "
                        f"(expected Z^2_{photon['harmonics']} = {photon['expected_z2']:.1f}): too short to detect "
                        "the pulse, so no TOA exists; the errors below assume TOAs anyway")
    if motion.note:
        warnings.append(motion.note)
    astro0 = _scenario_astro(star)
    grid = TimeGrid.from_times(plan.times, epoch)
    cov = astrometric_covariance(model, grid, errors, c, method=method, astro=np.nan_to_num(astro0))
    solution = AstrometricSolution(epoch, ra, dec, astro0, cov, source="forecast")
    sig_pm = pm_error_along(cov, motion.direction)
    pm_sig = motion.pm_masyr / sig_pm if motion.pm_masyr is not None else None
    schedules = None
    if plan.schedule != "dates":
        schedules = compare_schedules(c, model, plan, cov, errors, motion, window, ra, dec, epoch, method,
                                      np.nan_to_num(astro0))
        warnings += schedule_warnings(schedules, plan.schedule)
        if _even_is_better(schedules, plan.schedule):
            # the optimiser works with white noise; with red or added noise the even dates may win: keep those
            from dataclasses import replace

            name, what = plan.schedule, _SCHEDULE_AIM[plan.schedule]
            even = make_plan(c, ra, dec, window=window, schedule="even")
            plan = replace(even, schedule=name, notes=even.notes + [
                f"with this noise model the even plan gives the smaller {what}, so its dates are used"])
            warnings.append(plan.notes[-1])
            epoch = star.get("epoch") or _midpoint(plan.mjd)
            grid = TimeGrid.from_times(plan.times, epoch)
            cov = astrometric_covariance(model, grid, errors, c, method=method, astro=np.nan_to_num(astro0))
            solution = AstrometricSolution(epoch, ra, dec, astro0, cov, source="forecast")
            sig_pm = pm_error_along(cov, motion.direction)
            pm_sig = motion.pm_masyr / sig_pm if motion.pm_masyr is not None else None
            schedules[name] = dict(schedules["even"])

    sweep = _baseline_sweep(model, c, star, sweep_mjd, sweep_nominal, errors * sweep_scale, motion, vpy, max_b,
                            progress)
    needed = _crossing(sweep, target_sig) if motion.pm_masyr is not None else None
    reverse = _reverse(model, grid, errors, c, motion, sig_pm, target_sig, plan)
    if reverse.get("note"):
        warnings.append(reverse["note"])
    conn = inputs.phase_connection(star, plan.mjd, errors)
    if conn.get("at_risk"):
        warnings.append(f"phase connection at risk: {conn['phase_error_cycles']:.2f} cycles of phase uncertainty "
                        f"accumulate over the longest gap ({conn['max_gap_days']:.0f} d)")
    if pm_sig is not None and needed is None:
        warnings.append(f"no baseline up to {max_b:g} yr reaches {target_sig:g} sigma at this cadence")
    prior = prior_solution(c, solution)
    combined = None
    if prior is not None:  # errors only: unknown scenario values are set to 0 for the combination
        filled = AstrometricSolution(epoch, ra, dec, np.nan_to_num(astro0), cov, source="forecast")
        combined = filled.combine(prior, source="forecast+prior")
    return ForecastResult(
        solution=solution, plan=plan, toa_errors=errors, photon=photon, motion=motion,
        pm_error_along_motion=sig_pm, pm_significance=pm_sig, target_significance=target_sig,
        max_baseline_yr=max_b, baseline_needed_yr=needed, sweep=sweep, reverse=reverse,
        phase_connection=conn, combined=combined, warnings=warnings, schedules=schedules,
        parameter_sets=list(motion.parameter_sets), red_noise=c.value("red_noise_amplitude", None, 0.0) > 0,
        sun_window=window,
    )


def _midpoint(mjd):
    from astropy.time import Time

    return Time(np.round(0.5 * (mjd[0] + mjd[-1])), format="mjd", scale="tdb")


def _scenario_astro(star):
    """(0, 0, pm_ra, pm_dec, parallax) from the scenario; NaN where not given."""
    d = star.value("distance", "pc")
    plx = star.value("parallax", "mas")
    if plx is None and d is not None:
        plx = 1000.0 / d
    vals = [0.0, 0.0, star.value("pm_ra_cosdec", "mas/yr"), star.value("pm_dec", "mas/yr"), plx]
    return np.array([np.nan if v is None else v for v in vals], float)


def _baseline_sweep(model, c, star, mjd_all, nominal_all, errors, motion, vpy, max_b, progress):
    """sigma_pm and significance against baseline, same start and cadence."""
    start = nominal_all[0]
    step = max(1.0 / vpy, max_b / 80.0)
    bases = np.arange(max(2.0 / vpy, 0.5), max_b + 1e-9, step)
    err0 = float(np.median(errors))
    from astropy.time import Time

    full = TimeGrid.from_times(Time(mjd_all, format="mjd", scale="tdb"), Time(start, format="mjd", scale="tdb"))
    rows = []
    with progress_bar(len(bases), "baseline sweep", progress) as bar:
        for b in bases:
            keep = nominal_all <= start + b * _YEAR_D + 1e-6
            if np.count_nonzero(keep) <= model.n_parameters:
                bar.update(1)
                continue
            mjd = mjd_all[keep]
            ep = star.get("epoch") or _midpoint(np.sort(mjd))
            shift = (ep.tdb.mjd - start) * 86400.0
            grid = TimeGrid(ep, full.seconds[keep] - shift, full.earth[keep])
            try:
                cov = astrometric_covariance(model, grid, np.full(mjd.size, err0), c)
            except Exception:  # noqa: BLE001 - a degenerate short plan is simply skipped
                bar.update(1)
                continue
            spm = pm_error_along(cov, motion.direction)
            rows.append((b, mjd.size, spm, np.sqrt(cov[4, 4]),
                         motion.pm_masyr / spm if motion.pm_masyr is not None else np.nan))
            bar.update(1)
    arr = np.array(rows, float).reshape(-1, 5)
    return {"baseline_yr": arr[:, 0], "n_toas": arr[:, 1].astype(int), "pm_error_masyr": arr[:, 2],
            "parallax_error_mas": arr[:, 3], "pm_significance": arr[:, 4]}


def _crossing(sweep, target):
    b, s = sweep["baseline_yr"], sweep["pm_significance"]
    ok = np.flatnonzero(s >= target)
    if ok.size == 0:
        return None
    i = ok[0]
    if i == 0:
        return float(b[0])
    # linear interpolation between the last grid point below and the first above
    return float(b[i - 1] + (target - s[i - 1]) * (b[i] - b[i - 1]) / (s[i] - s[i - 1]))


def _reverse(model, grid, errors, c, motion, sig_pm, target_sig, plan):
    """TOA error and exposure needed for the target proper-motion error at this baseline."""
    target = c.value("target_pm_error", "mas/yr")
    if target is None:
        if not motion.pm_masyr:
            return {"target_pm_error_masyr": None, "note": "reverse question skipped: no target_pm_error and no "
                    "(non-zero) expected proper motion"}
        target = motion.pm_masyr / target_sig
    out = {"target_pm_error_masyr": float(target), "baseline_yr": plan.span_yr}

    def pm_err(k):
        try:
            cov = astrometric_covariance(model, grid, errors * k, c)
        except ConvergenceError:  # tiny white errors under strong red noise: numerically singular
            return np.inf
        return pm_error_along(cov, motion.direction)

    k = target / sig_pm  # exact when the noise is white and proportional to the TOA errors
    if abs(pm_err(k) / target - 1) < 1e-6:
        return _reverse_out(out, k, errors, plan, c)
    lo, hi = 1e-6, 1e6
    if pm_err(lo) > target:
        out.update(toa_error_needed_s=None, exposure_needed_s=None, photon_factor=None,
                   note=f"a proper-motion error of {target:.3g} mas/yr is out of reach at a {plan.span_yr:.3g} yr "
                        "baseline even with perfect TOAs (added/red noise floor): a longer baseline is needed")
        return out
    # sigma_pm grows monotonically with the TOA error: bisect in log scale
    for _ in range(60):
        mid = np.sqrt(lo * hi)
        if pm_err(mid) > target:
            hi = mid
        else:
            lo = mid
        if hi / lo < 1 + 1e-4:
            break
    return _reverse_out(out, np.sqrt(lo * hi), errors, plan, c)


def _reverse_out(out, k, errors, plan, c):
    exp0 = float(np.median(plan.exposure))
    out["toa_error_needed_s"] = float(np.median(errors) * k)
    out["photon_factor"] = float(1 / k**2)
    out["exposure_needed_s"] = float(exp0 / k**2) if np.isfinite(exp0) and c.get("toa_error") is None else None
    return out


def compare_schedules(c, model, plan, cov, errors, motion, window, ra, dec, epoch, method="woodbury", astro=None):
    """Errors of the three schedules with the same visits, TOA errors and noise.

    The scenario's own plan keeps its covariance ``cov``; the other schedules
    are built by :func:`kinage.timing.plan.make_plan` on the same Sun window
    and evaluated with the full noise model (red noise included).

    Returns
    -------
    dict
        schedule name -> ``parallax_error_mas``, ``pm_error_along_motion_masyr``,
        ``pm_significance``, ``n_visits``, ``span_yr``, ``mjd`` (list of visit MJDs, TDB).
    """
    out = {}
    for name in SCHEDULES:
        if name == plan.schedule:
            p, cv = plan, cov
        else:
            try:
                p = make_plan(c, ra, dec, window=window, direction=motion.direction, schedule=name)
                grid = TimeGrid.from_times(p.times, epoch)
                cv = astrometric_covariance(model, grid, errors, c, method=method, astro=astro)
            except Exception as exc:  # noqa: BLE001 - an alternative that cannot be built is reported, not fatal
                out[name] = {"error": str(exc)}
                continue
        spm = pm_error_along(cv, motion.direction)
        out[name] = {
            "parallax_error_mas": float(np.sqrt(cv[4, 4])),
            "pm_error_along_motion_masyr": spm,
            "pm_significance": motion.pm_masyr / spm if motion.pm_masyr is not None else None,
            "n_visits": p.n_visits,
            "span_yr": p.span_yr,
            "mjd": [float(m) for m in p.mjd],
        }
    return out


_SCHEDULE_AIM = {"parallax": "parallax error", "motion": "proper-motion error along the motion"}
_SCHEDULE_KEY = {"parallax": "parallax_error_mas", "motion": "pm_error_along_motion_masyr"}


def _even_is_better(schedules, current):
    """Whether the even plan beats the optimised one at its own aim under the full noise model."""
    key = _SCHEDULE_KEY.get(current)
    ev, mine = schedules.get("even", {}), schedules.get(current, {})
    return key is not None and key in ev and key in mine and ev[key] < mine[key] * (1 - 1e-6)


def _date_ranges(mjd):
    """Visit days of one year as readable ranges ('2028-03-18 to 03-21, 2028-09-15')."""
    from astropy.time import Time

    days = np.sort(np.asarray(mjd, float))
    groups = np.split(days, np.flatnonzero(np.diff(days) > 10) + 1)
    parts = []
    for g in groups:
        a, b = (Time(g[0], format="mjd", scale="tdb").isot[:10], Time(g[-1], format="mjd", scale="tdb").isot[:10])
        parts.append(a if a == b else f"{a} to {b[5:]}")
    return ", ".join(parts)


def schedule_warnings(schedules, current):
    """Warnings when the scenario's schedule loses much against the optimised ones."""
    out = []
    ev, px = schedules.get("even", {}), schedules.get("parallax", {})
    if current == "even" and "parallax_error_mas" in ev and "parallax_error_mas" in px:
        ratio = ev["parallax_error_mas"] / px["parallax_error_mas"]
        if ratio > ALIAS_FACTOR:
            mjd = np.asarray(px["mjd"])
            first = mjd[mjd < ev["mjd"][0] + _YEAR_D]
            out.append(f"the evenly spaced visits give a parallax error {_times(ratio)} larger than the same number "
                       f"of visits placed near the parallax extremes (schedule = \"parallax\"; in the first year on "
                       f"{_date_ranges(first)}, and near the same days in later years): the even cadence samples "
                       "the half-yearly parallax signature near its zero crossings")
    mo = schedules.get("motion", {})
    if current == "even" and "pm_error_along_motion_masyr" in ev and "pm_error_along_motion_masyr" in mo:
        ratio = ev["pm_error_along_motion_masyr"] / mo["pm_error_along_motion_masyr"]
        if ratio > ALIAS_FACTOR:
            out.append(f"the evenly spaced visits give a proper-motion error {_times(ratio)} larger than the same "
                       "number of visits placed for the motion (schedule = \"motion\")")
    return out


def _times(ratio):
    """'2.4 times', '40 times', 'more than a thousand times'."""
    if ratio >= 1000:
        return "more than a thousand times"
    return f"{ratio:.2g} times" if ratio < 10 else f"{ratio:.0f} times"
