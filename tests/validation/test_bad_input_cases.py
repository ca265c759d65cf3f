"""Bad inputs a user can give (out-of-range, wrong type, missing files), each reproduced through the command line (in process).

Every case must end with exit status 2, one line on stderr naming the key, row or option, and no output
files.  The ranges come from physics noted beside each case; the expected behaviour (one line, exit 2,
nothing written) is the project's rule for bad input (common practice, no source).
"""

import os
from pathlib import Path

import pytest

from .conftest import assert_one_line_error, files_under, run_cli, scenario_dict, write_case


def _bad(tmp_path, capsys, verb, raw, *names, args=()):
    path = write_case(tmp_path / "in", raw)
    out = tmp_path / "out"
    argv = [verb, path, *args]
    if verb not in ("simulate",):
        argv += ["--out", out, "--json", tmp_path / "res.json"]
    else:
        argv += ["--output", out / "toas.ecsv"]
    status, _, err = run_cli(argv, capsys)
    line = assert_one_line_error(status, err, *names)
    assert not out.exists() or not files_under(out), files_under(out)
    assert not (tmp_path / "res.json").exists()
    return line


# --- values that used to run to exit 0 with nonsense -------------------------------------------------------

@pytest.mark.parametrize("table,key,value,verb", [
    ("star", "ra", 400, "trace"),                       # ra in [0, 360) deg by definition of the angle
    ("star", "ra", -5.0, "trace"),
    ("star", "dec", 91.0, "trace"),                     # dec in [-90, 90] deg
    ("star", "parallax", "1e6 mas", "trace"),           # nothing is closer than ~1 pc (1000 mas); value from memory
    ("star", "pm_correlation", "nan", "trace"),         # a correlation coefficient is a finite number in [-1, 1]
    ("star", "pm_correlation", "inf", "trace"),
    ("ages", "braking_index", "inf", "ages"),           # braking index is finite and > 1 (Lorimer & Kramer 2005)
    ("ages", "braking_index", "nan", "ages"),
    ("campaign", "exposure", "1e30 s", "forecast"),     # an exposure longer than the visit interval is impossible
    ("campaign", "visits_per_year", "nan", "forecast"),
    ("campaign", "pulsed_fraction", "nan", "forecast"),
    ("campaign", "pulsed_fraction", "inf", "forecast"),
    ("campaign", "error_scale", "nan", "forecast"),
])
def test_value_out_of_range_or_not_finite(tmp_path, capsys, table, key, value, verb):
    raw = scenario_dict(**{table: {key: value}})
    _bad(tmp_path, capsys, verb, raw, f"[{table}] {key}")


def test_parallax_and_distance_both_given_are_combined(tmp_path, capsys):
    # independent measurements multiply (Bailer-Jones 2015, PASP 127, 994, eq. 3 with a second likelihood);
    # a distance 2.5x the parallax distance is a tension the run states, not a refusal
    import json

    raw = scenario_dict(star={"distance": "1300 pc", "distance_error": "150 pc"})
    path = write_case(tmp_path / "in", raw)
    status, _, err = run_cli(["trace", path, "--out", tmp_path / "out", "--json", tmp_path / "res.json"], capsys)
    assert status == 0, err
    d = json.loads((tmp_path / "res.json").read_text())
    d = d.get("trace", d)
    assert d["distance_source"] == "parallax+distance"
    assert any("disagree" in w and "distance_from" in w for w in d["warnings"])


def test_distance_without_error_runs_as_exact_with_a_warning(tmp_path, capsys):
    import json

    raw = scenario_dict(star={"distance": "520 pc", "parallax": None, "parallax_error": None})
    path = write_case(tmp_path / "in", raw)
    status, _, err = run_cli(["trace", path, "--out", tmp_path / "out", "--json", tmp_path / "res.json"], capsys)
    assert status == 0, err
    d = json.loads((tmp_path / "res.json").read_text())
    d = d.get("trace", d)
    assert d["distance_pc"]["lo95"] == d["distance_pc"]["hi95"] == 520.0
    assert any("distance_error" in w and "exact" in w for w in d["warnings"])
    assert any("taken as exact" in a for a in d["assumptions"])
    assert not any("truncated at zero" in a for a in d["assumptions"])


@pytest.mark.parametrize("use", ["parallax", "distance"])
def test_parallax_and_distance_with_a_key_saying_which(tmp_path, use):
    from kinage.io.scenario import scenario_from_dict

    raw = scenario_dict(star={"distance": "400 pc", "distance_error": "20 pc", "distance_from": use})
    s = scenario_from_dict(raw, base_dir=write_case(tmp_path, raw).parent)
    assert (s.star.get("parallax") is None) == (use == "distance")
    assert (s.star.get("distance") is None) == (use == "parallax")


