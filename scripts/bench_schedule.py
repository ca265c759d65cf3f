"""Benchmark: schedule optimiser (exchange algorithm) against exhaustive search.

Run from the repository root:  python scripts/bench_schedule.py

1. A reduced case both methods can solve (two campaign years with 11 and 9 candidate days, 5 visits a
   year, 7 timing parameters: 462 x 126 = 58,212 designs): wall time of each, their ratio, and whether the
   exchange algorithm found the exhaustive optimum.
2. The full case, 10 years x 12 visits a year on every Sun-allowed day (about 2,700 candidates): wall time
   of the design rows and of the optimiser for the 'parallax' and 'motion' schedules, and how many designs
   an exhaustive search would have to visit (log10).
Times are measured side by side in one run (time.perf_counter, best of 3 for the small case; CPU time from
time.process_time is printed too, since the machine may be shared).
"""

import itertools
import time
import warnings
from math import comb, log10

import numpy as np

warnings.filterwarnings("ignore", message=".*dubious year")
warnings.filterwarnings("ignore", module="erfa")

from kinage.timing.design import exchange_design, year_blocks  # noqa: E402
from kinage.timing.plan import SunWindow, candidate_rows, regular_epochs, schedule_combinations  # noqa: E402


def exhaustive(rows, cmat, block, counts):
    """Minimum of tr(C^T M^-1 C) over every admissible two-block design (batched numpy)."""
    scale = np.sqrt(np.mean(rows**2, axis=0))
    x, cm = rows / scale, cmat / scale[:, None]
    info = []
    for b, n in enumerate(counts):
        sub = np.array(list(itertools.combinations(np.flatnonzero(block == b), n)))
        info.append(np.einsum("sni,snj->sij", x[sub], x[sub]))
    total = (info[0][:, None] + info[1][None, :]).reshape(-1, x.shape[1], x.shape[1])
    sol = np.linalg.solve(total, np.broadcast_to(cm, (total.shape[0],) + cm.shape))
    return float(np.min(np.einsum("kpc,pc->k", sol, cm))), total.shape[0]


def best_of(n, fn):
    times = []
    for _ in range(n):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def main():
    print("reduced case: 2 years x (11, 9) candidate days, 5 visits a year, 7 parameters")
    start = 61500.0
    cand = start + np.arange(20) * 36.5
    rows = candidate_rows(210.0, 35.0, cand, spin_terms=1)
    block, counts = year_blocks(cand, start + np.arange(10) * 73.05, start, 2)
    for name, direction in (("parallax", None), ("motion", np.array([0.6, -0.8]))):
        cmat = schedule_combinations(name, direction, rows.shape[1])
        t_ex, (best, n_designs) = best_of(3, lambda: exhaustive(rows, cmat, block, counts))
        t_xc, res = best_of(3, lambda: exchange_design(rows, cmat, block, counts))
        print(f"  {name:<8}  exhaustive {t_ex * 1e3:8.1f} ms ({n_designs} designs)   exchange {t_xc * 1e3:7.1f} ms   "
              f"ratio {t_ex / t_xc:5.1f}   exchange/optimum - 1 = {res.value / best - 1:.1e}")
        per_design = t_ex / n_designs

    print("full case: 10 yr x 12 visits a year, every Sun-allowed day (45 deg), 8 parameters")
    ra, dec, start = 118.5, 21.0, 62000.0
    t = time.perf_counter()
    window = SunWindow.compute(ra, dec, 45.0, start, start + 3653)
    t_sun = time.perf_counter() - t
    cand = window.mjd[(window.mjd >= start) & (window.mjd <= start + 10 * 365.25) & window.safe()]
    t = time.perf_counter()
    rows = candidate_rows(ra, dec, cand, 2)
    t_rows = time.perf_counter() - t
    block, counts = year_blocks(cand, regular_epochs(start, 10, 12), start, 10)
    log_designs = sum(log10(comb(int(np.count_nonzero(block == b)), int(n))) for b, n in enumerate(counts))
    print(f"  {cand.size} candidate days, {counts.sum()} visits; an exhaustive search would visit 10^{log_designs:.0f} "
          f"designs, about 10^{log_designs + log10(per_design):.0f} s at the reduced case's cost per design")
    print(f"  Sun window {t_sun:.2f} s, design rows {t_rows:.2f} s (shared by both schedules)")
    for name, direction in (("parallax", None), ("motion", np.array([0.6, -0.8]))):
        cmat = schedule_combinations(name, direction, rows.shape[1])
        t, c = time.perf_counter(), time.process_time()
        res = exchange_design(rows, cmat, block, counts)
        dt, dc = time.perf_counter() - t, time.process_time() - c
        print(f"  {name:<8}  optimiser {dt:.2f} s wall, {dc:.2f} s CPU  ({res.exchanges} exchanges)")


if __name__ == "__main__":
    main()
