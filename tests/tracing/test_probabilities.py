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
from kinage.orbits.probability import (check_field_prior, check_neighbourhood_share, neighbourhood_width,
                                       posterior_probabilities, weighted_interval)


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
    # posterior equals the prior (Bayes' theorem); checked within 4 stated errors
    rng = np.random.default_rng(2)
    n = 20000
    k = lambda: np.exp(-0.5 * (rng.exponential(3.0, (3, n))) ** 2)  # noqa: E731
    km, kc = k(), k()
    v = np.ones_like(km, bool)
    r = posterior_probabilities(km, v, kc, np.zeros_like(kc), v, 0.4)
    err = np.maximum(r["probability_error"], 1e-3)
    assert np.all(np.abs(r["probability"] - 0.2) < 4 * err)
    assert abs(r["field_probability"] - 0.4) < 4 * max(r["field_probability_error"], 1e-3)


def test_stated_error_matches_spread_of_repeated_experiments():
    # delta-method standard error (Efron & Tibshirani 1993) against the scatter of 40 independent
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
    stated = np.mean([r["probability_error"][0] for r in reps])
    assert stated == pytest.approx(spread, rel=0.35)


def _bayes_rule(lam, lam0, f, s):
    # the mixture written out by hand (Bayes' theorem over N candidates, their N surroundings and the
    # unrelated field): P_j = pi_j L_j / Z, P_near_j = pi_0j L_0j / Z, P_field = (f (1 - s) + sum P_near) / Z
    n = len(lam)
    pj, p0j = (1 - f) / n, f * s / n
    z = f * (1 - s) + pj * np.sum(lam) + p0j * np.sum(lam0)
    return pj * np.asarray(lam) / z, p0j * np.asarray(lam0) / z, (f * (1 - s) + p0j * np.sum(lam0)) / z


def test_surroundings_enter_by_bayes_rule_and_everything_sums_to_one():
    rng = np.random.default_rng(7)
    n = 6000
    km = rng.exponential(0.02, (3, n)) * (rng.random((3, n)) < 0.3)
    kn = np.minimum(1.0, km * 5.0 + rng.exponential(0.01, (3, n)))
    kc = rng.exponential(0.002, (3, n)) * (rng.random((3, n)) < 0.3)
    kcn = np.minimum(1.0, kc * 8.0)
    v = np.ones_like(km, bool)
    r = posterior_probabilities(km, v, kc, kc * 9.0, v, 0.5, near=(kn, kcn, kcn * 9.0), neighbourhood_share=0.4)
    assert np.sum(r["probability"]) + r["field_probability"] == pytest.approx(1.0, abs=1e-12)
    # the Bayes factors of the surroundings by the same ratio of averages (direct chance rate: many passages)
    lam0 = kn.mean(axis=1) / kcn.mean(axis=1)
    pj, pn, p0 = _bayes_rule(r["likelihood_ratio"], lam0, 0.5, 0.4)
    np.testing.assert_allclose(r["probability"], pj, rtol=1e-9)
    np.testing.assert_allclose(r["neighbourhood_probability"], pn, rtol=1e-9)
    assert r["field_probability"] == pytest.approx(p0, rel=1e-9)
    # share 0: the unrelated field alone, whatever the surroundings' kernels say
    a = posterior_probabilities(km, v, kc, kc * 9.0, v, 0.5)
    b = posterior_probabilities(km, v, kc, kc * 9.0, v, 0.5, near=(kn, kcn, kcn * 9.0), neighbourhood_share=0.0)
    np.testing.assert_allclose(a["probability"], b["probability"], rtol=1e-12)
    assert np.all(b["neighbourhood_probability"] == 0.0)


