"""Geocentric timing delay and proper motion against astropy (outside reference).

- Roemer delay: astropy ``Time.light_travel_time(kind='barycentric')`` at the geocentre (EarthLocation at
  the origin), same built-in ephemeris.
- Parallax (wavefront curvature) term: the exact geometric path difference (d - |d s - r|)/c from astropy's
  barycentric Earth position and a star at distance d.
- Proper motion: ``SkyCoord.apply_space_motion`` (ERFA starpm) with zero radial velocity.
Checked through the public model functions (``TimeGrid.from_times``, ``TimingModel.delay``), including a
star near the celestial pole and one whose right ascension wraps through 0/360 deg.
"""

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import EarthLocation, SkyCoord, get_body_barycentric
from astropy.time import Time
from astropy.utils import iers

from kinage.timing.model import TimeGrid, TimingModel

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")

REF = Time("2030-01-01T00:00:00", scale="tdb")
TIMES = REF + np.linspace(-3.0, 3.0, 41) * u.yr
GEOCENTRE = EarthLocation.from_geocentric(0 * u.m, 0 * u.m, 0 * u.m)
# positions: an ordinary one, ecliptic-ish, near the north celestial pole, just below 360 deg, far south


@pytest.fixture(autouse=True)
def _offline_iers():
    # The geocentre does not rotate, so Earth-orientation tables do not matter here; keep astropy offline
    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None), \
            iers.conf.set_temp("iers_degraded_accuracy", "ignore"):
        yield


POSITIONS = [(53.2, -12.5), (181.0, 2.0), (10.0, 89.9), (359.999, 20.0), (270.0, -88.5)]


@pytest.mark.parametrize("ra, dec", POSITIONS)
def test_roemer_delay_matches_astropy_light_travel_time(ra, dec):
    grid = TimeGrid.from_times(TIMES, REF)
    model = TimingModel(ra, dec)
    ours = model.delay(grid, np.zeros(5))
    # astropy: light travel time from the geocentre to the barycentre along the star's direction
    ltt = TIMES.light_travel_time(SkyCoord(ra * u.deg, dec * u.deg), kind="barycentric", location=GEOCENTRE)
    np.testing.assert_allclose(ours, ltt.to_value(u.s), rtol=0, atol=2e-9)  # 2 ns (float64 at 500 s: 1e-13)
    assert np.ptp(ours) > 100  # the Roemer delay swings by hundreds of seconds (AU/c = 499 s)


@pytest.mark.parametrize("parallax_mas", [5.0, 25.0])
def test_parallax_term_matches_exact_path_difference(parallax_mas):
    # exact geometry: a wavefront from a star at d reaches the Earth (d - |d s - r|)/c before the barycentre;
    # d = 1 AU / parallax (definition of the parallax)
    ra, dec = 120.0, 30.0
    grid = TimeGrid.from_times(TIMES, REF)
    ours = TimingModel(ra, dec).delay(grid, np.array([0, 0, 0, 0, parallax_mas]))
    d = (1 * u.au / (parallax_mas * u.mas).to_value(u.rad)).to(u.m)
    star = SkyCoord(ra * u.deg, dec * u.deg).cartesian.xyz * d
    earth = get_body_barycentric("earth", TIMES).xyz
    c = 299792458.0 * u.m / u.s
    far = np.linalg.norm((star[:, None] - earth).to_value(u.m), axis=0) * u.m
    # d - |d s - r| written without cancellation: (2 d r.s - r^2) / (d + |d s - r|)  (algebraically exact)
    rs = np.einsum("i,ij->j", star.to_value(u.m), earth.to_value(u.m)) * u.m**2 / d
    exact = ((2 * d * rs - np.sum(earth**2, axis=0)) / (d + far) / c).to_value(u.s)
    np.testing.assert_allclose(ours, exact, rtol=0, atol=2e-9)
    # the curvature term itself is microseconds: make sure it is really being compared
    flat = TimingModel(ra, dec).delay(grid, np.zeros(5))
    assert np.max(np.abs(ours - flat)) > 1e-6


