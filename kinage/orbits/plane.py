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


def _heights(bundle, cols=None):
    if hasattr(bundle, "array"):
        a = bundle.array[:, :, 3] if cols is None else bundle.array[:, cols, 3]
        return a * bundle.ro
    z = bundle.z()
    return z if cols is None else z[:, cols]


def _last_crossing(z, t):
    s0 = np.sign(z[:, :1])
    crossed = np.sign(z) != s0
    k = np.argmax(crossed, axis=1)
    has = crossed[np.arange(len(k)), k] & (k > 0)
    return k, has


def plane_crossing_age(bundle, cols=None):
    """Time (Myr before present) of the last mid-plane crossing of each orbit.

    Parameters
    ----------
    bundle : orbit bundle (see :mod:`.integrate`)
    cols : ndarray of int, optional
        A strided grid searched first; the crossing is then located on the
        full grid between the two bracketing strided points.

    Returns
    -------
    ndarray, shape (n,), Myr (NaN when there is no crossing within the grid)
    """
    t = bundle.times
    out = np.full(bundle.n, np.nan)
    if cols is None:
        z = _heights(bundle)
        k, has = _last_crossing(z, t)
        rows = np.flatnonzero(has)
        z0, z1 = z[rows, k[rows] - 1], z[rows, k[rows]]
        kk = k[rows]
    else:
        cols = np.asarray(cols)
        kc, has = _last_crossing(_heights(bundle, cols), t[cols])
        rows = np.flatnonzero(has)
        if rows.size == 0:
            return out
        lo = cols[kc[rows] - 1]
        width = int(np.max(cols[kc[rows]] - lo)) + 1
        win = np.minimum(lo[:, None] + np.arange(width)[None, :], len(t) - 1)
        if hasattr(bundle, "array"):
            zw = bundle.array[rows[:, None], win, 3] * bundle.ro
        else:
            zw = bundle.z()[rows[:, None], win]
        kw, hw = _last_crossing(zw, None)
        kk = lo + kw
        z0, z1 = zw[np.arange(len(rows)), kw - 1], zw[np.arange(len(rows)), kw]
    if rows.size:
        t0, t1 = t[kk - 1], t[kk]
        out[rows] = -(t0 + (t1 - t0) * z0 / (z0 - z1))
    return out
