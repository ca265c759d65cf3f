"""Closest approach of paired star and association orbits.

The search has two steps.  A coarse step takes the minimum of the separation
over a strided time grid (at most a hundred or so points).  A refinement step
then solves the closest approach of locally linear relative motion,

    t* = t_k - (dr . dv) / |dv|^2,      d_min = |dr + dv (t* - t_k)|,

using the relative position dr and velocity dv at grid time t_k, moves to the
grid point nearest t* and repeats until it stays put.  For force-free motion
this is exact; in a Galactic potential the relative acceleration of two nearby
orbits is tidal, ~ (v_c/R)^2 d, which changes d_min by << 1e-3 pc over one
grid step (common practice, no source; checked against a finer grid in the
tests).  Association states between grid points come from cubic Hermite
interpolation of their stored positions and velocities.

Units: positions kpc in, distances pc out; times Myr (negative = past).
"""

import numpy as np

from .frames import KMS_TO_PCMYR

__all__ = ["coarse_columns", "CoarseTracks", "CoarseStar", "closest_approach", "straight_line_closest_approach"]

_KPC_MYR = KMS_TO_PCMYR / 1000.0  # kpc/Myr per km/s


def coarse_columns(nt, max_points=48):
    """Indices of a strided grid of at most ~``max_points`` that keeps both ends."""
    stride = max(1, int(np.ceil((nt - 1) / max(max_points - 1, 1))))
    cols = np.arange(0, nt, stride)
    if cols[-1] != nt - 1:
        cols = np.append(cols, nt - 1)
    return cols


class CoarseTracks:
    """Positions and velocities of orbits on a coarse grid, interpolated in time.

    Parameters
    ----------
    pos : ndarray, shape (m, nc, 3), kpc
    vel : ndarray, shape (m, nc, 3), km/s
    times : ndarray, shape (nc,), Myr, descending from 0
    """

    def __init__(self, pos, vel, times):
        self.pos = np.asarray(pos, float)
        self.vel = np.asarray(vel, float) * _KPC_MYR
        self.times = np.asarray(times, float)
        self.pos32 = self.pos.astype(np.float32)

    @classmethod
    def from_bundle(cls, bundle, cols):
        rows = np.arange(bundle.n)[:, None]
        pos, vel = bundle.state(rows, np.asarray(cols)[None, :])
        return cls(pos, vel, bundle.times[cols])

    @classmethod
    def concatenate(cls, parts):
        out = cls.__new__(cls)
        out.pos = np.concatenate([p.pos for p in parts])
        out.vel = np.concatenate([p.vel for p in parts])
        out.times = parts[0].times
        out.pos32 = out.pos.astype(np.float32)
        return out

    def at(self, rows, t):
        """Position (kpc) and velocity (kpc/Myr) of orbits ``rows`` at times ``t`` (Myr)."""
        nc = len(self.times)
        j = np.clip(np.searchsorted(-self.times, -t, side="right") - 1, 0, nc - 2)
        t0, t1 = self.times[j], self.times[j + 1]
        h = (t1 - t0)[:, None]
        s = ((t - t0) / (t1 - t0))[:, None]
        p0, p1 = self.pos[rows, j], self.pos[rows, j + 1]
        v0, v1 = self.vel[rows, j], self.vel[rows, j + 1]
        s2, s3 = s * s, s * s * s
        pos = (2 * s3 - 3 * s2 + 1) * p0 + (s3 - 2 * s2 + s) * h * v0 + (-2 * s3 + 3 * s2) * p1 + (s3 - s2) * h * v1
        vel = ((6 * s2 - 6 * s) * (p0 - p1)) / h + (3 * s2 - 4 * s + 1) * v0 + (3 * s2 - 2 * s) * v1
        return pos, vel


