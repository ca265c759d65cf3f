"""Closest approaches on a coarse output grid: grid search and cubic Hermite refinement in one pass.

Star and association orbits are stored on the same coarse backward grid with
positions *and* velocities.  For each star draw and its paired association
draw the kernel

1. takes the grid point k of the smallest separation (float32; the pairing
   is a reshape, so the association tracks are not gathered);
2. picks the grid interval beside k on the side of the closer neighbour;
3. represents the relative position on that interval by the cubic Hermite
   polynomial through dr and dv at both ends,

       dr(s) = c0 + c1 s + c2 s^2 + c3 s^3,   t = t_lo + s h,  0 <= s <= 1,
       c0 = dr0, c1 = h dv0, c2 = 3 (dr1 - dr0) - h (2 dv0 + dv1), c3 = 2 (dr0 - dr1) + h (dv0 + dv1)

   (the interpolant is exact for motion with constant acceleration, and its
   error is O(h^4 d^4r/dt^4): Burden & Faires, Numerical Analysis, sect. 3.4);
4. minimises |dr(s)|^2 by Newton's method on g(s) = dr . dr' = 0, started at
   the linear-motion solution s = -(c0 . c1) / |c1|^2 and kept in [0, 1].

Steps 2-4 run only for draws whose first estimate (the vertex of the
parabola through the squared separations at k - 1, k, k + 1, exact for
uniform relative motion) is within ``refine_below_pc``; far draws keep that
estimate.  The search works on one chunk and one association at a time, so
memory stays bounded by the chunk.  No compiled code: the numpy operations
are few and large (see ``scripts/bench_trace.py``).

Units: positions kpc, velocities kpc/Myr inside, distances pc out, times Myr
(negative = past).
"""

import numpy as np

from .frames import KMS_TO_PCMYR

__all__ = ["StarChunk", "AssociationGrid", "closest_on_grid", "NEWTON_STEPS"]

_KPC_MYR = KMS_TO_PCMYR / 1000.0  # kpc/Myr per km/s
#: Newton steps of the refinement (the start is already the linear-motion solution)
NEWTON_STEPS = 3


class AssociationGrid:
    """Association draws on the output grid.

    Parameters
    ----------
    pos, vel : ndarray, shape (M, nt, 3), kpc and km/s
    times : ndarray, shape (nt,), Myr, from 0 descending
    """

    def __init__(self, pos, vel, times):
        self.pos = np.ascontiguousarray(pos, float)
        self.vel = np.asarray(vel, float) * _KPC_MYR
        self.times = np.asarray(times, float)
        # float32 search coordinates from an origin near the draws (their mean present position), so
        # that rounding (~6e-8 x |position|) stays well below a parsec
        self.origin = np.nanmean(self.pos[:, 0], axis=0) if len(self.pos) else np.zeros(3)
        self.pos32 = (self.pos - self.origin).astype(np.float32)
        self.sq32 = (self.pos32 ** 2).sum(-1)  # (M, nt)
        self.pc32 = np.ascontiguousarray(np.moveaxis(self.pos32, -1, 0))


