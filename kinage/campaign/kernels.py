"""Birth kernels of star and control draws, and probabilities from their (weighted) totals.

The pieces the trace sums once, kept per draw so that every simulated outcome of a campaign can sum them with
its own weights (:mod:`.preposterior`).  The probabilities themselves come from
:func:`kinage.orbits.probability.posterior_from_sums`, the function the trace uses.

Units: pc, Myr; weights dimensionless.
"""

import numpy as np

from ..orbits.control import usable_draws
from ..orbits.probability import (CONTROL_WIDTH, birth_kernel, kernel_sums, neighbourhood_width, posterior_from_sums,
                                  weighted_interval)
from ..orbits.statistics import encounter_mask

__all__ = ["draw_parameters", "control_totals", "control_kernels", "probabilities_from_kernels",
           "association_kernels", "age_width", "CONTROL_KEYS"]

#: the control-draw sums of :data:`kinage.orbits.probability.SUM_KEYS`
CONTROL_KEYS = ("control", "control_wide", "control_valid", "control_near", "control_near_wide")


def draw_parameters(draws, solution):
    """The five astrometric parameters of every draw, in the solution's parametrisation.

    Parameters
    ----------
    draws : StarDraws
    solution : AstrometricSolution
        Gives the reference position (ra, dec in deg).

    Returns
    -------
    ndarray, shape (n, 5)
        ra offset and dec offset (mas; ra along ra cos dec, as :func:`kinage.kinematics.draw_star` makes
        them), pm_ra_cosdec, pm_dec (mas/yr), true parallax 1000 / distance (mas).
    """
    dra = (np.asarray(draws.ra_deg) - solution.ra_deg + 180.0) % 360.0 - 180.0
    ra_off = dra * 3.6e6 * np.cos(np.radians(draws.dec_deg))
    dec_off = (np.asarray(draws.dec_deg) - solution.dec_deg) * 3.6e6
    return np.column_stack([ra_off, dec_off, draws.pm_ra_cosdec, draws.pm_dec, 1000.0 / draws.distance_pc])


def control_totals(trace_result, cfg):
    """Kernel totals of the control draws per association, as the trace sums them.

    Returns
    -------
    dict
        Arrays of shape (N,) under ``control``, ``control_wide``, ``control_valid``, ``control_near``,
        ``control_near_wide``.
    """
    data = trace_result.data
    ctrl, adraws, afailed = data["control"], data["adraws"], data["association_failed"]
    out = {k: np.zeros(adraws.n_assoc) for k in CONTROL_KEYS}
    for j in range(adraws.n_assoc):
        cv = usable_draws(ctrl, adraws, afailed, j)
        ctup = (ctrl["dmin"][j].astype(float), ctrl["tau"][j].astype(float), ctrl["edge"][j], cv)
        empty = (np.zeros(1), np.zeros(1), np.ones(1, bool), np.zeros(1, bool))
        sums = kernel_sums(empty, ctup, adraws.radius_pc[j], adraws.age_myr[j], cfg["tolerance"],
                           cfg["neighbourhood_scale"])
        for k in CONTROL_KEYS:
            out[k][j] = float(np.sum(sums[k]))
    return out


def control_kernels(trace_result, cfg):
    """Per-control-draw kernels (the terms of :func:`control_totals`), arrays (N, n_control), float32."""
    data = trace_result.data
    ctrl, adraws, afailed = data["control"], data["adraws"], data["association_failed"]
    nc = ctrl["dmin"].shape[1]
    out = {k: np.zeros((adraws.n_assoc, nc), np.float32) for k in CONTROL_KEYS}
    for j in range(adraws.n_assoc):
        cv = usable_draws(ctrl, adraws, afailed, j)
        d, t, e = ctrl["dmin"][j].astype(float), ctrl["tau"][j].astype(float), ctrl["edge"][j]
        r, a = adraws.radius_pc[j], adraws.age_myr[j]
        wn = neighbourhood_width(r, cfg["neighbourhood_scale"])
        for key, w in (("control", 1.0), ("control_wide", CONTROL_WIDTH), ("control_near", wn),
                       ("control_near_wide", wn * CONTROL_WIDTH)):
            out[key][j] = birth_kernel(d, t, e, cv, r, a, cfg["tolerance"], width=w)
        out["control_valid"][j] = cv
    return out


def probabilities_from_kernels(state_control, field_prior, share, main, main_valid, near, near_max=None):
    """Probabilities (associations, then field) and surroundings' probabilities from kernel totals.

    Parameters
    ----------
    state_control : dict
        From :func:`control_totals`.
    field_prior, share : float
        ``[trace] field_prior`` and ``neighbourhood_share``.
    main, main_valid, near : ndarray, shape (N,)
        Summed (weighted) birth kernels of the star draws, summed weights of usable draws, summed kernels
        of the surroundings.
    near_max : ndarray, shape (N,), optional
        Largest surroundings kernel of a draw that carries weight: a candidate whose surroundings no such
        draw approaches gets no birth nearby, as in the trace.  Default: every candidate approached.

    Returns
    -------
    (ndarray (N + 1,), ndarray (N,))
        Only the values: the Monte Carlo errors of :func:`posterior_from_sums` are those of the trace's own
        draws and are not used here.
    """
    main = np.asarray(main, float)
    n = main.shape[0]
    sums = {"main": main, "main_valid": np.asarray(main_valid, float), "near": np.asarray(near, float),
            "main_moments": np.zeros((n, 2, 2)), "control_moments": np.zeros((n, 4, 4)),
            "near_max": np.ones(n) if near_max is None else np.asarray(near_max, float)}
    sums.update({k: np.asarray(v, float) for k, v in state_control.items()})
    res = posterior_from_sums(sums, field_prior, share)
    return (np.append(np.asarray(res["probability"], float), float(res["field_probability"])),
            np.asarray(res["neighbourhood_probability"], float))


def association_kernels(adraws, afailed, results, cfg, j):
    """Kernels (width 1, surroundings), usable flags, tau (Myr) and encounter flags of association j."""
    valid = usable_draws(results, adraws, afailed, j)
    d, t, e = results["dmin"][j].astype(float), results["tau"][j].astype(float), results["edge"][j]
    r, a = adraws.radius_pc[j], adraws.age_myr[j]
    k1 = birth_kernel(d, t, e, valid, r, a, cfg["tolerance"])
    kn = birth_kernel(d, t, e, valid, r, a, cfg["tolerance"], width=neighbourhood_width(r, cfg["neighbourhood_scale"]))
    enc = encounter_mask(d, t, e, valid, r, a, cfg["factor"], cfg["tolerance"])
    return k1, kn, valid, t, enc


def age_width(tau_myr, w):
    """Width (yr) of the weighted 68% interval of kinematic ages ``tau_myr`` (Myr); NaN without weight."""
    iv = weighted_interval(tau_myr * 1e6, w)
    return np.nan if iv["hi68"] is None else iv["hi68"] - iv["lo68"]