class CoarseStar:
    """A chunk of star draws on the coarse grid, laid out for the coarse search.

    Star draw ``i`` of the chunk is paired with association draw
    ``(offset + i) % m``.  Padding the chunk to whole periods of ``m`` makes the
    pairing a reshape, (q, m, nc), so the squared separations
    |S|^2 - 2 S.A + |A|^2 need no gathered copy of the association tracks.

    Parameters
    ----------
    pos : ndarray, shape (n, nc, 3), kpc
    offset : int
        Association-draw index of the chunk's first star draw.
    m : int
        Draws per association.
    """

    def __init__(self, pos, offset, m):
        n, nc, _ = pos.shape
        self.n, self.m, self.offset = n, m, int(offset) % m
        q = -(-(self.offset + n) // m)
        ext = np.zeros((q * m, nc, 3), np.float32)
        ext[self.offset:self.offset + n] = pos
        ext = ext.reshape(q, m, nc, 3)
        self.comp = [np.ascontiguousarray(ext[..., k]) for k in range(3)]
        self.sq = self.comp[0] ** 2 + self.comp[1] ** 2 + self.comp[2] ** 2

    def argmin(self, apos):
        """Coarse-grid index of the minimum separation from paired draws ``apos`` (m, nc, 3); shape (n,)."""
        a = np.asarray(apos, np.float32)
        d2 = self.sq + (a[..., 0] ** 2 + a[..., 1] ** 2 + a[..., 2] ** 2)[None]
        for k in range(3):
            d2 -= 2.0 * self.comp[k] * a[None, :, :, k]
        k_min = np.argmin(d2, axis=2).reshape(-1)
        return k_min[self.offset:self.offset + self.n]


def closest_approach(star, star_coarse, assoc, pair, *, max_iter=4, k_coarse=None):
    """Minimum separation and its time for each star draw and its paired association draw.

    Parameters
    ----------
    star : orbit bundle
        The star's orbits (see :mod:`.integrate`), n draws on the full grid.
    star_coarse : ndarray, shape (n, nc, 3), kpc
        Star positions at ``cols`` (shared between associations); float32
        suffices (coarse search only).
    assoc : CoarseTracks
        Association draws on the coarse grid (times = star.times[cols]).
    pair : ndarray of int, shape (n,)
        Row of ``assoc`` paired with each star draw.
    max_iter : int
        Refinement iterations.
    k_coarse : ndarray of int, optional
        Coarse-grid index of each pair's minimum when already known (from
        :meth:`CoarseStar.argmin`); ``star_coarse`` is then not used.

    Returns
    -------
    dict
        ``dmin_pc`` (n,), ``tau_myr`` (n, time before present, >= 0),
        ``edge`` (n, bool: minimum at the present or at the far end of the
        grid), ``pos_kpc`` (n, 3: star position at closest approach).
    """
    times = star.times
    nt = len(times)
    h = times[0] - times[1]
    if k_coarse is None:
        diff = star_coarse - (assoc.pos32 if star_coarse.dtype == np.float32 else assoc.pos)[pair]
        k_coarse = np.argmin(np.einsum("ijk,ijk->ij", diff, diff), axis=1)
        del diff
    n = len(pair)
    k = np.rint(-assoc.times[k_coarse] / h).astype(int)
    k_used = k.copy()
    tstar = np.empty(n)
    dr_all = np.empty((n, 3))
    dv_all = np.empty((n, 3))
    sp_all = np.empty((n, 3))
    sv_all = np.empty((n, 3))
    active = np.arange(n)
    for _ in range(max_iter):
        # only rows whose grid point moved in the last step need another solve
        ka = k[active]
        sp, sv = star.state(active, ka)
        ap, av = assoc.at(pair[active], times[ka])
        dr = sp - ap
        sv = sv * _KPC_MYR
        dv = sv - av
        vv = np.einsum("ij,ij->i", dv, dv)
        with np.errstate(invalid="ignore", divide="ignore"):
            dt = np.where(vv > 0, -np.einsum("ij,ij->i", dr, dv) / vv, 0.0)
        ts = np.clip(times[ka] + dt, times[-1], 0.0)
        dr_all[active], dv_all[active], sp_all[active], sv_all[active] = dr, dv, sp, sv
        tstar[active], k_used[active] = ts, ka
        k_new = np.clip(np.rint(-ts / h).astype(int), 0, nt - 1)
        moved = k_new != ka
        k[active] = k_new
        active = active[moved]
        if active.size == 0:
            break
    step = (tstar - times[k_used])[:, None]
    d = np.linalg.norm(dr_all + dv_all * step, axis=1) * 1000.0
    edge = (tstar >= -1e-9 * h) | (tstar <= times[-1] + 1e-9 * h)
    return {"dmin_pc": d, "tau_myr": -tstar, "edge": edge, "pos_kpc": sp_all + sv_all * step}


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
