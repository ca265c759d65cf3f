"""Isotropic neutron-star space-velocity distributions (Maxwellian mixtures).

A distribution is a mixture of isotropic 3-D Maxwellians with weights w_i and
1-D dispersions sigma_i; the speed density of one component is

    f(v) = sqrt(2/pi) v^2 / sigma^3 exp(-v^2 / (2 sigma^2))      (mean 2 sigma sqrt(2/pi)).

Because each component is an isotropic Gaussian in 3-D, the radial velocity
given an observed transverse velocity v_t is again a Gaussian mixture:

    p(v_r | v_t) = sum_i W_i N(v_r; 0, sigma_i^2),
    W_i  proportional to  w_i sigma_i^-2 exp(-v_t^2 / (2 sigma_i^2)),

(the 3-D density w_i (2 pi sigma_i^2)^-3/2 exp(-(v_t^2 + v_r^2)/(2 sigma_i^2)),
integrated over v_r).  Velocities are relative to the local standard of rest of
the star's birth place; kinage applies them relative to local Galactic rotation.
"""

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..params import get

__all__ = ["VelocityPrior", "velocity_prior"]


@dataclass(frozen=True)
class VelocityPrior:
    """Mixture of isotropic Maxwellians.

    Attributes
    ----------
    name : str
    weights : ndarray
        Component weights (sum 1).
    sigmas : ndarray
        1-D dispersions, km/s.
    """

    name: str
    weights: np.ndarray
    sigmas: np.ndarray

    @classmethod
    def from_components(cls, name, components):
        w = np.array([c[0] for c in components], float)
        s = np.array([c[1] for c in components], float)
        if np.any(w < 0) or w.sum() <= 0 or np.any(s <= 0):
            raise InputError(f"velocity prior '{name}'", "weights must be >= 0 (not all zero) and sigmas > 0")
        return cls(name, w / w.sum(), s)

    def speed_pdf(self, v):
        """Density of the 3-D speed, per km/s.  ``v`` in km/s."""
        v = np.asarray(v, float)[..., None]
        s = self.sigmas
        comp = np.sqrt(2 / np.pi) * v**2 / s**3 * np.exp(-(v**2) / (2 * s**2))
        return comp @ self.weights

    def mean_speed(self):
        """Mean 3-D speed, km/s."""
        return float(self.weights @ (2 * self.sigmas * np.sqrt(2 / np.pi)))

    def median_transverse_speed(self):
        """Median of the projected (2-D) speed, km/s."""
        from scipy.optimize import brentq

        def cdf(x):
            return float(self.weights @ (1 - np.exp(-(x**2) / (2 * self.sigmas**2))))

        return brentq(lambda x: cdf(x) - 0.5, 1e-6, 20 * self.sigmas.max())

    def sample_velocity(self, n, rng):
        """Draw ``n`` isotropic 3-D velocity vectors, km/s, shape (n, 3)."""
        rng = np.random.default_rng(rng)
        k = rng.choice(len(self.weights), size=n, p=self.weights)
        return rng.normal(size=(n, 3)) * self.sigmas[k][:, None]

    def radial_weights(self, vt):
        """Mixture weights W_i of p(v_r | v_t); ``vt`` km/s, shape (..., n_comp)."""
        vt = np.asarray(vt, float)[..., None]
        s = self.sigmas
        logw = np.log(np.where(self.weights > 0, self.weights, 1e-300)) - 2 * np.log(s) - vt**2 / (2 * s**2)
        logw -= logw.max(axis=-1, keepdims=True)
        w = np.exp(logw)
        return w / w.sum(axis=-1, keepdims=True)

    def sample_radial_given_transverse(self, vt, rng):
        """Draw one radial velocity (km/s) per transverse speed ``vt`` (km/s)."""
        rng = np.random.default_rng(rng)
        vt = np.atleast_1d(np.asarray(vt, float))
        W = self.radial_weights(vt)
        u = rng.random(len(vt))
        k = (u[:, None] > np.cumsum(W, axis=1)).sum(axis=1)
        k = np.minimum(k, len(self.sigmas) - 1)
        return rng.normal(size=len(vt)) * self.sigmas[k]


def velocity_prior(name, where="[trace] velocity_prior"):
    """The :class:`VelocityPrior` registered under ``name``."""
    pset = get("velocity_prior", name, where=where)
    return VelocityPrior.from_components(pset.name, pset.values["components"])
