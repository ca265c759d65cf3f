"""Limits that hold (memory from the real table sizes and the container's cgroup limit, rows counted while
reading) and the smaller faults: file content kept out of messages, front-door argument checks, warnings
state after threads, the batch cluster's HTTP server.

Sources: the cgroup v2 memory.max format ("max" or bytes; Linux kernel Documentation/admin-guide/cgroup-v2.rst)
and v1 memory.limit_in_bytes (a huge number for no limit; Documentation/admin-guide/cgroup-v1/memory.rst);
Python's warnings module documentation (catch_warnings replaces warnings.showwarning for the process).
Other expectations are the project's rules for messages (common practice, no source).
"""

import threading
import warnings
from pathlib import Path

import numpy as np
import pytest
from astropy.table import Table

from .conftest import DEMO, assert_one_line_error, run_cli, scenario_dict, write_case


def test_cgroup_limit_is_read_in_both_formats(tmp_path, monkeypatch):
    from kinage.io import limits

    v2, v1 = tmp_path / "memory.max", tmp_path / "memory.limit_in_bytes"
    v2.write_text("max\n")
    v1.write_text("9223372036854771712\n")  # cgroup v1's "no limit"
    assert limits.cgroup_memory_bytes((str(v2), str(v1))) is None
    v2.write_text("2147483648\n")
    assert limits.cgroup_memory_bytes((str(v2), str(v1))) == 2147483648.0
    v2.unlink()
    v1.write_text("1073741824\n")
    assert limits.cgroup_memory_bytes((str(v2), str(v1))) == 1073741824.0
    monkeypatch.delenv("KINAGE_MAX_MEMORY_GB", raising=False)
    monkeypatch.setattr(limits, "CGROUP_MEMORY_FILES", (str(v1),))
    assert limits.memory_limit_bytes() == pytest.approx(0.5 * 1073741824.0)  # half the container's 1 GiB


def _many_associations(folder, n):
    base = Table.read(DEMO / "associations.ecsv")
    rows = base[np.arange(n) % len(base)]
    rows["name"] = [f"Invented Group {i}" for i in range(n)]
    rows.write(folder / "associations.ecsv", overwrite=True)


def test_kinage_trace_sizes_memory_from_the_tables_rows(tmp_path, capsys, monkeypatch):
    folder = tmp_path / "in"
    folder.mkdir()
    _many_associations(folder, 400)
    scn = write_case(folder, scenario_dict(tables=("trace",), trace={"time_steps": 21}))
    # 30 associations (the old assumption) x 20 draws x 21 steps fit in 10 MB; 400 do not (~32 MB)
    monkeypatch.setenv("KINAGE_MAX_MEMORY_GB", "0.01")
    status, _, err = run_cli(["trace", scn, "--quiet"], capsys)
    assert_one_line_error(status, err, "memory limit", "400 x")


def test_a_toa_table_too_big_for_the_fits_memory_is_refused_while_reading(tmp_path, capsys, monkeypatch):
    scn = write_case(tmp_path / "in", scenario_dict(tables=("campaign",), campaign={"toas": "toas.ecsv"}))
    # ~1.5 kB per TOA; 30 kB allows 20 TOAs and the demo table holds 25
    monkeypatch.setenv("KINAGE_MAX_MEMORY_GB", "0.00003")
    status, _, err = run_cli(["fit", scn, "--quiet"], capsys)
    assert_one_line_error(status, err, "toas.ecsv", "TOAs", "memory limit")


def test_row_limit_is_checked_before_parsing(tmp_path, monkeypatch):
    from astropy.table import Table as T

    from kinage.associations import read_associations
    from kinage.errors import InputError

    lines = (DEMO / "associations.ecsv").read_text().splitlines()
    header = [ln for ln in lines if ln.startswith("#")] + [lines[len([x for x in lines if x.startswith("#")])]]
    row = lines[-1]
    path = tmp_path / "huge.ecsv"
    with open(path, "w") as fh:
        fh.write("\n".join(header) + "\n")
        for i in range(300_000):
            fh.write(row + "\n")
    size = path.stat().st_size

    def never(*a, **k):
        raise AssertionError("the table was parsed")

    monkeypatch.setattr(T, "read", never)
    with pytest.raises(InputError, match="100,000") as info:
        read_associations(path)
    stopped_mb = float(str(info.value).split("stopped reading at ")[1].split()[0])
    assert stopped_mb * 1e6 < 0.6 * size  # refused part-way, not after reading the whole file


