"""Monte Carlo draws of a star's present position and velocity.

* Position and proper motion are drawn with their full covariance (correlated
  draws).  With a parallax, the true parallax is drawn first from the distance
  posterior (:mod:`.distance`), then the other four parameters from their
  Gaussian conditional on it: mean m_o + C_op / C_pp (w_t - w), covariance
  C_oo - C_op C_po / C_pp (standard multivariate-normal conditioning).
* Without a usable parallax the distance comes from ``distance`` and its error
  (Gaussian truncated at zero).
* The radial velocity is measured (Gaussian) or drawn from the velocity prior.
  The prior describes the star's peculiar velocity u relative to the local
  standard of rest at its position (flat rotation curve with the circular speed
  of the solar parameter set, see :mod:`kinage.orbits.frames`).  For an
  isotropic distribution the line-of-sight part of u, given its transverse
  part |u_perp|, follows the conditional mixture of
  :meth:`VelocityPrior.sample_radial_given_transverse`; the heliocentric radial
  velocity is then v_r = u_r - (v_sun - v_lsr(star)) . n.
"""

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from .distance import sample_distance_gaussian, sample_true_parallax

__all__ = ["StarDraws", "draw_star", "radial_velocity_from_prior", "choose_distance_source"]


@dataclass
class StarDraws:
    """Draws of a star's present state.

    Attributes
    ----------
    ra_deg, dec_deg : ndarray, deg
    distance_pc : ndarray, pc
    pm_ra_cosdec, pm_dec : ndarray, mas/yr
    radial_velocity : ndarray, km/s (heliocentric)
    distance_source : str
        'parallax' or 'distance'.
    rv_source : str
        'measured' or 'prior'.
    """

    ra_deg: np.ndarray
    dec_deg: np.ndarray
    distance_pc: np.ndarray
    pm_ra_cosdec: np.ndarray
    pm_dec: np.ndarray
    radial_velocity: np.ndarray
    distance_source: str = "parallax"
    rv_source: str = "prior"

    @property
    def n(self):
        return len(self.ra_deg)

    def part(self, start, stop):
        """Draws ``start`` to ``stop - 1`` (a view)."""
        sl = slice(start, stop)
        return StarDraws(self.ra_deg[sl], self.dec_deg[sl], self.distance_pc[sl], self.pm_ra_cosdec[sl],
                         self.pm_dec[sl], self.radial_velocity[sl], self.distance_source, self.rv_source)

    def take(self, index):
        """The draws at the integer positions ``index`` (a copy)."""
        i = np.asarray(index, int)
        return StarDraws(self.ra_deg[i], self.dec_deg[i], self.distance_pc[i], self.pm_ra_cosdec[i],
                         self.pm_dec[i], self.radial_velocity[i], self.distance_source, self.rv_source)

    def galactocentric(self, frame):
        """Positions (kpc) and velocities (km/s) in the Galactocentric frame of ``frame``."""
        return frame.to_galactocentric(self.ra_deg, self.dec_deg, self.distance_pc,
                                       self.pm_ra_cosdec, self.pm_dec, self.radial_velocity)


def radial_velocity_from_prior(frame, ra_deg, dec_deg, distance_pc, pm_ra_cosdec, pm_dec, prior, rng):
    """Heliocentric radial velocities (km/s) drawn from an isotropic prior given the transverse motion.

    Parameters
    ----------
    frame : SolarFrame
    ra_deg, dec_deg : ndarray, deg
    distance_pc : ndarray, pc
    pm_ra_cosdec, pm_dec : ndarray, mas/yr
    prior : VelocityPrior
        Distribution of the peculiar velocity relative to local rotation.
    rng : numpy.random.Generator | int | None

    Returns
    -------
    ndarray, km/s
    """
    rng = np.random.default_rng(rng)
    pos, vel0 = frame.to_galactocentric(ra_deg, dec_deg, distance_pc, pm_ra_cosdec, pm_dec, np.zeros(np.size(ra_deg)))
    u0 = vel0 - frame.lsr_velocity(pos)
    nhat = frame.line_of_sight(ra_deg, dec_deg)
    u0_los = np.einsum("ij,ij->i", u0, nhat)
    u_perp = np.linalg.norm(u0 - u0_los[:, None] * nhat, axis=1)
    u_r = prior.sample_radial_given_transverse(u_perp, rng)
    return u_r - u0_los


def choose_distance_source(solution, distance_pc=None, distance_error_pc=None):
    """'parallax' or 'distance': the better of the two given, with input checks.

    The parallax is used when it is finite with a positive error and either
    no distance is given or its relative error is smaller than the distance's.

    Raises
    ------
    InputError
        When neither is usable, or the parallax alone does not constrain the
        distance (parallax <= 0 or parallax / error < 1).
    """
    w, sw = solution.values[4], solution.sigma[4]
    has_w = np.isfinite(w) and np.isfinite(sw) and sw > 0
    has_d = distance_pc is not None and np.isfinite(distance_pc)
    if has_d and distance_pc <= 0:
        raise InputError("[star] distance", f"must be positive (got {distance_pc} pc)")
    if has_w and has_d:
        frac_w = sw / w if w > 0 else np.inf
        frac_d = (distance_error_pc or 0.0) / distance_pc
        return "parallax" if frac_w < frac_d else "distance"
    if has_d:
        return "distance"
    if has_w:
        if w <= 0 or w / sw < 1.0:
            raise InputError("[star] parallax", f"parallax {w:.4g} +/- {sw:.4g} mas does not constrain the distance "
                             "(need parallax > 0 and parallax / parallax_error >= 1); give [star] distance and "
                             "distance_error instead")
        return "parallax"
    if np.isfinite(w) and not (sw > 0):
        raise InputError("[star] parallax_error", f"must be positive (got {sw} mas)")
    raise InputError("[star] parallax", "tracing needs a parallax (with parallax_error) or a distance (not given)")


