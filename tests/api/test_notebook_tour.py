"""The notebook-style worked example (docs/examples/notebook_tour.py) runs and finds its planted birthplace."""

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

TOUR = Path(__file__).resolve().parents[2] / "docs" / "examples" / "notebook_tour.py"


@pytest.mark.slow
def test_notebook_tour_runs_and_keeps_the_backend(tmp_path):
    env = dict(os.environ, KINAGE_TOUR_OUT=str(tmp_path), KINAGE_TOUR_SAMPLES="300")
    env.pop("MPLBACKEND", None)
    proc = subprocess.run([sys.executable, str(TOUR)], cwd=tmp_path, env=env, capture_output=True, text=True,
                          timeout=300)
    assert proc.returncode == 0, proc.stderr[-3000:]
    out = proc.stdout
    assert "backend kept: svg" in out  # the script asserts it too; kinage never calls matplotlib.use
    assert (tmp_path / "notebook_tour.svg").stat().st_size > 10_000  # four panels were drawn
    # The invented star was placed (astropy linear motion, tests' construction in the script's header) where a
    # star leaving Corvan OB2 1.1 Myr ago would be today: the trace must rank it first with an age near 1.1 Myr.
    assert re.search(r"<TraceResult: .*top association Corvan OB2", out), out
    age = re.search(r"<TraceResult: .*kinematic age ([0-9.]+) (kyr|Myr)", out)
    assert age and 0.8 < float(age.group(1)) * {"kyr": 1e-3, "Myr": 1.0}[age.group(2)] < 1.4, out
