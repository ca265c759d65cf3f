"""TOA tables: precision of the round trip and clear errors for bad tables."""

import astropy.units as u
import numpy as np
import pytest
from astropy.table import Table
from astropy.time import Time

from kinage.errors import InputError
from kinage.timing.toas import read_toas, validate_toas, write_toas


def _table(n=5):
    t = Time(61000, format="mjd", scale="tdb") + np.arange(n) * 30.123456789 * u.d + 1.234567e-7 * u.s
    tab = Table()
    tab["mjd"] = t
    tab["error"] = np.full(n, 2e-5) * u.s
    tab["exposure"] = np.full(n, 2e4) * u.s
    return tab


def test_ecsv_round_trip_keeps_nanoseconds(tmp_path):
    tab = _table()
    path = write_toas(tab, tmp_path / "toas.ecsv")
    back = read_toas(path)
    assert np.max(np.abs((back["mjd"] - tab["mjd"]).to_value(u.s))) < 1e-9
    assert back["error"].unit == u.s
    assert back.meta["time_scale"] == "tdb"
    # plain float64 MJD would round by up to ~0.3 us here; the text column does not
    assert "61000.000000000001428" in path.read_text()  # 1.234567e-7 s = 1.4289e-12 d


def test_csv_default_units_and_full_precision(tmp_path):
    path = tmp_path / "toas.csv"
    path.write_text("mjd,error\n61000.1234567890123,0.001\n61030.5000000000001,0.002\n")
    tab = read_toas(path)
    assert tab["error"].unit == u.s
    assert tab["mjd"][0].jd2 != 0 or tab["mjd"][0].jd1 != 0
    t0 = Time("61000.1234567890123", format="mjd", scale="tdb")
    assert abs((tab["mjd"][0] - t0).to_value(u.s)) < 1e-9


def test_ecsv_units_are_converted(tmp_path):
    tab = _table()
    tab["error"] = np.full(len(tab), 20.0) * u.us
    back = read_toas(write_toas(tab, tmp_path / "t.ecsv"))
    assert np.allclose(back["error"].quantity.to_value(u.s), 2e-5)


def test_other_time_scale_converted_to_tdb():
    tab = Table({"mjd": [61000.0, 61001.0], "error": [1e-3, 1e-3]})
    tab.meta["time_scale"] = "tt"
    out = validate_toas(tab)
    # TDB - TT is below 2 ms (periodic; Fairhead & Bretagnon 1990)
    assert abs((out["mjd"][0] - Time(61000.0, format="mjd", scale="tt")).to_value(u.s)) < 1e-12
    assert out["mjd"].scale == "tdb"


@pytest.mark.parametrize("text,match", [
    ("mjd\n61000\n61001\n", "missing column 'error'"),
    ("mjd,error\n61000,0.001\n61001,nan\n", r"row 2, column 'error'"),
    ("mjd,error\n61000,0.001\nnan,0.001\n", r"row 2, column 'mjd'"),
    ("mjd,error\n61000,0.001\n61000,0.001\n", r"row 2, column 'mjd'.*duplicate"),
    ("mjd,error\n61000,0.001\n61002,0.001\n61000,0.001\n", r"row 3, column 'mjd'.*duplicate.*row 1"),
    ("mjd,error,frequency\n61000,0.001,1400\n61002,0.001,1.4\n", r"row 2, column 'frequency'.*GHz"),
    ("mjd,error\n61000,0.001\n61001,0\n", r"row 2, column 'error'.*positive"),
    ("mjd,error\n61000,-0.001\n61001,0.001\n", r"row 1, column 'error'.*positive"),
])
def test_bad_tables_name_row_and_column(tmp_path, text, match):
    path = tmp_path / "bad.csv"
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        read_toas(path)


def test_unsorted_rows_are_sorted_with_their_columns(tmp_path):
    # TOAs merged from several receivers come in any order; the order carries nothing in a fit
    path = tmp_path / "merged.csv"
    path.write_text("mjd,error,frequency\n61002.5,0.002,1400\n61000.25,0.001,820\n61001.0,0.003,2300\n")
    tab = read_toas(path)
    assert list(tab["mjd"].to_value("mjd", "float")) == [61000.25, 61001.0, 61002.5]
    assert list(u.Quantity(tab["error"]).to_value(u.s)) == [0.001, 0.003, 0.002]
    assert list(u.Quantity(tab["frequency"]).to_value(u.MHz)) == [820.0, 2300.0, 1400.0]


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="not found"):
        read_toas(tmp_path / "nope.ecsv")
