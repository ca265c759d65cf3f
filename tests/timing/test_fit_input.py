"""Bad TOA tables and TOA-reference keys: one line naming the key, row or column; exit 2; nothing written.

Common practice, no source: these are checks of kinage's own input contract.
"""

import numpy as np
import pytest
from astropy.table import Table

from kinage.cli import main
from kinage.io.scenario import scenario_from_dict
from kinage.timing import simulate_toas

pytestmark = pytest.mark.filterwarnings("ignore::Warning")

STAR = ('[star]\nra = 48.2\ndec = 27.5\ndistance = "500 pc"\nspin_period = 0.0413\n'
        'spin_period_derivative = 2e-16\npm_ra_cosdec = 4.0\npm_dec = 1.0\n')


@pytest.fixture(scope="module")
def good_table():
    scn = scenario_from_dict({"star": {"ra": 48.2, "dec": 27.5, "distance": "500 pc", "spin_period": 0.0413,
                                       "spin_period_derivative": 2e-16, "pm_ra_cosdec": 4.0, "pm_dec": 1.0},
                              "campaign": {"start": "2027-01-10", "baseline": 3, "visits_per_year": 6,
                                           "toa_error": "20 us", "sun_avoidance": 0}})
    return simulate_toas(scn, rng=1).table


def _run(tmp_path, table, camp="", capsys=None, scenario_extra=""):
    toas = tmp_path / "toas.ecsv"
    table.write(toas, format="ascii.ecsv", overwrite=True)
    scn = tmp_path / "s.toml"
    scn.write_text(STAR + scenario_extra + '[campaign]\ntoa_error = "20 us"\ntoas = "toas.ecsv"\n' + camp)
    out_json, out_dir = tmp_path / "fit.json", tmp_path / "fit"
    status = main(["fit", str(toas), "--scenario", str(scn), "--json", str(out_json), "--out", str(out_dir),
                   "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1, err
    assert not out_json.exists() and not out_dir.exists()  # nothing written
    return err[0]


def _with_meta(table, **meta):
    t = table.copy()
    t.meta = {k: v for k, v in t.meta.items() if k not in ("toa_reference", "ephemeris")}
    t.meta.update(meta)
    return t


def test_unknown_toa_reference_in_scenario(tmp_path, good_table, capsys):
    line = _run(tmp_path, good_table, 'toa_reference = "topocentre"\n', capsys)
    assert "toa_reference" in line


def test_unknown_toa_reference_in_table_metadata(tmp_path, good_table, capsys):
    line = _run(tmp_path, _with_meta(good_table, toa_reference="moon"), "", capsys)
    assert "toa_reference" in line and "moon" in line


@pytest.mark.parametrize("key, value", [("site_latitude", 95.0), ("site_longitude", -200.0),
                                        ("site_height", "-5 km")])
def test_site_coordinates_out_of_range(tmp_path, good_table, capsys, key, value):
    keys = {"site_longitude": -40.0, "site_latitude": 45.0, "site_height": '"300 m"'}
    keys[key] = f'"{value}"' if isinstance(value, str) else value
    camp = 'toa_reference = "site"\n' + "".join(f"{k} = {v}\n" for k, v in keys.items())
    line = _run(tmp_path, good_table, camp, capsys)
    assert key in line


def test_site_reference_without_coordinates(tmp_path, good_table, capsys):
    line = _run(tmp_path, _with_meta(good_table), 'toa_reference = "site"\nsite_longitude = -40.0\n', capsys)
    assert "site_latitude" in line


def test_barycentred_table_without_reference_position(tmp_path, good_table, capsys):
    line = _run(tmp_path, _with_meta(good_table, toa_reference="barycentre"), "", capsys)
    assert "barycentred_ra" in line


def test_metadata_conflicting_with_the_scenario_names_both(tmp_path, good_table, capsys):
    table = _with_meta(good_table, toa_reference="site", site_longitude="-40.0 deg", site_latitude="45.0 deg",
                       site_height="300 m")
    line = _run(tmp_path, table, "site_latitude = 46.0\n", capsys)
    assert "site_latitude" in line and "46" in line and "45" in line and "toas.ecsv" in line


def test_simulated_table_reference_conflicts_with_another_in_the_scenario(tmp_path, good_table, capsys):
    # the simulated table says toa_reference = 'geocentre' in its metadata
    line = _run(tmp_path, good_table, 'toa_reference = "barycentre"\nbarycentred_ra = 48.2\nbarycentred_dec = 27.5\n',
                capsys)
    assert "toa_reference" in line and "geocentre" in line and "barycentre" in line


@pytest.mark.parametrize("bad", [0.0, np.nan, -1400.0])
def test_frequency_column_with_zero_nan_or_negative_names_the_row(tmp_path, good_table, capsys, bad):
    t = good_table.copy()
    freq = np.full(len(t), 1400.0)
    freq[3] = bad
    t["frequency"] = freq
    line = _run(tmp_path, t, "", capsys)
    assert "row 4" in line and "frequency" in line


def test_missing_ephemeris_file(tmp_path, good_table, capsys):
    line = _run(tmp_path, _with_meta(good_table), f'ephemeris = "{tmp_path / "de440.bsp"}"\n', capsys)
    assert "ephemeris" in line and "not found" in line


def test_mjd_outside_the_plausible_range_names_the_row(tmp_path, good_table, capsys):
    t = Table()
    mjd = good_table["mjd"].to_value("mjd", "float")
    t["mjd"] = mjd + 2400000.5  # Julian dates by mistake
    t["error"] = good_table["error"]
    line = _run(tmp_path, t, "", capsys)
    assert "row 1" in line and "mjd" in line and "range" in line


def test_all_toas_on_one_day(tmp_path, good_table, capsys):
    t = Table()
    t["mjd"] = 61000.0 + np.linspace(0, 0.5, 20)
    t["error"] = np.full(20, 2e-5)
    line = _run(tmp_path, t, "", capsys)
    assert "one day" in line and "mjd" in line


def test_too_few_toas(tmp_path, good_table, capsys):
    line = _run(tmp_path, good_table[:5], "", capsys)
    assert "more TOAs" in line


def test_relative_ephemeris_path_is_taken_from_the_scenario_folder(tmp_path, good_table, capsys):
    line = _run(tmp_path, _with_meta(good_table), 'ephemeris = "kernels/planets.bsp"\n', capsys)
    assert str(tmp_path / "kernels" / "planets.bsp") in line
