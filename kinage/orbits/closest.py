"""Closed-form closest approach of two bodies in uniform relative motion.

The closest approach of the tracing stage itself is :func:`kinage.orbits.hermite.closest_on_grid` (grid search and
cubic Hermite refinement on galpy's output grid); this closed form is its force-free limit.

Units: distances pc, velocities pc/Myr, times Myr (negative = past).
"""

import numpy as np

__all__ = ["straight_line_closest_approach"]


def straight_line_closest_approach(dr_pc, dv_pcmyr, max_age_myr):
    """Closed-form closest approach of two bodies in uniform relative motion.

    Parameters
    ----------
    dr_pc : ndarray, shape (n, 3), pc
        Present relative position.
    dv_pcmyr : ndarray, shape (n, 3), pc/Myr
        Relative velocity.
    max_age_myr : float, Myr
        The past window searched.

    Returns
    -------
    dmin_pc, tau_myr : ndarray
        With t* = -dr.dv / |dv|^2 clipped to [-max_age, 0] and tau = -t*.
    """
    dr = np.asarray(dr_pc, float)
    dv = np.asarray(dv_pcmyr, float)
    t = np.clip(-np.einsum("ij,ij->i", dr, dv) / np.einsum("ij,ij->i", dv, dv), -max_age_myr, 0.0)
    return np.linalg.norm(dr + dv * t[:, None], axis=1), -t
