"""Catalogue files in: ECSV, CSV, FITS and VOTable association tables with the authors' names and units.

The same invented associations are written four ways (kinage's own ECSV; FITS and VOTable with
catalogue-style column names in kpc, arcmin and kyr; a CSV without units whose map gives them) and must give
the same associations and, with one seed, the same birthplace probabilities.  Unit conversions are checked
against astropy's (Astropy Collaboration 2022, ApJ 935, 167); the angular size is the definition
r = d tan(theta) (common practice, no source).  All names and values are invented.
"""

import subprocess
import sys

import astropy.units as u
import numpy as np
import pytest
from astropy.table import QTable, Table

import kinage
from kinage.associations import read_associations
from kinage.errors import InputError

NAMES = ["Sorvane-3", "Quillet-7", "Marrow Drift"]
DIST_PC = np.array([380.0, 450.0, 610.0])
DIST_ERR_PC = np.array([15.0, 20.0, 35.0])
RADIUS_PC = np.array([15.0, 20.0, 11.0])
AGE_MYR = np.array([4.0, 6.0, 8.5])


def canonical():
    """The invented associations in kinage's own column names and units."""
    return QTable({
        "name": NAMES, "ra": [84.0, 86.5, 81.2] * u.deg, "dec": [-30.0, -28.0, -33.5] * u.deg,
        "distance": DIST_PC * u.pc, "distance_error": DIST_ERR_PC * u.pc,
        "pm_ra_cosdec": [1.2, -0.8, 0.4] * u.mas / u.yr, "pm_ra_cosdec_error": [0.2, 0.2, 0.3] * u.mas / u.yr,
        "pm_dec": [-2.0, 0.5, -1.1] * u.mas / u.yr, "pm_dec_error": [0.2, 0.2, 0.3] * u.mas / u.yr,
        "radial_velocity": [18.0, 22.0, 15.0] * u.km / u.s, "radial_velocity_error": [2.0, 2.0, 3.0] * u.km / u.s,
        "radius": RADIUS_PC * u.pc, "age": AGE_MYR * u.Myr})


def catalogue_style():
    """The same associations as a catalogue would list them: its own names, kpc, arcmin, kyr."""
    c = canonical()
    theta = np.arctan(RADIUS_PC / DIST_PC) * u.rad  # the angle the radius subtends at the distance
    t = Table()
    t["Name"] = NAMES
    t["RAdeg"] = c["ra"].to(u.deg)
    t["DEdeg"] = c["dec"].to(u.deg)
    t["Dist"] = c["distance"].to(u.kpc)
    t["e_Dist"] = c["distance_error"].to(u.kpc)
    t["pmRAcosDE"] = c["pm_ra_cosdec"]
    t["e_pmRA"] = c["pm_ra_cosdec_error"]
    t["pmDE"] = c["pm_dec"]
    t["e_pmDE"] = c["pm_dec_error"]
    t["RV"] = c["radial_velocity"]
    t["e_RV"] = c["radial_velocity_error"]
    t["Rad"] = theta.to(u.arcmin)
    t["Age"] = c["age"].to(u.kyr)
    t["Notes"] = ["invented", "invented", "invented"]  # an extra column, left alone
    return t


MAP = {"name": "Name", "ra": "RAdeg", "dec": "DEdeg", "distance": "Dist", "distance_error": "e_Dist",
       "pm_ra_cosdec": "pmRAcosDE", "pm_ra_cosdec_error": "e_pmRA", "pm_dec": "pmDE", "pm_dec_error": "e_pmDE",
       "radial_velocity": "RV", "radial_velocity_error": "e_RV", "radius": "Rad", "age": "Age"}


def write_all(tmp_path):
    """Four files of the same associations: canonical ECSV, FITS, VOTable and a unitless CSV."""
    paths = {"ecsv": tmp_path / "assoc.ecsv", "fits": tmp_path / "assoc.fits", "votable": tmp_path / "assoc.vot",
             "csv": tmp_path / "assoc_paper.csv"}
    canonical().write(paths["ecsv"], format="ascii.ecsv")
    cat = catalogue_style()
    cat.write(paths["fits"], format="fits")
    cat.write(paths["votable"], format="votable")
    plain = Table({k: (np.asarray(v) if k != "Name" else v) for k, v in cat.items()})
    for col in plain.colnames:
        plain[col].unit = None
    plain.write(paths["csv"], format="ascii.csv")
    return paths


