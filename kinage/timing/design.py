"""Optimal placement of timing visits: c-optimal exact designs by exchange.

A campaign of n visits with equal TOA errors sigma has the (white-noise)
Fisher matrix M = sum_i x_i x_i^T / sigma^2, with x_i the row of the timing
model's design matrix (:meth:`kinage.timing.model.TimingModel.design_matrix`:
position, proper motion, parallax and the spin terms) at visit i.  The error
of a linear combination c^T theta with every other parameter marginalised is
sqrt(c^T M^-1 c), so choosing the visits to minimise it is a c-optimal (for
several combinations, A_L-optimal: tr C^T M^-1 C) exact design problem
(Fedorov 1972, Theory of Optimal Experiments, ch. 2-3; Atkinson, Donev &
Tobias 2007, Optimum Experimental Designs, with SAS, ch. 10 and 12).  Because
the nuisance parameters stay in M, a schedule cannot win by making them
degenerate: a design that leaves position or spin unconstrained has a
singular M and an infinite criterion.

The candidates are the Sun-allowed days of the campaign.  The design keeps
the even plan's number of visits in every campaign year (block) and at most
one visit a day; it is improved by the exchange algorithm of Fedorov (1972)
in the form that visits the design points in turn (Cook & Nachtsheim 1980,
Technometrics 22, 315): for each visit the best replacement among the free
candidate days of its year is found for all candidates at once with the
rank-two (Sherman-Morrison-Woodbury) update of M^-1, and taken when it lowers
the criterion.  Sweeps repeat until no exchange helps; a few starts (the even
plan and random plans) guard against a local optimum; the search stops when
three starts agree on the best design.
"""

from dataclasses import dataclass

import numpy as np

from ..errors import InputError

__all__ = ["SCHEDULES", "DesignResult", "criterion", "exchange_design", "year_blocks"]

#: schedule names accepted by ``[campaign] schedule``
SCHEDULES = ("even", "parallax", "motion")

_REL_TOL = 1e-9  # an exchange must lower the criterion by this fraction (common practice, no source)


@dataclass
class DesignResult:
    """A chosen exact design.

    Attributes
    ----------
    chosen : ndarray of int
        Indices of the chosen candidates, sorted.
    value : float
        Criterion tr(C^T M^-1 C) for unit-weight rows (same units as C^2 / x^2).
    sweeps : int
        Exchange sweeps of the best start.
    exchanges : int
        Accepted exchanges over all starts.
    scale : ndarray
        Column scaling s used inside (``value`` is the criterion of rows / s with C / s).
    """

    chosen: np.ndarray
    value: float
    sweeps: int
    exchanges: int
    scale: np.ndarray | None = None


def criterion(rows, cmat):
    """tr(C^T M^-1 C) with M = rows^T rows; inf when M is singular.

    Parameters
    ----------
    rows : ndarray, shape (n, p)
    cmat : ndarray, shape (p, k)
    """
    m = rows.T @ rows
    try:
        cho = np.linalg.cholesky(m)
    except np.linalg.LinAlgError:
        return np.inf
    z = np.linalg.solve(cho, cmat)
    val = float(np.sum(z * z))
    return val if np.isfinite(val) else np.inf


def year_blocks(candidate_mjd, nominal_mjd, start_mjd, n_years):
    """Block (campaign-year) index of candidates and the visits each block keeps.

    Year k is [start + k yr, start + (k+1) yr); times at or after the start
    of the last (possibly partial) year ``n_years - 1`` belong to it.

    Returns
    -------
    cand_block : ndarray of int
    counts : ndarray of int, shape (n_years,)
        Visits of the nominal (even) plan in each year.
    """
    year = 365.25

    def block(t):
        return np.clip(np.floor((np.asarray(t) - start_mjd) / year + 1e-12).astype(int), 0, n_years - 1)

    counts = np.bincount(block(nominal_mjd), minlength=n_years)
    return block(candidate_mjd), counts


def _inverse(rows):
    m = rows.T @ rows
    inv = np.linalg.inv(m)
    return 0.5 * (inv + inv.T)


def _improve(x, cmat, block, chosen, max_sweeps):
    """Exchange sweeps from one start; returns (chosen, value, sweeps, exchanges)."""
    k_all = x.shape[0]
    taken = np.zeros(k_all, bool)
    taken[chosen] = True
    value = criterion(x[chosen], cmat)
    if not np.isfinite(value):
        return chosen, value, 0, 0
    by_block = [np.flatnonzero(block == b) for b in range(block.max() + 1)]
    sweeps = exchanges = version = 0
    cache = {}
    minv = _inverse(x[chosen])
    for sweeps in range(1, max_sweeps + 1):
        changed = False
        for slot in range(chosen.size):
            i = chosen[slot]
            b = block[i]
            if cache.get(b, (-1,))[0] != version:  # this year's candidates against the current M^-1
                idx = by_block[b]
                q = x[idx] @ minv                       # (K_b, p): M^-1 x_j
                cache[b] = (version, idx, q, np.einsum("ij,ij->i", q, x[idx]), q @ cmat)
            _, idx, q, a, uc = cache[b]
            free = ~taken[idx]
            if not np.any(free):
                continue
            cand, q, a, u_j = idx[free], q[free], a[free], uc[free]
            mi = minv @ x[i]
            d_i, u_i = float(x[i] @ mi), cmat.T @ mi    # x_i^T M^-1 x_i, C^T M^-1 x_i
            bj = q @ x[i]                               # x_j^T M^-1 x_i
            # swap x_i -> x_j: M' = M + x_j x_j^T - x_i x_i^T (rank two); Woodbury gives
            # tr C^T M'^-1 C = value - [(1-d_i)|u_j|^2 + 2 b (u_i.u_j) - (1+a_j)|u_i|^2] / det,
            # det = (1+a_j)(1-d_i) + b^2 = det M' / det M  (Fedorov's delta function plus one)
            det = (1 + a) * (1 - d_i) + bj * bj
            gain = (1 - d_i) * np.sum(u_j * u_j, axis=1) + 2 * bj * (u_j @ u_i) - (1 + a) * (u_i @ u_i)
            with np.errstate(divide="ignore", invalid="ignore"):
                new = np.where(det > 1e-10, value - gain / det, np.inf)
            best = int(np.argmin(new))
            if new[best] < value * (1 - _REL_TOL):
                j = cand[best]
                trial = np.where(chosen == i, j, chosen)
                exact = criterion(x[trial], cmat)  # guard against round-off
                if exact < value * (1 - _REL_TOL):
                    taken[i], taken[j] = False, True
                    chosen[slot] = j
                    value = exact
                    exchanges += 1
                    changed = True
                    minv = _inverse(x[chosen])  # from scratch (p x p: cheap, and no drift)
                    version += 1
        if not changed:
            break
    return np.sort(chosen), value, sweeps, exchanges


