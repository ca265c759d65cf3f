"""Batch benchmark: scaling from 1 to 2 local workers, and a paper estimate for a survey.

1. Runs the invented demo population (data_demo/population.ecsv) with
   1 and with 2 dask workers, side by side, and prints the wall times and speed-up.
2. Times one task of a survey-sized configuration (20,000 star draws against 50
   associations, default control runs, ages) and prints the expected wall time for
   3,000 such stars on N workers: T = ceil(3000 / N) x t_task (tasks are independent;
   scheduling overhead measured in step 1 is small against t_task).

Usage: python scripts/bench_batch.py [--quick]
"""

import argparse
import math
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout

DEMO = ROOT / "data_demo"


def run_batch(workers, out, samples):
    """Wall time of the whole command and of its task phase (from batch.json), seconds."""
    import json

    t0 = time.perf_counter()
    r = subprocess.run([sys.executable, "-m", "kinage.cli", "batch", str(DEMO / "population.ecsv"), "--scenario",
                        str(DEMO / "population_template.toml"), "--out", str(out), "--workers", str(workers),
                        "--samples", str(samples), "--quiet"], capture_output=True, text=True)
    if r.returncode != 0:
        raise SystemExit(f"batch failed: {r.stderr}")
    total = time.perf_counter() - t0
    return total, json.loads((Path(out) / "batch.json").read_text())["timing"]["tasks_s"]


def survey_task(tmp, n_draws, n_assoc):
    """Seconds for one star's trace + ages with n_draws x n_assoc (associations invented at random)."""
    from kinage import scenario_from_dict
    from kinage.ages import compare_ages
    from kinage.orbits import trace

    rng = np.random.default_rng(0)
    head = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
            "radial_velocity,radial_velocity_error,radius,age")
    rows = [f"Survey Group-{i},{rng.uniform(0, 360):.3f},{rng.uniform(-30, 30):.3f},{rng.uniform(150, 1000):.1f},"
            f"20,{rng.normal(0, 5):.2f},0.3,{rng.normal(0, 5):.2f},0.3,{rng.normal(0, 15):.1f},2,25,20"
            for i in range(n_assoc)]
    p = Path(tmp) / "survey_assoc.csv"
    p.write_text("\n".join([head] + rows) + "\n")
    scn = scenario_from_dict({
        "star": {"name": "Survey star", "ra": 120.0, "dec": -20.0, "parallax": 2.0, "parallax_error": 0.2,
                 "pm_ra_cosdec": -40.0, "pm_ra_cosdec_error": 1.0, "pm_dec": 25.0, "pm_dec_error": 1.0,
                 "spin_period": 2.9, "spin_period_derivative": 1.2e-14, "temperature": "130 eV",
                 "temperature_error": "5 eV"},
        "trace": {"associations": str(p), "samples": n_draws, "max_age": 10.0, "seed": 1},
        "ages": {}})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        trace(scn, samples=100)  # warm-up
        t0 = time.perf_counter()
        res = trace(scn)
        compare_ages(scn, kinematic_age_samples=res.plane_crossing_age_samples(), rng=1)
    return time.perf_counter() - t0


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="a smaller survey task (scaled to the full size)")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        from astropy.table import Table

        n_stars = len(Table.read(DEMO / "population.ecsv", format="ascii.ecsv"))
        n_assoc = len(Table.read(DEMO / "associations.ecsv", format="ascii.ecsv"))
        print(f"batch scaling, {n_stars} invented stars x {n_assoc} associations, local dask processes; 'tasks' is "
              "the time from")
        print("submission to the last result (includes each worker's first import of kinage, ~3 s)")
        print(f"{'draws/star':>10} {'1 worker (s)':>14} {'2 workers (s)':>14} {'speed-up':>9} "
              f"{'tasks 1 (s)':>12} {'tasks 2 (s)':>12} {'speed-up':>9}")
        for samples in (400, 2000):
            t1, k1 = run_batch(1, Path(tmp) / f"w1-{samples}", samples)
            t2, k2 = run_batch(2, Path(tmp) / f"w2-{samples}", samples)
            print(f"{samples:10d} {t1:14.1f} {t2:14.1f} {t1 / t2:9.2f} {k1:12.1f} {k2:12.1f} {k1 / k2:9.2f}")
        n_draws = 5000 if args.quick else 20000
        t_task = survey_task(tmp, n_draws, 50) * (20000 / n_draws)
    print(f"\nsurvey task: 20,000 draws x 50 associations, 10 Myr, default control runs: {t_task:.1f} s per star"
          + (" (scaled from 5,000 draws)" if args.quick else ""))
    print(f"{'workers':>8} {'wall time for 3,000 stars':>28}")
    for n in (1, 2, 8, 32, 128, 512):
        hours = math.ceil(3000 / n) * t_task / 3600
        print(f"{n:8d} {hours:24.2f} h")


if __name__ == "__main__":
    main()