CSV_MAP = {k: v for k, v in MAP.items()}
CSV_MAP.update({"ra": {"column": "RAdeg", "unit": "deg"}, "dec": {"column": "DEdeg", "unit": "deg"},
                "distance": {"column": "Dist", "unit": "kpc"}, "distance_error": {"column": "e_Dist", "unit": "kpc"},
                "pm_ra_cosdec": {"column": "pmRAcosDE", "unit": "mas/yr"},
                "pm_ra_cosdec_error": {"column": "e_pmRA", "unit": "mas/yr"},
                "pm_dec": {"column": "pmDE", "unit": "mas/yr"}, "pm_dec_error": {"column": "e_pmDE", "unit": "mas/yr"},
                "radial_velocity": {"column": "RV", "unit": "km/s"},
                "radial_velocity_error": {"column": "e_RV", "unit": "km/s"},
                "radius": {"column": "Rad", "unit": "arcmin"}, "age": {"column": "Age", "unit": "kyr"}})


def test_four_formats_give_the_same_associations(tmp_path):
    paths = write_all(tmp_path)
    ref = read_associations(paths["ecsv"])
    for fmt, columns in (("fits", MAP), ("votable", MAP), ("csv", CSV_MAP)):
        got = read_associations(paths[fmt], columns=columns)
        assert got.names == NAMES, fmt
        for col in ("ra", "dec", "distance", "distance_error", "pm_ra_cosdec", "pm_dec", "radial_velocity",
                    "radial_velocity_error", "radius", "age"):
            # kpc -> pc and kyr -> Myr by astropy's units; radius = d tan(theta) recovers the parsecs
            np.testing.assert_allclose(got.column(col), ref.column(col), rtol=1e-6, err_msg=f"{fmt} {col}")
        # a size given as an angle inherits the distance's fractional error (first-order propagation,
        # common practice, no source): sigma_r / r = sigma_d / d
        np.testing.assert_allclose(got.column("radius_error"), RADIUS_PC * DIST_ERR_PC / DIST_PC, rtol=1e-6)
        assert len(got.sha256) == 64


def test_format_is_chosen_by_content(tmp_path):
    paths = write_all(tmp_path)
    disguised = tmp_path / "assoc.dat"
    disguised.write_bytes(paths["fits"].read_bytes())  # a FITS file with an unhelpful extension
    assert read_associations(disguised, columns=MAP).names == NAMES


def test_same_probabilities_with_the_same_seed(tmp_path):
    paths = write_all(tmp_path)
    star = {"name": "Invented-9", "ra": 85.0, "dec": -29.0, "parallax": "2.4 mas", "parallax_error": "0.2 mas",
            "pm_ra_cosdec": "20 mas/yr", "pm_ra_cosdec_error": "0.5 mas/yr", "pm_dec": "-35 mas/yr",
            "pm_dec_error": "0.5 mas/yr"}
    results = {}
    for fmt, columns in (("ecsv", None), ("fits", MAP), ("votable", MAP), ("csv", CSV_MAP)):
        trace = {"associations": str(paths[fmt]), "samples": 300, "max_age": "5 Myr", "seed": 3}
        if columns:
            trace["association_columns"] = columns
        scn = kinage.scenario_from_dict({"star": star, "trace": trace}, base_dir=tmp_path)
        d = kinage.trace(scn).to_dict()
        results[fmt] = {a["name"]: a["probability"] for a in d["associations"]}
    for fmt in ("fits", "votable", "csv"):
        for name in NAMES:
            assert results[fmt][name] == pytest.approx(results["ecsv"][name], rel=1e-6, abs=1e-9), (fmt, name)


def test_in_memory_table_with_a_map():
    cat = QTable(catalogue_style())
    got = kinage.api._associations(cat, {k: kinage.io.tables.ColumnSpec(v) for k, v in MAP.items()})
    assert got.column("distance") == pytest.approx(DIST_PC)


@pytest.mark.parametrize("columns, where, text", [
    ({**MAP, "pm_dec": "pmDEx"}, "pm_dec", "nearest: 'pmDE'"),
    ({**MAP, "pm_dec": "pmRAcosDE"}, "pm_dec", "already mapped"),
    ({**MAP, "velocity": "RV"}, "velocity", "not a kinage column"),
    ({**MAP, "distance": {"column": "Dist", "unit": "pc"}}, "distance", "remove the unit from the map"),
])
def test_bad_maps_name_the_key(tmp_path, columns, where, text):
    paths = write_all(tmp_path)
    with pytest.raises(InputError) as exc:
        read_associations(paths["fits"], columns=columns)
    assert where in str(exc.value) and text in str(exc.value)


def test_unit_of_the_wrong_dimension_and_a_missing_unit(tmp_path):
    paths = write_all(tmp_path)
    cat = catalogue_style()
    cat["Rad"] = cat["Rad"].value * u.km / u.s
    bad = tmp_path / "bad.fits"
    cat.write(bad, format="fits")
    with pytest.raises(InputError, match="column 'radius'.*pc or an angle"):
        read_associations(bad, columns=MAP)
    no_units = {**CSV_MAP, "distance": "Dist"}
    with pytest.raises(InputError, match=r"distance.*'Dist' has no unit"):
        read_associations(paths["csv"], columns=no_units)


