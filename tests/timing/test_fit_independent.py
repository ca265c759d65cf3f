"""kinage fit (through the CLI) on TOAs made by an independent generator in this file.

The generator shares no code with kinage's timing model.  For each nominal
observation it solves for the exact arrival time of a whole pulse by
iteration in Python ``decimal`` arithmetic (40 digits), with

- the observer's barycentric position from astropy: ``get_body_barycentric_posvel('earth')`` plus, at a
  telescope, ``EarthLocation.get_gcrs_posvel`` (astropy site positions, geodetic WGS84);
- the star's position from ``SkyCoord.apply_space_motion`` (proper motion, radial velocity 0) at a
  distance 1/parallax, and the exact geometric path difference (d - |d s - r|)/c, which holds the Roemer
  delay and the parallax (wavefront curvature) together (Lorimer & Kramer 2005, Handbook of Pulsar
  Astronomy, sec. 8.2);
- the solar Shapiro delay of a distant source -2 (G M_sun / c^3) ln[(r / 1 au)(1 - cos elongation)], r the
  observer-Sun distance (far-emitter limit of Shapiro 1964, Phys. Rev. Lett. 13, 789; at r = 1 au the form
  of Lorimer & Kramer 2005, sec. 8.2; G M_sun, c and the au from astropy.constants) with the Sun from
  ``get_body_barycentric('sun')``.

Site TOAs are written in UTC (astropy converts TDB at the site to UTC with the site's location);
barycentred TOAs are barycentred here for an offset reference position (Roemer + Shapiro removed).
Checks: the fit converges and recovers the injected position offset, proper motion and parallax within
4 sigma, with a reduced chi-square near 1.
"""

import json
from decimal import Decimal, getcontext

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import EarthLocation, SkyCoord, get_body_barycentric, get_body_barycentric_posvel
from astropy.table import Table
from astropy.time import Time
from astropy.utils import iers

from kinage.cli import main

pytestmark = pytest.mark.filterwarnings("ignore::Warning")

getcontext().prec = 40
C = const.c.to_value(u.m / u.s)
T_SUN = (const.GM_sun / const.c**3).to_value(u.s)  # astropy constants, not kinage's
AU_M = const.au.to_value(u.m)
RA, DEC = 97.3, 18.9  # near the ecliptic: the Shapiro delay matters
TRUE = {"ra_mas": 3.0, "dec_mas": -2.0, "pm_ra_cosdec": 14.0, "pm_dec": -9.0, "parallax": 2.5}
PERIOD = 0.00431  # s (invented)
SPIN_FREQ = Decimal(1) / Decimal("0.00431")
SPIN_FREQ_DOT = Decimal("-2.1e-15")
EPOCH = Time(61400.0, format="mjd", scale="tdb")
SITE = dict(lon=-61.34, lat=-27.91, height=150.0)  # invented telescope site (open plain, no observatory)


@pytest.fixture(autouse=True)
def _offline_iers():
    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None), \
            iers.conf.set_temp("iers_degraded_accuracy", "ignore"):
        yield


def _observer(t, site):
    """Observer barycentric position (m), shape (n, 3)."""
    pos, _ = get_body_barycentric_posvel("earth", t)
    r = pos.xyz.to_value(u.m).T
    if site is not None:
        loc = EarthLocation.from_geodetic(site["lon"] * u.deg, site["lat"] * u.deg, site["height"] * u.m)
        g, _ = loc.get_gcrs_posvel(t)
        r = r + g.xyz.to_value(u.m).T
    return r


def _star(t):
    """Unit vector and distance (m) of the star at times t, via SkyCoord.apply_space_motion."""
    ra = RA + TRUE["ra_mas"] / 3.6e6 / np.cos(np.radians(DEC))
    dec = DEC + TRUE["dec_mas"] / 3.6e6
    c = SkyCoord(ra * u.deg, dec * u.deg, distance=(TRUE["parallax"] * u.mas).to(u.pc, u.parallax()),
                 pm_ra_cosdec=TRUE["pm_ra_cosdec"] * u.mas / u.yr, pm_dec=TRUE["pm_dec"] * u.mas / u.yr,
                 radial_velocity=0 * u.km / u.s, obstime=EPOCH)
    moved = c.apply_space_motion(new_obstime=t)
    xyz = moved.cartesian.xyz.to_value(u.m).T
    d = np.linalg.norm(xyz, axis=1)
    return xyz / d[:, None], d


