"""Plane-crossing age: time since the star last crossed the Galactic mid-plane.

For each orbit the last sign change of the Galactocentric height z (the
mid-plane of the Galactocentric frame, the Sun at z_sun above it) is found on
the backward grid and located by linear interpolation between the two grid
points (Noutsos et al. 2013, MNRAS 430, 2281 use the same age for pulsars born
near the plane; Cordes & Chernoff 1998, ApJ 505, 315 give a birth scale height
of ~0.13 kpc, so the age is meaningful only for stars now well away from the
plane).  Orbits that do not cross within the grid give NaN.
"""

import numpy as np

__all__ = ["plane_crossing_age"]


def _heights(bundle):
    if hasattr(bundle, "array"):
        return bundle.array[:, :, 3] * bundle.ro
    return bundle.z()


def _last_crossing(z, t):
    s0 = np.sign(z[:, :1])
    crossed = np.sign(z) != s0
    k = np.argmax(crossed, axis=1)
    has = crossed[np.arange(len(k)), k] & (k > 0)
    return k, has


def plane_crossing_age(bundle):
    """Time (Myr before present) of the last mid-plane crossing of each orbit.

    Parameters
    ----------
    bundle : orbit bundle (see :mod:`.integrate`)

    Returns
    -------
    ndarray, shape (n,), Myr (NaN when there is no crossing within the grid)
    """
    t = bundle.times
    out = np.full(bundle.n, np.nan)
    z = _heights(bundle)
    k, has = _last_crossing(z, t)
    rows = np.flatnonzero(has)
    z0, z1 = z[rows, k[rows] - 1], z[rows, k[rows]]
    kk = k[rows]
    if rows.size:
        t0, t1 = t[kk - 1], t[kk]
        out[rows] = -(t0 + (t1 - t0) * z0 / (z0 - z1))
    return out
