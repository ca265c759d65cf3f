"""The ages front door: keys, worked examples through the scenario, bad input, products."""

import json

import numpy as np
import pytest

from kinage.ages import compare_ages
from kinage.ages.field_decay import exponential_characteristic_age
from kinage.ages.spindown import characteristic_age
from kinage.errors import InputError
from kinage.io.results import write_json
from kinage.io.scenario import scenario_from_dict

REQUIRED = ("characteristic_age_yr", "dipole_field_gauss", "spin_down_luminosity_erg_s", "spin_down_age_yr",
            "implied_initial_period_s", "decay_timescale_yr", "cooling_age_yr", "kinematic_age_yr", "verdicts",
            "warnings")


def _scn(star=None, ages=None, trace=None):
    base = {"name": "Lumen-4", "spin_period": 6.2, "spin_period_error": 1e-6, "spin_period_derivative": 2.6e-14,
            "spin_period_derivative_error": 1e-15, "temperature": "90 eV", "temperature_error": "4 eV"}
    base.update(star or {})
    raw = {"star": {k: v for k, v in base.items() if v is not None}}
    raw["ages"] = dict(ages or {})
    if trace:
        raw["trace"] = trace
    return scenario_from_dict(raw)


def test_keys_products_and_json(tmp_path):
    scn = _scn(star={"pm_ra_cosdec": 80.0, "pm_dec": -40.0, "parallax": 2.5, "parallax_error": 0.3},
               ages={"kinematic_age": "5e5 yr", "kinematic_age_error": "1e5 yr", "hall_timescale": "1e5 yr",
                       "ohmic_timescale": "1e6 yr"})
    r = compare_ages(scn, rng=7)
    d = r.to_dict()
    for k in REQUIRED:
        assert k in d
    for k in ("median", "lo68", "hi68"):
        assert d["cooling_age_yr"][k] > 0 and d["kinematic_age_yr"][k] > 0
    assert d["shklovskii"]["applied"] is True
    assert d["field_decay"]["ohm_hall"]["characteristic_age_at_kinematic_age_yr"]["median"] > 0
    assert {v["pair"] for v in d["verdicts"]} >= {"kinematic-characteristic", "kinematic-cooling"}
    assert r.parameter_sets and r.parameter_sets[0].kind == "cooling_model"
    assert r.assumptions and 1 <= r.summary().count(". ") + 1 <= 4
    write_json(tmp_path / "ages.json", d)
    json.loads((tmp_path / "ages.json").read_text())
    paths = r.write_products(tmp_path)
    names = {p.name for p in paths}
    assert {"ages_ladder.png", "ages_cooling_curves.png"} <= names
    assert all(p.stat().st_size > 1000 for p in paths)


def test_crab_worked_example_through_the_front_door():
    # published reference values of the Crab pulsar (a worked example, not demo data): P = 33.39 ms,
    # Pdot = 4.21e-13, n = 2.51, true age 937 yr (SN 1054 to the 1990s):
    # tau_c ~ 1,260 yr, max age ~ 1,670 yr, implied P0 ~ 19 ms (Lyne, Pritchard & Graham-Smith 1993)
    scn = _scn(star={"spin_period": 0.03339, "spin_period_error": None, "spin_period_derivative": 4.21e-13,
                     "spin_period_derivative_error": None, "temperature": None, "temperature_error": None},
               ages={"braking_index": 2.51, "kinematic_age": "937 yr", "shklovskii": False})
    d = compare_ages(scn, rng=1).to_dict()
    assert d["characteristic_age_yr"] == pytest.approx(1260, rel=0.01)
    assert d["max_spin_down_age_yr"] == pytest.approx(1670, rel=0.01)
    assert d["implied_initial_period_s"] == pytest.approx(0.019, abs=0.001)
    assert d["cooling_age_yr"]["median"] is None


def test_decay_timescale_recovered_from_consistent_inputs():
    # exponential closed form: a star of true age t with tau_d shows tau_c = (tau_d/2)(exp(2t/tau_d) - 1)
    t, tau_d, p = 2e5, 1.5e5, 5.0
    tc = exponential_characteristic_age(t, tau_d)
    pdot = p / (2 * tc * 365.25 * 86400)
    scn = _scn(star={"spin_period": p, "spin_period_derivative": pdot, "spin_period_derivative_error": None,
                     "spin_period_error": None}, ages={"kinematic_age": f"{t} yr"})
    d = compare_ages(scn, rng=2).to_dict()
    assert d["decay_timescale_yr"] == pytest.approx(tau_d, rel=1e-6)
    assert "younger" in d["verdicts"][0]["text"] and "field decay" in d["verdicts"][0]["text"]


