"""Star draws: velocity prior, distance posterior, correlated astrometry, bad input."""

import numpy as np
import pytest
from astropy.time import Time
from scipy import integrate, stats

from kinage.astrometry import AstrometricSolution
from kinage.errors import InputError
from kinage.kinematics import distance_prior, draw_star, radial_velocity_from_prior, sample_true_parallax, velocity_prior
from kinage.orbits.frames import K_MASYR_KPC, solar_frame


def _solution(values, sig, rho_pm=0.0, corr_w_pm=0.0):
    cov = np.diag(np.asarray(sig, float) ** 2)
    cov[2, 3] = cov[3, 2] = rho_pm * sig[2] * sig[3]
    cov[2, 4] = cov[4, 2] = corr_w_pm * sig[2] * sig[4]
    return AstrometricSolution(Time("J2016", scale="tdb"), 83.0, -12.0, values, cov)


def test_radial_draws_reproduce_hobbs_mean_speed():
    # Hobbs et al. 2005 (MNRAS 360, 974): 3-D Maxwellian, sigma = 265 km/s, mean 3-D speed ~400 km/s;
    # the Maxwellian mean is 2 sigma sqrt(2/pi) = 423 km/s.  A population of stars with isotropic peculiar
    # velocities, observed in proper motion only, gets radial velocities drawn conditional on the transverse
    # speed; the implied 3-D speeds must follow the Maxwellian (KS test against scipy.stats.maxwell).
    rng = np.random.default_rng(21)
    f = solar_frame("astropy-v4.0")
    prior = velocity_prior("hobbs2005")
    n = 6000
    ra, dec = rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    dist = rng.uniform(100, 2000, n)
    u = prior.sample_velocity(n, rng)  # true peculiar velocities, km/s
    pos, _ = f.to_galactocentric(ra, dec, dist, 0 * ra, 0 * ra, 0 * ra)
    v_gc = u + f.lsr_velocity(pos)
    v_helio = v_gc - f.v_sun_kms
    # project onto the ICRS east/north directions to get proper motions
    icrs = v_helio @ f.matrix
    a, d = np.radians(ra), np.radians(dec)
    east = np.stack([-np.sin(a), np.cos(a), 0 * a], -1)
    north = np.stack([-np.sin(d) * np.cos(a), -np.sin(d) * np.sin(a), np.cos(d)], -1)
    k = K_MASYR_KPC * dist / 1000
    pmra, pmdec = np.sum(icrs * east, -1) / k, np.sum(icrs * north, -1) / k
    rv = radial_velocity_from_prior(f, ra, dec, dist, pmra, pmdec, prior, rng)
    _, v_drawn = f.to_galactocentric(ra, dec, dist, pmra, pmdec, rv)
    speed = np.linalg.norm(v_drawn - f.lsr_velocity(pos), axis=1)
    mean_ref = 2 * 265 * np.sqrt(2 / np.pi)
    assert abs(speed.mean() - mean_ref) < 4 * speed.std() / np.sqrt(n)
    assert abs(speed.mean() - 400) < 40  # Hobbs et al. 2005 quote 400 +/- 40 km/s
    assert stats.kstest(speed, stats.maxwell(scale=265).cdf).pvalue > 0.01


def test_distance_posterior_matches_quadrature():
    # Bailer-Jones 2015 (PASP 127, 994) eq. 3 with the exponentially decreasing space density prior:
    # the mean of the drawn distances equals the posterior mean by direct numerical integration (scipy.quad).
    prior = distance_prior("exponential")
    w, s = 0.8, 0.3  # mas
    L = prior.scale_kpc

    def post(r):
        return r**2 * np.exp(-r / L) * np.exp(-0.5 * ((w - 1 / r) / s) ** 2)

    Z = integrate.quad(post, 1e-3, prior.r_max_kpc, limit=200, points=[1 / w])[0]
    mean = integrate.quad(lambda r: r * post(r), 1e-3, prior.r_max_kpc, limit=200, points=[1 / w])[0] / Z
    r = 1.0 / sample_true_parallax(w, s, prior, 40000, np.random.default_rng(1))
    assert np.mean(r) == pytest.approx(mean, rel=0.02)


