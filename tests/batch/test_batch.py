"""Batch runs: resumable after interruption, independent of worker count, robust to a bad row."""

import json
import os
import signal
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from astropy.table import Table

from kinage.batch.runner import SIGNAL_AFTER_ENV
from kinage.batch.stars import read_star_rows, star_seed
from kinage.errors import InputError

DEMO = Path(__file__).resolve().parents[2] / "data_demo"
N_STARS = 4  # enough for two workers, an interruption part-way and a corrupt third row

TEMPLATE = """
[star]
name = "template"

[trace]
associations = "{assoc}"
samples = 80
association_samples = 20
control_runs = 2
max_age = "2 Myr"
seed = 42

[ages]
samples = 300
"""


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    d = tmp_path_factory.mktemp("batch_inputs")
    tab = Table.read(DEMO / "population.ecsv")[:N_STARS]
    tab.write(d / "stars.ecsv")
    bad = tab.copy()
    bad["parallax_error"][2] = -1.0  # one corrupt row
    bad.write(d / "stars_bad.ecsv")
    (d / "template.toml").write_text(TEMPLATE.format(assoc=(DEMO / "associations.ecsv").as_posix()))
    return d


def _batch(inputs, out, *extra, stars="stars.ecsv", wait=True, env=None):
    cmd = [sys.executable, "-m", "kinage.cli", "batch", str(inputs / stars), "--scenario", str(inputs / "template.toml"),
           "--out", str(out), *extra]
    if not wait:
        return subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                                start_new_session=True, env=env)
    return subprocess.run(cmd, capture_output=True, text=True, timeout=600)


def _results(out):
    recs = {}
    for f in sorted(Path(out, "stars").glob("*/star.json")):
        r = json.loads(f.read_text())
        recs[r["name"]] = r
    return recs


def _numbers(rec):
    res = rec["results"]
    t, a = res["trace"], res["ages"]
    return (t["associations"][0]["encounter_fraction"], t["associations"][0]["age_yr"]["median"],
            t["plane_crossing_age_yr"]["median"], a["characteristic_age_yr"], a["cooling_age_yr"]["median"])


@pytest.fixture(scope="module")
def reference(inputs, tmp_path_factory):
    out = tmp_path_factory.mktemp("batch_ref")
    r = _batch(inputs, out, "--workers", "2", "--quiet")
    assert r.returncode == 0, r.stderr
    return out


def test_all_stars_done_with_summary(reference):
    recs = _results(reference)
    assert len(recs) == N_STARS and all(r["status"] == "ok" for r in recs.values())
    summary = Table.read(reference / "summary.ecsv")
    assert len(summary) == N_STARS and (reference / "population.png").stat().st_size > 1000
    assert json.loads((reference / "batch.json").read_text())["n_failed"] == 0


def test_rerun_skips_finished_stars(inputs, reference):
    r = _batch(inputs, reference, "--workers", "1")
    assert r.returncode == 0
    assert f"{N_STARS} already done, 0 to run" in r.stdout


@pytest.fixture(scope="module")
def forced_one_worker(inputs, reference, tmp_path_factory):
    """A copy of the finished reference batch redone from scratch with ``--force`` on one worker.

    Returns (output folder, completed process, input hashes before the rerun).  One run serves both the
    worker-count test and the --force test: every star is recomputed, by a single worker.
    """
    import shutil

    out = tmp_path_factory.mktemp("batch_forced") / "forced"
    shutil.copytree(reference, out)
    before = {n: r["input_hash"] for n, r in _results(out).items()}
    for f in out.glob("stars/*/star.json"):  # mark the copies so that a skipped star would show
        rec = json.loads(f.read_text())
        rec["results"]["trace"]["associations"][0]["encounter_fraction"] = -1.0
        f.write_text(json.dumps(rec))
    r = _batch(inputs, out, "--workers", "1", "--force")
    return out, r, before


def test_one_worker_gives_identical_numbers(reference, forced_one_worker):
    # seeds derive from the batch seed and each star's name, not from scheduling (common practice, no source)
    out, r, _ = forced_one_worker
    assert r.returncode == 0, r.stderr
    a, b = _results(reference), _results(out)
    assert set(a) == set(b)
    for name in a:
        assert _numbers(a[name]) == _numbers(b[name]), name


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
def test_interrupted_batch_resumes_without_loss_or_duplicates(inputs, reference, tmp_path, sig):
    # Deterministic interruption: the runner's test hook sends the process the real signal once the first star
    # has finished (its handlers run as for a signal from outside), so the stop always falls part-way.
    out = tmp_path / "killed"
    env = dict(os.environ, **{SIGNAL_AFTER_ENV: f"1 {signal.Signals(sig).name}"})
    p = _batch(inputs, out, "--workers", "2", wait=False, env=env)
    _, err = p.communicate(timeout=300)
    n_done = len(list((out / "stars").glob("*/star.json")))
    # 130 after SIGINT, 143 after SIGTERM (128 + signal number), each with a message (POSIX shell convention)
    assert p.returncode == 128 + sig, err
    assert err.strip()
    assert 1 <= n_done < N_STARS
    r = _batch(inputs, out, "--workers", "2", "--quiet")
    assert r.returncode == 0, r.stderr
    folders = [f for f in (out / "stars").iterdir()]
    assert sorted(f.name for f in folders) == sorted(f.name for f in (reference / "stars").iterdir())
    assert not any(f.name.startswith(".") for f in folders)  # no half-written folders left
    a, b = _results(reference), _results(out)
    assert set(a) == set(b)
    for name in a:
        assert _numbers(a[name]) == _numbers(b[name]), name