def test_uncertain_path_leaves_member_and_near_miss_to_the_prior():
    # a path known only to ~300 pc cannot tell birth inside a 10 pc association from birth 50 pc away:
    # both Bayes factors are equal to within Monte Carlo error, so P_j / P_near_j -> prior odds
    # (1 - f) / (f s) = 0.5 / 0.2 = 2.5 (Bayes' theorem); a path known to 3 pc decides for the member
    rng = np.random.default_rng(8)
    n = 200_000
    width = neighbourhood_width(10.0, 50.0)
    assert width == pytest.approx(np.hypot(10, 50) / 10)
    ctrl = np.abs(rng.normal(0, 3000.0, (1, n)))
    v = np.ones((1, n), bool)

    def run(spread_pc, centre_pc):
        d = np.abs(rng.normal(centre_pc, spread_pc, (1, n)))
        k = lambda x, w: np.exp(-0.5 * (x / (10.0 * w)) ** 2)  # noqa: E731
        return posterior_probabilities(k(d, 1), v, k(ctrl, 1), k(ctrl, 3), v, 0.5,
                                       near=(k(d, width), k(ctrl, width), k(ctrl, 3 * width)),
                                       neighbourhood_share=0.4)

    vague = run(300.0, 0.0)
    ratio = vague["probability"][0] / vague["neighbourhood_probability"][0]
    assert ratio == pytest.approx(2.5, rel=0.25)
    member = run(3.0, 0.0)
    assert member["probability"][0] > 0.9
    near_miss = run(3.0, 50.0)  # well-measured path 50 pc from the centre: a birth nearby, not inside
    assert near_miss["probability"][0] < 0.01 and near_miss["field_probability"] > 0.95


@pytest.mark.parametrize("bad", [1.0, -0.1, "most"])
def test_neighbourhood_share_must_lie_in_zero_one(bad):
    with pytest.raises(InputError, match="neighbourhood_share"):
        check_neighbourhood_share(bad)


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
    assert d["neighbourhood_share"] == 0.4 and d["neighbourhood_scale_pc"] == 50.0  # documented defaults
    assert d["associations"][0]["probability"] + d["field_probability"] == pytest.approx(1.0)
    assert 0.0 <= d["associations"][0]["neighbourhood_probability"] <= d["field_probability"]
    raw["trace"].update(neighbourhood_share=0.1, neighbourhood_scale="80 pc")
    d = trace(scenario_from_dict(raw)).to_dict()
    assert d["neighbourhood_share"] == 0.1 and d["neighbourhood_scale_pc"] == 80.0
    for key, value in (("neighbourhood_share", 1.0), ("neighbourhood_scale", "-5 pc")):
        bad = {**raw, "trace": {**raw["trace"], key: value}}
        with pytest.raises(InputError, match=key):
            trace(scenario_from_dict(bad))
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


def test_control_draws_grow_until_the_relevant_chance_rate_is_measured():
    # the Bayes factor divides by the chance rate, whose Monte Carlo error is ~ 1 / sqrt(passages)
    # (Poisson counting); kinage adds control draws until a relevant association's wide control kernel
    # sums to CONTROL_HITS passages and ignores associations the star never approaches
    from types import SimpleNamespace

    from kinage.orbits.control import probability_control_draws
    from kinage.orbits.probability import CONTROL_HITS, CONTROL_WIDTH

    rng = np.random.default_rng(9)
    n = 2000
    adraws = SimpleNamespace(n_assoc=2, m=1, radius_pc=np.array([10.0, 10.0]), age_myr=np.array([5.0, 5.0]))

    def results(dmin):
        return {"dmin": dmin, "tau": np.full(dmin.shape, 1.0), "edge": np.zeros(dmin.shape, bool), "failed": {}}

    main = results(np.vstack([np.abs(rng.normal(0, 10.0, n)), np.full(n, 1e4)]))
    cfg = {"tolerance": 0.5, "field_prior": 0.5, "neighbourhood_share": 0.4, "neighbourhood_scale": 50.0}
    for spread, expect_more in ((3000.0, True), (300.0, False)):
        ctrl = results(np.vstack([np.abs(rng.normal(0, spread, n)), np.full(n, 1e4)]))
        passages = np.exp(-0.5 * (ctrl["dmin"][0] / (CONTROL_WIDTH * 10.0)) ** 2).sum()
        need = probability_control_draws(ctrl, main, adraws, {}, cfg)
        if expect_more:
            assert passages < CONTROL_HITS
            assert need == int(np.ceil(n * CONTROL_HITS / passages))
        else:
            assert passages >= CONTROL_HITS and need == 0