def test_messages_do_not_quote_a_linked_file(tmp_path, capsys):
    secret = tmp_path / "system_file"
    secret.write_text("".join(f"svc{i}:x:{i}:{i}:Secret Service Token {i}:/var/lib/s{i}:/bin/sh\n" for i in range(40)))
    folder = tmp_path / "in"
    folder.mkdir()
    for name in ("toas.csv", "assoc.csv", "stars.csv"):
        (folder / name).symlink_to(secret)
    scn = write_case(folder, scenario_dict(tables=("campaign",), campaign={"toas": "toas.csv"}))
    status, _, err = run_cli(["fit", scn, "--quiet"], capsys)
    assert status == 2 and "Secret" not in err and "svc1" not in err, err
    scn2 = write_case(folder, scenario_dict(tables=("trace",), trace={"associations": "assoc.csv"}), "t.toml")
    status, _, err = run_cli(["trace", scn2, "--quiet"], capsys)
    assert status == 2 and "Secret" not in err and "svc1" not in err, err
    status, _, err = run_cli(["batch", folder / "stars.csv", "--scenario", scn2, "--quiet"], capsys)
    assert status == 2 and "Secret" not in err and "svc1" not in err, err


def test_json_onto_an_input_table_is_refused(tmp_path, capsys):
    scn = write_case(tmp_path / "in", scenario_dict(tables=("trace",)))
    assoc = tmp_path / "in" / "associations.ecsv"
    before = assoc.read_bytes()
    link = tmp_path / "link.ecsv"
    link.symlink_to(assoc)
    for target in (assoc, link):
        status, _, err = run_cli(["trace", scn, "--json", target, "--quiet"], capsys)
        assert_one_line_error(status, err, "--json", "[trace] associations")
    scn_c = write_case(tmp_path / "in", scenario_dict(tables=("campaign", "trace")), "c.toml")
    status, _, err = run_cli(["simulate", scn_c, "--output", assoc, "--quiet"], capsys)
    assert_one_line_error(status, err, "--output", "[trace] associations")
    assert assoc.read_bytes() == before


def test_front_door_argument_checks():
    import astropy.units as u

    import kinage
    from kinage.errors import InputError

    raw = scenario_dict(tables=("trace",), trace={"associations": str(DEMO / "associations.ecsv"), "samples": 20})
    with pytest.raises(InputError, match="solution"):
        kinage.trace(raw, solution={"ra": 1.0})
    raw1 = scenario_dict(tables=())
    raw1["star"]["parallax"] = np.array([1.937]) * u.mas  # a one-element array is the single value it holds
    from kinage.api import as_scenario

    scn = as_scenario(raw1)
    assert scn.star.parallax.to_value(u.mas) == pytest.approx(1.937)
    ages = scenario_dict(tables=("ages",))
    with pytest.raises(InputError, match="shape"):
        kinage.compare_ages(ages, kinematic_age_samples=np.ones((3, 4)) * u.Myr)


def test_warnings_showwarning_is_restored_after_calls_from_threads():
    import kinage

    original = warnings.showwarning
    raw = scenario_dict(tables=("ages",), ages={"samples": 200})
    errors = []

    def call():
        try:
            kinage.compare_ages(raw, kinematic_age=1.0 * __import__("astropy.units").units.Myr)
        except Exception as exc:  # noqa: BLE001
            errors.append(exc)

    threads = [threading.Thread(target=call) for _ in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=120)
    assert not errors, errors
    assert warnings.showwarning is original


def test_batch_cluster_http_server_listens_on_this_machine_only():
    from kinage.batch.runner import _client

    with _client(None, 1) as client:
        sched = client.cluster.scheduler
        hosts = {s.getsockname()[0] for s in sched.http_server._sockets.values()}
    assert hosts == {"127.0.0.1"}