@pytest.mark.parametrize("ra, dec", POSITIONS)
def test_proper_motion_matches_apply_space_motion(ra, dec):
    # a 300 mas/yr star over +-3 yr: the delay at the moved position equals astropy's light travel time to the
    # direction given by SkyCoord.apply_space_motion (ERFA starpm, radial velocity 0)
    pm_ra, pm_dec = 240.0, -180.0
    grid = TimeGrid.from_times(TIMES, REF)
    ours = TimingModel(ra, dec).delay(grid, np.array([0, 0, pm_ra, pm_dec, 0]))
    start = SkyCoord(ra * u.deg, dec * u.deg, distance=1 * u.kpc, pm_ra_cosdec=pm_ra * u.mas / u.yr,
                     pm_dec=pm_dec * u.mas / u.yr, radial_velocity=0 * u.km / u.s, obstime=REF)
    moved = [start.apply_space_motion(new_obstime=t) for t in TIMES]
    ref = np.array([t.light_travel_time(SkyCoord(m.ra, m.dec), kind="barycentric", location=GEOCENTRE).to_value(u.s)
                    for t, m in zip(TIMES, moved)])
    # 10 ns: well below the 1.5 ms the motion itself changes the delay by
    np.testing.assert_allclose(ours, ref, rtol=0, atol=1e-8)
    static = TimingModel(ra, dec).delay(grid, np.zeros(5))
    assert np.max(np.abs(ours - static)) > 1e-4


def test_ra_wrap_gives_the_same_delay_from_either_side():
    # 359.9999 deg plus a 0.36 arcsec offset east is 0.0000 deg: the same direction on the sky
    grid = TimeGrid.from_times(TIMES, REF)
    dec = 20.0
    east = 0.0001 * 3600e3 * np.cos(np.radians(dec))  # mas along ra*cos(dec)
    a = TimingModel(359.9999, dec).delay(grid, np.array([east, 0, 0, 0, 0]))
    b = TimingModel(0.0, dec).delay(grid, np.zeros(5))
    c = TimingModel(360.0, dec).delay(grid, np.zeros(5))
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-9)
    np.testing.assert_allclose(b, c, rtol=0, atol=1e-12)


def test_solar_shapiro_delay_against_its_formula_with_astropy_sun():
    # Delta_S = -2 T_sun ln(1 - cos theta), theta the star-Sun angle seen from the observer, T_sun = G M_sun / c^3
    # (Lorimer & Kramer 2005, sec. 8.2; T_sun from astropy constants); total_delay subtracts it from D_geo.
    # A star 1.5 deg from the Sun at conjunction gets ~ 60 us.
    import astropy.constants as const

    t_sun = (const.G * const.M_sun / const.c**3).to_value(u.s)
    times = Time("2031-03-01", scale="tdb") + np.linspace(-20, 20, 81) * u.day
    sun_icrs = (get_body_barycentric("sun", times) - get_body_barycentric("earth", times)).xyz.to_value(u.m)
    sun_dir = sun_icrs / np.linalg.norm(sun_icrs, axis=0)
    mid = np.degrees(np.arctan2(sun_dir[1, 40], sun_dir[0, 40])), np.degrees(np.arcsin(sun_dir[2, 40]))
    ra, dec = mid[0] % 360.0, mid[1] + 1.5  # 1.5 deg north of the Sun's position mid-way
    grid = TimeGrid.from_times(times, times[40])
    model = TimingModel(ra, dec)
    shapiro = model.delay(grid, np.zeros(5)) - model.total_delay(grid, np.zeros(5))
    s = SkyCoord(ra * u.deg, dec * u.deg).cartesian.xyz.value
    r_au = np.linalg.norm(sun_icrs, axis=0) / const.au.to_value(u.m)
    expected = -2 * t_sun * np.log(r_au * (1 - s @ sun_dir))
    np.testing.assert_allclose(shapiro, expected, rtol=1e-4, atol=1e-9)
    assert expected.max() > 4e-5


