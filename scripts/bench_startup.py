"""Start-up benchmark: ``kinage --help`` and ``import kinage`` against ``python -c "import numpy"``.

Each command runs in a fresh process; the runs are interleaved and repeated,
and the minimum wall time of each is kept (the machine is shared).  Also lists
which of the heavy modules (astropy.coordinates, galpy, scipy.stats,
matplotlib) each start-up loads.

Usage: python scripts/bench_startup.py [--repeats 7]
"""

import argparse
import shutil
import subprocess
import sys
import time
from pathlib import Path

HEAVY = ("astropy", "astropy.coordinates", "galpy", "scipy", "scipy.stats", "matplotlib", "numpy")


def _kinage():
    exe = shutil.which("kinage", path=str(Path(sys.executable).parent)) or shutil.which("kinage")
    return [exe] if exe else [sys.executable, "-m", "kinage"]


def _wall(cmd):
    t0 = time.perf_counter()
    subprocess.run(cmd, capture_output=True, check=True)
    return time.perf_counter() - t0


def _loaded(code):
    probe = code + f"\nimport sys\nprint(','.join(m for m in {HEAVY!r} if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True)
    return out.stdout.strip().splitlines()[-1] if out.stdout.strip() else ""


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=7)
    args = ap.parse_args()
    cmds = {
        "python -c 'import numpy'": [sys.executable, "-c", "import numpy"],
        "kinage --help": _kinage() + ["--help"],
        "kinage trace --help": _kinage() + ["trace", "--help"],
        "python -c 'import kinage'": [sys.executable, "-c", "import kinage"],
        "python -c 'pass'": [sys.executable, "-c", "pass"],
    }
    times = {k: [] for k in cmds}
    for _ in range(args.repeats):
        for k, c in cmds.items():
            times[k].append(_wall(c))
    best = {k: min(v) for k, v in times.items()}
    ref = best["python -c 'import numpy'"]
    print(f"start-up, fresh processes, minimum of {args.repeats} interleaved runs")
    for k, t in best.items():
        print(f"  {k:28s} {t * 1000:7.0f} ms   ratio to import numpy {t / ref:5.2f}")
    print("  target: kinage --help / import numpy <= 2.5")
    help_code = ("import io, contextlib\nfrom kinage.cli import main\nwith contextlib.redirect_stdout(io.StringIO()):\n"
                 "    try:\n        main(['--help'])\n    except SystemExit:\n        pass")
    for label, code in (("import kinage", "import kinage"), ("kinage --help", help_code)):
        print(f"  heavy modules loaded by {label}: {_loaded(code) or 'none'} (of {', '.join(HEAVY)})")


if __name__ == "__main__":
    main()