def _delay(r, s, d, sun):
    """Emission-frame minus observed time: geometric path difference minus the solar Shapiro delay, s."""
    far = np.linalg.norm(d[:, None] * s - r, axis=1)
    rs = np.einsum("ij,ij->i", r, s)
    geometric = (2 * d * rs - np.einsum("ij,ij->i", r, r)) / (d + far) / C  # = (d - |d s - r|)/c, no cancellation
    to_sun = sun - r
    dist = np.linalg.norm(to_sun, axis=1)
    cos_el = np.einsum("ij,ij->i", s, to_sun) / dist
    return geometric - (-2 * T_SUN * np.log(dist / AU_M * (1 - cos_el)))


def _generate(mjd_nominal, site, sigma_s, rng):
    """Exact whole-pulse arrival times (TDB at the observer) as Decimal seconds from EPOCH, plus noise."""
    sec = [Decimal(repr(float(x))) * 86400 - Decimal(repr(float(EPOCH.mjd))) * 86400 for x in mjd_nominal]
    n_pulse = None
    for _ in range(4):
        t = EPOCH + np.array([float(x) for x in sec]) * u.s
        r = _observer(t, site)
        s, d = _star(t)
        sun = get_body_barycentric("sun", t).xyz.to_value(u.m).T
        delay = _delay(r, s, d, sun)
        tau = [x + Decimal(repr(float(dl))) for x, dl in zip(sec, delay)]
        phase = [SPIN_FREQ * x + SPIN_FREQ_DOT * x * x / 2 for x in tau]
        if n_pulse is None:
            n_pulse = [p.to_integral_value() for p in phase]
        sec = [x - (p - n) / (SPIN_FREQ + SPIN_FREQ_DOT * tt) for x, p, n, tt in zip(sec, phase, n_pulse, tau)]
    noise = rng.standard_normal(len(sec)) * sigma_s
    return [x + Decimal(repr(float(e))) for x, e in zip(sec, noise)]