@pytest.mark.parametrize("site", [None, (-63.1, 47.9, 350.0)])  # geocentre; an invented site
def test_full_solar_shapiro_delay_at_many_epochs_against_astropy_positions(site):
    # distant-source Shapiro delay with the observer-Sun distance (Shapiro 1964; Backer & Hellings 1986, ARA&A 24,
    # 537): Delta_S = -2 T_sun ln[(|R| + R.s) / 1 au], R the Sun-to-observer vector, here from astropy's
    # get_body_barycentric('sun'/'earth') and EarthLocation.get_gcrs_posvel; ecliptic latitude ~44 deg,
    # 400 epochs over 10 years; agreement < 1 ns
    import astropy.constants as const

    from kinage.timing.reference import TOAReference

    t_sun = (const.G * const.M_sun / const.c**3).to_value(u.s)
    rng = np.random.default_rng(11)
    times = Time(61200, format="mjd", scale="tdb") + np.sort(rng.uniform(0, 3652.5, 400)) * u.day
    ref = None if site is None else TOAReference("site", *site)
    grid = TimeGrid.from_times(times, times[0], ref)
    star = SkyCoord(lon=141.3 * u.deg, lat=44.2 * u.deg, frame="barycentricmeanecliptic").icrs
    model = TimingModel(star.ra.deg, star.dec.deg)
    shapiro = model.delay(grid, np.zeros(5)) - model.total_delay(grid, np.zeros(5))
    obs = get_body_barycentric("earth", times).xyz.to_value(u.m)
    if site is not None:
        loc = EarthLocation.from_geodetic(site[0] * u.deg, site[1] * u.deg, site[2] * u.m)
        obs = obs + loc.get_gcrs_posvel(times)[0].xyz.to_value(u.m)
    big_r = obs - get_body_barycentric("sun", times).xyz.to_value(u.m)
    s = star.cartesian.xyz.value
    expected = -2 * t_sun * np.log((np.linalg.norm(big_r, axis=0) + s @ big_r) / const.au.to_value(u.m))
    np.testing.assert_allclose(shapiro, expected, rtol=0, atol=1e-9)
    # the distance term matters at this level: the angle-only form is off by up to 2 T_sun e ~ 0.16 us
    angle_only = -2 * t_sun * np.log1p(s @ big_r / np.linalg.norm(big_r, axis=0))
    assert 0.12e-6 < np.max(np.abs(angle_only - expected)) < 0.2e-6


@pytest.mark.parametrize("ra, dec, distance_pc", [(120.0, 30.0, 150.0), (301.5, -62.0, 480.0)])
def test_parallax_delay_sign_and_partial_against_astropy_geometry(ra, dec, distance_pc):
    # The delay of a star at distance d minus that of the same direction at infinity, from astropy alone: the
    # star's barycentric position from a SkyCoord with a Distance, the Earth's from get_body_barycentric, so
    # (|D| - |D - r|)/c - r.s/c (exact geometry; Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, sec. 8.2).
    # A wavefront from a finite distance is curved: it reaches the Earth later than a plane wave would, by
    # |r x s|^2 / (2 c d) to first order, at most (1 AU)^2 / (2 c d) = 1.21 us / d[kpc].
    grid = TimeGrid.from_times(TIMES, REF)
    star = SkyCoord(ra * u.deg, dec * u.deg, distance=distance_pc * u.pc)
    big_d = star.cartesian.xyz.to_value(u.m)
    s = big_d / np.linalg.norm(big_d)
    r = get_body_barycentric("earth", TIMES).xyz.to_value(u.m)
    c = 299792458.0
    rs = s @ r
    # |D| - |D - r| without cancellation: (2 D.r - r^2) / (|D| + |D - r|)
    d_norm = np.linalg.norm(big_d)
    far = np.linalg.norm(big_d[:, None] - r, axis=0)
    astropy_diff = ((2 * (big_d @ r) - np.sum(r**2, axis=0)) / (d_norm + far) - rs) / c
    assert np.all(astropy_diff < 0)  # later than the plane wave at every epoch (the sign under test)
    plx_mas = (1 * u.au / (distance_pc * u.pc)).decompose().value * 180 / np.pi * 3.6e6  # p = 1 AU / d
    model = TimingModel(ra, dec)
    ours = model.delay(grid, np.array([0, 0, 0, 0, plx_mas])) - model.delay(grid, np.zeros(5))
    np.testing.assert_allclose(ours, astropy_diff, rtol=1e-4, atol=1e-12)
    assert np.max(np.abs(ours)) == pytest.approx(1.21e-6 / (distance_pc / 1000.0), rel=0.05)  # < 1 AU^2/(2cd)
    # the parallax column of the design matrix carries the same sign: delay per mas of parallax
    d_plx = model.astro_partials(grid)[:, 4]
    np.testing.assert_allclose(d_plx * plx_mas, astropy_diff, rtol=2e-3, atol=1e-12)
