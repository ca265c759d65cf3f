"""The one distance posterior: against direct quadrature, published closed forms and the Lutz-Kelker direction.

Reference posterior (Bailer-Jones 2015, PASP 127, 994, eq. 3, with his exponentially decreasing space density
prior r^2 exp(-r/L), Sect. 5; a distance estimate multiplies in as an independent Gaussian likelihood in r):
integrated here with scipy.integrate.quad and inverted with scipy.optimize.brentq, independently of kinage's
adaptive grid.  Every check goes through the functions the trace and the ages stage call.
"""

import numpy as np
import pytest
from astropy.time import Time
from scipy import integrate, optimize

from kinage.astrometry import AstrometricSolution
from kinage.errors import InputError
from kinage.io.scenario import scenario_from_dict
from kinage.kinematics import distance_posterior, distance_prior, draw_astrometry, scenario_distance_posterior

_Q = (0.5, 0.15865525393145708, 0.8413447460685429)
L_PC = 1350.0  # scale of the 'exponential' prior set (Astraatmadja & Bailer-Jones 2016 value, as registered)


def _reference_quantiles(w, s, d=None, e=None, r_max=30000.0):
    """Median and 16/84% points (pc) of prior x L(parallax) x L(distance) by quadrature."""
    def post(r):
        v = r * r * np.exp(-r / L_PC) * np.exp(-0.5 * ((w - 1000.0 / r) / s) ** 2)
        if d is not None:
            v *= np.exp(-0.5 * ((r - d) / e) ** 2)
        return v

    pts = [p for p in ([1000.0 / w] if w > 0 else []) + ([d] if d else []) if p < r_max]
    z = integrate.quad(post, 0.0, r_max, points=pts, limit=400, epsabs=0)[0]

    def cdf(x):
        return integrate.quad(post, 0.0, x, points=[p for p in pts if p < x] or None, limit=400, epsabs=0)[0] / z

    return [optimize.brentq(lambda x: cdf(x) - q, 1.0, r_max, xtol=1e-4) for q in _Q]


# the cases named for the independent checks, and a well-measured parallax
@pytest.mark.parametrize("w, s, d, e", [(0.5, 0.4, None, None), (-0.3, 0.4, None, None),
                                        (1.0, 0.3, 1300.0, 300.0), (2.0, 0.1, None, None)])
def test_posterior_quantiles_match_quadrature(w, s, d, e):
    post = distance_posterior(prior=distance_prior("exponential"), parallax_mas=w, parallax_error_mas=s,
                              distance_pc=d, distance_error_pc=e)
    ref = _reference_quantiles(w, s, d, e)
    got = post.summary()
    for key, r in zip(("median", "lo68", "hi68"), ref):
        assert got[key] == pytest.approx(r, rel=1e-4)
    # the draws (stratified inverse CDF) reproduce the same quantiles to within their own resolution
    x = post.sample(2000, np.random.default_rng(3))
    assert np.percentile(x, [50, 15.865525393145708, 84.13447460685429]) == pytest.approx(ref, rel=2e-3)
    assert post.source == ("parallax+distance" if d else "parallax")


@pytest.mark.parametrize("w, s", [(2.0, 0.3), (1.0, 0.2), (0.5, 0.3), (0.2, 0.4)])
def test_exponential_prior_mode_is_the_root_of_the_published_cubic(w, s):
    # Bailer-Jones 2015, PASP 127, 994, Sect. 5: the mode of the posterior with the exponentially decreasing
    # space density prior solves r^3/L - 2 r^2 + (w/s^2) r - 1/s^2 = 0 (w in 1/length: mas <-> 1/kpc); for
    # these cases one real root is positive (the mode).
    post = distance_posterior(prior=distance_prior("exponential"), parallax_mas=w, parallax_error_mas=s)
    roots = np.roots([1.0 / (L_PC / 1000.0), -2.0, w / s**2, -1.0 / s**2])
    real = sorted(r.real * 1000.0 for r in roots if abs(r.imag) < 1e-9 and r.real > 0)
    mode = post.r_pc[np.argmax(post.pdf)]
    best = min(real, key=lambda r: abs(r - mode))
    width = post.summary()["hi68"] - post.summary()["lo68"]
    assert mode == pytest.approx(best, abs=2e-3 * width)


