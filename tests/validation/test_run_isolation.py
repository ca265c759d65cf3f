"""Runs never mix: staging folder, lock, interruption by SIGINT / SIGTERM.

Expected behaviour is the project's rule (results replaced only by a complete run; common practice, no
source).  The fast cases run in process; the signal cases run ``python -m kinage`` as a subprocess.
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from .conftest import assert_one_line_error, files_under, run_cli, scenario_dict, write_case


def _snapshot(folder):
    return {f: (Path(folder) / f).read_bytes() for f in files_under(folder)}


def _forecast_only(tmp_path, **changes):
    return write_case(tmp_path / "in", scenario_dict(tables=("campaign",), **changes))


def _star_only(tmp_path):
    return write_case(tmp_path / "in", scenario_dict(tables=()))  # no stage: results.json and the report only


def test_completed_run_replaces_previous_results_as_a_whole(tmp_path, capsys):
    out = tmp_path / "out"
    status, _, err = run_cli(["run", _star_only(tmp_path), "--out", out, "--quiet"], capsys)
    assert status == 0, err
    (out / "forecast").mkdir()
    (out / "forecast" / "stale_from_old_run.png").write_bytes(b"old")
    from kinage.io.ownership import manifest_entries, read_manifest, write_manifest

    # as if the earlier run had written it: listed in the folder's manifest
    stale = out / "forecast" / "stale_from_old_run.png"
    write_manifest(out, {**read_manifest(out), **manifest_entries(out, "run", [stale])})
    status, _, err = run_cli(["run", _star_only(tmp_path), "--out", out, "--quiet"], capsys)
    assert status == 0, err
    assert not (out / "forecast").exists()
    assert (out / "results.json").is_file() and (out / "report.md").is_file()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]  # no staging folder or lock left


def test_interrupted_run_leaves_previous_results_untouched(tmp_path, capsys, monkeypatch):
    out = tmp_path / "out"
    status, _, err = run_cli(["run", _star_only(tmp_path), "--out", out, "--quiet"], capsys)
    assert status == 0, err
    before = _snapshot(out)
    scn = write_case(tmp_path / "in2", scenario_dict(tables=("ages",)))

    import kinage.pipeline as pipeline

    real = pipeline.run_stage

    def interrupted(name, *a, **k):
        if name == "ages":  # the run has started writing into its staging folder
            raise KeyboardInterrupt
        return real(name, *a, **k)

    monkeypatch.setattr(pipeline, "run_stage", interrupted)
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert status == 130 and "interrupted" in err
    assert _snapshot(out) == before
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]


def test_second_run_into_a_locked_folder_stops_with_one_line(tmp_path, capsys):
    from kinage.io.rundir import output_lock

    out = tmp_path / "out"
    with output_lock(out):
        for verb in ("run", "forecast"):
            status, _, err = run_cli([verb, _forecast_only(tmp_path), "--out", out], capsys)
            line = assert_one_line_error(status, err, "--out", "another kinage run")
            assert str(os.getpid()) in line
    assert not out.exists()


def test_lock_holds_across_processes(tmp_path):
    from kinage.io.rundir import output_lock

    out = tmp_path / "out"
    with output_lock(out):
        r = subprocess.run([sys.executable, "-m", "kinage", "run", str(_forecast_only(tmp_path)), "--out", str(out)],
                           capture_output=True, text=True, timeout=120)
    assert r.returncode == 2 and "another kinage run" in r.stderr and len(r.stderr.strip().splitlines()) == 1
    assert not out.exists()


def test_foreign_folder_is_not_replaced(tmp_path, capsys):
    out = tmp_path / "mine"
    out.mkdir()
    (out / "notes.txt").write_text("my notes\n")
    status, _, err = run_cli(["run", _forecast_only(tmp_path), "--out", out], capsys)
    assert_one_line_error(status, err, "--out", "holds files kinage did not write: notes.txt", "--force")
    assert files_under(out) == ["notes.txt"]


def _slow_trace(tmp_path):
    # a trace of a few minutes (well inside the limits) so that a signal arrives mid-integration
    return write_case(tmp_path / "in", scenario_dict(tables=("trace",), trace={
        "samples": 4000, "control_runs": 2, "max_age": "400 Myr", "association_samples": 100}))


def _start(tmp_path, out):
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    proc = subprocess.Popen([sys.executable, "-m", "kinage", "run", str(_slow_trace(tmp_path)), "--out", str(out),
                             "--quiet"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
    t0 = time.time()
    while not list(tmp_path.glob(".out.staging-*")):  # the run has started writing
        assert proc.poll() is None, proc.communicate()
        assert time.time() - t0 < 90
        time.sleep(0.2)
    time.sleep(1.0)
    return proc


@pytest.mark.slow
@pytest.mark.parametrize("sig,code,word", [(signal.SIGTERM, 143, "terminated"), (signal.SIGINT, 130, "interrupted")])
def test_signal_ends_with_a_message_and_no_partial_results(tmp_path, sig, code, word):
    out = tmp_path / "out"
    proc = _start(tmp_path, out)
    proc.send_signal(sig)
    if sig == signal.SIGINT:  # a second Ctrl-C must stop it promptly even inside the integration
        time.sleep(0.3)
        proc.send_signal(sig)
    t0 = time.time()
    _, err = proc.communicate(timeout=60)
    assert time.time() - t0 < 15, "did not stop promptly"
    # -SIGINT: the second Ctrl-C came after the first had already ended the run (a shell shows 130 either way)
    assert proc.returncode == code or (sig == signal.SIGINT and proc.returncode == -sig), err
    assert word in err and "Traceback" not in err
    assert not out.exists()  # a fresh folder: nothing, not a half run


_STUCK = """
import sys, time
import numpy as np
from kinage.interrupts import interrupt_guard
a = np.random.default_rng(0).random((4000, 4000))
with interrupt_guard("kinage test"):
    print("ready", flush=True)
    for _ in range(20):
        a @ a  # compiled code: Python signal handlers wait until it returns
print("not stopped", flush=True)
"""


@pytest.mark.slow
def test_second_ctrl_c_stops_compiled_code_promptly(tmp_path):
    env = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1", MKL_NUM_THREADS="1")
    proc = subprocess.Popen([sys.executable, "-c", _STUCK], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, env=env)
    assert proc.stdout.readline().strip() == "ready"
    time.sleep(0.5)
    proc.send_signal(signal.SIGINT)
    time.sleep(0.3)
    t0 = time.time()
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=120)
    assert time.time() - t0 < 3, "the second Ctrl-C did not stop the process promptly"
    assert proc.returncode == 130 and "interrupted again" in err and "not stopped" not in out
