"""Timing noise: white TOA errors and power-law red (spin) noise.

White noise: each TOA has variance (s sigma_i)^2 + q^2, with ``error_scale``
s and ``added_error`` q (s) added in quadrature.

Red noise: a Gaussian process with one-sided power spectral density of the
residuals (common convention, e.g. Lentati et al. 2013, PRD 87, 104021; van
Haasteren & Vallisneri 2014, PRD 90, 104012)

    P(f) = A^2 / (12 pi^2) f_yr^-3 (f / f_yr)^-gamma    [s^2 / Hz],

represented in a Fourier basis F of sines and cosines at f_k = k / T
(k = 1..m, T the span of the data) with independent coefficients of variance
phi_k = P(f_k) / T.  The covariance is C = N + F Phi F^T; its inverse and
log-determinant follow from the Woodbury identity

    C^-1 = N^-1 - N^-1 F S^-1 F^T N^-1,    S = Phi^-1 + F^T N^-1 F,
    log det C = log det N + log det Phi + log det S,

at O(n m^2) cost instead of the O(n^3) of a dense Cholesky factorisation
(kept as ``method='dense'`` for testing).  Generalised least squares with
such a covariance follows Coles et al. 2011 (MNRAS 418, 561).
"""

from dataclasses import dataclass

import numpy as np
from scipy import linalg

from ..errors import InputError
from .model import SECONDS_PER_YEAR

__all__ = ["NoiseModel", "red_noise_psd", "fourier_basis", "noise_from_campaign"]

F_YR = 1.0 / SECONDS_PER_YEAR


def red_noise_psd(freq_hz, amplitude, index):
    """P(f) = A^2/(12 pi^2) f_yr^-3 (f/f_yr)^-gamma, s^2/Hz; ``freq_hz`` in Hz."""
    f = np.asarray(freq_hz, float)
    return amplitude**2 / (12 * np.pi**2) * F_YR**-3 * (f / F_YR) ** (-index)


def fourier_basis(seconds, n_modes, span_s):
    """Sine and cosine columns at k / span for k = 1..n_modes, shape (n, 2 n_modes).

    Returns
    -------
    basis : ndarray
    freqs : ndarray
        Frequency of each column, Hz.
    """
    freqs = np.arange(1, n_modes + 1) / span_s
    arg = 2 * np.pi * np.outer(seconds - seconds.min(), freqs)
    basis = np.empty((seconds.size, 2 * n_modes))
    basis[:, 0::2] = np.sin(arg)
    basis[:, 1::2] = np.cos(arg)
    return basis, np.repeat(freqs, 2)


