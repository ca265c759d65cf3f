"""Ctrl-C after an orbit integration: the same in every stage and in a Python session afterwards.

galpy's C integrators install their own SIGINT handler (sigaction in galpy/util/bovy_rk.c and
bovy_symplecticode.c, which only sets a flag) and do not restore the previous one; kinage must put the
process's handler back after every integration.  The expected behaviour (Ctrl-C raises KeyboardInterrupt;
``kinage`` exits 130, the shell convention 128 + SIGINT) is Python's and POSIX's documented behaviour; the
subprocesses are bounded by timeouts.
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from .conftest import files_under, scenario_dict, write_case

ROOT = Path(__file__).resolve().parents[2]


def _env():
    return dict(os.environ, PYTHONUNBUFFERED="1", PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""),
                OMP_NUM_THREADS="1")


def _small_trace(folder, tables=("trace",)):
    return write_case(folder, scenario_dict(tables=tables, trace={"samples": 30, "association_samples": 5,
                                                                   "control_runs": 0, "max_age": "2 Myr"}))


_SESSION = """
import signal, sys, threading, time, os
import kinage
res = kinage.trace({scenario!r}, samples=30)
ok_handler = signal.getsignal(signal.SIGINT) is signal.default_int_handler
threading.Timer(0.5, lambda: os.kill(os.getpid(), signal.SIGINT)).start()
t0 = time.time()
try:
    while time.time() - t0 < 20:  # the user's own next computation
        sum(range(10000))
    print("loop ran to its end")
except KeyboardInterrupt:
    print("interrupted after %.1f s" % (time.time() - t0))
print("handler is Python's default:", ok_handler)
# a Ctrl-C caught by galpy's own handler outside any kinage call leaves its C flag set: the next call still runs
import ctypes
from galpy.util._load_extension_libs import load_libgalpy
ctypes.c_int.in_dll(load_libgalpy()[0], "interrupted").value = 1
res2 = kinage.trace({scenario!r}, samples=30)
print("second trace ran:", res2.n_samples)
"""


def test_ctrl_c_interrupts_the_users_next_computation_after_kinage_trace(tmp_path):
    scn = _small_trace(tmp_path / "in")
    r = subprocess.run([sys.executable, "-c", _SESSION.format(scenario=str(scn))], capture_output=True, text=True,
                       timeout=180, env=_env(), cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert "interrupted after" in r.stdout, r.stdout
    assert float(r.stdout.split("interrupted after ")[1].split()[0]) < 5
    assert "handler is Python's default: True" in r.stdout
    assert "second trace ran: 30" in r.stdout


# `kinage run` in a subprocess whose ages stage (after the trace's integrations) waits, announcing itself
_SLOW_AGES = """
import sys, time
import kinage.pipeline as pipeline
from kinage.cli import main
real = pipeline.run_stage
def run_stage(name, *a, **k):
    if name == "ages":
        print("AGES STARTED", flush=True)
        t0 = time.time()
        while time.time() - t0 < 30:
            time.sleep(0.05)
    return real(name, *a, **k)
pipeline.run_stage = run_stage
sys.exit(main(sys.argv[1:]))
"""


def _snapshot(folder):
    return {f: (Path(folder) / f).read_bytes() for f in files_under(folder)}


def test_sigint_after_the_integration_stops_the_run_and_keeps_previous_results(tmp_path):
    scn = _small_trace(tmp_path / "in", tables=("trace", "ages"))
    out = tmp_path / "out"
    from kinage.cli import main

    previous = write_case(tmp_path / "in", scenario_dict(tables=()), "previous.toml")
    assert main(["run", str(previous), "--out", str(out), "--quiet"]) == 0  # earlier results, without stages
    before = _snapshot(out)
    proc = subprocess.Popen([sys.executable, "-c", _SLOW_AGES, "run", str(scn), "--out", str(out), "--quiet",
                             "--seed", "9"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=_env(),
                            cwd=tmp_path)
    try:
        line = proc.stdout.readline()  # blocks until the ages stage starts (the trace has integrated)
        assert "AGES STARTED" in line, proc.communicate(timeout=60)
        time.sleep(0.3)
        t0 = time.time()
        proc.send_signal(signal.SIGINT)
        _, err = proc.communicate(timeout=60)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert time.time() - t0 < 10, "Ctrl-C was ignored"
    assert proc.returncode == 130, err
    assert "interrupted" in err and "Traceback" not in err
    assert _snapshot(out) == before


@pytest.mark.slow
def test_one_ctrl_c_during_a_long_trace_stops_it(tmp_path):
    scn = write_case(tmp_path / "in", scenario_dict(tables=("trace",), trace={
        "samples": 40000, "max_samples": 40000, "control_runs": 2, "max_age": "400 Myr",
        "association_samples": 100}))
    out = tmp_path / "out"
    proc = subprocess.Popen([sys.executable, "-m", "kinage", "run", str(scn), "--out", str(out), "--quiet"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=dict(_env(), OMP_NUM_THREADS="2"), cwd=tmp_path)
    try:
        t0 = time.time()
        while not list(tmp_path.glob(".out.staging-*")):  # the run has started (the trace integrates next)
            assert proc.poll() is None, proc.communicate()
            assert time.time() - t0 < 120
            time.sleep(0.2)
        time.sleep(3.0)
        t1 = time.time()
        proc.send_signal(signal.SIGINT)
        _, err = proc.communicate(timeout=120)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == 130, err
    assert time.time() - t1 < 30, "a single Ctrl-C took too long"
    assert "interrupted" in err and "Traceback" not in err
    assert not out.exists()
