"""Shared helpers for the bad-input tests: a small valid scenario and an in-process CLI call."""

import json
import math
import shutil
from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[2] / "data_demo"

#: a small, valid, invented scenario (values as the demo's, with few draws)
BASE = {
    "title": "validation case (invented)",
    "star": {
        "name": "Test-1", "ra": 182.098674, "dec": -46.446622, "ra_error": 40.0, "dec_error": 40.0,
        "epoch": "2027-01-01", "parallax": "1.937 mas", "parallax_error": "0.25 mas",
        "pm_ra_cosdec": "13.03 mas/yr", "pm_ra_cosdec_error": "1.5 mas/yr", "pm_dec": "31.70 mas/yr",
        "pm_dec_error": "1.5 mas/yr", "spin_period": "4.08 s", "spin_period_error": "1e-6 s",
        "spin_period_derivative": 3.1e-14, "spin_period_derivative_error": 0.2e-14,
        "temperature": "52 eV", "temperature_error": "4 eV",
    },
    "campaign": {
        "start": "2027-03-01", "baseline": "6 yr", "visits_per_year": 4, "exposure": "30 ks",
        "source_rate": "1.6 1/s", "background_rate": "0.08 1/s", "pulsed_fraction": 0.14,
    },
    "trace": {"associations": "associations.ecsv", "samples": 60, "association_samples": 20, "control_runs": 1,
              "max_age": "3 Myr", "seed": 5},
    "ages": {"braking_index": 3, "samples": 300},
}


def _toml_value(v):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{json.dumps(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def dump_toml(raw):
    """A minimal TOML writer (top-level scalars, then one level of tables)."""
    lines = [f"{json.dumps(k)} = {_toml_value(v)}" for k, v in raw.items() if not isinstance(v, dict)]
    for table, keys in raw.items():
        if isinstance(keys, dict):
            lines.append(f"\n[{json.dumps(table)}]")
            lines.extend(f"{json.dumps(k)} = {_toml_value(v)}" for k, v in keys.items())
    return "\n".join(lines) + "\n"


def scenario_dict(tables=None, **changes):
    """A copy of :data:`BASE` restricted to ``tables`` with ``changes`` = {table: {key: value or None}}."""
    raw = {k: (dict(v) if isinstance(v, dict) else v) for k, v in BASE.items()}
    if tables is not None:
        raw = {k: v for k, v in raw.items() if not isinstance(v, dict) or k in tables or k == "star"}
    for table, keys in changes.items():
        if not isinstance(keys, dict):
            raw[table] = keys
            continue
        sec = raw.setdefault(table, {})
        for k, v in keys.items():
            if v is None:
                sec.pop(k, None)
            else:
                sec[k] = v
    return raw


def write_case(folder, raw, name="scenario.toml"):
    """Write the scenario and the demo's tables into ``folder``; returns the scenario path."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    for f in ("associations.ecsv", "toas.ecsv", "population.ecsv"):
        if not (folder / f).exists():
            shutil.copy2(DEMO / f, folder / f)
    path = folder / name
    path.write_text(raw if isinstance(raw, str) else dump_toml(raw), encoding="utf-8")
    return path


def files_under(folder):
    """Every file under ``folder`` (relative paths, sorted)."""
    folder = Path(folder)
    return sorted(str(p.relative_to(folder)) for p in folder.rglob("*") if p.is_file() or p.is_symlink())


def run_cli(argv, capsys):
    """Run ``kinage`` in this process; returns (exit status, stdout, stderr)."""
    from kinage.cli import main

    capsys.readouterr()
    status = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return status, out, err


@pytest.fixture
def case(tmp_path):
    """``case(raw)`` writes a scenario into a fresh folder and returns its path."""
    def make(raw=None, **changes):
        return write_case(tmp_path / "in", raw if raw is not None else scenario_dict(**changes))
    return make


def assert_one_line_error(status, err, *names):
    """Exit 2, exactly one stderr line, naming every one of ``names``; no traceback, no numpy reprs."""
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert status == 2, (status, err)
    assert len(lines) == 1, err
    assert "Traceback" not in err and "unexpected error" not in err, err
    assert "np.str_" not in err and "np.float64" not in err, err
    for n in names:
        assert n in lines[0], (n, lines[0])
    return lines[0]