@pytest.mark.parametrize("column,value", [("ra", 535.0), ("ra", -1.0), ("dec", -91.0), ("age", 1e6),
                                          ("distance", -3.0), ("radius", 0.0)])
def test_association_row_out_of_range(tmp_path, capsys, column, value):
    from astropy.table import Table

    from .conftest import DEMO

    tab = Table.read(DEMO / "associations.ecsv", format="ascii.ecsv")
    tab[column][2] = value
    (tmp_path / "in").mkdir()
    tab.write(tmp_path / "in" / "associations.ecsv", format="ascii.ecsv")
    line = _bad(tmp_path, capsys, "trace", scenario_dict(), "row 3", f"'{column}'")
    assert tab["name"][2] in line


# --- caught only inside a stage before ---------------------------------------------------------------------

@pytest.mark.parametrize("table,key,value,verb", [
    ("ages", "braking_index", 1.0, "ages"),             # n = 1 makes t = P/((n-1) Pdot) infinite
    ("ages", "braking_index", 0.5, "ages"),
    ("ages", "mass", 0.0, "ages"),
    ("ages", "mass", -1.4, "ages"),
    ("ages", "mass", "nan", "ages"),
    ("ages", "masses", [1.4, -1.0], "ages"),
    ("ages", "masses", [1.4, float("nan")], "ages"),
    ("ages", "radius", "3 km", "ages"),                 # 1.4 Msun: Schwarzschild radius 4.1 km, Buchdahl 9.3 km
    ("ages", "mass", "5 solMass", "ages"),               # above any neutron-star maximum mass (~2-3 Msun; memory)
    ("trace", "samples", 1_000_000_000, "trace"),
    ("trace", "max_age", "1e12 yr", "trace"),           # older than the Galaxy (~13.8 Gyr; Planck 2018)
    ("trace", "time_steps", 10_000_000, "trace"),
    ("ages", "samples", 1_000_000_000, "ages"),
    ("campaign", "baseline", "1e6 yr", "forecast"),
    ("campaign", "visits_per_year", "inf", "forecast"),
    ("campaign", "visits_per_year", 1e9, "forecast"),
    ("campaign", "red_noise_modes", 10_000_000, "forecast"),
])
def test_stage_level_problems_are_input_errors(tmp_path, capsys, table, key, value, verb):
    raw = scenario_dict(**{table: {key: value}})
    _bad(tmp_path, capsys, verb, raw, f"[{table}] {key}")


def test_radius_inside_buchdahl_names_both(tmp_path, capsys):
    raw = scenario_dict(ages={"mass": "2.0 solMass", "radius": "6 km"})
    line = _bad(tmp_path, capsys, "ages", raw, "[ages] radius")
    assert "Buchdahl" in line or "Schwarzschild" in line


@pytest.mark.parametrize("verb", ["run", "trace", "batch"])
def test_samples_zero_on_every_verb(tmp_path, capsys, verb):
    path = write_case(tmp_path / "in", scenario_dict())
    out = tmp_path / "out"
    if verb == "batch":
        argv = ["batch", path.parent / "population.ecsv", "--scenario", path, "--samples", 0, "--out", out]
    else:
        argv = [verb, path, "--samples", 0, "--out", out]
    status, _, err = run_cli(argv, capsys)
    assert_one_line_error(status, err, "--samples")
    assert not out.exists()


# --- absurd sizes and long names ---------------------------------------------------------------------------

def test_huge_name_is_rejected_quickly(tmp_path, capsys):
    raw = scenario_dict(star={"name": "x" * 100_000})
    line = _bad(tmp_path, capsys, "trace", raw, "[star] name")
    assert len(line) < 400


def test_huge_unknown_key_is_rejected_quickly(tmp_path, capsys):
    raw = scenario_dict(star={"y" * 100_000: 1.0})
    line = _bad(tmp_path, capsys, "trace", raw, "[star]", "unknown key")
    assert len(line) < 400


# --- messages ---------------------------------------------------------------------------------------------

def test_bad_value_with_error_sibling_gives_one_line(tmp_path, capsys):
    raw = scenario_dict(star={"parallax": "abc"})
    line = _bad(tmp_path, capsys, "trace", raw, "[star] parallax")
    assert "given without" not in line


