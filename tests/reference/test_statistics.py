"""Encounter and chance statistics (kinage.orbits.statistics) against scipy and a geometric probability.

Straight lines (potential 'none'): a star at distance D from an association, moving in a random direction
(isotropic), passes within r of it in the past with the solid-angle probability of a cone of half-angle
asin(r/D): p = (1 - sqrt(1 - (r/D)^2)) / 2 (elementary geometry; rays long enough to reach it).  Encounter
fractions are binomial counts; their errors and intervals are compared with scipy.stats.binom / binomtest.
"""

import numpy as np
import pytest
from scipy import stats

from kinage.orbits.hermite import AssociationGrid, StarChunk, closest_on_grid
from kinage.orbits.integrate import integrate_orbits, time_grid
from kinage.orbits.statistics import encounter_mask, summarise_association
from kinage.params import get

D_PC, R_PC, SPEED_KMS, WINDOW_MYR = 100.0, 20.0, 100.0, 5.0
P_GEOMETRIC = (1 - np.sqrt(1 - (R_PC / D_PC) ** 2)) / 2  # 0.0101


def _isotropic_passes(rng, n):
    """(dmin_pc, tau_myr, edge, valid) of n straight-line stars launched isotropically from D_PC away."""
    assoc = np.array([-8.1, 0.0, 0.02])
    bulk = np.array([10.0, 230.0, 5.0])
    direction = rng.normal(size=(n, 3))
    direction /= np.linalg.norm(direction, axis=1)[:, None]
    ps = np.tile(assoc + np.array([D_PC / 1000.0, 0.0, 0.0]), (n, 1))
    vs = bulk + SPEED_KMS * direction
    t = time_grid(WINDOW_MYR, 201)
    pset = get("potential", "none")
    star = integrate_orbits(ps, vs, t, pset)
    group = integrate_orbits(np.tile(assoc, (n, 1)), np.tile(bulk, (n, 1)), t, pset)
    res = _closest(star, group)
    return res["dmin_pc"], res["tau_myr"], res["edge"], np.ones(n, bool)


@pytest.fixture(scope="module")
def passes():
    rng = np.random.default_rng(17)
    return _isotropic_passes(rng, 20000), _isotropic_passes(rng, 20000)


def _summary(main, control=None, control_runs=0):
    dmin, tau, edge, valid = main
    return summarise_association("Test Group-1", R_PC, 10.0, dmin, tau, edge, valid, np.zeros(dmin.size),
                                 factor=1.0, tolerance_myr=0.0, control=control, control_runs=control_runs)


def test_encounter_mask_definition():
    # an encounter: valid, not at the window's edge, d_min < factor x radius, tau < age + tolerance
    rng = np.random.default_rng(1)
    n = 1000
    dmin, tau = rng.uniform(0, 50, n), rng.uniform(0, 5, n)
    edge, valid = rng.random(n) < 0.1, rng.random(n) < 0.9
    m = encounter_mask(dmin, tau, edge, valid, 10.0, 2.0, 1.5, 0.5)
    np.testing.assert_array_equal(m, valid & ~edge & (dmin < 15.0) & (tau < 2.5))


def test_encounter_fraction_matches_geometric_probability(passes):
    s = _summary(passes[0])
    k, n = s["n_encounters"], s["n_valid"]
    assert n == 20000 and s["encounter_fraction"] == k / n
    # exact binomial test (scipy) of the count against the geometric probability
    assert stats.binomtest(k, n, P_GEOMETRIC).pvalue > 1e-3
    # the count is really ~1% (not e.g. one-sided lines counted twice: 2%)
    assert stats.binomtest(k, n, 2 * P_GEOMETRIC).pvalue < 1e-6
    # binomial standard error sqrt(p (1 - p) / n), as scipy's binomial std / n
    assert s["encounter_fraction_error"] == pytest.approx(stats.binom.std(n, k / n) / n, rel=1e-12, abs=0)
    # and the fraction +- 2 errors overlaps scipy's exact (Clopper-Pearson) 95% interval
    ci = stats.binomtest(k, n).proportion_ci(0.95, method="exact")
    assert ci.low < k / n + 2 * s["encounter_fraction_error"] and ci.high > k / n - 2 * s["encounter_fraction_error"]
    assert ci.low < P_GEOMETRIC < ci.high


@pytest.mark.parametrize("runs", [1, 20])
def test_chance_fraction_and_its_error(passes, runs):
    # control draws: an independent isotropic set, so the chance rate is the same geometric probability
    main, ctrl = passes
    s = _summary(main, control=ctrl, control_runs=runs)
    kc = int(encounter_mask(*ctrl[:2], ctrl[2], ctrl[3], R_PC, 10.0, 1.0, 0.0).sum())
    nc = ctrl[0].size
    assert s["n_control"] == nc and s["chance_fraction"] == kc / nc
    assert stats.binomtest(kc, nc, P_GEOMETRIC).pvalue > 1e-3
    binomial_error = np.sqrt(P_GEOMETRIC * (1 - P_GEOMETRIC) / nc)
    if runs == 1:  # closed form: binomial error of the control fraction
        assert s["chance_fraction_error"] == pytest.approx(stats.binom.std(nc, kc / nc) / nc, rel=1e-12, abs=0)
    else:  # spread of 20 run means / sqrt(20): estimates the binomial error to ~ 1/sqrt(2 x 19) = 16 %
        assert s["chance_fraction_error"] == pytest.approx(binomial_error, rel=0.5, abs=0)
    # the main and control fractions estimate the same probability: ratio ~ 1 within the errors
    err = np.hypot(s["encounter_fraction_error"] / s["encounter_fraction"], s["chance_fraction_error"] / kc * nc)
    assert abs(np.log(s["ratio"])) < 4 * err


def test_fraction_error_describes_the_scatter_between_repeats():
    # the binomial error is the scatter of the fraction over independent repeats (scipy binomial std)
    rng = np.random.default_rng(5)
    fracs = [_summary(_isotropic_passes(rng, 3000))["encounter_fraction"] for _ in range(12)]
    expected = stats.binom.std(3000, P_GEOMETRIC) / 3000
    # sample std of 12 repeats: within a factor 1.6 of the truth with probability > 0.99 (chi^2, 11 dof)
    lo, hi = np.sqrt(stats.chi2.ppf([0.005, 0.995], 11) / 11)
    assert lo * expected < np.std(fracs, ddof=1) < hi * expected
    assert np.mean(fracs) == pytest.approx(P_GEOMETRIC, abs=4 * expected / np.sqrt(12))



def _closest(star, group):
    """Closest approach of star draw i to association draw i by the kernel trace runs (hermite.closest_on_grid)."""
    p, v = group.components()
    grid = AssociationGrid(np.moveaxis(p, 0, -1), np.moveaxis(v, 0, -1), group.times)
    return closest_on_grid(StarChunk(star, 0, star.n, origin=grid.origin), grid, 0, refine_below_pc=np.inf)
