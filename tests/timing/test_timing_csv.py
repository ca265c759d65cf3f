"""A TOA table as plain CSV (MJD TDB, errors in s) reads like the ECSV one."""

from pathlib import Path

import astropy.units as u
import numpy as np

from kinage.timing import read_toas

DEMO = Path(__file__).resolve().parents[2] / "data_demo"


def test_csv_with_default_units_matches_ecsv(tmp_path):
    # float64 MJD near 6e4 resolves ~1 us (2.2e-16 x 6e4 d; IEEE 754 double precision), far below ms TOA errors
    t = read_toas(DEMO / "toas.ecsv")
    mjd = t["mjd"].mjd
    assert mjd.dtype.kind == "f"
    p = tmp_path / "toas.csv"
    p.write_text("mjd,error\n" + "".join(f"{a:.12f},{e:.9f}\n" for a, e in zip(mjd, t["error"].value)))
    c = read_toas(p)
    assert np.allclose((c["mjd"] - t["mjd"]).sec, 0, atol=2e-6)
    assert np.allclose(u.Quantity(c["error"]).to_value("s"), u.Quantity(t["error"]).to_value("s"))
