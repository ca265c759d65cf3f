"""Birth-association probabilities: Bayes' rule, Monte Carlo errors, recovery of galpy-flown synthetic births.

Synthetic births are made by scripts/calibrate_probabilities.py, which flies
the association and the star with galpy directly (not kinage's integrator).
"""

import importlib.util
import json
from pathlib import Path

import numpy as np
import pytest

from kinage import scenario_from_dict
from kinage.errors import InputError
from kinage.io.results import to_jsonable
from kinage.orbits import trace
from kinage.orbits.probability import check_field_prior, posterior_probabilities, weighted_interval


def _script():
    path = Path(__file__).resolve().parents[2] / "scripts" / "calibrate_probabilities.py"
    spec = importlib.util.spec_from_file_location("calibrate_probabilities", path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


# ------------------------------------------------------------------ the model on plain arrays
def test_probabilities_sum_to_one_and_follow_bayes_rule():
    # Bayes' theorem: posterior odds = prior odds x Bayes factor, so changing only the field prior
    # from 0.5 to 0.2 multiplies P_j / P_field by (0.8 / 2) / 0.2 / ((0.5 / 2) / 0.5) = 4
    rng = np.random.default_rng(1)
    km = rng.exponential(0.02, (2, 4000)) * (rng.random((2, 4000)) < 0.3)
    kc = rng.exponential(0.002, (2, 4000)) * (rng.random((2, 4000)) < 0.3)
    v = np.ones_like(km, bool)
    a = posterior_probabilities(km, v, kc, kc * 9.0, v, 0.5)
    b = posterior_probabilities(km, v, kc, kc * 9.0, v, 0.2)
    for r in (a, b):
        assert np.sum(r["probability"]) + r["field_probability"] == pytest.approx(1.0, abs=1e-12)
    odds_a = a["probability"] / a["field_probability"]
    odds_b = b["probability"] / b["field_probability"]
    np.testing.assert_allclose(odds_b / odds_a, 4.0, rtol=1e-12)
    np.testing.assert_allclose(a["likelihood_ratio"], b["likelihood_ratio"], rtol=1e-12)


def test_no_information_returns_the_prior():
    # when the draws and the control draws come from the same distribution the Bayes factor is 1 and the
    # posterior equals the prior (Bayes' theorem); checked within 4 jackknife errors
    rng = np.random.default_rng(2)
    n = 20000
    k = lambda: np.exp(-0.5 * (rng.exponential(3.0, (3, n))) ** 2)  # noqa: E731
    km, kc = k(), k()
    v = np.ones_like(km, bool)
    r = posterior_probabilities(km, v, kc, np.zeros_like(kc), v, 0.4)
    err = np.maximum(r["probability_error"], 1e-3)
    assert np.all(np.abs(r["probability"] - 0.2) < 4 * err)
    assert abs(r["field_probability"] - 0.4) < 4 * max(r["field_probability_error"], 1e-3)


def test_jackknife_error_matches_spread_of_repeated_experiments():
    # jackknife standard error (Efron & Tibshirani 1993, ch. 11) against the scatter of 40 independent
    # replicates of the same Monte Carlo experiment: agree within 35% (sampling error of 40 replicates ~11%)
    rng = np.random.default_rng(3)

    def run():
        d = rng.normal(0, 30, (1, 2000))
        dc = rng.normal(0, 120, (1, 2000))
        km, kc = np.exp(-0.5 * (d / 10) ** 2), np.exp(-0.5 * (dc / 10) ** 2)
        v = np.ones_like(km, bool)
        return posterior_probabilities(km, v, kc, np.zeros_like(kc), v, 0.5)

    reps = [run() for _ in range(40)]
    spread = np.std([r["probability"][0] for r in reps], ddof=1)
    jack = np.mean([r["probability_error"][0] for r in reps])
    assert jack == pytest.approx(spread, rel=0.35)


def test_weighted_interval_reduces_to_percentiles():
    # reference: numpy.percentile on repeated samples (integer weights = repetitions)
    rng = np.random.default_rng(4)
    x = rng.normal(10, 3, 3000)
    w = rng.integers(1, 4, 3000)
    iv = weighted_interval(x, w)
    q = np.percentile(np.repeat(x, w), [50, 15.87, 84.13])
    assert iv["median"] == pytest.approx(q[0], abs=0.02) and iv["lo68"] == pytest.approx(q[1], abs=0.03)
    assert iv["hi68"] == pytest.approx(q[2], abs=0.03)
    assert weighted_interval(x, np.zeros_like(x))["median"] is None


@pytest.mark.parametrize("bad", [0.0, 1.0, -0.2, "half"])
def test_field_prior_must_lie_strictly_between_zero_and_one(bad):
    with pytest.raises(InputError, match="field_prior"):
        check_field_prior(bad)


# ------------------------------------------------------------------ synthetic births flown with galpy
@pytest.fixture(scope="module")
def births(tmp_path_factory):
    """Two invented associations and two stars born in the first, flown with galpy; good astrometry."""
    cp = _script()
    rng = np.random.default_rng(11)
    assoc = cp.make_associations(rng, 2)
    stars = cp.inject_population(rng, assoc, 2, kinds=["member", "member"], parents=[0, 0])
    rows = cp.observe(rng, stars, prefix="Synthia", parallax_error=0.05, pm_error=0.1)
    path = cp.write_associations(tmp_path_factory.mktemp("births") / "assoc.csv", assoc)
    return cp, assoc, stars, rows, path


def _run(cp, rows, path, samples, i=0):
    return cp.trace_rows([rows[i]], path, samples, 0.5, seed=100 + i)[0]


@pytest.mark.slow
def test_true_parent_probable_decoy_not_and_stable_with_draws(births):
    cp, assoc, stars, rows, path = births
    parent, decoy = assoc[0]["name"], assoc[1]["name"]
    for i in range(len(rows)):
        d = _run(cp, rows, path, 2000, i)
        p = {s["name"]: s for s in d["associations"]}
        assert p[parent]["probability"] >= 0.5, (i, p[parent]["probability"])
        assert p[decoy]["probability"] <= 0.05
        assert d["favoured"] == parent
        total = sum(s["probability"] for s in d["associations"]) + d["field_probability"]
        assert total == pytest.approx(1.0, abs=1e-9)
        if i == 0:
            d8 = _run(cp, rows, path, 8000, i)
            p8 = {s["name"]: s["probability"] for s in d8["associations"]}
            for name in (parent, decoy):
                assert abs(p8[name] - p[name]["probability"]) < 0.1
            assert abs(d8["field_probability"] - d["field_probability"]) < 0.1
            # the Monte Carlo error is stated and shrinks with the number of draws
            assert 0 <= d8["associations"][0]["probability_error"] <= p[parent]["probability_error"] + 0.01
            # the radial velocity implied by the birthplace brackets the true one (68% interval widened by 2)
            rv = d8["favoured_radial_velocity_kms"]
            half = rv["hi68"] - rv["lo68"]
            assert rv["lo68"] - half <= stars[i]["radial_velocity"] <= rv["hi68"] + half
            dist = d8["favoured_distance_pc"]
            assert dist["lo95"] - 20 <= stars[i]["distance_pc"] <= dist["hi95"] + 20
            text = json.dumps(to_jsonable(d8))
            assert "p_chance" not in text and "ks_pvalue" not in text


@pytest.mark.slow
def test_reduced_injection_calibration(tmp_path):
    # reduced version of scripts/calibrate_probabilities.py: reliability (DeGroot & Fienberg 1983) and
    # Brier score (Brier 1950) on ~40 galpy-flown stars, tolerant bounds
    cp = _script()
    rng = np.random.default_rng(5)
    assoc = cp.make_associations(rng, 3)
    stars = cp.inject_population(rng, assoc, 44, field_fraction=0.5)
    rows = cp.observe(rng, stars)
    path = cp.write_associations(tmp_path / "assoc.csv", assoc)
    results = cp.trace_rows(rows, path, 300, 0.5, association_samples=40, control_runs=2, time_steps=151)
    probs, truth, kinds, names = cp.probability_matrix(results, stars, assoc)
    assert len(truth) >= 25
    base = np.bincount(truth, minlength=len(names)) / len(truth)
    bs = cp.brier_score(probs, truth)
    bs_ref = cp.brier_score(np.repeat(base[None, :], len(truth), 0), truth)
    assert bs < 0.75 * bs_ref
    onehot = np.zeros_like(probs)
    onehot[np.arange(len(truth)), truth] = 1
    # calibration in the large: mean stated probability of birth in a listed association vs the truth
    assert abs(probs[:, :-1].sum(axis=1).mean() - onehot[:, :-1].sum(axis=1).mean()) < 0.2
    table = cp.reliability_table(probs.ravel(), onehot.ravel(), edges=(0.0, 0.1, 0.9, 1.0))
    for b in table:
        assert abs(b["observed"] - b["mean_stated"]) < 0.25 + 1.0 / np.sqrt(b["n"])


def test_field_prior_key_reaches_the_trace(tmp_path):
    (tmp_path / "a.csv").write_text("name,ra,dec,distance,pm_ra_cosdec,pm_dec,radial_velocity,radius,age\n"
                                    "Tessel-1,40.0,10.0,300,2.0,-3.0,5.0,12,3\n")
    raw = {"star": {"name": "Invented J0202", "ra": 41.0, "dec": 11.0, "parallax": 3.2, "parallax_error": 0.1,
                    "pm_ra_cosdec": 15.0, "pm_ra_cosdec_error": 0.2, "pm_dec": -9.0, "pm_dec_error": 0.2},
           "trace": {"associations": str(tmp_path / "a.csv"), "samples": 60, "association_samples": 10,
                     "control_runs": 2, "max_age": 1.0, "time_steps": 51, "seed": 3, "field_prior": 0.3,
                     "potential": "none"}}
    d = trace(scenario_from_dict(raw)).to_dict()
    assert d["field_prior"] == 0.3 and d["probability_threshold"] == 0.5
    assert d["associations"][0]["probability"] + d["field_probability"] == pytest.approx(1.0)
    with pytest.raises(InputError, match="field_prior"):
        raw["trace"]["field_prior"] = 1.5
        trace(scenario_from_dict(raw))


def test_without_control_draws_there_are_no_probabilities(tmp_path):
    # no field alternative without randomised control draws: probabilities are None and the verdict says why
    (tmp_path / "a.csv").write_text("name,ra,dec,distance,pm_ra_cosdec,pm_dec,radial_velocity,radius,age\n"
                                    "Tessel-1,40.0,10.0,300,2.0,-3.0,5.0,12,3\n")
    raw = {"star": {"name": "Invented J0303", "ra": 41.0, "dec": 11.0, "parallax": 3.2, "parallax_error": 0.1,
                    "pm_ra_cosdec": 15.0, "pm_ra_cosdec_error": 0.2, "pm_dec": -9.0, "pm_dec_error": 0.2},
           "trace": {"associations": str(tmp_path / "a.csv"), "samples": 40, "association_samples": 10,
                     "control_runs": 0, "max_age": 1.0, "time_steps": 51, "seed": 3, "potential": "none"}}
    res = trace(scenario_from_dict(raw))
    d = res.to_dict()
    assert d["field_probability"] is None and d["associations"][0]["probability"] is None
    assert d["favoured"] is None and "no field alternative" in res.summary()
