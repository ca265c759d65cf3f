"""Scenario reader: every validation path names its field; unit round trips."""

import astropy.units as u
import numpy as np
import pytest
from astropy.time import Time

from kinage.errors import InputError, ScenarioError
from kinage.io.scenario import load_scenario, scenario_from_dict

STAR = {"name": "Test star", "ra": 52.25, "dec": -12.5, "parallax": 3.1, "parallax_error": 0.4,
        "pm_ra_cosdec": 40.0, "pm_dec": -70.0, "spin_period": 9.85, "spin_period_derivative": 1e-13}


def problems_of(raw, base_dir="."):
    with pytest.raises(ScenarioError) as info:
        scenario_from_dict(raw, base_dir=base_dir)
    return [str(p) for p in info.value.problems]


def test_minimal_star_parses():
    s = scenario_from_dict({"star": dict(STAR)})
    assert s.star.parallax == 3.1 * u.mas
    assert s.campaign is None and s.trace is None


@pytest.mark.parametrize(
    "key, value, expected",
    [
        # astropy unit conversion is the reference for each pair
        ("parallax", "3100 uas", 3.1 * u.mas),
        ("distance", "0.25 kpc", (0.25 * u.kpc).to(u.pc)),
        ("spin_period", "6125 ms", 6.125 * u.s),
        ("pm_dec", "-0.07 arcsec/yr", -70 * u.mas / u.yr),
        ("luminosity", "1e25 W", (1e25 * u.W).to(u.erg / u.s)),
    ],
)
def test_unit_round_trip(key, value, expected):
    star = dict(STAR)
    star[key] = value
    for other in (("distance",) if key != "distance" else ("parallax", "parallax_error")):
        star.pop(other, None)  # keep one distance measure so this key is checked on its own
    s = scenario_from_dict({"star": star})
    got = s.star.get(key)
    assert got.unit == u.Unit(expected.unit) or got.unit.is_equivalent(expected.unit)
    assert np.isclose(got.to_value(expected.unit), expected.value, rtol=1e-12)


def test_number_and_string_give_same_internal_value():
    # same quantity as a number in the default unit and as a string in another unit
    a = scenario_from_dict({"star": {**STAR, "distance": 250.0, "distance_from": "distance"}}).star.value("distance", "pc")
    b = scenario_from_dict({"star": {**STAR, "distance": "815.39 lyr", "distance_from": "distance"}}).star.value(
        "distance", "pc")
    assert a == 250.0
    assert np.isclose(b, (815.39 * u.lyr).to_value(u.pc), rtol=1e-12)  # astropy conversion
    assert np.isclose(a, b, rtol=1e-4)  # 815.39 lyr is 250.0 pc to 5 digits


def test_temperature_in_ev_is_converted_as_kT():
    # kT = 100 eV <-> T = 1.1604518e6 K (CODATA via astropy.units.temperature_energy)
    s = scenario_from_dict({"star": {**STAR, "temperature": "100 eV"}})
    assert np.isclose(s.star.value("temperature", "K"), 1.16045181e6, rtol=1e-6)


def test_sexagesimal_position():
    s = scenario_from_dict({"star": {**STAR, "ra": "03:30:00", "dec": "-12:30:00"}})
    assert np.isclose(s.star.value("ra", "deg"), 52.5)
    assert np.isclose(s.star.value("dec", "deg"), -12.5)


@pytest.mark.parametrize(
    "table, key, value, fragment",
    [
        ("star", "parallax_error", -0.3, "[star] parallax_error: must be positive (got -0.3 mas)"),
        ("star", "parallax", "4 km/s", "[star] parallax: expected a quantity of angle"),
        ("star", "distance", -10.0, "[star] distance: must be positive"),
        ("star", "dec", 95.0, "[star] dec: must be at most 90"),
        ("star", "spin_period", "fast", "[star] spin_period: expected a number"),
        ("star", "pm_correlation", 1.5, "[star] pm_correlation: must be at most 1"),
        ("star", "spin_period", float("nan"), "[star] spin_period: must be finite"),
        ("star", "epoch", "next tuesday", "[star] epoch: expected an MJD number or an ISO date"),
        ("star", "spin_period", True, "[star] spin_period: expected a number"),
        ("trace", "samples", 2.5, "[trace] samples: expected a whole number"),
        ("trace", "samples", 0, "[trace] samples: must be positive"),
        ("trace", "potential", "", "[trace] potential: expected a non-empty string"),
        ("ages", "shklovskii", "yes", "[ages] shklovskii: expected true or false"),
        ("ages", "envelopes", 3, "[ages] envelopes: expected a list of names"),
        ("ages", "masses", ["a"], "[ages] masses: expected a list of numbers"),
        ("campaign", "pulsed_fraction", 1.3, "[campaign] pulsed_fraction: must be at most 1"),
        ("campaign", "pulsed_fraction", 0.0, "[campaign] pulsed_fraction: must be in (0, 1]"),
        ("campaign", "source_rate", 0.0, "[campaign] source_rate: must be positive"),
        ("campaign", "background_rate", -1.0, "[campaign] background_rate: must not be negative"),
        ("campaign", "pulse_shape", [-0.1], "[campaign] pulse_shape: expected a list of non-negative"),
        ("campaign", "dates", [], "[campaign] dates: expected a list of dates"),
        ("campaign", "toas", "no_such_file.ecsv", "[campaign] toas: file not found"),
    ],
)
def test_bad_value_message_names_field(table, key, value, fragment):
    raw = {"star": dict(STAR)}
    if table == "campaign":
        raw["campaign"] = {"start": "2027-01-01", "baseline": 3, "visits_per_year": 4, "toa_error": "10 ms"}
    elif table != "star":
        raw[table] = {}
    raw[table][key] = value
    msgs = problems_of(raw)
    assert any(fragment in m for m in msgs), msgs


