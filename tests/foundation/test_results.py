"""Atomic writes and provenance."""

import json

import numpy as np
import pytest

from kinage.io.results import atomic_path, interval, provenance, write_json
from kinage.params import get


def test_json_has_provenance_and_no_nan(tmp_path):
    p = write_json(tmp_path / "r.json", {"x": np.float64(np.nan), "a": np.arange(3)},
                   provenance(seed=3, parameter_sets=[get("potential", "MWPotential2014")], command="test"))
    d = json.loads(p.read_text())
    assert d["x"] is None and d["a"] == [0, 1, 2]
    assert d["provenance"]["seed"] == 3
    assert d["provenance"]["parameter_sets"][0]["name"] == "MWPotential2014"
    assert d["provenance"]["parameter_sets"][0]["references"]


def test_failed_write_leaves_no_file(tmp_path):
    target = tmp_path / "out.json"
    with pytest.raises(RuntimeError):
        with atomic_path(target) as tmp:
            tmp.write_text("half")
            raise RuntimeError("interrupted")
    assert not target.exists()
    assert list(tmp_path.iterdir()) == []


def test_failed_write_keeps_old_file(tmp_path):
    target = tmp_path / "out.json"
    target.write_text("old")
    with pytest.raises(RuntimeError):
        with atomic_path(target) as tmp:
            tmp.write_text("new but broken")
            raise RuntimeError
    assert target.read_text() == "old"


def test_interval_of_normal_samples():
    # standard normal: 68.27% central interval is (-1, 1) (definition of sigma)
    x = np.random.default_rng(1).normal(size=200000)
    i = interval(x)
    assert i["lo68"] == pytest.approx(-1, abs=0.02) and i["hi68"] == pytest.approx(1, abs=0.02)
    assert interval([])["median"] is None


def test_written_files_get_ordinary_permissions(tmp_path):
    # temporary files start private (0600); the result must follow the umask like any new file
    import os

    p = write_json(tmp_path / "r.json", {"a": 1})
    mask = os.umask(0)
    os.umask(mask)
    assert (p.stat().st_mode & 0o777) == (0o666 & ~mask)
