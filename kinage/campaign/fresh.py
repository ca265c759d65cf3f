"""Fresh draws for outcomes whose importance weights collapsed: the updated posterior, integrated in one batch.

Today's astrometry combined with the simulated measurement by inverse-variance weighting with the full
covariance (:meth:`~kinage.astrometry.AstrometricSolution.combine`, as a timing fit is combined with
``[star]`` for tracing), drawn with the trace's distance and velocity priors
(:func:`kinage.kinematics.draw_star`) and integrated with the trace's own association orbits, time grid and
integrator settings (:func:`kinage.orbits.chunks.run_draws`): every such outcome of every campaign in one call.
"""

import numpy as np

from ..astrometry import AstrometricSolution
from ..kinematics import StarDraws, draw_star
from ..orbits.chunks import chunk_rows, run_draws
from ..orbits.trace import CHUNK_BYTES
from .kernels import age_width, association_kernels, probabilities_from_kernels

__all__ = ["combined_solution", "fresh_outcomes"]


def combined_solution(solution, measured, cov):
    """Today's astrometry combined with one simulated measurement (inverse-variance, full covariance).

    Parameters
    ----------
    solution : AstrometricSolution
    measured : ndarray (5,)
        NaN where not measured.
    cov : ndarray (5, 5)

    Returns
    -------
    AstrometricSolution
    """
    meas = AstrometricSolution(solution.epoch, solution.ra_deg, solution.dec_deg, measured, cov, source="campaign")
    return solution.combine(meas, source=f"{solution.source}+campaign")


def fresh_outcomes(state, sets, pending, rng):
    """Probabilities of the collapsed outcomes from fresh draws, integrated in one batch."""
    tr = state.trace_result
    data = tr.data
    cfg, frame, adraws, afailed = data["cfg"], data["frame"], data["adraws"], data["association_failed"]
    star = state.scenario.star
    parts = []
    for c_idx, o, _, nf in pending:
        s = sets[c_idx]
        sol = combined_solution(state.solution, s.measured[o], s.covariance)
        parts.append(draw_star(sol, nf, rng, frame=frame, velocity_prior=cfg["velocity_prior"],
                               distance_prior=cfg["distance_prior"], distance_pc=star.value("distance", "pc"),
                               distance_error_pc=star.value("distance_error", "pc"),
                               distance_from=star.get("distance_from"),
                               radial_velocity=star.value("radial_velocity", "km/s"),
                               radial_velocity_error=star.value("radial_velocity_error", "km/s")))
    allp = StarDraws(*(np.concatenate([getattr(p, k) for p in parts]) for k in
                       ("ra_deg", "dec_deg", "distance_pc", "pm_ra_cosdec", "pm_dec", "radial_velocity")),
                     parts[0].distance_source, parts[0].rv_source)
    run = dict(data["run"])
    run["rows_cap"] = chunk_rows(allp.n, len(run["times"]), cfg["chunk_size"], CHUNK_BYTES, run["cores"])
    pos, vel = allp.galactocentric(frame)
    res = run_draws(pos, vel, assoc=data["assoc"], adraws=adraws, **run)
    per = [association_kernels(adraws, afailed, res, cfg, j) for j in range(adraws.n_assoc)]
    k1 = np.array([p[0] for p in per])
    kn = np.array([p[1] for p in per])
    valid = np.array([p[2] for p in per], float)
    ends = np.cumsum([p[3] for p in pending])
    for b, (c_idx, o, ctrl_sums, nf) in enumerate(pending):
        sl = slice(int(ends[b] - nf), int(ends[b]))
        s = sets[c_idx]
        s.probabilities[o], _ = probabilities_from_kernels(ctrl_sums, state.field_prior, state.share,
                                                           k1[:, sl].sum(1), valid[:, sl].sum(1), kn[:, sl].sum(1),
                                                           kn[:, sl].max(1) if nf else None)
        if state.ref is not None:
            enc = per[state.ref][4][sl]
            if enc.any():
                s.age_width_yr[o] = age_width(per[state.ref][3][sl][enc], np.ones(enc.sum()))