def _mjd_text(sec, scale="tdb", site=None):
    """Decimal MJD strings of EPOCH + sec in TDB, or converted to another scale by astropy."""
    day = Decimal(86400)
    base = Decimal(repr(float(EPOCH.mjd)))
    if scale == "tdb":
        return [str((base + x / day).quantize(Decimal("1e-16"))) for x in sec]
    loc = EarthLocation.from_geodetic(site["lon"] * u.deg, site["lat"] * u.deg, site["height"] * u.m)
    whole = [int(x // day) for x in sec]
    t = Time([float(EPOCH.mjd) + w for w in whole], [float((x - w * day) / day) for x, w in zip(sec, whole)],
             format="mjd", scale="tdb", location=loc)
    conv = getattr(t, scale)
    conv.format = "mjd"
    return list(conv.to_value("mjd", "str"))


def _barycentre(sec, ra, dec):
    """Barycentre geocentric TDB times (Decimal s from EPOCH) for a fixed direction: + r.s/c - Shapiro."""
    t = EPOCH + np.array([float(x) for x in sec]) * u.s
    r = _observer(t, None)
    s = np.broadcast_to(SkyCoord(ra * u.deg, dec * u.deg).cartesian.xyz.value, r.shape)
    sun = get_body_barycentric("sun", t).xyz.to_value(u.m).T
    to_sun = sun - r
    dist = np.linalg.norm(to_sun, axis=1)
    cos_el = np.einsum("ij,ij->i", s, to_sun) / dist
    removed = np.einsum("ij,ij->i", r, s) / C + 2 * T_SUN * np.log(dist / AU_M * (1 - cos_el))
    return [x + Decimal(repr(float(dl))) for x, dl in zip(sec, removed)]


def _nominal(n=90, years=9.0, seed=0):
    rng = np.random.default_rng(seed)
    return np.sort(EPOCH.mjd - years / 2 * 365.25 + rng.uniform(0, years * 365.25, n))


def _scenario(tmp_path, extra=""):
    text = f"""
[star]
ra = {RA}
dec = {DEC}
spin_period = {PERIOD}
spin_period_derivative = {float(-SPIN_FREQ_DOT / SPIN_FREQ**2):.6e}
pm_ra_cosdec = 13.9
pm_dec = -9.05
parallax = 2.4
epoch = 61400.0

[campaign]
toas = "toas.ecsv"
sun_avoidance = 0
{extra}
"""
    path = tmp_path / "star.toml"
    path.write_text(text)
    return path


def _write(tmp_path, mjd_text, sigma_s, meta):
    tab = Table()
    tab["mjd"] = np.array(mjd_text)
    tab["error"] = np.full(len(mjd_text), sigma_s * 1e6) * u.us
    tab.meta.update(meta)
    path = tmp_path / "toas.ecsv"
    tab.write(path, format="ascii.ecsv", overwrite=True)
    return path


def _fit(tmp_path, scenario, toas):
    out = tmp_path / "fit.json"
    status = main(["fit", str(toas), "--scenario", str(scenario), "--json", str(out), "--quiet"])
    return status, json.loads(out.read_text())


def _check(status, d, sigma_s):
    assert status == 0 and d["converged"] is True
    # truth recovered within 4 sigma (independent generator; 4 sigma: 5 parameters, ~1e-4 chance per test)
    for key, name in (("ra_mas", "ra_mas"), ("dec_mas", "dec_mas"), ("pm_ra_cosdec_masyr", "pm_ra_cosdec"),
                      ("pm_dec_masyr", "pm_dec"), ("parallax_mas", "parallax")):
        assert abs(d["values"][key] - TRUE[name]) < 4 * d["sigma"][key], key
    # white noise correctly modelled: reduced chi-square ~ 1 within ~4 sqrt(2/dof)
    assert abs(d["chi2_reduced"] - 1) < 4 * np.sqrt(2 / (d["n_toas"] - 8))


@pytest.mark.parametrize("sigma_s", [1e-7, 3e-6])
def test_geocentric_toas_from_independent_generator(tmp_path, sigma_s):
    sec = _generate(_nominal(), None, sigma_s, np.random.default_rng(11))
    toas = _write(tmp_path, _mjd_text(sec), sigma_s, {"time_scale": "tdb", "toa_reference": "geocentre"})
    status, d = _fit(tmp_path, _scenario(tmp_path), toas)
    _check(status, d, sigma_s)
    # ra_deg / dec_deg: the absolute fitted position at the epoch (reference position plus the offsets)
    true_ra = RA + TRUE["ra_mas"] / 3.6e6 / np.cos(np.radians(DEC))
    assert abs(d["ra_deg"] - true_ra) * 3.6e6 * np.cos(np.radians(DEC)) < 4 * d["sigma"]["ra_mas"]
    assert abs(d["dec_deg"] - (DEC + TRUE["dec_mas"] / 3.6e6)) * 3.6e6 < 4 * d["sigma"]["dec_mas"]


def test_site_toas_in_utc_from_independent_generator(tmp_path):
    sigma_s = 3e-7
    sec = _generate(_nominal(seed=2), SITE, sigma_s, np.random.default_rng(12))
    toas = _write(tmp_path, _mjd_text(sec, "utc", SITE), sigma_s, {"time_scale": "utc"})
    extra = (f'toa_reference = "site"\nsite_longitude = {SITE["lon"]}\nsite_latitude = {SITE["lat"]}\n'
             f'site_height = "{SITE["height"]} m"')
    status, d = _fit(tmp_path, _scenario(tmp_path, extra), toas)
    _check(status, d, sigma_s)


def test_site_toas_fitted_as_geocentric_are_wrong(tmp_path):
    # the site offset (up to ~21 ms diurnal) cannot be absorbed: without the site keys the fit is bad
    sigma_s = 1e-6
    sec = _generate(_nominal(seed=3), SITE, sigma_s, np.random.default_rng(13))
    toas = _write(tmp_path, _mjd_text(sec), sigma_s, {"time_scale": "tdb"})
    out = tmp_path / "fit.json"
    main(["fit", str(toas), "--scenario", str(_scenario(tmp_path)), "--json", str(out), "--quiet"])
    assert json.loads(out.read_text())["chi2_reduced"] > 100


def test_barycentred_toas_with_offset_reference_position(tmp_path):
    sigma_s = 5e-7
    sec = _generate(_nominal(seed=4), None, sigma_s, np.random.default_rng(14))
    b_ra, b_dec = RA + 0.9 / 3600, DEC - 0.6 / 3600  # barycentred for a position ~1 arcsec off
    bary = _barycentre(sec, b_ra, b_dec)
    meta = {"time_scale": "tdb", "toa_reference": "barycentre", "barycentred_ra": f"{b_ra!r} deg",
            "barycentred_dec": f"{b_dec!r} deg"}
    toas = _write(tmp_path, _mjd_text(bary), sigma_s, meta)
    status, d = _fit(tmp_path, _scenario(tmp_path), toas)
    _check(status, d, sigma_s)