def _mvn(mean, cov, n, rng):
    """Multivariate-normal draws that tolerate zero variances (eigen-decomposition)."""
    if mean.size == 0:
        return np.zeros((n, 0))
    w, v = np.linalg.eigh(0.5 * (cov + cov.T))
    w = np.clip(w, 0.0, None)
    return mean + (rng.standard_normal((n, mean.size)) * np.sqrt(w)) @ v.T


def draw_star(solution, n, rng, *, frame, velocity_prior, distance_prior=None, distance_pc=None,
              distance_error_pc=None, radial_velocity=None, radial_velocity_error=None):
    """Draw ``n`` present states of the star.

    Parameters
    ----------
    solution : AstrometricSolution
        Position offsets (mas), proper motion (mas/yr), parallax (mas), covariance.
    n : int
    rng : numpy.random.Generator | int | None
    frame : SolarFrame
    velocity_prior : VelocityPrior
    distance_prior : DistancePrior, optional
        Needed when the distance comes from the parallax.
    distance_pc, distance_error_pc : float, optional, pc
    radial_velocity, radial_velocity_error : float, optional, km/s
        A measured radial velocity replaces the prior.

    Returns
    -------
    StarDraws
    """
    rng = np.random.default_rng(rng)
    vals, cov = solution.values, solution.covariance
    for i, key in ((2, "pm_ra_cosdec"), (3, "pm_dec")):
        if not np.isfinite(vals[i]):
            raise InputError(f"[star] {key}", "a proper motion (pm_ra_cosdec and pm_dec) is required for tracing (not given)")
        if not (np.isfinite(cov[i, i]) and cov[i, i] >= 0):
            raise InputError(f"[star] {key}_error", f"must be a finite non-negative error (got {np.sqrt(cov[i, i])})")
    source = choose_distance_source(solution, distance_pc, distance_error_pc)
    idx = np.array([0, 1, 2, 3])
    mean = np.where(np.isfinite(vals[idx]), vals[idx], 0.0)
    c4 = np.nan_to_num(cov[np.ix_(idx, idx)], nan=0.0)
    if source == "parallax":
        w, sw2 = vals[4], cov[4, 4]
        w_true = sample_true_parallax(w, np.sqrt(sw2), distance_prior, n, rng)
        c_op = np.nan_to_num(cov[idx, 4], nan=0.0)
        cond_cov = c4 - np.outer(c_op, c_op) / sw2
        base = _mvn(np.zeros(4), cond_cov, n, rng)
        draws4 = mean + base + (w_true - w)[:, None] * (c_op / sw2)
        dist = 1000.0 / w_true
    else:
        draws4 = _mvn(mean, c4, n, rng)
        dist = sample_distance_gaussian(float(distance_pc), float(distance_error_pc or 0.0), n, rng)
    dec = solution.dec_deg + draws4[:, 1] / 3.6e6
    ra = (solution.ra_deg + draws4[:, 0] / 3.6e6 / np.cos(np.radians(dec))) % 360.0
    pmra, pmdec = draws4[:, 2], draws4[:, 3]
    if radial_velocity is not None:
        rv = radial_velocity + (radial_velocity_error or 0.0) * rng.standard_normal(n)
        rv_source = "measured"
    else:
        rv = radial_velocity_from_prior(frame, ra, dec, dist, pmra, pmdec, velocity_prior, rng)
        rv_source = "prior"
    return StarDraws(ra, dec, dist, pmra, pmdec, rv, source, rv_source)


def rotated_proper_motions(draws, rng, *, frame, velocity_prior):
    """Control draws: each proper-motion vector turned by a uniform random angle, speed kept.

    The radial velocity is redrawn from the prior given the new transverse
    motion (kept when it was measured).  Used for the chance-coincidence rate
    (randomised-input control runs as in Tetzlaff et al. 2010, MNRAS 402, 2369).

    Returns
    -------
    StarDraws
    """
    rng = np.random.default_rng(rng)
    ang = rng.uniform(0.0, 2.0 * np.pi, draws.n)
    c, s = np.cos(ang), np.sin(ang)
    pmra = c * draws.pm_ra_cosdec - s * draws.pm_dec
    pmdec = s * draws.pm_ra_cosdec + c * draws.pm_dec
    if draws.rv_source == "prior":
        rv = radial_velocity_from_prior(frame, draws.ra_deg, draws.dec_deg, draws.distance_pc, pmra, pmdec,
                                        velocity_prior, rng)
    else:
        rv = draws.radial_velocity.copy()
    return StarDraws(draws.ra_deg, draws.dec_deg, draws.distance_pc, pmra, pmdec, rv,
                     draws.distance_source, draws.rv_source)