class StarChunk:
    """A chunk of star draws on the output grid, laid out for :func:`closest_on_grid`.

    Draw i of the chunk pairs with association draw (offset + i) % m.  The
    float32 copy used by the grid search is padded to whole periods of m, so
    the pairing is a reshape (q, m, nt) and the squared separations
    |S|^2 - 2 S.A + |A|^2 need no gathered copy of the association tracks.
    Full-precision states for the refinement are read from the orbit bundle
    only where needed.

    Parameters
    ----------
    bundle : orbit bundle (:mod:`.integrate`)
    offset : int
        Global index of the chunk's first draw.
    m : int
        Draws per association.
    origin : array_like, shape (3,), kpc
        Origin of the float32 search coordinates (``AssociationGrid.origin``).
    """

    def __init__(self, bundle, offset, m, origin=(0.0, 0.0, 0.0)):
        self.bundle = bundle
        n, nt = bundle.n, len(bundle.times)
        self.n, self.m, self.offset = n, int(m), int(offset)
        self._shift = self.offset % self.m
        q = -(-(self._shift + n) // self.m)
        ext = np.zeros((3, q * self.m, nt), np.float32)
        for c, x in enumerate(bundle.position_components()):
            ext[c, self._shift:self._shift + n] = x - float(origin[c])
        ext = ext.reshape(3, q, self.m, nt)
        self._sq = (ext ** 2).sum(0)
        ext *= -2.0
        self._m2c = ext
        self._tmp = np.empty_like(self._sq)
        self._d2 = np.empty_like(self._sq)

    def grid_d2(self, assoc, j):
        """Squared separations (kpc^2, float32) from the paired draws of association ``j`` around the grid
        minimum: the grid index k of the minimum, the centre kc = k clipped to [1, nt - 2] and the values at
        kc - 1, kc, kc + 1; each shape (n,)."""
        m = self.m
        a, asq = assoc.pc32[:, j * m:(j + 1) * m], assoc.sq32[j * m:(j + 1) * m]
        d2, tmp = self._d2, self._tmp
        np.add(self._sq, asq[None], out=d2)
        for c in range(3):
            np.multiply(self._m2c[c], a[c][None], out=tmp)
            d2 += tmp
        nt = d2.shape[-1]
        sl = slice(self._shift * nt, (self._shift + self.n) * nt)
        flat = d2.reshape(-1)[sl].reshape(self.n, nt)
        k = np.argmin(flat, axis=1)
        kc = np.clip(k, 1, nt - 2)
        at = np.arange(self.n) * nt + kc
        flat = flat.reshape(-1)
        return k, kc, np.take(flat, at - 1), np.take(flat, at), np.take(flat, at + 1)

    def state(self, rows, cols):
        """Position (kpc) and velocity (kpc/Myr) of chunk draws ``rows`` at grid indices ``cols``, (3, len)."""
        pos, vel = self.bundle.state(rows, cols)
        return pos.T, vel.T * _KPC_MYR


def _dot(a, b):
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def _hermite_min(d0, v0, d1, v1, h):
    """Minimum of |dr(s)| over s in [0, 1] for the cubic Hermite dr(s); returns s and d_min (kpc)."""
    c1 = h * v0
    hv1 = h * v1
    c2 = 3.0 * (d1 - d0) - 2.0 * c1 - hv1
    c3 = 2.0 * (d0 - d1) + c1 + hv1
    c11 = _dot(c1, c1)
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.clip(np.where(c11 > 0, -_dot(d0, c1) / c11, 0.0), 0.0, 1.0)
        for _ in range(NEWTON_STEPS):
            r = d0 + s * (c1 + s * (c2 + s * c3))
            r1 = c1 + s * (2.0 * c2 + 3.0 * s * c3)
            r2 = 2.0 * c2 + 6.0 * s * c3
            gp = _dot(r1, r1) + _dot(r, r2)
            s = np.clip(np.where(gp > 0, s - _dot(r, r1) / gp, s), 0.0, 1.0)
    r = d0 + s * (c1 + s * (c2 + s * c3))
    d = np.sqrt(_dot(r, r))
    # an end of the interval is closer when the minimum lies outside it
    e0, e1 = np.sqrt(_dot(d0, d0)), np.sqrt(_dot(d1, d1))
    s = np.where(e0 < d, 0.0, np.where(e1 < d, 1.0, s))
    return s, np.minimum(d, np.minimum(e0, e1))


def _interval(star, assoc, rows, prow, lo):
    """Relative position (kpc) and velocity (kpc/Myr) at both ends of interval [lo, lo + 1]: four (3, len)."""
    sp0, sv0 = star.state(rows, lo)
    sp1, sv1 = star.state(rows, lo + 1)
    ap, av = assoc.pos, assoc.vel
    return (sp0 - ap[prow, lo].T, sv0 - av[prow, lo].T, sp1 - ap[prow, lo + 1].T, sv1 - av[prow, lo + 1].T)


def closest_on_grid(star, assoc, j, *, refine_below_pc, want_position_below_pc=None, max_moves=4):
    """Closest approach of every draw of a :class:`StarChunk` to its paired draw of association ``j``.

    Every draw gets the vertex of the parabola through the squared separations
    at the grid minimum and its neighbours (exact for uniform relative motion;
    relative error ~1e-4 at 1 kpc from the tidal acceleration over a step).
    Draws whose estimate is below ``refine_below_pc`` are refined in float64
    by the cubic Hermite minimisation (module docstring).

    Parameters
    ----------
    star : StarChunk
    assoc : AssociationGrid
    j : int
        Association index (rows ``j*m ... (j+1)*m - 1`` of ``assoc``).
    refine_below_pc : float
        Hermite refinement for draws nearer than this, pc.
    want_position_below_pc : float, optional
        Also return the star's position at closest approach for draws with
        d_min below this (pc, at most ``refine_below_pc``); listed in ``near``.
    max_moves : int
        When a refined minimum is at an end of its interval that is not the end
        of the grid (the float32 search can be a step off on fine grids), the
        interval moves on by one, at most this many times.

    Returns
    -------
    dict
        ``dmin_pc`` (n,), ``tau_myr`` (n, >= 0), ``edge`` (n, bool: minimum
        at the present or at the far end of the grid), and with
        ``want_position_below_pc`` also ``near`` (indices) and ``pos_kpc``
        (len(near), 3).
    """
    m, n = star.m, star.n
    times = assoc.times
    nt = len(times)
    step = times[0] - times[1]  # > 0
    k, kc, fm, fc, fp = star.grid_d2(assoc, j)
    fm, fc, fp = fm.astype(float), fc.astype(float), fp.astype(float)
    # parabola fc + b u + c u^2 through kc - 1, kc, kc + 1 (u in grid steps towards the past), kept on
    # the grid and within one step of kc
    b, c = 0.5 * (fp - fm), 0.5 * (fp - 2.0 * fc + fm)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = np.where(c > 0, -b / (2.0 * c), (k - kc).astype(float))
    u = np.clip(u, np.maximum(-1.0, -kc), np.minimum(1.0, nt - 1 - kc))
    d2min = fc + u * (b + c * u)
    t = times[kc] - u * step
    dmin = np.sqrt(np.maximum(d2min, 0.0)) * 1000.0
    fine = np.flatnonzero(~(dmin >= refine_below_pc))  # NaN rows too, so failures stay NaN
    if fine.size:
        i = fine
        p = j * m + (star.offset + i) % m
        kf = k[i]
        left = np.where(kf == kc[i], fm[i] < fp[i], kf < kc[i])
        lo = np.clip(np.where(left, kf - 1, kf), 0, nt - 2)
        h = times[lo + 1] - times[lo]  # < 0 on the backward grid
        s, d = _hermite_min(*_interval(star, assoc, i, p, lo), h)
        rows = np.flatnonzero(((s == 0.0) & (lo > 0)) | ((s == 1.0) & (lo < nt - 2)))
        for _ in range(max_moves):
            if rows.size == 0:
                break
            mv = np.where(s[rows] == 0.0, -1, 1)
            lo_r = lo[rows] + mv
            hr = times[lo_r + 1] - times[lo_r]
            s_r, d_r = _hermite_min(*_interval(star, assoc, i[rows], p[rows], lo_r), hr)
            better = d_r < d[rows]
            rows, lo_r, s_r, d_r, mv, hr = rows[better], lo_r[better], s_r[better], d_r[better], mv[better], hr[better]
            lo[rows], s[rows], d[rows], h[rows] = lo_r, s_r, d_r, hr
            go_on = ((s_r == 0.0) & (mv < 0) & (lo_r > 0)) | ((s_r == 1.0) & (mv > 0) & (lo_r < nt - 2))
            rows = rows[go_on]
        dmin[i] = d * 1000.0
        t[i] = times[lo] + s * h
    edge = (t >= -1e-9 * step) | (t <= times[-1] + 1e-9 * step)
    out = {"dmin_pc": dmin, "tau_myr": -t, "edge": edge}
    if want_position_below_pc is not None:
        near_f = np.flatnonzero(dmin[fine] < want_position_below_pc) if fine.size else np.zeros(0, int)
        out["near"] = fine[near_f]
        out["pos_kpc"] = (_star_position(star, fine[near_f], lo[near_f], s[near_f], h[near_f]) if near_f.size
                          else np.zeros((0, 3)))
    return out


def _star_position(star, rows, lo, s, h):
    """Star position (kpc) at t_lo + s h by cubic Hermite interpolation of its own orbit."""
    p0, v0 = star.state(rows, lo)
    p1, v1 = star.state(rows, lo + 1)
    s2, s3 = s * s, s * s * s
    pos = (2 * s3 - 3 * s2 + 1) * p0 + (s3 - 2 * s2 + s) * h * v0 + (-2 * s3 + 3 * s2) * p1 + (s3 - s2) * h * v1
    return pos.T