def test_top_level_key_is_not_called_a_table(tmp_path, capsys):
    raw = scenario_dict(colour="blue")
    line = _bad(tmp_path, capsys, "trace", raw, "colour")
    assert "unknown table" not in line and "top-level" in line


def test_negative_temperature_in_ev_is_reported_in_ev(tmp_path, capsys):
    raw = scenario_dict(star={"temperature": "-52 eV"})
    _bad(tmp_path, capsys, "ages", raw, "[star] temperature", "(got -52 eV)")


def test_no_unrelated_suggestion(tmp_path, capsys):
    raw = scenario_dict(campaign={"site_latitud": 10.0, "red_noise_amplitud": 0.0, "site_latitude": None})
    raw["campaign"].pop("red_noise_amplitud")
    status, _, err = run_cli(["forecast", write_case(tmp_path / "in", raw)], capsys)
    assert status == 2
    assert "red_noise_amplitude" not in err


def test_close_suggestion_still_offered(tmp_path, capsys):
    raw = scenario_dict(star={"paralax": "2 mas", "parallax": None, "parallax_error": None})
    status, _, err = run_cli(["ages", write_case(tmp_path / "in", raw)], capsys)
    assert status == 2 and "did you mean 'parallax'" in err


def test_no_numpy_reprs_in_table_messages(tmp_path, capsys):
    from astropy.table import Table

    from .conftest import DEMO

    tab = Table.read(DEMO / "associations.ecsv", format="ascii.ecsv")
    tab["age"] = tab["age"].astype(str)
    tab["age"].info.format = None
    tab["age"][1] = "abc"
    (tmp_path / "in").mkdir()
    tab.write(tmp_path / "in" / "associations.ecsv", format="ascii.ecsv", overwrite=True)
    line = _bad(tmp_path, capsys, "trace", scenario_dict(), "row 2", "'age'")
    assert "'abc'" in line


# --- paths ------------------------------------------------------------------------------------------------

def _loop(folder):
    folder.mkdir(parents=True, exist_ok=True)
    a, b = folder / "loop_a", folder / "loop_b"
    os.symlink(b, a)
    os.symlink(a, b)
    return a


@pytest.mark.parametrize("kind", ["missing", "directory", "loop", "nosuchuser", "unreadable"])
def test_bad_scenario_path(tmp_path, capsys, monkeypatch, kind):
    target = {"missing": lambda: tmp_path / "nope.toml", "directory": lambda: tmp_path,
              "loop": lambda: _loop(tmp_path / "l"), "nosuchuser": lambda: Path("~nosuchuser_kinage/x.toml"),
              "unreadable": lambda: _unreadable(tmp_path, monkeypatch)}[kind]()
    status, _, err = run_cli(["trace", target, "--out", tmp_path / "out"], capsys)
    assert_one_line_error(status, err, "scenario")
    assert not (tmp_path / "out").exists()


def _unreadable(tmp_path, monkeypatch):
    p = write_case(tmp_path / "in", scenario_dict())
    p.chmod(0)
    if os.access(p, os.R_OK):
        # running as root (as CI does): permissions do not stop reading, so the operating system's
        # answer for this one file is simulated; every other path keeps the real answer
        real_access, denied = os.access, os.path.realpath(p)

        def access(path, mode, *args, **kwargs):
            if mode & os.R_OK and os.path.realpath(path) == denied:
                return False
            return real_access(path, mode, *args, **kwargs)

        monkeypatch.setattr(os, "access", access)
    return p


@pytest.mark.parametrize("kind", ["missing", "directory", "loop", "nosuchuser"])
def test_bad_association_path(tmp_path, capsys, kind):
    value = {"missing": "nope.ecsv", "directory": ".", "loop": str(_loop(tmp_path / "in")),
             "nosuchuser": "~nosuchuser_kinage/a.ecsv"}[kind]
    raw = scenario_dict(trace={"associations": value})
    _bad(tmp_path, capsys, "trace", raw, "[trace] associations")


@pytest.mark.parametrize("verb,option,kind", [
    ("trace", "--out", "file"), ("trace", "--json", "directory"), ("run", "--out", "file"),
    ("run", "--json", "directory"), ("simulate", "--output", "directory"), ("forecast", "--out", "nosuchuser"),
    ("forecast", "--json", "nosuchuser"), ("trace", "--out", "loop"), ("ages", "--json", "file-in-file"),
])
def test_bad_output_paths(tmp_path, capsys, verb, option, kind):
    path = write_case(tmp_path / "in", scenario_dict())
    (tmp_path / "afile").write_text("keep me\n")
    target = {"file": tmp_path / "afile", "directory": tmp_path / "in", "nosuchuser": "~nosuchuser_kinage/o",
              "loop": _loop(tmp_path / "l"), "file-in-file": tmp_path / "afile" / "x.json"}[kind]
    before = files_under(tmp_path)
    status, _, err = run_cli([verb, path, option, target], capsys)
    assert_one_line_error(status, err, option)
    assert files_under(tmp_path) == before
    assert (tmp_path / "afile").read_text() == "keep me\n"


