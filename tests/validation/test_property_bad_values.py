"""Property test: one bad value in any scenario key gives exit 2, one line naming the key, and no files.

Scenarios are the valid :data:`conftest.BASE` with one key replaced by a value that the key's own schema
declaration (:mod:`kinage.io.schema`) rules out: not finite (also as the strings "nan"/"inf"), outside its
range, of the wrong type or dimension, not one of its choices, or too long.  Keys other engineers add to the
schema are picked up automatically.  The expected behaviour is the project's rule for bad input
(common practice, no source); runs are in process (kinage.cli.main) to stay fast.
"""

import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from kinage.io.schema import SCHEMA

from .conftest import assert_one_line_error, files_under, scenario_dict, write_case

_WRONG_UNIT = {"mas": "3 km/s", "pc": "4 s", "deg": "3 km/s", "mas/yr": "2 pc", "km/s": "5 mas", "s": "2 pc",
               "s/s": "3 km", "K": "5 pc", "erg/s": "4 pc", "yr": "3 pc", "Myr": "7 km/s", "1/s": "2 pc",
               "g cm2": "3 s", "solMass": "2 s", "km": "5 s", "mas/yr2": "2 s"}


def _numbers(key, integer=False):
    """Numeric values this key must reject."""
    bad = ["nan", "inf", "-inf", float("nan"), float("inf"), "abc", True, [1, 2]]
    lo, hi = key.lower, key.upper
    if hi is not None:
        bad.append(hi + max(1.0, abs(hi)) if not integer else int(hi) * 10 + 1)
        if key.upper_open:
            bad.append(hi)
    if lo is not None:
        bad.append(lo - max(1.0, abs(lo)) if not integer else int(lo) - 1)
        if key.lower_open:
            bad.append(lo)
    if key.positive:
        bad += [0, -1]
    if key.nonnegative:
        bad.append(-1)
    if integer:
        bad.append(2.5)
    if key.unit and key.unit in _WRONG_UNIT and key.kind in ("quantity", "angle"):
        bad.append(_WRONG_UNIT[key.unit])
    return bad


def _bad_values(key):
    kind = key.kind
    if kind in ("quantity", "angle", "float"):
        return _numbers(key)
    if kind == "int":
        return _numbers(key, integer=True)
    if kind == "time":
        return ["not a date", 1e7, -5.0, "MJD 1e7", "nan", "3000-01-01", True]
    if kind == "times":
        return [[], "2027-01-01", ["2027-01-01", "not a date"], [1e7], 5]
    if kind == "bool":
        return ["yes", 3, 1.0]
    if kind == "str":
        bad = [5, "", "   ", "y" * 5000]
        if key.choices is not None:
            bad.append("no-such-choice-xyz")
        return bad
    if kind == "path":
        return ["does-not-exist.ecsv", 5, "", "~nosuchuser_kinage/x.ecsv", "."]
    if kind == "names":
        bad = [[], 5, [""], ["n"] * 1000]
        if key.choices is not None:
            bad.append(["no-such-choice-xyz"])
        return bad
    if kind == "floats":
        bad = [[], "x", [float("nan")], [1.0, float("inf")], [True]]
        if key.lower is not None:
            bad.append([key.lower - max(1.0, abs(key.lower))])
        if key.upper is not None:
            bad.append([key.upper + max(1.0, abs(key.upper))])
        return bad
    if kind == "pulse_shape":
        return [[-1.0], [], [0.0, 0.0], "no-such-template.ecsv", 5, [float("nan")]]
    return [object()]  # an unknown kind: the test fails loudly


def _error_values():
    return [-1.0, 0.0, "nan", "inf", "abc", "-0.3 mas"]


CASES = []  # every bad value of every key (the hypothesis test samples them)
SPREAD = []  # at most four per key, spread over the kinds of mistake (the exhaustive reader test)
for _table, _keys in SCHEMA.items():
    for _key in _keys.values():
        _vals = _bad_values(_key)
        CASES += [(_table, _key.name, _v) for _v in _vals]
        SPREAD += [(_table, _key.name, _v) for _v in _vals[:: max(1, len(_vals) // 4)][:4]]
        if _key.error:
            CASES += [(_table, f"{_key.name}_error", _v) for _v in _error_values()]
            SPREAD += [(_table, f"{_key.name}_error", _v) for _v in _error_values()[::3]]


@settings(max_examples=60, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(case=st.sampled_from(CASES), verb=st.sampled_from(["ages", "forecast", "trace", "run"]))
def test_one_bad_value_in_any_key(case, verb, capsys):
    from kinage.cli import main

    table, key, value = case
    raw = _raw_for(table, key, value)  # distance cases drop the parallax: both together are a conflict
    # an `_error` sibling of the bad value stays: it must not add a second line
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        path = write_case(tmp / "in", raw)
        out, js = tmp / "out", tmp / "r.json"
        capsys.readouterr()
        status = main([verb, str(path), "--out", str(out), "--json", str(js), "--quiet"])
        err = capsys.readouterr().err
        assert_one_line_error(status, err, f"[{table}] {key}")
        assert not js.exists()
        assert not out.exists() or not files_under(out)
        assert not any(p.name.startswith(".out.") for p in tmp.iterdir())  # no staging folder or lock left


def test_cases_cover_every_key():
    keys = {(t, k.name) for t, ks in SCHEMA.items() for k in ks.values()}
    covered = {(t, k) for t, k, _ in CASES}
    assert keys <= covered


def _raw_for(table, key, value):
    raw = scenario_dict(**{table: {key: value}})
    if key in ("distance", "distance_error"):
        raw["star"].pop("parallax", None)
        raw["star"].pop("parallax_error", None)
        if key == "distance_error":
            raw["star"]["distance"] = "400 pc"
    return raw


@pytest.mark.slow
def test_every_case_is_one_problem_naming_its_key(tmp_path):
    """Every key, four kinds of mistake each, through the scenario reader: one problem, naming the key."""
    from kinage.errors import InputError
    from kinage.io.scenario import scenario_from_dict

    base = write_case(tmp_path, scenario_dict()).parent
    wrong = []
    for table, key, value in SPREAD:
        try:
            scenario_from_dict(_raw_for(table, key, value), base_dir=base)
        except InputError as exc:
            problems = getattr(exc, "problems", [exc])
            named = f"[{table}] {key}" in str(problems[0]) or f"[{table}.{key}]" in str(problems[0])  # sub-tables
            if len(problems) != 1 or not named:
                wrong.append((table, key, value, [str(p)[:120] for p in problems]))
        else:
            wrong.append((table, key, value, "accepted"))
    assert not wrong, wrong[:10]