def test_missing_column_names_what_the_file_has(tmp_path):
    paths = write_all(tmp_path)
    with pytest.raises(InputError) as exc:
        read_associations(paths["fits"])  # catalogue names, no map
    msg = str(exc.value)
    assert "missing column 'name'" in msg and "'Name'" in msg and "[trace.association_columns]" in msg
    cols = {k: v for k, v in MAP.items() if k != "pm_ra_cosdec"}
    with pytest.raises(InputError, match=r"missing column 'pm_ra_cosdec'.*nearest: 'pmRAcosDE'"):
        read_associations(paths["fits"], columns=cols)


def test_unreadable_file(tmp_path):
    junk = tmp_path / "assoc.fits"
    junk.write_bytes(b"SIMPLE  =  this is not a FITS file" + bytes(range(256)) * 4)
    with pytest.raises(InputError, match="could not read assoc.fits as FITS"):
        read_associations(junk)


def test_scenario_map_is_checked_before_any_work(tmp_path):
    paths = write_all(tmp_path)
    raw = {"star": {"ra": 85.0, "dec": -29.0, "parallax": 2.4, "parallax_error": 0.2, "pm_ra_cosdec": 20.0,
                    "pm_dec": -35.0},
           "trace": {"associations": str(paths["fits"]), "association_columns": {"pm_dec": "pmRAcosDE", "pm_ra_cosdec": "pmRAcosDE"}}}
    with pytest.raises(InputError, match=r"\[trace.association_columns\] pm_ra_cosdec.*already mapped"):
        kinage.scenario_from_dict(raw)


def test_cli_bad_map_is_one_line_and_writes_nothing(tmp_path):
    paths = write_all(tmp_path)
    scenario = tmp_path / "s.toml"
    scenario.write_text(f"""
[star]
ra = 85.0
dec = -29.0
parallax = "2.4 mas"
parallax_error = "0.2 mas"
pm_ra_cosdec = "20 mas/yr"
pm_dec = "-35 mas/yr"
[trace]
associations = "{paths['fits'].name}"
samples = 200
[trace.association_columns]
name = "Name"
ra = "RAdeg"
dec = "DEdeg"
distance = "Distance_kpc"
""")
    out = tmp_path / "out"
    proc = subprocess.run([sys.executable, "-m", "kinage", "trace", str(scenario), "--out", str(out)],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2, proc.stderr
    lines = [ln for ln in proc.stderr.strip().splitlines() if ln.strip()]
    assert len(lines) == 1 and "distance" in lines[0] and "Distance_kpc" in lines[0] and "'Dist'" in lines[0]
    assert not out.exists()


def test_schema_lists_the_association_columns():
    from kinage.associations.table import OPTIONAL, REQUIRED
    from kinage.io.schema import ASSOCIATION_COLUMNS

    assert tuple(ASSOCIATION_COLUMNS) == tuple(REQUIRED + OPTIONAL)


def test_batch_star_table_from_a_catalogue(tmp_path):
    from kinage.batch.stars import read_star_rows, star_columns

    t = Table({"Src": ["Invented-A", "Invented-B"], "RA_ICRS": [211.3, 64.2], "DE_ICRS": [17.8, -5.1],
               "Plx": [2.0, 0.9], "e_Plx": [0.1, 0.2], "Period": [0.8123, 1.9377], "Remark": ["x", "y"]})
    t["RA_ICRS"].unit = t["DE_ICRS"].unit = u.deg
    t["Plx"].unit = t["e_Plx"].unit = u.mas
    path = tmp_path / "stars.vot"
    t.write(path, format="votable")
    template = {"batch": {"star_columns": {"name": "Src", "ra": "RA_ICRS", "dec": "DE_ICRS", "parallax": "Plx",
                                           "parallax_error": "e_Plx",
                                           "spin_period": {"column": "Period", "unit": "s"}}}}
    rows = read_star_rows(path, columns=star_columns(template))
    assert [r["name"] for r in rows] == ["Invented-A", "Invented-B"]
    # the unit travels with the value, so the scenario reader converts it (astropy units)
    assert u.Quantity(rows[1]["spin_period"]).to_value(u.ms) == pytest.approx(1937.7)
    assert u.Quantity(rows[0]["parallax"]).to_value(u.mas) == pytest.approx(2.0)
    with pytest.raises(InputError, match=r"\[batch\] columns: unknown key"):
        star_columns({"batch": {"columns": {}}})
    with pytest.raises(InputError, match=r"\[batch.star_columns\] spin_period.*'Period' has no unit"):
        read_star_rows(path, columns={**template["batch"]["star_columns"], "spin_period": "Period"})
