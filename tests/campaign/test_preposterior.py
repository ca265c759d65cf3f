"""Preposterior analysis of the birthplace probabilities (invented star and associations only).

Sources: Raiffa & Schlaifer 1961, Applied Statistical Decision Theory (preposterior analysis: the
distribution of tomorrow's posterior over today's predictive distribution); the law of total expectation
(its mean is today's posterior: "conservation of expected belief"); Owen 2013, Monte Carlo theory,
methods and examples, ch. 9 (importance sampling, effective sample size (sum w)^2 / sum w^2); Lindley
1956, Ann. Math. Stat. 27, 986 (expected information = expected entropy reduction, >= 0).
"""

import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from campaign_helpers import raw_scenario  # noqa: E402

import kinage  # noqa: E402
from kinage.astrometry import AstrometricSolution  # noqa: E402
from kinage.campaign.fresh import combined_solution  # noqa: E402
from kinage.campaign.preposterior import FRESH_BUDGET, simulate_outcomes, today_state  # noqa: E402
from kinage.campaign.sweep import entropy_bits, information_bits, to_today_epoch  # noqa: E402

pytestmark = pytest.mark.filterwarnings("ignore")


@pytest.fixture(scope="module")
def today(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("campaign")
    scn = kinage.scenario_from_dict(raw_scenario(tmp, samples=800))
    sol = AstrometricSolution.from_star(scn.star)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = kinage.trace(scn, solution=sol)
    return scn, sol, res, today_state(res, sol, scn)


def _pm_cov(sigma_pm, sigma_plx=1.0, sigma_pos=1.0):
    """A campaign covariance with the given errors (mas, mas/yr), uncorrelated."""
    return np.diag([sigma_pos**2, sigma_pos**2, sigma_pm**2, sigma_pm**2, sigma_plx**2])


def test_today_state_reproduces_the_trace(today):
    # closure: the kernels rebuilt from the trace's draws give exactly the probabilities the trace reports
    _, _, res, st = today
    d = res.to_dict()
    by_name = {a["name"]: a["probability"] for a in d["associations"]}
    for j, name in enumerate(st.names):
        assert st.p_now[j] == pytest.approx(by_name[name], abs=1e-9)
    assert st.p_now[-1] == pytest.approx(d["field_probability"], abs=1e-9)
    assert st.predictive.sum() == pytest.approx(1.0) and (st.predictive >= 0).all()
    # the invented case: both candidates plausible today
    assert 0.25 < st.p_now[0] < 0.65 and 0.25 < st.p_now[1] < 0.65


@pytest.mark.parametrize("sigma_pm, control", [(40.0, "fixed"), (4.0, "fixed"), (1.5, "fixed"),
                                               (4.0, "reweight"), (1.5, "reweight")])
def test_conservation_of_expected_belief(today, sigma_pm, control):
    # law of total expectation (Raiffa & Schlaifer 1961): E_y[P(H | D0, y)] = P(H | D0) for every hypothesis,
    # when y is drawn from today's predictive distribution.  Exact for the reweighted estimate with fixed chance
    # rates (up to the sampling of outcomes: 4 standard errors); with reweighted chance rates it holds to their
    # small dependence on the measured speed (an extra 0.02).
    _, _, _, st = today
    out = simulate_outcomes(st, [_pm_cov(sigma_pm)], 400, 5, allow_fresh=False, control=control)[0]
    p = out.probabilities
    mean, se = p.mean(axis=0), p.std(axis=0, ddof=1) / np.sqrt(len(p))
    slack = 0.0 if control == "fixed" else 0.02
    assert np.all(np.abs(mean - st.p_now) <= 4 * se + slack + 1e-9), (mean, st.p_now, se)


def test_truth_must_come_from_the_mixture_posterior(today):
    # the same check fails when the true state is picked uniformly from the draws (the field-only posterior):
    # for a precise campaign the field then gains on average -- why the predictive mixture is used
    _, _, _, st = today
    uniform = type(st)(**{**st.__dict__, "predictive": np.full(st.n, 1.0 / st.n)})
    p = simulate_outcomes(uniform, [_pm_cov(1.5)], 400, 5, allow_fresh=False, control="fixed")[0].probabilities
    se = p[:, -1].std(ddof=1) / np.sqrt(len(p))
    assert p[:, -1].mean() - st.p_now[-1] > 4 * se


def test_uninformative_campaign_stays_narrow_informative_spreads(today):
    # an experiment with errors far above today's cannot move beliefs; a precise one moves them both ways
    # (preposterior analysis; the mean stays put, tested above)
    _, _, _, st = today
    wide, sharp = simulate_outcomes(st, [_pm_cov(1e4, 1e4, 1e6), _pm_cov(1.0)], 200, 7, allow_fresh=False)
    q05, q95 = np.quantile(wide.probabilities, [0.05, 0.95], axis=0)
    assert np.all(np.abs(q05 - st.p_now) < 0.01) and np.all(np.abs(q95 - st.p_now) < 0.01)
    assert np.all(wide.ess > 0.95 * st.n)
    q05, q95 = np.quantile(sharp.probabilities[:, :2], [0.05, 0.95], axis=0)
    assert np.all(q95 - q05 > 0.3)
    # expected information (Lindley 1956): never negative beyond Monte Carlo noise, larger for the sharper one
    assert information_bits(st.p_now, sharp.probabilities) > 0.1
    assert abs(information_bits(st.p_now, wide.probabilities)) < 1e-3


def test_effective_sample_size_and_fresh_draws(today):
    # ESS = (sum w)^2 / sum w^2 (Owen 2013, eq. 9.13) collapses for a campaign far better than today's data:
    # those outcomes are marked 'fresh' and get probabilities from newly integrated draws
    _, _, _, st = today
    out = simulate_outcomes(st, [_pm_cov(0.05, 0.5, 0.5)], 24, 3, fresh_draws=150)[0]
    assert set(out.method) <= {"reweight", "fresh"} and "fresh" in out.method
    fresh = np.array(out.method) == "fresh"
    assert np.all(out.ess[fresh] < 50) and np.all(out.ess[~fresh] >= 50)
    assert np.all(np.isfinite(out.probabilities)) and np.allclose(out.probabilities.sum(axis=1), 1.0)


def test_brute_force_trace_of_simulated_outcomes(today):
    # for a handful of simulated outcomes, a full kinage.trace of the star with today's astrometry combined
    # with the simulated measurement (inverse-variance, as a fit is combined with [star]) gives probabilities
    # inside the predicted distribution and close to the predicted value of that outcome
    scn, sol, _, st = today
    cov = _pm_cov(1.5)
    # the user's path: reweighted, fresh where the ESS collapses (within the fresh-draw budget)
    out = simulate_outcomes(st, [cov], 200, 13, fresh_budget=FRESH_BUDGET)[0]
    lo, hi = np.quantile(out.probabilities, [0.01, 0.99], axis=0)
    for o in range(4):
        comb = combined_solution(sol, out.measured[o], out.covariance)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            d = kinage.trace(scn, solution=comb, samples=1500, rng=100 + o).to_dict()
        by_name = {a["name"]: a["probability"] for a in d["associations"]}
        brute = np.array([by_name[n] for n in st.names] + [d["field_probability"]])
        assert np.all((brute >= lo - 0.05) & (brute <= hi + 0.05)), (brute, lo, hi)
        # Monte Carlo error of either side ~0.03-0.05 (800 reweighted or 50-200 fresh draws, 1500 traced)
        assert np.all(np.abs(brute - out.probabilities[o]) < 0.15), (o, brute, out.probabilities[o])


def test_epoch_change_moves_position_errors_only():
    # position(t0) = position(t1) - pm (t1 - t0): the Jacobian J C J^T (linear error propagation)
    from astropy.time import Time

    c = np.diag([1.0, 4.0, 0.25, 0.09, 0.01])
    moved = to_today_epoch(c, Time("2031-01-01", scale="tdb"), Time("2027-01-01", scale="tdb"))
    dt = (Time("2031-01-01", scale="tdb").jd - Time("2027-01-01", scale="tdb").jd) / 365.25
    assert moved[0, 0] == pytest.approx(1.0 + 0.25 * dt**2)
    assert moved[1, 3] == pytest.approx(-0.09 * dt)
    assert np.allclose(moved[2:, 2:], c[2:, 2:])


def test_entropy_of_certainty_and_of_even_odds():
    # Shannon entropy: 0 bits for certainty, log2(k) bits for k equal hypotheses (Lindley 1956 uses it)
    assert entropy_bits([1.0, 0.0, 0.0]) == pytest.approx(0.0)
    assert entropy_bits([0.25] * 4) == pytest.approx(2.0)


def test_length_covariances_match_the_forecast_sweep(tmp_path):
    # closure: the full covariances rebuilt for other campaign lengths give the errors of the forecast's own
    # baseline sweep (same cadence, Sun window, TOA errors and reference epoch)
    from kinage.campaign.sweep import length_covariances
    from kinage.timing import forecast

    scn = kinage.scenario_from_dict(raw_scenario(tmp_path, toa_error="20 us"))
    fr = forecast(scn)
    rows = [i for i, b in enumerate(fr.sweep["baseline_yr"]) if min(abs(b - x) for x in (2, 4, 6, 8)) < 1e-6]
    assert len(rows) >= 3
    covs = length_covariances(scn, fr, fr.sweep["baseline_yr"][rows])
    for i, (cov, _) in zip(rows, covs):
        assert np.sqrt(cov[4, 4]) == pytest.approx(fr.sweep["parallax_error_mas"][i], rel=1e-6)
