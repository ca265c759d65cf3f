"""Age-comparison intervals (kinage.ages.verdicts) against lognormal quantiles and a calibrated z test (scipy)."""

import numpy as np
import pytest
from scipy import stats

from kinage.ages.verdicts import compare_intervals, log_sigma


def _lognormal_interval(median, sigma_ln):
    # 68% central interval of a lognormal from scipy's quantiles (15.87% and 84.13%)
    d = stats.lognorm(s=sigma_ln, scale=median)
    return {"median": median, "lo68": float(d.ppf(stats.norm.cdf(-1))), "hi68": float(d.ppf(stats.norm.cdf(1)))}


@pytest.mark.parametrize("sigma_ln", [0.05, 0.3, 1.2])
def test_log_sigma_of_a_lognormal_interval_is_its_sigma(sigma_ln):
    assert log_sigma(_lognormal_interval(3e5, sigma_ln)) == pytest.approx(sigma_ln, rel=1e-9)


def test_z_is_the_separation_in_combined_log_sigmas():
    a, b = _lognormal_interval(2e5, 0.2), _lognormal_interval(3e5, 0.3)
    r = compare_intervals(a, b)
    assert r["ratio"] == pytest.approx(2 / 3, rel=1e-12)
    assert r["z"] == pytest.approx(abs(np.log(2 / 3)) / np.hypot(0.2, 0.3), rel=1e-9)  # 1.12
    assert r["consistent"] is True
    far = compare_intervals(a, _lognormal_interval(5e5, 0.3))  # z = ln(2.5) / 0.36 = 2.54
    assert far["z"] == pytest.approx(np.log(2.5) / np.hypot(0.2, 0.3), rel=1e-9) and far["consistent"] is False


def test_agreement_rate_for_equal_true_ages_is_the_gaussian_two_sigma_rate():
    # two independent lognormal measurements of the same age: z ~ |N(0, 1)|, so "consistent" (z <= 2) has
    # probability 2 Phi(2) - 1 = 0.9545 (scipy); checked over 4000 pairs with an exact binomial test
    rng = np.random.default_rng(12)
    n, s1, s2 = 4000, 0.25, 0.6
    m1 = 1e5 * np.exp(s1 * rng.standard_normal(n))
    m2 = 1e5 * np.exp(s2 * rng.standard_normal(n))
    # a lognormal's quantiles scale with its median: take scipy's unit-median interval once per sigma
    u1, u2 = _lognormal_interval(1.0, s1), _lognormal_interval(1.0, s2)
    scale = lambda iv, m: {key: v * m for key, v in iv.items()}  # noqa: E731
    k = sum(compare_intervals(scale(u1, x), scale(u2, y))["consistent"] for x, y in zip(m1, m2))
    p = 2 * stats.norm.cdf(2.0) - 1
    assert stats.binomtest(int(k), n, p).pvalue > 1e-3