@pytest.mark.parametrize("content", ["[1, 2]", "3", "\"text\"", "{not json", ""])
def test_trace_json_not_an_object(tmp_path, capsys, content):
    path = write_case(tmp_path / "in", scenario_dict())
    tj = tmp_path / "trace.json"
    tj.write_text(content)
    status, _, err = run_cli(["ages", path, "--trace-json", tj, "--json", tmp_path / "a.json"], capsys)
    assert_one_line_error(status, err, "--trace-json")
    assert not (tmp_path / "a.json").exists()


def test_fit_toa_path_is_a_directory(tmp_path, capsys):
    path = write_case(tmp_path / "in", scenario_dict())
    status, _, err = run_cli(["fit", tmp_path, "--scenario", path], capsys)
    assert_one_line_error(status, err, "toas")


# --- batch options ----------------------------------------------------------------------------------------

@pytest.mark.parametrize("args,option", [
    (["--workers", "0"], "--workers"), (["--workers", "-3"], "--workers"), (["--workers", "100000"], "--workers"),
    (["--scheduler", "not an address"], "--scheduler"), (["--scheduler", "tcp://127.0.0.1:99999"], "--scheduler"),
    (["--scheduler", "ftp://host:8786"], "--scheduler"),
])
def test_batch_options_checked_before_anything_is_created(tmp_path, capsys, args, option):
    path = write_case(tmp_path / "in", scenario_dict(tables=("trace", "ages")))
    out = tmp_path / "pop"
    status, _, err = run_cli(["batch", path.parent / "population.ecsv", "--scenario", path, "--out", out, *args],
                             capsys)
    assert_one_line_error(status, err, option)
    assert not out.exists()


def test_unreachable_scheduler_times_out_quickly(tmp_path, capsys):
    import socket
    import time

    with socket.socket() as s:  # a free port nobody listens on
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    path = write_case(tmp_path / "in", scenario_dict(tables=("trace", "ages")))
    t0 = time.perf_counter()
    status, _, err = run_cli(["batch", path.parent / "population.ecsv", "--scenario", path, "--out", tmp_path / "p",
                              "--scheduler", f"tcp://127.0.0.1:{port}"], capsys)
    assert time.perf_counter() - t0 < 20
    assert_one_line_error(status, err, "--scheduler")
    assert not (tmp_path / "p").exists()


def test_non_dask_server_as_scheduler(tmp_path, capsys):
    """A server that answers with garbage (here: an HTTP-like banner) is not a scheduler."""
    import socket
    import threading
    import time

    srv = socket.socket()
    srv.bind(("127.0.0.1", 0))
    srv.listen(5)
    port = srv.getsockname()[1]

    def serve():
        while True:
            try:
                conn, _ = srv.accept()
            except OSError:
                return
            try:
                conn.sendall(b"HTTP/1.1 400 Bad Request\r\n\r\n" + b"\xff" * 64)
                time.sleep(0.5)
            except OSError:
                pass
            conn.close()

    threading.Thread(target=serve, daemon=True).start()
    path = write_case(tmp_path / "in", scenario_dict(tables=("trace", "ages")))
    t0 = time.perf_counter()
    try:
        status, _, err = run_cli(["batch", path.parent / "population.ecsv", "--scenario", path, "--out",
                                  tmp_path / "p", "--scheduler", f"127.0.0.1:{port}"], capsys)
    finally:
        srv.close()
    assert time.perf_counter() - t0 < 30
    assert_one_line_error(status, err, "--scheduler")
    assert not (tmp_path / "p").exists()


# --- TOA tables (value checks live in kinage/timing/toas.py) -------------------------------------------------