def test_negative_parallax_draws_stay_positive():
    prior = distance_prior("exponential")
    wt = sample_true_parallax(-0.3, 0.4, prior, 5000, np.random.default_rng(2))
    assert np.all(wt > 0)


def test_correlated_astrometry_draws_reproduce_covariance():
    # Draws of (pm_ra_cosdec, pm_dec) with a distance given must have the input covariance (sample covariance
    # of a multivariate normal, standard statistics).
    sol = _solution([0, 0, 30.0, -20.0, np.nan], [0.5, 0.5, 2.0, 3.0, np.nan], rho_pm=0.7)
    sol.covariance[4, :] = sol.covariance[:, 4] = np.nan
    f = solar_frame("astropy-v4.0")
    dr = draw_star(sol, 20000, 3, frame=f, velocity_prior=velocity_prior("hobbs2005"), distance_pc=500.0,
                   distance_error_pc=50.0)
    c = np.cov(dr.pm_ra_cosdec, dr.pm_dec)
    assert c[0, 1] / np.sqrt(c[0, 0] * c[1, 1]) == pytest.approx(0.7, abs=0.02)
    assert np.sqrt(c[1, 1]) == pytest.approx(3.0, rel=0.03)
    assert dr.distance_source == "distance"
    assert np.mean(dr.distance_pc) == pytest.approx(500, rel=0.01)


def test_parallax_and_pm_correlation_is_kept():
    # Conditioning on the true parallax keeps the parallax - proper motion correlation of the solution.
    sol = _solution([0, 0, 30.0, -20.0, 5.0], [0.5, 0.5, 2.0, 3.0, 0.2], corr_w_pm=0.6)
    f = solar_frame("astropy-v4.0")
    dr = draw_star(sol, 20000, 4, frame=f, velocity_prior=velocity_prior("hobbs2005"),
                   distance_prior=distance_prior("exponential"))
    r = np.corrcoef(1000.0 / dr.distance_pc, dr.pm_ra_cosdec)[0, 1]
    assert r == pytest.approx(0.6, abs=0.03)


@pytest.mark.parametrize("values, sig, field", [
    ([0, 0, np.nan, np.nan, 2.0], [1, 1, np.nan, np.nan, 0.2], "pm_ra_cosdec"),
    ([0, 0, 5.0, 5.0, 0.5], [1, 1, 1, 1, 0.0], "parallax_error"),
    ([0, 0, 5.0, 5.0, np.nan], [1, 1, 1, 1, np.nan], "parallax"),
])
def test_bad_star_input_names_the_field(values, sig, field):
    sol = _solution(values, sig)
    with pytest.raises(InputError, match=field):
        draw_star(sol, 10, 0, frame=solar_frame("astropy-v4.0"), velocity_prior=velocity_prior("hobbs2005"),
                  distance_prior=distance_prior("exponential"))


@pytest.mark.parametrize("w, s", [(0.0, 2.0), (-0.5, 0.3), (0.3, 0.4)])
def test_weak_zero_and_negative_parallaxes_are_traced(w, s):
    # Bailer-Jones 2015 (PASP 127, 994): with a space-density prior the posterior is proper for any measured
    # parallax, so such stars get positive distances instead of a refusal.
    sol = _solution([0, 0, 5.0, 5.0, w], [1, 1, 1, 1, s])
    dr = draw_star(sol, 200, 0, frame=solar_frame("astropy-v4.0"), velocity_prior=velocity_prior("hobbs2005"),
                   distance_prior=distance_prior("exponential"))
    assert np.all(dr.distance_pc > 0) and dr.distance_source == "parallax"


@pytest.mark.parametrize("kind, name", [("velocity_prior", "nope"), ("distance_prior", "nope")])
def test_unknown_prior_lists_choices(kind, name):
    fn = velocity_prior if kind == "velocity_prior" else distance_prior
    with pytest.raises(InputError, match="choose one of"):
        fn(name)
