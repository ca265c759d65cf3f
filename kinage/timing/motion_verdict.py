"""The one-sentence answer to "can a timing campaign measure the star's motion?".

A verdict line says what is known, how well, and what it rests on, in at most
about 25 words, so that a reader can quote it; the paragraph of
:mod:`.forecast_words` (or the fit's summary) follows it with the detail.  It
is built from the stages' JSON dictionaries, so the report, ``results.json``
and ``summary()`` quote the same sentence.  A fit (a measurement) answers
before a forecast (a plan).  Numbers follow the one rounding rule of
:mod:`kinage._rounding`; errors the linearised model cannot mean (see
:mod:`.forecast_words`) are said in words.
"""

import math

from .._rounding import value_error
from .forecast_words import PM_LIMIT_MASYR, _num, _sigma_text, _time

__all__ = ["motion_verdict", "total_motion", "total_motion_of"]


def total_motion(values, sigma, covariance=None):
    """Total proper motion (mas/yr) and its first-order error from the two components and their covariance.

    sigma_mu^2 = (a^2 s_a^2 + b^2 s_b^2 + 2 a b c_ab) / mu^2 (first-order propagation; Bevington & Robinson,
    Data Reduction and Error Analysis, eq. 3.14).
    """
    a, b = values["pm_ra_cosdec_masyr"], values["pm_dec_masyr"]
    sa, sb = sigma["pm_ra_cosdec_masyr"], sigma["pm_dec_masyr"]
    cab = 0.0
    if covariance is not None:
        try:
            cab = float(covariance[2][3])
        except (IndexError, TypeError, ValueError):
            cab = 0.0
    mu = math.hypot(a, b)
    if mu == 0:
        return 0.0, math.hypot(sa, sb)
    var = (a * a * sa * sa + b * b * sb * sb + 2.0 * a * b * cab) / (mu * mu)
    return mu, math.sqrt(max(var, 0.0))


def total_motion_of(solution):
    """``{"value", "error"}`` (mas/yr) of an AstrometricSolution: the fit JSON's ``proper_motion_total_masyr``."""
    mu, err = total_motion(solution.values_dict(), solution.sigma_dict(), solution.covariance)
    return {"value": float(mu), "error": float(err)}


def _fit_verdict(fit):
    values, sigma = fit.get("values") or {}, fit.get("sigma") or {}
    n = fit.get("n_toas")
    if max(sigma.get("pm_ra_cosdec_masyr", math.inf), sigma.get("pm_dec_masyr", math.inf)) > PM_LIMIT_MASYR:
        return (f"Timing does not measure the motion: the fit of {n} TOAs leaves proper-motion errors above "
                "1 arcsec/yr, so the motion must come from imaging astrometry.")
    mu, err = total_motion(values, sigma, fit.get("covariance"))
    which = "Timing" if fit.get("converged", True) else "The unconverged timing fit"
    text = f"{which} measures a proper motion of {value_error(mu, err, 'mas/yr')}"
    if err > 0:
        text += f" ({_sigma_text(mu / err)}σ)"
    plx, splx = values.get("parallax_mas"), sigma.get("parallax_mas")
    if plx is not None and splx is not None and math.isfinite(splx) and splx > 0 and abs(plx) >= 2.0 * splx:
        text += f" and a parallax of {value_error(plx, splx, 'mas')}"
    return text + f" from {n} TOAs, assuming phase connection."


def _forecast_verdict(fc):
    cons = fc.get("constrained") or {}
    n, span = fc.get("n_toas"), fc.get("span_yr") or fc.get("baseline_yr") or 0.0
    toa = _time(fc["toa_error_s"]) if fc.get("toa_error_s") else "the planned"
    plan = f"{n} visits over {span:.1f} yr"
    if not cons.get("proper_motion", True):
        return (f"Timing cannot measure the motion: {plan} with {toa} TOA errors leave proper-motion errors above "
                "1 arcsec/yr; imaging astrometry is needed.")
    err = fc.get("pm_error_along_motion_masyr")
    sig, target = fc.get("pm_significance"), fc.get("target_significance") or 3.0
    pm = fc.get("expected_pm_masyr")
    if sig is None or not pm:
        return (f"{plan[0].upper() + plan[1:]} would give a proper-motion error of {_num(err)} mas/yr with "
                f"{toa} TOA errors; without a distance the expected motion, and so the significance, is unknown.")
    if sig >= target:
        return (f"{plan[0].upper() + plan[1:]} would measure the expected {_num(pm)} mas/yr motion at "
                f"{_sigma_text(sig)}σ (error {_num(err)} mas/yr), if the TOA errors stay near {toa}.")
    need = fc.get("baseline_needed_yr")
    how = (f"{target:g}σ needs a baseline of {need:.1f} yr" if need is not None else
           f"no baseline up to {fc.get('max_baseline_yr') or 0:g} yr reaches {target:g}σ")
    return (f"{plan[0].upper() + plan[1:]} would reach only {_sigma_text(sig)}σ on the expected {_num(pm)} mas/yr "
            f"motion with {toa} TOA errors; {how}.")


def motion_verdict(forecast=None, fit=None):
    """One quotable sentence on the star's motion from timing.

    Parameters
    ----------
    forecast, fit : dict, optional
        The forecast's and the fit's ``to_dict()`` (or their ``results.json`` sections).  A fit answers
        when given; the forecast otherwise.

    Returns
    -------
    str or None
        None when neither is given.
    """
    if fit:
        return _fit_verdict(fit)
    if forecast:
        return _forecast_verdict(forecast)
    return None
