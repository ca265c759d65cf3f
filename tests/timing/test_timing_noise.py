"""Noise model: Woodbury identity against dense Cholesky, power law, draws."""

import numpy as np
import pytest

from kinage.timing.model import SECONDS_PER_YEAR
from kinage.timing.noise import NoiseModel, red_noise_psd


def _noise(n=300, amp=3e-13, modes=20, seed=0):
    rng = np.random.default_rng(seed)
    t = np.sort(rng.uniform(0, 8 * SECONDS_PER_YEAR, n))
    err = rng.uniform(5e-6, 2e-5, n)
    return NoiseModel(t, err, error_scale=1.3, added_error=4e-6, red_amplitude=amp, red_index=4.0,
                      red_modes=modes)


def test_woodbury_matches_dense_cholesky():
    # Woodbury identity (Woodbury 1950; van Haasteren & Vallisneri 2014, PRD 90, 104012) against a
    # dense Cholesky factorisation: agree to 1e-8 relative
    nm = _noise()
    rng = np.random.default_rng(1)
    b = rng.standard_normal((nm.seconds.size, 4))
    x_w, x_d = nm.solve(b), nm.solve(b, method="dense")
    assert np.max(np.abs(x_w - x_d)) < 1e-8 * np.max(np.abs(x_d))
    q_w, q_d = nm.quadratic(b), nm.quadratic(b, method="dense")
    assert np.allclose(q_w, q_d, rtol=1e-8, atol=1e-8 * np.max(np.abs(q_d)))
    assert nm.logdet() == pytest.approx(nm.logdet(method="dense"), rel=1e-8)
    # and the dense log-determinant agrees with numpy's slogdet
    assert nm.logdet() == pytest.approx(np.linalg.slogdet(nm.dense_covariance())[1], rel=1e-8)


def test_white_only_is_diagonal():
    nm = NoiseModel(np.arange(10.0), np.full(10, 2.0), error_scale=1.5, added_error=1.0)
    assert np.allclose(nm.white_var, 1.5**2 * 4 + 1)
    assert nm.solve(np.ones(10)) == pytest.approx(np.ones(10) / nm.white_var)


def test_power_law_convention():
    # P(f) = A^2/(12 pi^2) f_yr^-3 (f/f_yr)^-gamma (Lentati et al. 2013, PRD 87, 104021, eq. for the
    # power-law spectrum); at f = 1/yr this is A^2/(12 pi^2) yr^3
    fyr = 1 / SECONDS_PER_YEAR
    assert red_noise_psd(fyr, 1e-12, 13 / 3) == pytest.approx(1e-24 / (12 * np.pi**2) * SECONDS_PER_YEAR**3)
    assert red_noise_psd(2 * fyr, 1.0, 4.0) / red_noise_psd(fyr, 1.0, 4.0) == pytest.approx(2.0**-4)


def test_draws_have_the_model_covariance():
    nm = _noise(n=40, amp=1e-12, modes=5)
    rng = np.random.default_rng(3)
    draws = np.array([nm.draw(rng) for _ in range(4000)])
    emp = np.cov(draws.T)
    c = nm.dense_covariance()
    # sample covariance of 4000 draws: relative error ~ sqrt(2/4000) ~ 2% on the diagonal
    assert np.allclose(np.diag(emp), np.diag(c), rtol=0.1)