def test_corrupt_row_fails_alone(inputs, tmp_path):
    r = _batch(inputs, tmp_path / "bad", "--workers", "2", stars="stars_bad.ecsv")
    assert r.returncode == 1  # the exit status counts failed stars
    recs = _results(tmp_path / "bad")
    failed = [n for n, rec in recs.items() if rec["status"] != "ok"]
    assert failed == ["Pop-03"]
    assert "parallax_error" in recs["Pop-03"]["reason"]
    assert "Pop-03" in r.stderr


def test_star_seed_depends_only_on_batch_seed_and_name():
    assert star_seed(42, "Pop-01") == star_seed(42, "Pop-01")
    assert star_seed(42, "Pop-01") != star_seed(42, "Pop-02")
    assert star_seed(42, "Pop-01") != star_seed(43, "Pop-01")


def test_star_table_validation(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("name,ra,dec,colour\nA,1,2,red\n")
    with pytest.raises(InputError, match="unknown columns"):
        read_star_rows(p)
    p.write_text("name,ra,dec\nA,1,2\nA,3,4\n")
    with pytest.raises(InputError, match="row 2, column 'name'.*duplicate"):
        read_star_rows(p)
    p.write_text("ra,dec\n1,2\n")
    with pytest.raises(InputError, match="'name' column"):
        read_star_rows(p)
    rows = read_star_rows(DEMO / "population.ecsv")
    assert len(rows) >= 10 and rows[0]["parallax"].endswith("mas")  # the demo population has 14 stars
    assert np.isfinite(float(rows[0]["ra"].split()[0]))


def test_scheduler_address_uses_the_same_code_path(inputs, reference, tmp_path):
    # a dask cluster started elsewhere, reached by address: same results as the local default
    from dask.distributed import LocalCluster

    with LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        r = _batch(inputs, tmp_path / "remote", "--scheduler", cluster.scheduler_address, "--quiet")
    assert r.returncode == 0, r.stderr
    a, b = _results(reference), _results(tmp_path / "remote")
    assert {n: _numbers(x) for n, x in a.items()} == {n: _numbers(x) for n, x in b.items()}


def test_force_redoes_finished_stars(forced_one_worker):
    out, r, first = forced_one_worker
    assert r.returncode == 0 and f"0 already done, {N_STARS} to run" in r.stdout
    recs = _results(out)
    assert {n: rec["input_hash"] for n, rec in recs.items()} == first
    # every star was recomputed: none keeps the marker written into the finished copies
    assert all(rec["results"]["trace"]["associations"][0]["encounter_fraction"] >= 0 for rec in recs.values())


def test_population_summary_keeps_kinematic_age_and_plane_crossing_apart():
    # a favoured association gives the kinematic age; a star without one and with most draws crossing the
    # plane gives only the plane-crossing time; one whose draws mostly never crossed has neither
    from kinage.batch.summary import summary_table
    from kinage.report.population import population_summary

    def rec(name, fav, p, frac, age=None):
        best = {"name": "Quillon Group", "probability": p, "probability_error": 0.03, "encounter_fraction": 0.02,
                "chance_fraction": 0.001, "age_yr": {"median": age, "lo68": age and 0.9 * age, "hi68": age and 1.1 * age}}
        trace = {"associations": [best], "favoured": fav, "field_probability": 1 - p, "field_probability_error": 0.03,
                 "plane_crossing_age_yr": {"median": 2e6, "lo68": 1.5e6, "hi68": 2.5e6},
                 "plane_crossing_fraction": frac, "samples_used": 2000, "precision_reached": True}
        ages = {"kinematic_age_source": "plane-crossing" if not fav else "trace: encounters",
                "kinematic_age_yr": {"median": age or 2e6}, "characteristic_age_yr": 3e6}
        return {"name": name, "status": "ok", "results": {"trace": trace, "ages": ages}}

    t = summary_table([rec("Fen-1", "Quillon Group", 0.8, 0.9, age=1e6), rec("Fen-2", None, 0.46, 0.9),
                       rec("Fen-3", None, 0.02, 0.2)])
    assert list(t["kinematic_age"][:1]) == [1e6] and np.isnan(t["kinematic_age"][1]) and np.isnan(t["kinematic_age"][2])
    assert np.isnan(t["plane_crossing_time"][2]) and t["plane_crossing_time"][1] == 2e6
    assert list(t["probability"]) == [0.8, 0.46, 0.02]  # 0.46 is told from 0.02
    assert list(t["best_association"]) == ["Quillon Group"] * 3 and t["favoured_association"][1] == ""
    text = population_summary(t)
    assert "1 is traced to a favoured birth association" in text
    assert "1 crossed the Galactic plane" in text and "1 has neither" in text
