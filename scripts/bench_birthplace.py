"""Benchmark of the birthplace forecast against a plain trace of the same scenario; ratios measured in one run.

Every timing is the wall time of a fresh subprocess (imports included), repeated in turn and reduced to the
minimum (the machine is shared: minima of interleaved runs are the fairest figures):

* ``kinage trace S`` (today's astrometry, the scenario's draws and control runs);
* ``kinage forecast S`` (the Fisher forecast alone, for reference);
* ``kinage forecast S --birthplace`` with 200 outcomes (the default): the trace, the forecast, the outcomes,
  the campaign-length sweep and the figure's data (no ``--out``, as the trace above writes none).

Two campaigns of the invented two-association star of ``tests/campaign/campaign_helpers.py`` (galpy's
MWPotential2014, 2,000 draws, 3 Myr): one whose outcomes all stay on the reweighted draws (TOA error
300 us: pm error ~50 mas/yr against today's 4) and one far more precise than today's data (TOA error 2 us),
whose outcomes need fresh draws.  The target (<= 3x a plain trace) is for the reweighting path.

Usage: python scripts/bench_birthplace.py [--repeats 2] [--samples 2000] [--outcomes 200]
"""

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "campaign"))


def _scenario(folder, toa_error, samples, outcomes):
    from campaign_helpers import write_scenario

    path = write_scenario(folder, toa_error=toa_error, samples=samples, outcomes=outcomes,
                          potential="MWPotential2014", time_steps=21, association_samples=200)
    return path


def _time(cmd, env):
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - t0


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=2)
    ap.add_argument("--samples", type=int, default=2000)
    ap.add_argument("--outcomes", type=int, default=200)
    args = ap.parse_args(argv)
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    kinage = [sys.executable, "-m", "kinage"]
    print(f"load average: {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    for label, toa in (("reweighting path (TOA error 300 us)", "300 us"), ("fresh draws (TOA error 2 us)", "2 us")):
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp) / toa.replace(" ", "")
            folder.mkdir()
            scn = str(_scenario(folder, toa, args.samples, args.outcomes))
            cmds = {"trace": kinage + ["trace", scn, "--quiet", "--json", str(folder / "t.json")],
                    "forecast": kinage + ["forecast", scn, "--quiet", "--json", str(folder / "f.json")],
                    "birthplace": kinage + ["forecast", scn, "--birthplace", "--quiet", "--json",
                                            str(folder / "b.json")]}
            best = {k: float("inf") for k in cmds}
            for _ in range(args.repeats):
                for k, cmd in cmds.items():
                    best[k] = min(best[k], _time(cmd, env))
            d = json.loads((folder / "b.json").read_text())["birthplace"]
            print(f"\n{label}: {args.samples} draws, {d['n_outcomes']} outcomes, methods {d['methods']}, "
                  f"smallest ESS {d['smallest_effective_sample_size']:.0f}, decisive probability "
                  f"{d['decisive_probability']:.2f}")
            for k in cmds:
                print(f"  {k:<11} {best[k]:6.2f} s   {best[k] / best['trace']:5.2f}x trace")
    return 0


if __name__ == "__main__":
    sys.exit(main())
