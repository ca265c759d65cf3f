"""The wheel installs into a fresh virtual environment and runs the demo and the batch from an empty folder.

Offline and fast: the wheel is built without build isolation, and the fresh environment sees this
environment's dependencies through a .pth file (no download); the wheel itself is installed with --no-deps.
"""

import json
import os
import subprocess
import sys
import sysconfig
import venv
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def _run(cmd, cwd, timeout=180):
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "VIRTUAL_ENV", "MPLBACKEND")}
    env["HOME"] = str(cwd)  # galpy may write its config file here, not in the developer's home
    proc = subprocess.run(cmd, cwd=cwd, env=env, capture_output=True, text=True, timeout=timeout)
    assert proc.returncode == 0, f"{cmd} failed:\n{proc.stdout[-2000:]}\n{proc.stderr[-3000:]}"
    return proc


@pytest.mark.slow
def test_wheel_runs_demo_and_batch_from_an_empty_folder(tmp_path):
    wheels = tmp_path / "wheels"
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q", "-w", str(wheels),
          str(ROOT)], cwd=tmp_path)
    wheel = next(wheels.glob("kinage-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    assert "kinage/data_demo/scenario.toml" in names  # demo data ships inside the package
    assert any(n.endswith("licenses/LICENSE") for n in names)

    env_dir = tmp_path / "fresh"
    venv.EnvBuilder(with_pip=False).create(env_dir)
    py = env_dir / "bin" / "python"
    site = Path(_run([str(py), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                     cwd=tmp_path).stdout.strip())
    # the current environment's packages (numpy, astropy, galpy, dask, pip, ...) without downloading them;
    # a plain path line does not run that folder's .pth files, so the editable kinage stays invisible
    (site / "_parent_env.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    _run([str(py), "-m", "pip", "install", "--no-deps", "--no-index", "-q", str(wheel)], cwd=tmp_path)

    empty = tmp_path / "empty"
    empty.mkdir()
    where = _run([str(py), "-c", "import kinage, kinage._resources as r; print(kinage.__file__); "
                  "print(r.demo_data_folder())"], cwd=empty).stdout.split()
    assert str(site) in where[0] and str(site) in where[1]  # the installed copy, not the source tree

    kinage = env_dir / "bin" / "kinage"
    _run([str(kinage), "demo", "--out", "demo", "--samples", "100", "--quiet"], cwd=empty)
    results = json.loads((empty / "demo" / "results" / "results.json").read_text())
    assert results["stages_completed"] and not results["failed_stage"]
    assert (empty / "demo" / "results" / "report.html").is_file()

    demo = empty / "demo"
    _run([str(kinage), "batch", str(demo / "population.ecsv") if (demo / "population.ecsv").exists()
          else str(site / "kinage" / "data_demo" / "population.ecsv"),
          "--scenario", str(site / "kinage" / "data_demo" / "population_template.toml"),
          "--out", "population", "--samples", "20", "--workers", "1", "--quiet"], cwd=empty, timeout=240)
    made = {p.name for p in (empty / "population").iterdir()}
    assert {"batch.json", "summary.ecsv"} <= made, made
    batch = json.loads((empty / "population" / "batch.json").read_text())
    import astropy.table

    stars = astropy.table.Table.read(site / "kinage" / "data_demo" / "population.ecsv", format="ascii.ecsv")
    assert batch["n_stars"] == len(stars) and batch["n_failed"] == 0
