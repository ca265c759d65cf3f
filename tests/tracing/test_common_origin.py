"""Hoogerwerf, de Bruijne & de Zeeuw 2001 (A&A 365, 49), Appendix A, eqs. A3/A4."""

import numpy as np
import pytest
from scipy import integrate, stats

from kinage.orbits.hermite import AssociationGrid, StarChunk, closest_on_grid
from kinage.orbits.common_origin import compare_common_origin, separation_cdf, separation_pdf
from kinage.orbits.integrate import integrate_orbits, time_grid
from kinage.params import get


@pytest.mark.parametrize("mu", [0.0, 3.0, 12.0])
def test_pdf_normalised_and_matches_direct_sampling(mu):
    sigma = 4.0
    assert integrate.quad(lambda d: separation_pdf(d, sigma, mu), 0, 200)[0] == pytest.approx(1, abs=1e-6)
    rng = np.random.default_rng(1)
    x1 = rng.normal(0, sigma, (5000, 3))
    x2 = rng.normal(0, sigma, (5000, 3)) + [mu, 0, 0]
    delta = np.linalg.norm(x1 - x2, axis=1)
    assert stats.kstest(delta, lambda d: separation_cdf(d, sigma, mu)).pvalue > 0.01


def test_common_origin_limit_is_maxwellian():
    # eq. A4 is a Maxwellian with scale sqrt(2) sigma (scipy.stats.maxwell)
    d = np.linspace(0, 40, 50)
    np.testing.assert_allclose(separation_pdf(d, 5.0), stats.maxwell(scale=np.sqrt(2) * 5.0).pdf(d), rtol=1e-12)


def test_monte_carlo_dmin_of_true_common_origin_follows_appendix_a():
    # A synthetic true common origin: a star still sharing its association's motion (zero relative velocity),
    # both positions measured with isotropic 3-D Gaussian errors sigma.  The Monte Carlo closest approaches,
    # computed by kinage's integration and closest-approach code, follow eq. A4 (KS test), and the fitted
    # sigma recovers the input.
    rng = np.random.default_rng(8)
    n, sigma_pc = 3000, 6.0
    centre = np.array([-8.0, 0.3, 0.02])
    v = np.array([10.0, 225.0, 5.0])
    ps = centre + rng.normal(0, sigma_pc / 1000, (n, 3))
    pa = centre + rng.normal(0, sigma_pc / 1000, (n, 3))
    vel = np.tile(v, (n, 1))
    times = time_grid(2.0, 101)
    pset = get("potential", "none")
    s, a = integrate_orbits(ps, vel, times, pset), integrate_orbits(pa, vel, times, pset)
    res = _closest(s, a)
    out = compare_common_origin(res["dmin_pc"])
    assert out["ks_pvalue"] > 0.01
    assert out["sigma_pc"] == pytest.approx(sigma_pc, rel=0.03)
    # an offset origin (mu = 5 sigma) is rejected
    off = compare_common_origin(np.linalg.norm(rng.normal(0, 6, (3000, 3)) - rng.normal(0, 6, (3000, 3))
                                               - [30, 0, 0], axis=1))
    assert off["ks_pvalue"] < 1e-3 and off["fit_mu_pc"] == pytest.approx(30, rel=0.15)



def _closest(star, group):
    """Closest approach of star draw i to association draw i by the kernel trace runs (hermite.closest_on_grid)."""
    p, v = group.components()
    grid = AssociationGrid(np.moveaxis(p, 0, -1), np.moveaxis(v, 0, -1), group.times)
    return closest_on_grid(StarChunk(star, 0, star.n, origin=grid.origin), grid, 0, refine_below_pc=np.inf)