def test_kinematic_samples_consistent_with_characteristic_age():
    tc = characteristic_age(6.2, 2.6e-14)
    rng = np.random.default_rng(11)
    samples = tc * np.exp(rng.normal(0, 0.2, 3000))
    r = compare_ages(_scn(), kinematic_age_samples=samples, kinematic_age_source="trace: association Corvi-9", rng=3)
    d = r.to_dict()
    assert d["kinematic_age_source"] == "trace: association Corvi-9"
    assert d["kinematic_age_yr"]["median"] == pytest.approx(tc, rel=0.03)
    v = {x["pair"]: x for x in d["verdicts"]}["kinematic-characteristic"]
    assert v["consistent"] is True and "consistent within errors" in v["text"]


def test_lognormal_kinematic_age_draws():
    # lognormal with median = value and sigma(ln t) = error/value: 68 % interval = value exp(-+sigma)
    d = compare_ages(_scn(ages={"kinematic_age": "1e5 yr", "kinematic_age_error": "3e4 yr", "samples": 20000}), rng=4).to_dict()
    k = d["kinematic_age_yr"]
    assert k["median"] == pytest.approx(1e5, rel=0.02)
    assert k["lo68"] == pytest.approx(1e5 * np.exp(-0.3), rel=0.03)
    assert k["hi68"] == pytest.approx(1e5 * np.exp(0.3), rel=0.03)


def test_kinematic_older_than_max_age_has_no_initial_period():
    tc = characteristic_age(6.2, 2.6e-14)
    d = compare_ages(_scn(ages={"kinematic_age": f"{3 * tc} yr"}), rng=5).to_dict()
    assert d["implied_initial_period_s"] is None
    assert "no solution" in d["implied_initial_period_note"]
    assert d["decay_timescale_yr"] is None
    assert "older" in d["verdicts"][0]["text"]


def test_spinning_up_star_is_reported_not_fatal():
    d = compare_ages(_scn(star={"spin_period_derivative": -2e-15}, ages={"kinematic_age": "1e5 yr"}), rng=6).to_dict()
    assert d["spinning_up"] is True
    assert d["characteristic_age_yr"] is None and d["spin_down_age_yr"] is None
    assert any("spinning up" in w for w in d["warnings"])
    assert d["cooling_age_yr"]["median"] > 0


def test_shklovskii_can_turn_a_star_into_a_spinning_up_one():
    # Pdot_shk = P mu^2 d / c ~ 2.43e-21 P mu^2 d (Shklovskii 1970): 6.2 s, 300 mas/yr, 2 kpc -> 2.7e-15
    scn = _scn(star={"spin_period_derivative": 2e-15, "spin_period_derivative_error": None, "pm_ra_cosdec": 300.0,
                     "pm_dec": 0.0, "distance": "2 kpc"})
    d = compare_ages(scn, rng=1).to_dict()
    assert d["shklovskii"]["pdot_shk_nominal"] == pytest.approx(2.43e-21 * 6.2 * 300**2 * 2, rel=0.01, abs=0)
    assert d["spinning_up"] is True


def test_same_seed_same_numbers():
    scn = _scn(ages={"kinematic_age": "2e5 yr", "kinematic_age_error": "5e4 yr"})
    a = compare_ages(scn, rng=9).to_dict()
    b = compare_ages(scn, rng=9).to_dict()
    assert a["cooling_age_yr"] == b["cooling_age_yr"] and a["uncertainties"] == b["uncertainties"]


@pytest.mark.parametrize("star, ages, exc, where", [
    ({}, {"braking_index": 1.0}, InputError, r"\[ages\] braking_index"),
    ({}, {"initial_period": 8.0}, InputError, r"\[ages\] initial_period"),
    ({}, {"radius": 4.0}, InputError, r"\[ages\] radius"),
    ({}, {"masses": [1.4, 3.0], "radius": 9.0}, InputError, r"\[ages\] radius"),
])
def test_bad_input_names_the_field(star, ages, exc, where):
    with pytest.raises(exc, match=where):
        compare_ages(_scn(star=star, ages=ages), rng=1)


def test_plane_crossing_time_is_never_called_a_kinematic_age():
    # the time since the last Galactic-plane crossing dates a birth only for a star born in the mid-plane
    # (Noutsos et al. 2013, MNRAS 430, 2281; Cordes & Chernoff 1998): when it stands in for a missing
    # association it is named so in every verdict, in the summary and in the JSON
    from kinage.ages.verdicts import PLANE_CROSSING_NAME

    rng = np.random.default_rng(3)
    r = compare_ages(_scn(), kinematic_age_samples=rng.lognormal(np.log(9e5), 0.2, 500),
                     kinematic_age_source="plane-crossing", rng=5)
    d = r.to_dict()
    assert d["kinematic_age_source"] == "plane-crossing"
    texts = [v["text"] for v in d["verdicts"] if v["pair"].startswith("kinematic")]
    assert texts and all(PLANE_CROSSING_NAME in t and "kinematic age (" not in t for t in texts)
    assert PLANE_CROSSING_NAME == ("time since the Galactic-plane crossing (an age only if the star was born in "
                                   "the mid-plane)")
    assert r.summary().startswith("Time since the Galactic-plane crossing") and "Kinematic age" not in r.summary()
