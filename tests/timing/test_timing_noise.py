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


def _psd(f_hz, amp, gamma):
    # one-sided power-law spectrum of the residuals, typed from the convention (Lentati et al. 2013, PRD 87,
    # 104021; van Haasteren & Vallisneri 2014): P(f) = A^2 / (12 pi^2) f_yr^-3 (f / f_yr)^-gamma, s^2/Hz
    fyr = 1 / (365.25 * 86400.0)
    return amp**2 / (12 * np.pi**2) * fyr**-3 * (f_hz / fyr) ** (-gamma)


def test_draws_have_the_stationary_covariance_of_the_spectrum():
    # Wiener-Khinchin: a process with one-sided spectrum P has covariance C(tau) = int P(f) cos(2 pi f tau) df;
    # on Fourier modes f_k = k/T with weights P(f_k)/T it is sum_k P(f_k)/T cos(2 pi f_k tau), every element,
    # not just the diagonal.  Plus white noise on the diagonal.  Sample covariance of 6000 draws: the error of
    # each element is ~ sqrt(2/6000) ~ 2 % of the variance; tolerance 8 % of the largest variance.
    amp, gamma, modes = 1e-12, 4.0, 5
    nm = _noise(n=40, amp=amp, modes=modes)
    rng = np.random.default_rng(3)
    draws = np.array([nm.draw(rng) for _ in range(6000)])
    emp = np.cov(draws.T)
    span = np.ptp(nm.seconds)
    f = np.arange(1, modes + 1) / span
    lag = nm.seconds[:, None] - nm.seconds[None, :]
    expected = np.einsum("k,ijk->ij", _psd(f, amp, gamma) / span, np.cos(2 * np.pi * f * lag[..., None]))
    expected[np.diag_indices_from(expected)] += (1.3 * nm.errors) ** 2 + 4e-6**2
    assert np.max(np.abs(emp - expected)) < 0.08 * np.max(np.diag(expected))


def test_periodogram_of_red_noise_matches_the_spectrum():
    # One-sided periodogram P_hat(f_k) = 2 dt |X_k|^2 / N of an evenly sampled series of span T = N dt
    # estimates P(f_k) (Press et al., Numerical Recipes, sec. 13.4 normalisation); averaged over 400 draws
    # its relative error is 1/sqrt(400) = 5 % per frequency.  White noise made negligible.
    n, dt = 256, 7 * 86400.0
    t = np.arange(n) * dt
    amp, gamma, modes = 1e-12, 3.0, 12
    nm = NoiseModel(t, np.full(n, 1e-12), red_amplitude=amp, red_index=gamma, red_modes=modes, span_s=n * dt)
    rng = np.random.default_rng(8)
    x = np.array([nm.draw(rng) for _ in range(400)])
    power = 2 * dt * np.abs(np.fft.rfft(x, axis=1)) ** 2 / n
    est = power.mean(axis=0)[1:modes + 1]
    f = np.arange(1, modes + 1) / (n * dt)
    np.testing.assert_allclose(est, _psd(f, amp, gamma), rtol=0.25)  # 5 sigma per frequency
    assert np.mean(est / _psd(f, amp, gamma)) == pytest.approx(1.0, abs=0.05)  # 3.5 sigma on the mean


def test_red_noise_variance_is_the_integral_of_the_spectrum():
    # Parseval: the variance of a stationary process is int P(f) df (one-sided).  With modes k/T, k = 1..m,
    # the model holds the band [1/(2T), (m + 1/2)/T]; for gamma = 1 the mode sum is that integral to ~2 %
    # (midpoint rule).  Integral by scipy.integrate.quad; sample variance over 300 draws x 200 TOAs.
    from scipy.integrate import quad

    amp, gamma, modes = 1e-13, 1.0, 200
    rng = np.random.default_rng(4)
    t = np.sort(rng.uniform(0, 10 * SECONDS_PER_YEAR, 200))
    nm = NoiseModel(t, np.full(t.size, 1e-12), red_amplitude=amp, red_index=gamma, red_modes=modes)
    span = np.ptp(t)
    integral = quad(_psd, 0.5 / span, (modes + 0.5) / span, args=(amp, gamma), limit=200, epsabs=0, epsrel=1e-10)[0]
    x = np.array([nm.draw(rng) for _ in range(300)])
    assert np.mean(x**2) == pytest.approx(integral, rel=0.05, abs=0)  # abs=0: the values are ~1e-13 s^2