def test_unknown_key_suggests_close_match():
    msgs = problems_of({"star": {**STAR, "paralax": 3.0}})
    assert any("[star] paralax: unknown key (did you mean 'parallax'?)" in m for m in msgs), msgs


def test_unknown_table_suggests_close_match():
    msgs = problems_of({"star": dict(STAR), "traces": {}})
    assert any("[traces]" in m and "did you mean 'trace'" in m for m in msgs), msgs


def test_missing_star_table():
    assert any("[star]" in m and "missing table" in m for m in problems_of({"ages": {}}))


def test_error_without_value():
    star = {k: v for k, v in STAR.items() if k != "parallax"}
    star["distance"] = 300.0
    msgs = problems_of({"star": {**star, "parallax_error": 0.2}})
    assert any("[star] parallax_error: given without 'parallax'" in m for m in msgs)


def test_all_problems_reported_together():
    msgs = problems_of({"star": {**STAR, "parallax_error": -1, "pm_dec": "3 pc", "colour": 1}})
    assert len(msgs) == 3


def test_trace_requires_proper_motion_and_distance():
    star = {k: v for k, v in STAR.items() if k not in ("parallax", "parallax_error", "pm_dec")}
    msgs = problems_of({"star": star, "trace": {}})
    assert any("[star] parallax" in m for m in msgs)
    assert any("[star] pm_dec" in m for m in msgs)
    assert any("[trace] associations" in m for m in msgs)


def test_campaign_needs_photons_or_toa_error():
    msgs = problems_of({"star": dict(STAR), "campaign": {"start": "2027-01-01", "baseline": 3, "visits_per_year": 4}})
    assert any("[campaign] exposure" in m for m in msgs)
    assert any("[campaign] source_rate" in m for m in msgs)


def test_baseline_shorter_than_visit_interval():
    msgs = problems_of({"star": dict(STAR), "campaign": {"start": 60000, "baseline": "30 d", "visits_per_year": 2,
                                                         "toa_error": "1 ms"}})
    assert any("[campaign] baseline: shorter than one visit interval" in m for m in msgs)


def test_relative_paths_resolve_against_scenario_folder(tmp_path):
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "groups.csv").write_text("name\n")
    (tmp_path / "sub" / "s.toml").write_text(
        '[star]\nra = 10\ndec = 20\ndistance = "300 pc"\npm_ra_cosdec = 1\npm_dec = 2\n'
        '[trace]\nassociations = "groups.csv"\n')
    s = load_scenario(tmp_path / "sub" / "s.toml")
    assert s.trace.associations == (tmp_path / "sub" / "groups.csv").resolve()
    assert len(s.sha256) == 64


def test_bad_toml_is_one_clear_error(tmp_path):
    p = tmp_path / "broken.toml"
    p.write_text("[star\nra = 1\n")
    with pytest.raises(ScenarioError, match="not valid TOML"):
        load_scenario(p)


def test_missing_file():
    with pytest.raises(ScenarioError, match="file not found"):
        load_scenario("/no/such/scenario.toml")


def test_dates_and_times():
    s = scenario_from_dict({"star": dict(STAR), "campaign": {"dates": ["2027-01-01", 61500.5, "J2028.0"],
                                                             "toa_error": "2 ms"}})
    d = s.campaign.dates
    assert isinstance(d, Time) and len(d) == 3
    # 2027-01-01 TDB is MJD 61406 (astropy Time is the reference)
    assert np.isclose(d[0].mjd, Time("2027-01-01", scale="tdb").mjd)


def test_sections_are_read_only():
    s = scenario_from_dict({"star": dict(STAR)})
    with pytest.raises(AttributeError):
        s.star.parallax = 1.0
    assert s.star.replace(parallax=2 * u.mas).parallax == 2 * u.mas


def test_input_error_is_value_error():
    assert issubclass(InputError, ValueError)
