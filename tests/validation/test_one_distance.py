"""One star through the chain: one distance posterior for the trace and the ages stage; distance and unit inputs.

Sources: the posterior is Bailer-Jones 2015 (PASP 127, 994, eq. 3) with a second, Gaussian likelihood for a
distance estimate; its own numbers are checked against quadrature in tests/tracing/test_distance_posterior.py.
Here the checks are that every stage uses the same numbers, and the project's rule for bad input (exit 2,
one line naming the key, nothing written; common practice, no source).
"""

import json

import numpy as np
import pytest

from .conftest import assert_one_line_error, files_under, run_cli, scenario_dict, write_case


def _run(tmp_path, capsys, raw, verb="run"):
    path = write_case(tmp_path / "in", raw)
    out = tmp_path / "out"
    status, _, err = run_cli([verb, path, "--out", out, "--json", tmp_path / "res.json"], capsys)
    return status, err, out


@pytest.mark.parametrize("star", [
    {"parallax": "0.3 mas", "parallax_error": "0.4 mas"},        # weak: refused after the forecast before
    {"parallax": "1.0 mas", "parallax_error": "0.3 mas", "distance": "1300 pc", "distance_error": "300 pc"},
])
def test_run_uses_one_distance_in_trace_and_ages(tmp_path, capsys, star):
    status, err, out = _run(tmp_path, capsys, scenario_dict(star=star))
    assert status == 0, err
    d = json.loads((out / "results.json").read_text())
    assert d["stages_completed"] == ["forecast", "trace", "ages"]
    tr, shk = d["trace"], d["ages"]["shklovskii"]
    assert set(tr["distance_pc"]) == {"median", "lo68", "hi68", "lo95", "hi95"}
    assert shk["distance_kpc"] * 1000.0 == pytest.approx(tr["distance_pc"]["median"], rel=1e-12)
    assert shk["distance_source"] == tr["distance_source"] == ("parallax+distance" if "distance" in star
                                                                else "parallax")
    assert shk["distance_from_trace"] is True
    # the transverse speed mu d over the same draws (4.74047 km/s per mas/yr at 1 kpc; AU / Julian year)
    assert shk["transverse_velocity_kms"] == pytest.approx(tr["transverse_velocity_kms"]["median"], rel=1e-6)
    # the report names the distance once (in the trace section), with its source
    md = (out / "report.md").read_text()
    assert md.count("Distance of the star, over all draws") == 1
    assert "Shklovskii correction uses the same draws" in md


def test_ages_without_trace_draw_the_same_posterior(tmp_path, capsys):
    # the ages stage alone builds the posterior with the trace's function: its median matches the
    # posterior's own median to the resolution of its stratified draws
    from kinage.astrometry import AstrometricSolution
    from kinage.io.scenario import scenario_from_dict
    from kinage.kinematics import scenario_distance_posterior

    raw = scenario_dict(tables=("ages",), star={"parallax": "-0.3 mas", "parallax_error": "0.4 mas"})
    status, err, out = _run(tmp_path, capsys, raw, verb="ages")
    assert status == 0, err
    shk = json.loads((tmp_path / "res.json").read_text())["shklovskii"]
    scn = scenario_from_dict(raw)
    post = scenario_distance_posterior(scn, AstrometricSolution.from_star(scn.star))
    assert shk["applied"] and shk["distance_source"] == "parallax"
    assert shk["distance_kpc"] * 1000.0 == pytest.approx(post.summary()["median"], rel=3e-3)
    assert np.isfinite(shk["transverse_velocity_kms"])


@pytest.mark.parametrize("star, key", [
    ({"distance": "500 pc", "distance_error": "0 pc", "parallax": None, "parallax_error": None},
     "[star] distance_error"),
    ({"distance": "500 pc", "distance_error": "-20 pc"}, "[star] distance_error"),
    ({"parallax_error": "0 mas"}, "[star] parallax_error"),
    ({"parallax_error": "-0.2 mas"}, "[star] parallax_error"),
])
def test_bad_distance_errors_stop_the_run(tmp_path, capsys, star, key):
    status, err, out = _run(tmp_path, capsys, scenario_dict(star=star))
    assert_one_line_error(status, err, key)
    assert not out.exists() or not files_under(out)
    assert not (tmp_path / "res.json").exists()


@pytest.mark.parametrize("table, key, value", [
    ("ages", "kinematic_age", 1.2), ("ages", "kinematic_age", "1.2"), ("ages", "hall_timescale", 1e4),
    ("ages", "ohmic_timescale", 3e5),
])
def test_bare_numbers_for_ambiguous_durations_ask_for_a_unit(tmp_path, capsys, table, key, value):
    # 1.2 read as 1.2 yr made a star "younger by a factor 1,900,000": a bare number for an age or a timescale
    # is refused with an example carrying a unit (exposures and TOA errors stay in SI seconds)
    extra = {"kinematic_age_error": "0.1 Myr"} if key == "kinematic_age" else {}
    raw = scenario_dict(**{table: {key: value, **extra}})
    status, err, out = _run(tmp_path, capsys, raw, verb="ages" if table == "ages" else "forecast")
    line = assert_one_line_error(status, err, f"[{table}] {key}", "give a unit")
    assert not out.exists() or not files_under(out)
    assert "'" in line.split("give a unit")[1]  # an example with its unit


def test_preflight_stops_a_distance_beyond_the_prior_before_the_forecast(tmp_path, capsys):
    # a distance estimate the prior cannot reach (uniform space density up to 5 kpc) is known from the inputs
    # alone: the run stops before the forecast writes anything
    raw = scenario_dict(star={"parallax": None, "parallax_error": None, "distance": "9 kpc",
                              "distance_error": "0.5 kpc"}, trace={"distance_prior": "uniform"})
    status, err, out = _run(tmp_path, capsys, raw)
    assert_one_line_error(status, err, "[star] distance", "distance_prior")
    assert not out.exists() or not files_under(out)


def test_forecast_expects_the_motion_at_the_posterior_distance():
    # v_t / (4.74047 d) with d the distance posterior's median (Bailer-Jones 2015 posterior, as in the trace);
    # a negative parallax used to leave the expected motion unknown
    from kinage.astrometry import AstrometricSolution
    from kinage.io.scenario import scenario_from_dict
    from kinage.kinematics import scenario_distance_posterior
    from kinage.timing.inputs import expected_proper_motion

    raw = scenario_dict(tables=("campaign",), star={"parallax": "-0.3 mas", "parallax_error": "0.4 mas",
                                                    "pm_ra_cosdec": None, "pm_ra_cosdec_error": None,
                                                    "pm_dec": None, "pm_dec_error": None})
    scn = scenario_from_dict(raw)
    exp = expected_proper_motion(scn)
    median = scenario_distance_posterior(scn, AstrometricSolution.from_star(scn.star)).summary()["median"]
    assert exp.distance_pc == pytest.approx(median, rel=1e-12)
    assert exp.pm_masyr == pytest.approx(exp.transverse_velocity_kms / (4.740470463533348 * median / 1000), rel=1e-6)


def test_bare_exposure_and_toa_error_are_seconds():
    # the documented default unit of both is the SI second (kinage keys); a bare number keeps that meaning
    from kinage import scenario_from_dict

    raw = scenario_dict(tables=("campaign",), campaign={"exposure": 30000, "toa_error": 0.004})
    c = scenario_from_dict(raw).campaign
    assert c.value("exposure", "ks") == pytest.approx(30.0) and c.value("toa_error", "ms") == pytest.approx(4.0)