@pytest.mark.parametrize("w, s", [(2.0, 0.3), (4.0, 0.5), (3.0, 0.6)])
def test_uniform_density_prior_mode_matches_closed_form(w, s):
    # Bailer-Jones 2015, Sect. 4 (uniform space density, r^2 up to r_lim): for f = s/w < 1/sqrt(8) the mode is
    # r = (w / (4 s^2)) (1 - sqrt(1 - 8 s^2 / w^2)) (kpc for w in mas); derived again here from d/dr log p = 0.
    # (Nearer f = 1/sqrt(8) the r^2 growth makes r_lim the global maximum: cases chosen well below it.)
    post = distance_posterior(prior=distance_prior("uniform"), parallax_mas=w, parallax_error_mas=s)
    mode_ref = 1000.0 * w / (4 * s**2) * (1 - np.sqrt(1 - 8 * s**2 / w**2))
    width = post.summary()["hi68"] - post.summary()["lo68"]
    assert post.r_pc[np.argmax(post.pdf)] == pytest.approx(mode_ref, abs=2e-3 * width)


def test_lutz_kelker_direction():
    # Verbiest et al. 2012, ApJ 755, 39: with a volume (r^2) prior, 1/parallax underestimates the distance of a
    # pulsar, more so the larger the fractional parallax error.  Here: the posterior median lies beyond
    # 1000/w for a nearby star, and the excess grows with s/w (same w, growing s).
    excess = []
    for s in (0.1, 0.3, 0.5):
        post = distance_posterior(prior=distance_prior("uniform"), parallax_mas=2.0, parallax_error_mas=s)
        excess.append(post.summary()["median"] / 500.0 - 1.0)
    assert all(x > 0 for x in excess)
    assert excess[0] < excess[1] < excess[2]


def test_combined_posterior_is_narrower_than_either_measurement():
    # product of two likelihoods (common practice for independent measurements, no source): the 68% interval
    # is narrower than either alone, and the mode lies between the two likelihoods' peaks (1000 and 1300 pc)
    prior = distance_prior("exponential")
    both = distance_posterior(prior=prior, parallax_mas=1.0, parallax_error_mas=0.3, distance_pc=1300.0,
                              distance_error_pc=300.0).summary()
    plx = distance_posterior(prior=prior, parallax_mas=1.0, parallax_error_mas=0.3).summary()
    dist = distance_posterior(prior=prior, distance_pc=1300.0, distance_error_pc=300.0).summary()
    post = distance_posterior(prior=prior, parallax_mas=1.0, parallax_error_mas=0.3, distance_pc=1300.0,
                              distance_error_pc=300.0)
    assert 1000.0 < post.r_pc[np.argmax(post.pdf)] < 1300.0
    for one in (plx, dist):
        assert both["hi68"] - both["lo68"] < one["hi68"] - one["lo68"]


def test_asymmetric_distance_error_is_a_split_normal():
    # a split normal with sigma_low below and sigma_high above the estimate; reference by quadrature
    prior = distance_prior("exponential")
    post = distance_posterior(prior=prior, distance_pc=800.0, distance_error_low_pc=100.0,
                              distance_error_high_pc=300.0)

    def f(r):
        sig = 100.0 if r < 800.0 else 300.0
        return r * r * np.exp(-r / L_PC) * np.exp(-0.5 * ((r - 800.0) / sig) ** 2)

    z = integrate.quad(f, 0, 30000, points=[800.0], limit=400)[0]
    med = optimize.brentq(lambda x: integrate.quad(f, 0, x, points=[800.0] if x > 800 else None,
                                                   limit=400)[0] / z - 0.5, 100, 5000)
    assert post.summary()["median"] == pytest.approx(med, rel=1e-4)


def test_exact_distance_and_bad_errors():
    prior = distance_prior("exponential")
    exact = distance_posterior(prior=prior, distance_pc=450.0)
    assert np.all(exact.sample(10, 1) == 450.0) and "distance_error" in exact.warnings[0]
    for kw, key in (({"parallax_mas": 1.0, "parallax_error_mas": 0.0}, "parallax_error"),
                    ({"parallax_mas": 1.0, "parallax_error_mas": -0.2}, "parallax_error"),
                    ({"distance_pc": 500.0, "distance_error_pc": 0.0}, "distance_error"),
                    ({"distance_pc": 40000.0, "distance_error_pc": 100.0}, "distance")):
        with pytest.raises(InputError, match=key):
            distance_posterior(prior=prior, **kw)