def _toa_case(tmp_path, kind):
    import numpy as np
    from astropy.table import Table
    from astropy.time import Time

    from .conftest import DEMO

    tab = Table.read(DEMO / "toas.ecsv", format="ascii.ecsv")
    col = tab["mjd"]
    m = np.asarray(col.mjd if isinstance(col, Time) else col, float)
    new = {"mjd1e7": m - m[0] + 1e7, "negative": m - m[0] - 500.0,
           "span1000yr": m[0] + (m - m[0]) * (365250.0 / (m[-1] - m[0])),  # 1000 yr: beyond 2100
           "oneday": m[0] + np.linspace(0, 0.5, len(m)), "few": m[:3]}[kind]
    out = Table()
    out["mjd"] = new
    out["error"] = tab["error"][: len(new)]
    (tmp_path / "in").mkdir(exist_ok=True)
    path = tmp_path / "in" / f"{kind}.ecsv"
    out.write(path, format="ascii.ecsv")
    return path


@pytest.mark.parametrize("kind", ["mjd1e7", "negative", "span1000yr", "oneday", "few"])
@pytest.mark.parametrize("verb", ["fit", "run"])
def test_bad_toa_tables(tmp_path, capsys, kind, verb):
    toas = _toa_case(tmp_path, kind)
    scn = write_case(tmp_path / "in", scenario_dict(tables=("campaign",), campaign={"toas": toas.name}))
    out = tmp_path / "out"
    argv = ["fit", toas, "--scenario", scn] if verb == "fit" else ["run", scn]
    status, _, err = run_cli([*argv, "--out", out, "--json", tmp_path / "r.json"], capsys)
    assert_one_line_error(status, err, toas.name)
    assert not out.exists() and not (tmp_path / "r.json").exists()


def test_memory_estimate_names_the_limit(tmp_path, capsys):
    # 1e6 draws x 1e5 steps x 6 float64 values is ~5 TB before copies: beyond any machine (arithmetic)
    raw = scenario_dict(trace={"samples": 1_000_000, "chunk_size": 1_000_000, "time_steps": 100_000,
                               "control_runs": 0})
    line = _bad(tmp_path, capsys, "trace", raw, "[trace] time_steps", "memory limit")
    assert "GB" in line


def test_run_time_estimate_names_the_limit(tmp_path, capsys):
    raw = scenario_dict(trace={"samples": 1_000_000, "control_runs": 1000})
    _bad(tmp_path, capsys, "run", raw, "[trace] samples", "minutes per trace")


@pytest.mark.parametrize("verb", ["ages", "trace", "forecast"])
def test_json_onto_the_scenario_is_refused(tmp_path, capsys, verb):
    path = write_case(tmp_path / "in", scenario_dict())
    before = path.read_text()
    status, _, err = run_cli([verb, path, "--json", path], capsys)
    assert_one_line_error(status, err, "--json", "input")
    assert path.read_text() == before


def test_toa_error_zero_message_has_no_numpy_repr(tmp_path, capsys):
    from astropy.table import Table

    from .conftest import DEMO

    tab = Table.read(DEMO / "toas.ecsv", format="ascii.ecsv")
    tab["error"][4] = 0.0
    (tmp_path / "in").mkdir()
    path = tmp_path / "in" / "zero.ecsv"
    tab.write(path, format="ascii.ecsv")
    scn = write_case(tmp_path / "in", scenario_dict(tables=("campaign",)))
    status, _, err = run_cli(["fit", path, "--scenario", scn], capsys)
    assert_one_line_error(status, err, "row 5", "'error'")


def test_too_many_visits_names_the_limit(tmp_path, capsys):
    # 300 visits a year for 200 years is 60,000 visits: a forecast of several minutes
    raw = scenario_dict(campaign={"visits_per_year": 300, "baseline": "200 yr", "exposure": "1 ks"})
    _bad(tmp_path, capsys, "forecast", raw, "[campaign] visits_per_year", "10,000 visits")


@pytest.mark.parametrize("verb", ["run", "trace", "forecast", "batch"])
def test_bad_input_creates_no_folders(tmp_path, capsys, verb):
    path = write_case(tmp_path / "in", scenario_dict(trace={"samples": -1}, campaign={"exposure": "-1 s"}))
    out = tmp_path / "a" / "b" / "out"
    argv = ["batch", path.parent / "population.ecsv", "--scenario", path] if verb == "batch" else [verb, path]
    status, _, err = run_cli([*argv, "--out", out, "--json", tmp_path / "a" / "r.json"], capsys)
    assert status == 2, err
    assert not (tmp_path / "a").exists()


def test_dates_and_regular_plan_conflict(tmp_path, capsys):
    raw = scenario_dict(campaign={"dates": ["2027-03-01", "2027-09-01", "2028-03-01"]})
    _bad(tmp_path, capsys, "forecast", raw, "[campaign] dates", "'start'")
