"""Solar Shapiro delay, dispersion delay, observer geometry (Earth, site) against outside references."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import EarthLocation, SkyCoord, get_body_barycentric, get_body_barycentric_posvel
from astropy.time import Time
from astropy.utils import iers

from kinage.timing import delays
from kinage.timing.geometry import earth_and_sun, observer_geometry, site_gcrs
from kinage.timing.model import TimeGrid, TimingModel
from kinage.timing.reference import TOAReference

pytestmark = pytest.mark.filterwarnings("ignore::Warning")
C = const.c.to_value(u.m / u.s)


@pytest.fixture(autouse=True)
def _offline_iers():
    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None), \
            iers.conf.set_temp("iers_degraded_accuracy", "ignore"):
        yield


def test_solar_mass_time_constant_from_astropy():
    # T_sun = G M_sun / c^3 = 4.925490947 us (IAU 2015 nominal GM_sun; astropy.constants)
    assert delays.T_SUN_S == pytest.approx((const.GM_sun / const.c**3).to_value(u.s), rel=1e-9)


def test_shapiro_delay_amplitude_for_a_ray_grazing_the_sun():
    # Lorimer & Kramer 2005 (Handbook of Pulsar Astronomy, sec. 8.2): the solar Shapiro delay reaches
    # ~120 us for a ray grazing the Sun (value from memory); the closed form at elongation R_sun / 1 au
    # gives 2 T_sun ln(2 au^2 / R_sun^2) = 113 us (observer at 1 au: the angle-only form)
    au = (const.au / const.c).to_value(u.s)  # astropy constants
    theta = (const.R_sun / const.au).to_value(u.dimensionless_unscaled)
    s = np.array([[1.0, 0.0, 0.0]])
    sun = np.array([[np.cos(theta), np.sin(theta), 0.0]]) * au
    got = delays.solar_shapiro_delay(s, sun)[0]
    assert got == pytest.approx(2 * delays.T_SUN_S * np.log(2 / theta**2), rel=1e-6)
    assert 100e-6 < got < 125e-6
    # opposite the Sun: -2 T_sun ln 2 = -6.8 us; at 90 deg: 0
    opposite = delays.solar_shapiro_delay(s, np.array([[-au, 0.0, 0.0]]))[0]
    assert opposite == pytest.approx(-2 * delays.T_SUN_S * np.log(2), rel=1e-9)
    assert delays.solar_shapiro_delay(s, np.array([[0.0, au, 0.0]]))[0] == pytest.approx(0.0, abs=1e-15)


@pytest.mark.parametrize("r_au", [0.983, 1.017, 1.5])
def test_shapiro_delay_carries_the_observer_sun_distance(r_au):
    # distant-source limit of 2 T_sun ln[(r_e + r + rho)/(r_e + r - rho)] (Shapiro 1964; Backer & Hellings 1986,
    # ARA&A 24, 537): -2 T_sun ln[r (1 - cos elongation)] up to a constant; evaluated here with a far but finite
    # emitter (r_e = 1e9 au) from the three distances, the constant 2 T_sun ln(2 rho) removed
    au = (const.au / const.c).to_value(u.s)
    rng = np.random.default_rng(5)
    for _ in range(5):
        s = rng.normal(size=3)
        s /= np.linalg.norm(s)
        sun = rng.normal(size=3)
        sun *= r_au * au / np.linalg.norm(sun)
        rho = 1e9 * au
        emitter = rho * s - sun  # Sun-centred
        r_e, r = np.linalg.norm(emitter), r_au * au
        # r_e + r - rho written without cancellation: r_e - rho = (r_e^2 - rho^2) / (r_e + rho), with
        # r_e^2 - rho^2 = r^2 - 2 rho s.sun expanded from |rho s - sun|^2
        den = (r**2 - 2 * rho * (s @ sun)) / (r_e + rho) + r
        exact = 2 * delays.T_SUN_S * (np.log((r_e + r + rho) / den) - np.log(2 * rho / au))
        got = delays.solar_shapiro_delay(s[None, :], sun[None, :])[0]
        assert got == pytest.approx(exact, abs=1e-12)
    # the distance term alone: at fixed elongation, r from 0.983 to 1.017 au changes the delay by
    # -2 T_sun ln(1.017/0.983) = -0.33 us (twice the +-0.16 us annual term of Earth's eccentric orbit)
    s = np.array([[1.0, 0.0, 0.0]])
    near, far = (delays.solar_shapiro_delay(s, np.array([[0.0, x * au, 0.0]]))[0] for x in (0.983, 1.017))
    assert far - near == pytest.approx(-2 * delays.T_SUN_S * np.log(1.017 / 0.983), rel=1e-9)


def test_shapiro_delay_varies_by_tens_of_microseconds_for_an_ecliptic_star():
    # a star on the ecliptic passes within a few degrees of the Sun each year: the delay swings from
    # -6.8 us (opposition) to > 30 us (elongation < 10 deg); the elongation agrees with astropy's Sun
    star = SkyCoord(lon=200 * u.deg, lat=0.5 * u.deg, frame="barycentricmeanecliptic").icrs
    t = Time(61000, format="mjd", scale="tdb") + np.arange(0, 365.25, 0.5) * u.d
    grid = TimeGrid.from_times(t, t[0])
    s = np.broadcast_to(star.cartesian.xyz.value, grid.earth.shape)
    dl = delays.solar_shapiro_delay(s, grid.sun)
    # at opposition -2 T_sun ln(2 r / 1 au): r within 0.983-1.017 au moves it by <= 0.17 us (2.5%)
    assert dl.min() == pytest.approx(-2 * delays.T_SUN_S * np.log(2), rel=0.025)
    assert dl.max() > 30e-6
    sun = (get_body_barycentric("sun", t) - get_body_barycentric("earth", t)).xyz.to_value(u.m).T
    cos_el = np.einsum("ij,ij->i", s, sun) / np.linalg.norm(sun, axis=1)
    np.testing.assert_allclose(delays.cos_elongation(s, grid.sun), cos_el, rtol=0, atol=1e-9)


def test_dispersion_constant_from_physical_constants():
    # Lorimer & Kramer 2005, eq. 4.7: D = e^2 / (2 pi m_e c) = 4.148808e3 s MHz^2 pc^-1 cm^3
    k = (const.e.gauss**2 / (2 * np.pi * const.m_e * const.c)).to(u.cm**2 / u.s)
    k_lk = (k * u.pc / u.cm**3 / u.MHz**2).to_value(u.s)
    assert delays.DISPERSION_CONSTANT_S == 4.148808e3
    assert k_lk == pytest.approx(delays.DISPERSION_CONSTANT_S, rel=2e-5)
    # 30 pc cm^-3 at 1400 MHz: 63.5 ms
    assert delays.dispersion_delay(30.0, 1400.0) == pytest.approx(4.148808e3 * 30 / 1400**2, rel=1e-15)


def test_barycentric_frequency_uses_the_observer_velocity_toward_the_star():
    # first-order Doppler shift; the projected velocity agrees with astropy's radial_velocity_correction
    # (the velocity of the observer toward the star, the correction added to a measured radial velocity)
    star = SkyCoord(150 * u.deg, 10 * u.deg)
    t = Time(61000, format="mjd", scale="tdb") + np.linspace(0, 365, 7) * u.d
    site = TOAReference("site", -140.0, -45.0, 10.0)  # invented: open South Pacific, > 1000 km from any observatory
    loc = site.location()
    for ref, location in ((site, loc),):  # (astropy's correction diverges at the geocentre: Earth's potential)
        geo = observer_geometry(t.jd1, t.jd2, ref)
        s = np.broadcast_to(star.cartesian.xyz.value, geo.velocity.shape)
        ours = np.einsum("ij,ij->i", geo.velocity, s) * C
        theirs = star.radial_velocity_correction(kind="barycentric", obstime=t, location=location).to_value(u.m / u.s)
        # astropy adds the gravitational redshift of Sun and Earth and v^2/2c (~5 m/s, 2e-8 c): not Doppler
        np.testing.assert_allclose(ours, theirs, rtol=0, atol=6.0)
    fb = delays.barycentric_frequency(np.full(7, 1400.0), geo.velocity, s)
    assert np.all(np.sign(1400.0 - fb) == np.sign(ours))  # approaching the star: lower frequency at the barycentre


def test_earth_positions_interpolated_for_many_toas_match_astropy():
    # 20,000 TOAs over 10 years take the interpolated path (0.5-day nodes, 8-point Lagrange): < 1 ns
    rng = np.random.default_rng(3)
    mjd = np.sort(60500 + rng.uniform(0, 3652.5, 20000))
    t = Time(mjd, format="mjd", scale="tdb")
    pos, vel, sun = earth_and_sun(t.jd1, t.jd2)
    sub = t[::97]
    p, v = get_body_barycentric_posvel("earth", sub)
    np.testing.assert_allclose(pos[::97], p.xyz.to_value(u.m).T / C, rtol=0, atol=1e-9)
    np.testing.assert_allclose(vel[::97], v.xyz.to_value(u.m / u.s).T / C, rtol=0, atol=1e-11)
    np.testing.assert_allclose(sun[::97], get_body_barycentric("sun", sub).xyz.to_value(u.m).T / C, rtol=0,
                               atol=1e-9)


@pytest.mark.parametrize("n", [40, 6000])
def test_site_positions_match_astropy_earthlocation(n):
    # astropy site positions: EarthLocation.from_geodetic (WGS84) -> get_gcrs_posvel; ours interpolates the
    # celestial-to-intermediate matrix for many TOAs and evaluates the Earth rotation angle exactly
    loc = EarthLocation.from_geodetic(-35.0 * u.deg, 25.0 * u.deg, 10 * u.m)  # invented: mid-Atlantic, no observatory
    rng = np.random.default_rng(n)
    t = Time(np.sort(59000 + rng.uniform(0, 1500, n)), format="mjd", scale="tdb")
    pos, vel, _ = site_gcrs(loc, t.jd1, t.jd2)
    sub = t[:: max(1, n // 60)]
    ap, av = loc.get_gcrs_posvel(sub)
    k = max(1, n // 60)
    np.testing.assert_allclose(pos[::k] * C, ap.xyz.to_value(u.m).T, rtol=0, atol=0.05)  # 5 cm = 0.17 ns
    np.testing.assert_allclose(vel[::k] * C, av.xyz.to_value(u.m / u.s).T, rtol=0, atol=1e-4)
    # the geocentric distance is the WGS84 one
    r = np.linalg.norm(pos * C, axis=1)
    assert np.allclose(r, np.linalg.norm([loc.x.value, loc.y.value, loc.z.value]), atol=1e-3)


def test_site_reference_moves_the_observer_by_up_to_21_ms():
    # Earth radius / c = 21.3 ms: the site term in the Roemer delay swings by up to that daily
    ref = TOAReference("site", 0.0, 0.0, 0.0)
    t = Time(61000, format="mjd", scale="tdb") + np.linspace(0, 2, 97) * u.d
    geo = TimeGrid.from_times(t, t[0], ref)
    cen = TimeGrid.from_times(t, t[0])
    model = TimingModel(90.0, 0.0)
    diff = model.delay(geo, np.zeros(5)) - model.delay(cen, np.zeros(5))
    radius = (const.R_earth / const.c).to_value(u.s)
    assert np.ptp(diff) == pytest.approx(2 * radius, rel=0.01)


def test_jpl_ephemeris_route_through_astropy_matches_the_builtin_route():
    # a JPL file is read by astropy's get_body_barycentric(_posvel) under solar_system_ephemeris.set(path); no
    # kernel is available offline, so the same astropy route is checked with astropy's 'builtin' ephemeris
    from kinage.timing.geometry import _earth_sun_astropy, _earth_sun_direct

    t = Time(60800, format="mjd", scale="tdb") + np.linspace(0, 900, 25) * u.d
    a = _earth_sun_astropy(t.jd1, t.jd2, "builtin")
    b = _earth_sun_direct(t.jd1, t.jd2, "builtin")
    for x, y in zip(a, b):
        np.testing.assert_allclose(x, y, rtol=0, atol=1e-12)


def test_site_beyond_the_bundled_earth_orientation_tables_warns_and_uses_predictions():
    # astropy's bundled IERS tables end about a year after the astropy-iers-data release; later site TOAs use
    # astropy's predictions (nothing downloads) and the geometry says so
    site = TOAReference("site", -40.0, 40.0, 10.0)  # invented: mid-Atlantic, no observatory
    inside = Time(59500, format="mjd", scale="tdb") + np.linspace(0, 30, 5) * u.d
    beyond = Time(66000, format="mjd", scale="tdb") + np.linspace(0, 30, 5) * u.d
    assert observer_geometry(inside.jd1, inside.jd2, site).warnings == []
    geo = observer_geometry(beyond.jd1, beyond.jd2, site)
    assert any("predictions" in w for w in geo.warnings)
    assert np.all(np.isfinite(geo.position))
