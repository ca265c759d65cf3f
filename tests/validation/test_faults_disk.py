"""Ordinary faults in words: full disk, quota, read-only file system, too little free space, a closed pipe.

The error numbers are POSIX's (ENOSPC, EDQUOT, EROFS; errno(3)); a closed pipe on standard output is a normal
end for a command whose reader stopped reading (POSIX write(2): EPIPE; common practice for Unix filters, no
source).  Faults are injected with mocks (os.fsync, shutil.disk_usage) and a real pipe closed early.
"""

import errno
import os
import subprocess
import sys
from pathlib import Path

import pytest

from .conftest import files_under, run_cli, scenario_dict, write_case

ROOT = Path(__file__).resolve().parents[2]


def _snapshot(folder):
    return {f: (Path(folder) / f).read_bytes() for f in files_under(folder)}


def _star_only(folder):
    return write_case(folder, scenario_dict(tables=()))


@pytest.mark.parametrize("code,words", [(errno.ENOSPC, "no space left"), (errno.EDQUOT, "quota"),
                                        (errno.EROFS, "read-only")])
def test_a_disk_fault_while_writing_is_one_line_naming_the_folder(tmp_path, capsys, monkeypatch, code, words):
    scn = _star_only(tmp_path / "in")
    out = tmp_path / "out"
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert status == 0, err
    before = _snapshot(out)

    def full(fd):
        raise OSError(code, os.strerror(code))

    monkeypatch.setattr(os, "fsync", full)  # every atomic write flushes to disk before its rename
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet", "--seed", "3"], capsys)
    monkeypatch.undo()
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert status == 1 and len(lines) == 1, err
    assert words in lines[0] and str(out) in lines[0], lines[0]
    assert "unexpected" not in err and "Traceback" not in err and ".staging-" not in err
    assert _snapshot(out) == before  # the previous results stay
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]  # no temporary folder left


def test_too_little_free_space_stops_before_the_stages(tmp_path, capsys, monkeypatch):
    import shutil

    scn = _star_only(tmp_path / "in")
    out = tmp_path / "out"
    real = shutil.disk_usage
    monkeypatch.setattr(shutil, "disk_usage", lambda p: real(p)._replace(free=1_000_000))
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert status == 1 and len(lines) == 1 and "MB free" in lines[0] and str(out) in lines[0], err
    assert not out.exists()


_SLOW_SECOND_LINE = """
import sys, time
import kinage.pipeline as pipeline
from kinage.cli import main
real = pipeline.run_stage
def run_stage(name, *a, **k):
    time.sleep(0.5)  # the reader has gone by now
    return real(name, *a, **k)
pipeline.run_stage = run_stage
sys.exit(main(sys.argv[1:]))
"""


@pytest.mark.parametrize("unbuffered", ["1", ""])
def test_a_closed_pipe_on_stdout_is_a_normal_end(tmp_path, unbuffered):
    scn = write_case(tmp_path / "in", scenario_dict(tables=("ages",), ages={"samples": 200}))
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""),
               PYTHONUNBUFFERED=unbuffered)
    proc = subprocess.Popen([sys.executable, "-c", _SLOW_SECOND_LINE, "run", str(scn), "--out", str(out)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env, cwd=tmp_path)
    try:
        if unbuffered:
            proc.stdout.readline()  # like `| head -1`: one line, then the reader goes
        proc.stdout.close()
        err = proc.stderr.read().decode()
        proc.wait(timeout=120)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == 0, err
    assert "Traceback" not in err and "unexpected" not in err and "BrokenPipe" not in err, err
    assert (out / "results.json").is_file()  # the run finished its work
