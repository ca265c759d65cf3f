"""Distance draws: from a parallax with a space-density prior, or from a distance with error.

With a measured parallax w and error s, the posterior of the distance r is

    p(r | w) ~ prior(r) exp(-(w - 1/r)^2 / (2 s^2))

(Bailer-Jones 2015, PASP 127, 994, eq. 3 with the exponentially decreasing
space density prior r^2 exp(-r/L) of his Sect. 5, or the uniform space density
prior r^2 up to r_max).  kinage evaluates it on a grid of true parallax
w_t = 1/r (where the likelihood is Gaussian) and draws by inverting the
numerical cumulative distribution, so a negative measured parallax never turns
into a negative distance.  The prior in w_t is prior(1/w_t) / w_t^2.

Units: parallax mas, distance pc, scale lengths kpc (as in the parameter sets).
"""

from dataclasses import dataclass

import numpy as np
from scipy.special import ndtr, ndtri

from ..errors import InputError
from ..params import get

__all__ = ["DistancePrior", "distance_prior", "sample_true_parallax", "sample_distance_gaussian"]


@dataclass(frozen=True)
class DistancePrior:
    """A space-density distance prior.

    Attributes
    ----------
    name : str
    form : {'exponential', 'uniform'}
    scale_kpc : float
        Length scale L of r^2 exp(-r/L), kpc.
    r_max_kpc : float
        Largest distance considered, kpc.
    """

    name: str
    form: str
    scale_kpc: float
    r_max_kpc: float

    def log_density(self, r_kpc):
        """Unnormalised log prior density of the distance (r in kpc)."""
        r = np.asarray(r_kpc, float)
        with np.errstate(divide="ignore"):
            base = 2.0 * np.log(r)
        if self.form == "exponential":
            out = base - r / self.scale_kpc
        else:
            out = base
        return np.where((r > 0) & (r <= self.r_max_kpc), out, -np.inf)


def distance_prior(name, scale_pc=None, where="[trace] distance_prior"):
    """The :class:`DistancePrior` registered under ``name``; ``scale_pc`` overrides its length scale (pc)."""
    p = get("distance_prior", name, where=where)
    v = p.values
    form = v.get("form", "exponential")
    if form not in ("exponential", "uniform"):
        raise InputError(where, f"distance prior form must be 'exponential' or 'uniform' (got {form!r})")
    scale = float(v.get("scale_kpc", 1.0)) if scale_pc is None else float(scale_pc) / 1000.0
    r_max = float(v.get("r_max_kpc", 30.0))
    if form == "uniform" and scale_pc is not None:
        r_max = scale
    return DistancePrior(p.name, form, scale, r_max)


def _grid(parallax, sigma, prior, n_lin=4000, n_log=2000):
    w_min = 1.0 / prior.r_max_kpc
    hi = max(parallax + 10.0 * sigma, 2.0 * w_min)
    lo = max(parallax - 10.0 * sigma, w_min)
    parts = [np.geomspace(w_min, hi, n_log)]
    if hi > lo:
        parts.append(np.linspace(lo, hi, n_lin))
    return np.unique(np.concatenate(parts))


def sample_true_parallax(parallax, parallax_error, prior, n, rng):
    """Draw true parallaxes (mas) from the distance posterior given a measured parallax.

    Parameters
    ----------
    parallax, parallax_error : float, mas
    prior : DistancePrior
    n : int
    rng : numpy.random.Generator | int | None

    Returns
    -------
    ndarray, shape (n,), mas (all > 0); the distance is 1000 / value in pc.
    """
    rng = np.random.default_rng(rng)
    if not parallax_error > 0:
        raise InputError("[star] parallax_error", f"must be positive to draw distances (got {parallax_error} mas)")
    w = _grid(parallax, parallax_error, prior)
    logp = prior.log_density(1.0 / w) - 2.0 * np.log(w) - 0.5 * ((parallax - w) / parallax_error) ** 2
    logp -= np.max(logp[np.isfinite(logp)])
    p = np.exp(logp)
    cdf = np.concatenate([[0.0], np.cumsum(0.5 * (p[1:] + p[:-1]) * np.diff(w))])
    cdf /= cdf[-1]
    keep = np.concatenate([[True], np.diff(cdf) > 0])
    return np.interp(rng.random(n), cdf[keep], w[keep])


def sample_distance_gaussian(distance_pc, error_pc, n, rng):
    """Draw distances (pc) from a Gaussian truncated to positive values."""
    rng = np.random.default_rng(rng)
    if not error_pc > 0:
        return np.full(n, float(distance_pc))
    # inverse-CDF draw of the normal truncated below at zero (scipy.special, not scipy.stats: faster start-up)
    lo = ndtr(-distance_pc / error_pc)
    u = np.clip(lo + (1.0 - lo) * rng.random(n), np.nextafter(lo, 1.0), np.nextafter(1.0, 0.0))
    return distance_pc + error_pc * ndtri(u)
