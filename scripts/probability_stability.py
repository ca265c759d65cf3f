"""Do birth probabilities settle as Monte Carlo draws are added?  2,000 against 8,000 draws on synthetic births.

Stars born in invented associations are flown to today with galpy directly (the
injection of ``calibrate_probabilities.py``), observed with realistic errors
and no radial velocity, and traced twice with different seeds: with ``--low``
and with ``--high`` draws.  Printed per star: the true parent's probability at
both, its stated Monte Carlo error, the largest decoy probability and the
star's distance; then how many stars moved by less than 0.1.  A probability is
a ratio of Monte Carlo averages, so it must converge rather than drift with
the number of draws; the change should stay within a few stated errors.

Usage::

    python scripts/probability_stability.py --stars 22 --associations 3
"""

import argparse
import importlib.util
import sys
import time
from pathlib import Path

import numpy as np


def _calibration():
    path = Path(__file__).resolve().parent / "calibrate_probabilities.py"
    spec = importlib.util.spec_from_file_location("calibrate_probabilities", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--stars", type=int, default=22)
    ap.add_argument("--associations", type=int, default=3)
    ap.add_argument("--low", type=int, default=2000)
    ap.add_argument("--high", type=int, default=8000)
    ap.add_argument("--seed", type=int, default=31)
    ap.add_argument("--out", default="stability_run")
    args = ap.parse_args(argv)
    cp = _calibration()
    rng = np.random.default_rng(args.seed)
    assoc = cp.make_associations(rng, args.associations)
    stars = cp.inject_population(rng, assoc, args.stars, kinds=["member"] * args.stars)
    rows = cp.observe(rng, stars, prefix="Steady")
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    path = cp.write_associations(out / "associations.csv", assoc)
    t0 = time.time()
    low = cp.trace_rows(rows, path, args.low, 0.5, seed=1000)
    high = cp.trace_rows(rows, path, args.high, 0.5, seed=5000)
    print(f"{len(rows)} members of {len(assoc)} associations traced with {args.low} and {args.high} draws "
          f"in {time.time() - t0:.0f} s")
    print(f"  {'star':>11}  {'d (pc)':>6}  {'P_low':>6} {'err':>5}  {'P_high':>6} {'err':>5}  {'change':>6}  "
          f"{'change/err':>10}  {'max decoy':>9}")
    changes, pulls, decoys = [], [], []
    for r, s, a, b in zip(rows, stars, low, high):
        if a is None or b is None:
            continue
        pa = {x["name"]: x for x in a["associations"]}
        pb = {x["name"]: x for x in b["associations"]}
        t = s["truth"]
        d = pb[t]["probability"] - pa[t]["probability"]
        err = float(np.hypot(pa[t]["probability_error"], pb[t]["probability_error"]))
        dec = max([x["probability"] for n, x in pb.items() if n != t] + [0.0])
        changes.append(abs(d))
        pulls.append(abs(d) / max(err, 1e-6))
        decoys.append(dec)
        print(f"  {r['name']:>11}  {s['distance_pc']:6.0f}  {pa[t]['probability']:6.3f} {pa[t]['probability_error']:5.3f}"
              f"  {pb[t]['probability']:6.3f} {pb[t]['probability_error']:5.3f}  {d:+6.3f}  {pulls[-1]:10.1f}"
              f"  {dec:9.3f}")
    changes, pulls = np.array(changes), np.array(pulls)
    print(f"changed by < 0.1: {np.sum(changes < 0.1)} of {changes.size}; largest change {changes.max():.3f}; "
          f"median |change| / stated error {np.median(pulls):.2f}; within 3 errors: {np.sum(pulls < 3)}; "
          f"largest decoy {max(decoys):.3f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