@dataclass
class NoiseModel:
    """White plus red noise for a set of TOAs.

    Parameters
    ----------
    seconds : ndarray
        TOA times, s (any origin).
    errors : ndarray
        Quoted TOA errors, s.
    error_scale : float
        Multiplies the quoted errors.
    added_error : float, s
        Added in quadrature.
    red_amplitude : float
        A (dimensionless, at f = 1/yr); 0 switches red noise off.
    red_index : float
        gamma.
    red_modes : int
        Number of Fourier frequencies.
    span_s : float, s, optional
        Fundamental period T of the basis (default: the data span).
    """

    seconds: np.ndarray
    errors: np.ndarray
    error_scale: float = 1.0
    added_error: float = 0.0
    red_amplitude: float = 0.0
    red_index: float = 4.0
    red_modes: int = 30
    span_s: float | None = None

    def __post_init__(self):
        self.seconds = np.asarray(self.seconds, float)
        self.errors = np.broadcast_to(np.asarray(self.errors, float), self.seconds.shape).copy()
        if np.any(~np.isfinite(self.errors)) or np.any(self.errors <= 0):
            raise InputError("TOA errors", "must be finite and positive")
        if self.span_s is None:
            self.span_s = float(np.ptp(self.seconds)) if self.seconds.size > 1 else SECONDS_PER_YEAR
        self.white_var = (self.error_scale * self.errors) ** 2 + self.added_error**2
        if self.has_red:
            self.basis, self.freqs = fourier_basis(self.seconds, int(self.red_modes), self.span_s)
            self.phi = red_noise_psd(self.freqs, self.red_amplitude, self.red_index) / self.span_s
        else:
            self.basis = np.zeros((self.seconds.size, 0))
            self.freqs = self.phi = np.zeros(0)
        self._sigma_cho = None

    @property
    def has_red(self):
        return self.red_amplitude > 0 and self.red_modes > 0

    # -- Woodbury path ---------------------------------------------------------
    def _inner(self):
        """Cholesky factor of S = Phi^-1 + F^T N^-1 F (cached)."""
        if self._sigma_cho is None:
            # F^T N^-1 F as a symmetric product of the whitened basis (much faster than a general product)
            bs = self._whitened_basis()
            s = bs.T @ bs + np.diag(1.0 / self.phi)
            self._sigma_cho = linalg.cho_factor(s, lower=True)
        return self._sigma_cho

    def _whitened_basis(self):
        """N^-1/2 F (cached)."""
        if getattr(self, "_bs", None) is None:
            self._bs = self.basis / np.sqrt(self.white_var)[:, None]
        return self._bs

    def solve(self, b, method="woodbury"):
        """C^-1 b for b of shape (n,) or (n, k)."""
        b = np.asarray(b, float)
        if method == "dense":
            return linalg.cho_solve(self._dense_cho(), b)
        nb = b / (self.white_var if b.ndim == 1 else self.white_var[:, None])
        if not self.has_red:
            return nb
        corr = linalg.cho_solve(self._inner(), self.basis.T @ nb)
        return nb - (self.basis @ corr) / (self.white_var if b.ndim == 1 else self.white_var[:, None])

    def quadratic(self, a, b=None, method="woodbury"):
        """a^T C^-1 b (b defaults to a); a, b of shape (n,) or (n, k)."""
        b = a if b is None else b
        if method == "dense":
            return np.asarray(a).T @ self.solve(b, method="dense")
        if b is a and np.ndim(a) == 2:  # symmetric: X^T C^-1 X through the whitened X and basis
            xs = np.asarray(a, float) / np.sqrt(self.white_var)[:, None]
            out = xs.T @ xs
            if self.has_red:
                fx = self._whitened_basis().T @ xs
                out = out - fx.T @ linalg.cho_solve(self._inner(), fx)
            return out
        a = np.asarray(a, float)
        b = np.asarray(b, float)
        w = 1.0 / self.white_var
        out = a.T @ (b * (w if b.ndim == 1 else w[:, None]))
        if self.has_red:
            fa = self.basis.T @ (a * (w if a.ndim == 1 else w[:, None]))
            fb = self.basis.T @ (b * (w if b.ndim == 1 else w[:, None]))
            out = out - fa.T @ linalg.cho_solve(self._inner(), fb)
        return out

    def logdet(self, method="woodbury"):
        """log det C."""
        if method == "dense":
            cho = self._dense_cho()
            return 2 * np.sum(np.log(np.diag(cho[0])))
        out = np.sum(np.log(self.white_var))
        if self.has_red:
            cho = self._inner()
            out += np.sum(np.log(self.phi)) + 2 * np.sum(np.log(np.diag(cho[0])))
        return float(out)

    # -- dense path (testing) --------------------------------------------------
    def dense_covariance(self):
        """C = N + F Phi F^T as an (n, n) array."""
        c = (self.basis * self.phi) @ self.basis.T
        c[np.diag_indices_from(c)] += self.white_var
        return c

    def _dense_cho(self):
        if getattr(self, "_dense", None) is None:
            self._dense = linalg.cho_factor(self.dense_covariance(), lower=True, overwrite_a=True)
        return self._dense

    # -- simulation --------------------------------------------------------------
    def draw(self, rng):
        """One realisation of white plus red noise at the TOAs, seconds."""
        rng = np.random.default_rng(rng)
        white = rng.standard_normal(self.seconds.size) * np.sqrt(self.white_var)
        if not self.has_red:
            return white
        coef = rng.standard_normal(self.phi.size) * np.sqrt(self.phi)
        return white + self.basis @ coef


def noise_from_campaign(campaign, seconds, errors, span_s=None):
    """NoiseModel with the scenario's white and red noise keys."""
    return NoiseModel(
        seconds, errors,
        error_scale=campaign.value("error_scale", None, 1.0),
        added_error=campaign.value("added_error", "s", 0.0),
        red_amplitude=campaign.value("red_noise_amplitude", None, 0.0),
        red_index=campaign.value("red_noise_index", None, 4.0),
        red_modes=int(campaign.get("red_noise_modes", 30)),
        span_s=span_s,
    )
