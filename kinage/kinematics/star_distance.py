"""The distance posterior of a scenario's star: which measurements, which prior.

One function builds it for every stage (the trace, the ages stage's Shklovskii
term, the preflight), so a run uses one distance throughout.
"""

import numpy as np

from ..errors import InputError
from .distance import distance_prior as make_distance_prior
from .distance_posterior import distance_posterior

__all__ = ["star_distance_posterior", "scenario_distance_posterior", "scenario_distance_prior", "check_star_distance"]


def star_distance_posterior(solution, prior, *, distance_pc=None, distance_error_pc=None,
                            distance_error_low_pc=None, distance_error_high_pc=None, distance_from=None):
    """The star's :class:`DistancePosterior`: the solution's parallax and/or a distance estimate.

    Parameters
    ----------
    solution : AstrometricSolution
        Its parallax (mas; the [star] parallax, the timing fit's, or both
        combined) is used when finite.
    prior : DistancePrior
    distance_pc, distance_error_pc : float, optional, pc
        Distance estimate and its symmetric error.
    distance_error_low_pc, distance_error_high_pc : float, optional, pc
        Asymmetric error instead (split normal).
    distance_from : {'parallax', 'distance'} or None
        Use only one of the two when both are given (default: combine them).

    Returns
    -------
    DistancePosterior

    Raises
    ------
    InputError
        Neither is usable, a parallax error that is not positive, or
        ``distance_from`` naming a measurement that is absent.
    """
    w, var = float(solution.values[4]), float(solution.covariance[4, 4])
    has_w = np.isfinite(w)
    has_d = distance_pc is not None and np.isfinite(distance_pc)
    choice = (distance_from or "").lower() or None
    if choice == "parallax" and not has_w:
        raise InputError("[star] distance_from", "says to use the parallax, but no parallax is measured "
                         "([star] parallax or a timing fit)")
    if choice == "distance" and not has_d:
        raise InputError("[star] distance_from", "says to use the distance, but [star] distance is not given")
    if choice == "parallax":
        has_d = False
    elif choice == "distance":
        has_w = False
    sw = float(np.sqrt(var)) if np.isfinite(var) and var > 0 else var
    return distance_posterior(prior=prior, parallax_mas=w if has_w else None,
                              parallax_error_mas=sw if has_w else None, distance_pc=distance_pc if has_d else None,
                              distance_error_pc=distance_error_pc, distance_error_low_pc=distance_error_low_pc,
                              distance_error_high_pc=distance_error_high_pc)


def check_proper_motion(solution):
    """InputError unless the solution holds a proper motion with finite, non-negative errors."""
    vals, cov = solution.values, solution.covariance
    for i, key in ((2, "pm_ra_cosdec"), (3, "pm_dec")):
        if not np.isfinite(vals[i]):
            raise InputError(f"[star] {key}", "a proper motion (pm_ra_cosdec and pm_dec) is required for tracing (not given)")
        if not (np.isfinite(cov[i, i]) and cov[i, i] >= 0):
            raise InputError(f"[star] {key}_error", f"must be a finite non-negative error (got {np.sqrt(cov[i, i])})")


def scenario_distance_prior(scenario):
    """The :class:`DistancePrior` of ``[trace] distance_prior`` (and its scale), or the default without [trace]."""
    from ..io.schema import SCHEMA

    tr = scenario.trace
    name = tr.get("distance_prior") if tr is not None else SCHEMA["trace"]["distance_prior"].default
    scale = tr.value("distance_prior_scale", "pc") if tr is not None else None
    return make_distance_prior(name, scale)


def scenario_distance_posterior(scenario, solution, prior=None):
    """The star's distance posterior from ``[star]`` (distance, its errors, distance_from) and ``solution``.

    Parameters
    ----------
    scenario : Scenario
    solution : AstrometricSolution
        The astrometry the run uses (``[star]``, a timing fit, or both combined).
    prior : DistancePrior, optional
        Default: :func:`scenario_distance_prior`.

    Returns
    -------
    DistancePosterior
    """
    star = scenario.star
    prior = prior if prior is not None else scenario_distance_prior(scenario)
    return star_distance_posterior(solution, prior, distance_pc=star.value("distance", "pc"),
                                   distance_error_pc=_pc(star, "distance_error"),
                                   distance_error_low_pc=_pc(star, "distance_error_low"),
                                   distance_error_high_pc=_pc(star, "distance_error_high"),
                                   distance_from=star.get("distance_from"))


def _pc(star, key):
    try:
        return star.value(key, "pc")
    except AttributeError:  # a section without the key
        return None


def check_star_distance(scenario, *, trace=True, fitted=False):
    """Check the star's distance inputs before any stage runs (InputError naming the key).

    Builds the distance posterior from the ``[star]`` values alone, as the
    trace and the ages stage will (a timing fit may add a parallax later, so
    with ``fitted`` a ``[star]`` table without parallax and distance passes).
    With ``trace``, a proper motion is required unless a fit will measure it.

    Parameters
    ----------
    scenario : Scenario
    trace : bool
        Whether a trace is planned.
    fitted : bool
        Whether a timing fit runs first.

    Returns
    -------
    DistancePosterior or None
        None when the ``[star]`` values alone give no distance.
    """
    from ..astrometry import AstrometricSolution

    star = scenario.star
    if star.get("ra") is None or star.get("dec") is None:
        return None
    ages = scenario.ages
    shklovskii = (ages is not None and ages.get("shklovskii", True) and star.get("pm_ra_cosdec") is not None
                  and star.get("spin_period_derivative") is not None)
    if not (trace or shklovskii):
        return None  # no stage uses the distance
    solution = AstrometricSolution.from_star(star)
    if trace and not fitted:
        check_proper_motion(solution)
    if not np.isfinite(solution.values[4]) and star.get("distance") is None:
        if trace and not fitted:
            raise InputError("[star] parallax", "tracing needs a parallax (with parallax_error) or a distance "
                                                "(not given)")
        return None
    if fitted and (star.get("distance_from") or "").lower() == "parallax" and not np.isfinite(solution.values[4]):
        return None  # the parallax comes from the fit
    return scenario_distance_posterior(scenario, solution)