STAR = {"name": "Vesk-9", "ra": 201.37, "dec": -33.81, "pm_ra_cosdec": "21 mas/yr", "pm_ra_cosdec_error": 1.0,
        "pm_dec": "-9 mas/yr", "pm_dec_error": 1.0}


def test_scenario_fraction_and_asymmetric_errors():
    s = scenario_from_dict({"star": {**STAR, "distance": "900 pc", "distance_error": "20%"}})
    assert s.star.value("distance_error", "pc") == pytest.approx(180.0)
    s = scenario_from_dict({"star": {**STAR, "distance": "900 pc", "distance_error_low": "10%",
                                     "distance_error_high": "250 pc"}})
    post = scenario_distance_posterior(s, AstrometricSolution.from_star(s.star))
    assert (post.distance_error_low_pc, post.distance_error_high_pc) == pytest.approx((90.0, 250.0))


@pytest.mark.parametrize("star, key", [
    ({"distance": "900 pc", "distance_error": 0}, "distance_error"),
    ({"distance": "900 pc", "distance_error": "-5 pc"}, "distance_error"),
    ({"distance": "900 pc", "distance_error": "0%"}, "distance_error"),
    ({"distance": "900 pc", "distance_error_low": "90 pc"}, "distance_error_high"),
    ({"distance_error_low": "90 pc", "distance_error_high": "90 pc"}, "distance_error_low"),
    ({"distance": "900 pc", "distance_error": "9 pc", "distance_error_low": "9 pc", "distance_error_high": "9 pc"},
     "distance_error"),
    ({"parallax": "1 mas", "parallax_error": 0}, "parallax_error"),
    ({"parallax": "1 mas", "parallax_error": "-0.1 mas"}, "parallax_error"),
])
def test_bad_distance_inputs_name_the_key(star, key):
    from kinage.errors import ScenarioError

    with pytest.raises(ScenarioError, match=rf"\[star\] {key}\b"):
        scenario_from_dict({"star": {**STAR, **star}})


def test_proper_motions_follow_the_combined_distance():
    # multivariate-normal conditioning (standard): with parallax-pm covariance, the proper-motion draws shift
    # with the true parallax 1000/r drawn from the combined posterior by C_op / C_pp per mas
    sig = np.array([0.5, 0.5, 1.0, 1.0, 0.3])
    cov = np.diag(sig**2)
    cov[2, 4] = cov[4, 2] = 0.8 * sig[2] * sig[4]
    sol = AstrometricSolution(Time("J2020", scale="tdb"), 201.37, -33.81, np.array([0, 0, 21.0, -9.0, 1.0]), cov)
    post = distance_posterior(prior=distance_prior("exponential"), parallax_mas=1.0, parallax_error_mas=0.3,
                              distance_pc=1300.0, distance_error_pc=300.0)
    _, _, dist, pmra, pmdec = draw_astrometry(sol, post, 20000, np.random.default_rng(5))
    slope = np.polyfit(1000.0 / dist, pmra, 1)[0]
    assert slope == pytest.approx(cov[2, 4] / cov[4, 4], rel=0.05)
    resid = pmra - (21.0 + (1000.0 / dist - 1.0) * cov[2, 4] / cov[4, 4])
    assert np.std(resid) == pytest.approx(np.sqrt(1 - 0.8**2), rel=0.03)
    assert np.std(pmdec) == pytest.approx(1.0, rel=0.03)


def test_quantities_at_the_edge():
    # astropy's unit conversion is the reference: 1 mas = 1000 uas, 1.3 kpc = 1300 pc
    import astropy.units as u

    prior = distance_prior("exponential")
    a = distance_posterior(prior=prior, parallax_mas=1.0, parallax_error_mas=0.3, distance_pc=1300.0,
                           distance_error_pc=300.0)
    b = distance_posterior(prior=prior, parallax_mas=1000 * u.uas, parallax_error_mas=300 * u.uas,
                           distance_pc=1.3 * u.kpc, distance_error_pc=0.3 * u.kpc)
    assert b.summary()["median"] == pytest.approx(a.summary()["median"], rel=1e-9)