def exchange_design(rows, cmat, block, counts, start=None, *, n_random=None, agree=3, kicks=None, kick_size=3,
                    max_sweeps=40, rng=None):
    """c-optimal exact design by exchange (see module docstring).

    Parameters
    ----------
    rows : ndarray, shape (K, p)
        Candidate design rows, weighted by 1/sigma (any consistent scaling).
    cmat : ndarray, shape (p, k)
        Combinations whose summed variance is minimised (one column: c-optimality).
    block : ndarray of int, shape (K,)
        Block of each candidate; ``counts[b]`` candidates are chosen in block b.
    counts : ndarray of int
    start : ndarray of int, optional
        A starting design (indices); default: evenly spread in each block.
    n_random : int
        Additional random starts, at most (default: 2 up to 100 visits, none above: large designs start
        from the even plan and rely on the kicks).
    agree : int
        Stop once this many starts have ended at the same best criterion.
    kicks, kick_size : int
        Iterated local search after the starts: ``kicks`` times, move ``kick_size`` visits of the best
        design at random within their year and descend again (default: 8 kicks, fewer above 100 visits).
    rng : numpy.random.Generator | int | None
        Random starts (default seed 0, so the design is reproducible).

    Returns
    -------
    DesignResult
    """
    rows = np.asarray(rows, float)
    cmat = np.asarray(cmat, float).reshape(rows.shape[1], -1)
    block = np.asarray(block, int)
    counts = np.asarray(counts, int)
    # scale columns to unit rms: spin and astrometric columns differ by many orders of magnitude;
    # with x' = x / s (columns) and c' = c / s, c'^T M'^-1 c' = c^T M^-1 c: the criterion is unchanged
    scale = np.sqrt(np.mean(rows**2, axis=0))
    scale[scale == 0] = 1.0
    x = rows / scale
    cm = cmat / scale[:, None]
    rng = np.random.default_rng(0 if rng is None else rng)
    members = [np.flatnonzero(block == b) for b in range(counts.size)]
    for b, (m, n) in enumerate(zip(members, counts)):
        if m.size < n:
            raise InputError("[campaign] visits_per_year",
                             f"campaign year {b + 1} has {m.size} allowed days for {n} visits: lower the cadence "
                             "or the Sun-avoidance angle")
    starts = []
    if start is not None and np.all(np.bincount(block[start], minlength=counts.size) == counts):
        starts.append(np.asarray(start, int).copy())
    starts.append(np.concatenate([m[np.round(np.linspace(0, m.size - 1, n)).astype(int)] if n else m[:0]
                                  for m, n in zip(members, counts)]))
    if n_random is None:
        n_random = 2 if counts.sum() <= 100 else 0
    for _ in range(n_random):
        starts.append(np.concatenate([rng.choice(m, n, replace=False) for m, n in zip(members, counts)]))
    best, total, hits = None, 0, 0
    for s0 in starts:
        if np.unique(s0).size != s0.size:
            continue
        chosen, value, sweeps, exchanges = _improve(x, cm, block, s0.copy(), max_sweeps)
        total += exchanges
        if best is not None and abs(value - best.value) <= 1e-9 * best.value:
            hits += 1
        elif best is None or value < best.value:
            best, hits = DesignResult(chosen, value, sweeps, 0), 1
        if hits >= agree:  # this many starts ended at the same best design: take it
            break
    # iterated local search: kick the best design (a few visits moved at random within their year) and
    # descend again; keep what improves (common practice for exchange heuristics, no source)
    if kicks is None:  # fewer kicks for large designs: each costs a full sweep over the visits
        kicks = int(np.clip(800 // max(int(counts.sum()), 1), 1, 8))
    for _ in range(kicks if best is not None and np.isfinite(best.value) else 0):
        trial = best.chosen.copy()
        for slot in rng.choice(trial.size, min(kick_size, trial.size), replace=False):
            free = np.setdiff1d(members[block[trial[slot]]], trial)
            if free.size:
                trial[slot] = rng.choice(free)
        chosen, value, sweeps, exchanges = _improve(x, cm, block, trial, max_sweeps)
        total += exchanges
        if value < best.value * (1 - _REL_TOL):
            best = DesignResult(chosen, value, sweeps, 0)
    if best is None or not np.isfinite(best.value):
        raise InputError("[campaign] schedule", "no schedule within the Sun-allowed days constrains every "
                         "timing parameter: add visits or lengthen the baseline")
    best.exchanges = total
    best.scale = scale
    return best
