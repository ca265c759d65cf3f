"""Edge cases an expert tries: a negative parallax, TOA tables in UTC and TT, an approach at exactly max_age,
different seeds.  (Celestial poles and ra = 0/360 are in test_timing_vs_astropy.py and test_orbits_vs_galpy.py.)
"""

import astropy.units as u
import numpy as np
import pytest
from astropy.table import Table
from astropy.time import Time
from scipy import integrate, optimize, stats

from kinage.kinematics.distance import distance_prior, sample_true_parallax
from kinage.orbits.hermite import AssociationGrid, StarChunk, closest_on_grid
from kinage.orbits.integrate import integrate_orbits, time_grid
from kinage.params import get
from kinage.timing.toas import read_toas

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")


@pytest.mark.parametrize("parallax, error", [(-0.3, 0.5), (0.2, 0.4)])
def test_negative_parallax_distance_posterior_against_quadrature(parallax, error):
    # Bailer-Jones 2015 (PASP 127, 994) eq. 3 with his exponentially decreasing space density prior:
    # p(r | w) ~ r^2 exp(-r / L) exp(-(w - 1/r)^2 / (2 s^2)), r in kpc, w in mas, normalised by scipy quad;
    # kinage's draws (inverse CDF on a parallax grid) must follow it (KS test) and stay positive.
    prior = distance_prior("exponential")
    L, rmax = prior.scale_kpc, prior.r_max_kpc

    def post(r):
        return r**2 * np.exp(-r / L) * np.exp(-0.5 * ((parallax - 1.0 / r) / error) ** 2)

    brk = [0.5 * L, L, 2 * L, 4 * L, 8 * L]
    norm = integrate.quad(post, 1e-6, rmax, points=brk, limit=400)[0]

    def cdf(r):
        r = np.atleast_1d(r)
        return np.array([integrate.quad(post, 1e-6, min(x, rmax), points=[b for b in brk if b < x], limit=400)[0]
                         for x in r]) / norm

    w = sample_true_parallax(parallax, error, prior, 4000, np.random.default_rng(7))
    assert np.all(w > 0)
    r = 1.0 / w  # kpc
    grid = np.quantile(r, np.linspace(0.02, 0.98, 25))
    # KS distance evaluated at 25 quantiles against the quadrature CDF (critical ~1.36/sqrt(4000) = 0.022)
    ecdf = np.searchsorted(np.sort(r), grid, side="right") / r.size
    assert np.max(np.abs(ecdf - cdf(grid))) < 0.03
    median = optimize.brentq(lambda x: cdf(x)[0] - 0.5, 0.01, rmax)
    assert np.median(r) == pytest.approx(median, rel=0.05)


def _toa_table(times, scale):
    t = getattr(times, scale)
    tab = Table({"mjd": t.to_value("mjd", subfmt="str"), "error": np.full(len(times), 1e-4) * u.s})
    tab.meta["time_scale"] = scale
    return tab


@pytest.mark.parametrize("scale", ["utc", "tt", "tdb"])
def test_utc_and_tt_toa_tables_read_as_the_same_instants(tmp_path, scale):
    # the same instants written in UTC (69 s from TDB in 2030, leap seconds) or TT (~1.7 ms annual term) must
    # be read back as the same TDB times, to < 1 ns (conversions by astropy)
    truth = Time("2030-01-01", scale="tdb") + np.linspace(0, 3 * 365.25, 12) * u.day
    path = tmp_path / f"toas_{scale}.ecsv"
    _toa_table(truth, scale).write(path, format="ascii.ecsv")
    got = read_toas(path)["mjd"].tdb
    dt = ((got.jd1 - truth.jd1) + (got.jd2 - truth.jd2)) * 86400.0
    assert np.max(np.abs(dt)) < 1e-9
    if scale != "tdb":  # the scales really differ by that much, so a scale ignored would fail
        raw = Time(_toa_table(truth, scale)["mjd"], format="mjd", scale="tdb")
        assert np.max(np.abs((raw - truth).to_value(u.s))) > 1e-3


@pytest.mark.parametrize("fraction, at_edge", [(1.0, True), (0.98, False), (0.0, True)])
def test_closest_approach_at_exactly_max_age(fraction, at_edge):
    # straight lines meeting at t = -fraction x max_age (closed form): the minimum at exactly max_age (or at the
    # present) is on the window's edge and flagged, one just inside is found with its time
    max_age = 3.0
    t = time_grid(max_age, 201)
    kms = (1 * u.km / u.s).to_value(u.kpc / u.Myr)
    v_rel = np.array([[40.0, -25.0, 10.0]])
    meet = -fraction * max_age
    pa = np.array([[-8.1, 0.1, 0.0]])
    side = np.cross(v_rel[0], [0.0, 0.0, 1.0])
    side *= 0.002 / np.linalg.norm(side)  # 2 pc perpendicular to the relative motion: d_min = 2 pc at t = meet
    ps = pa - v_rel * kms * meet + side
    pset = get("potential", "none")
    star = integrate_orbits(ps, np.array([[0.0, 230.0, 0.0]]) + v_rel, t, pset)
    group = integrate_orbits(pa, np.array([[0.0, 230.0, 0.0]]), t, pset)
    res = _closest(star, group)
    assert bool(res["edge"][0]) is at_edge
    assert res["tau_myr"][0] == pytest.approx(fraction * max_age, abs=1e-9)
    assert res["dmin_pc"][0] == pytest.approx(2.0, rel=1e-9)


def test_different_seeds_give_different_draws_and_the_same_seed_the_same():
    prior = distance_prior("exponential")
    a = sample_true_parallax(2.0, 0.3, prior, 500, 1)
    b = sample_true_parallax(2.0, 0.3, prior, 500, 2)
    c = sample_true_parallax(2.0, 0.3, prior, 500, 1)
    np.testing.assert_array_equal(a, c)
    assert not np.any(a == b)
    # both follow the same distribution (two-sample KS test, scipy)
    assert stats.ks_2samp(a, b).pvalue > 1e-3


def test_different_trace_seeds_give_different_draws(tmp_path):
    from kinage import scenario_from_dict
    from kinage.orbits import trace

    header = "name,ra,dec,distance,pm_ra_cosdec,pm_dec,radial_velocity,radius,age"
    (tmp_path / "a.csv").write_text(header + "\nLyra Nova-1,100.0,5.0,450,-1.5,-0.5,18,15,5\n")
    raw = {"star": {"ra": 101.0, "dec": 4.0, "parallax": 2.2, "parallax_error": 0.1, "pm_ra_cosdec": 20.0,
                    "pm_ra_cosdec_error": 0.5, "pm_dec": 8.0, "pm_dec_error": 0.5},
           "trace": {"associations": str(tmp_path / "a.csv"), "samples": 200, "association_samples": 20,
                     "max_age": 2.0, "time_steps": 101, "control_runs": 0}}
    d = [trace(scenario_from_dict(raw), rng=s).to_dict()["associations"][0]["dmin_pc"] for s in (1, 2, 1)]
    assert d[0] == d[2] and d[0]["median"] != d[1]["median"]



def _closest(star, group):
    """Closest approach of star draw i to association draw i by the kernel trace runs (hermite.closest_on_grid)."""
    p, v = group.components()
    grid = AssociationGrid(np.moveaxis(p, 0, -1), np.moveaxis(v, 0, -1), group.times)
    return closest_on_grid(StarChunk(star, 0, star.n, origin=grid.origin), grid, 0, refine_below_pc=np.inf)
