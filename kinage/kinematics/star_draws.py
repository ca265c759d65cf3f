"""Monte Carlo draws of a star's present position and velocity.

* Position and proper motion are drawn with their full covariance (correlated
  draws).  The distance is drawn first from the one distance posterior of
  :mod:`.distance_posterior` (parallax and/or distance estimate with a
  space-density prior); when it uses the parallax, the other four parameters
  follow from their Gaussian conditional on the true parallax 1000 / r: mean
  m_o + C_op / C_pp (w_t - w), covariance C_oo - C_op C_po / C_pp (standard
  multivariate-normal conditioning).
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
from .star_distance import check_proper_motion, star_distance_posterior

__all__ = ["StarDraws", "draw_star", "draw_astrometry", "radial_velocity_from_prior", "choose_distance_source",
           "star_distance_posterior", "check_proper_motion"]


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
        'parallax', 'distance' or 'parallax+distance'.
    rv_source : str
        'measured' or 'prior'.
    posterior : DistancePosterior or None
        The distance posterior the distances were drawn from.
    """

    ra_deg: np.ndarray
    dec_deg: np.ndarray
    distance_pc: np.ndarray
    pm_ra_cosdec: np.ndarray
    pm_dec: np.ndarray
    radial_velocity: np.ndarray
    distance_source: str = "parallax"
    rv_source: str = "prior"
    posterior: object = None

    @property
    def n(self):
        return len(self.ra_deg)

    def part(self, start, stop):
        """Draws ``start`` to ``stop - 1`` (a view)."""
        sl = slice(start, stop)
        return StarDraws(self.ra_deg[sl], self.dec_deg[sl], self.distance_pc[sl], self.pm_ra_cosdec[sl],
                         self.pm_dec[sl], self.radial_velocity[sl], self.distance_source, self.rv_source, self.posterior)

    def take(self, index):
        """The draws at the integer positions ``index`` (a copy)."""
        i = np.asarray(index, int)
        return StarDraws(self.ra_deg[i], self.dec_deg[i], self.distance_pc[i], self.pm_ra_cosdec[i],
                         self.pm_dec[i], self.radial_velocity[i], self.distance_source, self.rv_source, self.posterior)

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


def choose_distance_source(solution, distance_pc=None, distance_error_pc=None, distance_from=None):
    """'parallax', 'distance' or 'parallax+distance': the measurements the distance posterior combines.

    Every measured parallax counts, zero and negative included; a distance
    without an error is exact and then alone ('distance').
    """
    has_w = np.isfinite(solution.values[4])
    has_d = distance_pc is not None and np.isfinite(distance_pc)
    choice = (distance_from or "").lower() or None
    if not (has_w or has_d):
        raise InputError("[star] parallax", "tracing needs a parallax (with parallax_error) or a distance (not given)")
    if choice == "parallax" or not has_d:
        return "parallax"
    if choice == "distance" or not has_w or not (distance_error_pc or 0) > 0:
        return "distance"
    return "parallax+distance"


def _mvn(mean, cov, n, rng):
    """Multivariate-normal draws that tolerate zero variances (eigen-decomposition)."""
    if mean.size == 0:
        return np.zeros((n, 0))
    w, v = np.linalg.eigh(0.5 * (cov + cov.T))
    w = np.clip(w, 0.0, None)
    return mean + (rng.standard_normal((n, mean.size)) * np.sqrt(w)) @ v.T


def draw_astrometry(solution, posterior, n, rng):
    """Draw positions, distances and proper motions consistent with the covariance and the distance posterior.

    The distance is drawn from ``posterior``; when it uses the parallax, the
    other four parameters are drawn from their Gaussian conditional on the
    true parallax w_t = 1000 / r: mean m_o + C_op / C_pp (w_t - w), covariance
    C_oo - C_op C_po / C_pp (multivariate-normal conditioning; a distance
    estimate is independent of them, so the conditional is the same).
    Otherwise from their marginal Gaussian.

    Parameters
    ----------
    solution : AstrometricSolution
    posterior : DistancePosterior
    n : int
    rng : numpy.random.Generator | int | None

    Returns
    -------
    ra_deg, dec_deg, distance_pc, pm_ra_cosdec, pm_dec : ndarray
        deg, deg, pc, mas/yr, mas/yr.
    """
    rng = np.random.default_rng(rng)
    vals, cov = solution.values, solution.covariance
    idx = np.array([0, 1, 2, 3])
    mean = np.where(np.isfinite(vals[idx]), vals[idx], 0.0)
    c4 = np.nan_to_num(cov[np.ix_(idx, idx)], nan=0.0)
    dist = posterior.sample(n, rng)
    w, sw2 = vals[4], cov[4, 4]
    if np.isfinite(w) and np.isfinite(sw2) and sw2 > 0 and posterior.uses_parallax:
        c_op = np.nan_to_num(cov[idx, 4], nan=0.0)
        cond_cov = c4 - np.outer(c_op, c_op) / sw2
        base = _mvn(np.zeros(4), cond_cov, n, rng)
        draws4 = mean + base + (1000.0 / dist - w)[:, None] * (c_op / sw2)
    else:
        draws4 = _mvn(mean, c4, n, rng)
    dec = solution.dec_deg + draws4[:, 1] / 3.6e6
    ra = (solution.ra_deg + draws4[:, 0] / 3.6e6 / np.cos(np.radians(dec))) % 360.0
    return ra, dec, dist, draws4[:, 2], draws4[:, 3]


def draw_star(solution, n, rng, *, frame, velocity_prior, distance_prior=None, distance_pc=None,
              distance_error_pc=None, radial_velocity=None, radial_velocity_error=None, posterior=None,
              distance_from=None):
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
        Space-density prior of the distance posterior (needed unless ``posterior`` is given).
    distance_pc, distance_error_pc : float, optional, pc
        A distance estimate, combined with the parallax by default.
    radial_velocity, radial_velocity_error : float, optional, km/s
        A measured radial velocity replaces the prior.
    posterior : DistancePosterior, optional
        The star's distance posterior, when already built (:func:`star_distance_posterior`).
    distance_from : {'parallax', 'distance'}, optional
        Use only one of a parallax and a distance given together.

    Returns
    -------
    StarDraws
    """
    rng = np.random.default_rng(rng)
    check_proper_motion(solution)
    if posterior is None:
        posterior = star_distance_posterior(solution, distance_prior, distance_pc=distance_pc,
                                            distance_error_pc=distance_error_pc, distance_from=distance_from)
    ra, dec, dist, pmra, pmdec = draw_astrometry(solution, posterior, n, rng)
    if radial_velocity is not None:
        rv = radial_velocity + (radial_velocity_error or 0.0) * rng.standard_normal(n)
        rv_source = "measured"
    else:
        rv = radial_velocity_from_prior(frame, ra, dec, dist, pmra, pmdec, velocity_prior, rng)
        rv_source = "prior"
    return StarDraws(ra, dec, dist, pmra, pmdec, rv, posterior.source, rv_source, posterior)


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
                     draws.distance_source, draws.rv_source, draws.posterior)
