"""kinage fit as an observer with real data would use it: TOAs from an independent generator in this file.

The generator shares no code with kinage.  For each nominal observation it finds the arrival time of a
whole pulse:

- spin phase phi(tau) = f tau + fdot tau^2 / 2 at the barycentric emission time tau (s from the epoch), with
  f = 1/P and fdot = -Pdot/P^2 as exact ``fractions.Fraction`` numbers; the pulse number N is the nearest
  integer of the exact phase and tau_N = 2N / (f + sqrt(f^2 + 2 fdot N)) is taken in 50-digit ``decimal``
  arithmetic (times are carried as Decimal seconds from the epoch throughout);
- observer: the Earth's barycentric position and velocity from astropy's ``get_body_barycentric_posvel``,
  plus, at a telescope, ``EarthLocation.get_gcrs_posvel`` (geodetic WGS84); the Sun from
  ``get_body_barycentric``;
- the star on a straight line through space (uniform motion, no radial velocity) at distance 1/parallax, and
  the exact light-path difference (|P| - |P - r|)/c, which holds the Roemer delay and the parallax
  (wavefront-curvature) term together (Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, ch. 8);
- the solar Shapiro delay of a distant source -2 (G M_sun/c^3) ln[(|R| + R.n) / 1 au], R the Sun-to-observer
  vector and n the unit vector to the pulsar: the limit of 2 (G M_sun/c^3) ln[(r_e + r + rho)/(r_e + r - rho)]
  for a far emitter (Shapiro 1964, Phys. Rev. Lett. 13, 789; Backer & Hellings 1986, ARA&A 24, 537), which
  keeps the observer-Sun distance |R| that the angle-only form ln(1 + cos theta) of Lorimer & Kramer 2005
  (ch. 8) drops (G M_sun, c and the au from astropy.constants);
- the cold-plasma dispersion delay 4.148808e3 s DM / f^2 at the barycentric frequency f_obs (1 - v.n/c)
  (Lorimer & Kramer 2005, ch. 4; first-order Doppler shift);
- TDB at the observer as the time scale of the arrival times (the Einstein delay); site TOAs are written in
  UTC by astropy's ``Time`` with the site's location.

X-ray TOAs are barycentred here as an X-ray observer's tool does it for a fixed catalogue position: the
planar Roemer delay r.s/c added and the solar Shapiro delay removed, no parallax term.

Every star, site and number below is invented.  Checks: the fit recovers the truth (position, proper
motion, parallax) within 4 of its stated sigmas (5 parameters per fit: a false alarm once in ~3,000 fits),
the sigmas are right (pulls over seeds, amplitudes of the delays), the interface JSON keys are there, bad
tables give one line and exit status 2.
"""

import json
import math
from dataclasses import dataclass, replace
from decimal import Decimal, localcontext
from fractions import Fraction

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import EarthLocation, get_body_barycentric, get_body_barycentric_posvel
from astropy.table import Table
from astropy.time import Time
from astropy.utils import iers

import kinage
from kinage.cli import main

pytestmark = pytest.mark.filterwarnings("ignore::Warning")

C = const.c.to_value(u.m / u.s)
T_SUN = (const.GM_sun / const.c**3).to_value(u.s)  # astropy's constants, not kinage's
K_DM = 4.148808e3  # s MHz^2 pc^-1 cm^3 (Lorimer & Kramer 2005, ch. 4)
PC_M = const.pc.to_value(u.m)
AU_M = const.au.to_value(u.m)
MAS = math.pi / (180 * 3600e3)
JULIAN_YEAR_S = 365.25 * 86400
DAY = Decimal(86400)
EPOCH_MJD = 58850  # TDB (2019-12-25): the truth's reference epoch; TOAs lie in the past, as real data do
EPOCH = Time(EPOCH_MJD, format="mjd", scale="tdb")
SITE = {"lon": 142.37, "lat": -19.86, "height": 410.0}  # invented telescope site (inland, no observatory)


@dataclass(frozen=True)
class Star:
    """An invented star: true position at EPOCH (deg), motion (mas/yr), parallax (mas), spin, DM."""

    name: str
    ra: float
    dec: float
    pm_ra_cosdec: float
    pm_dec: float
    parallax: float
    period: str  # s, exact decimal text
    period_dot: str
    dm: float = 0.0


@pytest.fixture(autouse=True)
def _offline_iers():
    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None), \
            iers.conf.set_temp("iers_degraded_accuracy", "ignore"):
        yield


# --- the independent generator ---------------------------------------------------------------------------
def _unit(ra_deg, dec_deg):
    ra, dec = math.radians(ra_deg), math.radians(dec_deg)
    s = np.array([math.cos(dec) * math.cos(ra), math.cos(dec) * math.sin(ra), math.sin(dec)])
    e_ra = np.array([-math.sin(ra), math.cos(ra), 0.0])
    e_dec = np.array([-math.sin(dec) * math.cos(ra), -math.sin(dec) * math.sin(ra), math.cos(dec)])
    return s, e_ra, e_dec


def _observer(sec, site):
    """Barycentric observer position (m), velocity (m/s) and Sun position (m) at TDB seconds from EPOCH."""
    t = EPOCH + np.asarray(sec, float) * u.s
    pos, vel = get_body_barycentric_posvel("earth", t)
    r, v = pos.xyz.to_value(u.m).T, vel.xyz.to_value(u.m / u.s).T
    if site is not None:
        loc = EarthLocation.from_geodetic(site["lon"] * u.deg, site["lat"] * u.deg, site["height"] * u.m)
        gp, gv = loc.get_gcrs_posvel(t)
        r, v = r + gp.xyz.to_value(u.m).T, v + gv.xyz.to_value(u.m / u.s).T
    return r, v, get_body_barycentric("sun", t).xyz.to_value(u.m).T


def _star_position(star, sec):
    """Barycentric position of the star (m): a straight line through space, no radial velocity."""
    d = PC_M * 1000.0 / star.parallax
    s0, e_ra, e_dec = _unit(star.ra, star.dec)
    vel = d * MAS / JULIAN_YEAR_S * (star.pm_ra_cosdec * e_ra + star.pm_dec * e_dec)  # m/s
    return d * s0[None, :] + np.multiply.outer(np.asarray(sec, float), vel)


def _delay(star, sec, site, freq_mhz):
    """Barycentric emission time minus observed time (s): path difference - Shapiro - dispersion."""
    r, v, sun = _observer(sec, site)
    p = _star_position(star, sec)
    pn, far = np.linalg.norm(p, axis=1), np.linalg.norm(p - r, axis=1)
    geometric = (2 * np.einsum("ij,ij->i", p, r) - np.einsum("ij,ij->i", r, r)) / (pn + far) / C  # |P|-|P-r|
    s = p / pn[:, None]
    sun_to_obs = r - sun
    shapiro = -2 * T_SUN * np.log((np.linalg.norm(sun_to_obs, axis=1) + np.einsum("ij,ij->i", s, sun_to_obs)) / AU_M)
    out = geometric - shapiro
    if freq_mhz is not None:
        n = (p - r) / far[:, None]
        f_bary = np.asarray(freq_mhz, float) * (1 - np.einsum("ij,ij->i", v, n) / C)
        out = out - K_DM * star.dm / f_bary**2
    return out


def _spin(star):
    p = Fraction(star.period)
    return 1 / p, -Fraction(star.period_dot) / p**2


def _pulse_time(f, fdot, tau):
    """Emission time (Decimal s) of the pulse nearest to tau (Fraction phase, Decimal root)."""
    tf = Fraction(tau)
    n = round(f * tf + fdot * tf * tf / 2)
    with localcontext() as ctx:
        ctx.prec = 50
        fd, fdd = Decimal(f.numerator) / Decimal(f.denominator), Decimal(fdot.numerator) / Decimal(fdot.denominator)
        return 2 * Decimal(n) / (fd + (fd * fd + 2 * fdd * Decimal(n)).sqrt())


def generate(star, mjd_nominal, sigma_s, rng, site=None, freq_mhz=None):
    """Arrival times (TDB at the observer, Decimal s from EPOCH) of whole pulses near the nominal MJDs, + noise."""
    f, fdot = _spin(star)
    obs = [(Decimal(repr(float(m))) - EPOCH_MJD) * DAY for m in mjd_nominal]
    delay = _delay(star, obs, site, freq_mhz)
    with localcontext() as ctx:
        ctx.prec = 50
        emit = [_pulse_time(f, fdot, o + Decimal(repr(float(dl)))) for o, dl in zip(obs, delay)]
        for k in range(3):  # t_obs = tau_N - D(t_obs): dD/dt ~ v/c ~ 1e-4, so 3 passes leave < 1e-12 s
            obs = [e - Decimal(repr(float(dl))) for e, dl in zip(emit, delay)]
            if k < 2:
                delay = _delay(star, obs, site, freq_mhz)
        noise = rng.standard_normal(len(obs)) * np.broadcast_to(sigma_s, (len(obs),))
        return [o + Decimal(repr(float(x))) for o, x in zip(obs, noise)]


def barycentre(sec, ra_deg, dec_deg):
    """What an X-ray barycentring tool does to geocentric TDB times for a fixed position: + r.s/c - Shapiro."""
    r, _, sun = _observer(sec, None)
    s = _unit(ra_deg, dec_deg)[0]
    to_sun = sun - r
    removed = r @ s / C + 2 * T_SUN * np.log((np.linalg.norm(to_sun, axis=1) - to_sun @ s) / AU_M)
    with localcontext() as ctx:
        ctx.prec = 50
        return [x + Decimal(repr(float(d))) for x, d in zip(sec, removed)]


def mjd_text(sec, scale="tdb", site=None):
    """Full-precision MJD strings of EPOCH + sec: TDB, or another scale through astropy (with the site)."""
    if scale == "tdb":
        with localcontext() as ctx:
            ctx.prec = 50
            return [str((EPOCH_MJD + x / DAY).quantize(Decimal("1e-16"))) for x in sec]
    loc = None if site is None else EarthLocation.from_geodetic(site["lon"] * u.deg, site["lat"] * u.deg,
                                                                site["height"] * u.m)
    whole = [int(x // DAY) for x in sec]
    t = Time([float(EPOCH_MJD + w) for w in whole], [float((x - w * DAY) / DAY) for x, w in zip(sec, whole)],
             format="mjd", scale="tdb", location=loc)
    conv = getattr(t, scale)
    conv.format = "mjd"
    return list(conv.to_value("mjd", "str"))


def nominal(n, years, seed):
    """Sorted random observation dates (MJD) spread over ``years`` around the epoch."""
    rng = np.random.default_rng(seed)
    return np.sort(EPOCH_MJD - years / 2 * 365.25 + rng.uniform(0, years * 365.25, n))


# --- scenario and fit helpers -------------------------------------------------------------------------------
def start_star(star, dra_mas=0.0, ddec_mas=0.0, dpm=(0.0, 0.0)):
    """[star] table of a practitioner's starting values: position offset from the truth, rough motion."""
    d = {"name": star.name, "ra": star.ra + dra_mas / 3.6e6 / math.cos(math.radians(star.dec)),
         "dec": star.dec + ddec_mas / 3.6e6, "spin_period": float(star.period),
         "spin_period_derivative": float(star.period_dot), "epoch": float(EPOCH_MJD),
         "pm_ra_cosdec": star.pm_ra_cosdec + dpm[0], "pm_dec": star.pm_dec + dpm[1]}
    if star.dm:
        d["dispersion_measure"] = star.dm * 1.001
    return d


def toml(tables):
    def val(v):
        if isinstance(v, str):
            return json.dumps(v)
        if isinstance(v, bool):
            return "true" if v else "false"
        return repr(v)

    return "".join(f"[{name}]\n" + "".join(f"{k} = {val(v)}\n" for k, v in body.items()) + "\n"
                   for name, body in tables.items())


def toa_table(mjd, sigma_s, meta=None, freq_mhz=None):
    tab = Table()
    tab["mjd"] = np.array(mjd)
    tab["error"] = np.broadcast_to(np.asarray(sigma_s, float) * 1e6, (len(mjd),)) * u.us
    if freq_mhz is not None:
        tab["frequency"] = np.asarray(freq_mhz, float) * u.MHz
    tab.meta.update(meta or {})
    return tab


def fit_cli(tmp_path, star_table, tab, campaign=None, fmt="ecsv"):
    """Write the TOAs and scenario, run `kinage fit` and return (exit status, JSON)."""
    toas = tmp_path / f"toas.{fmt}"
    tab.write(toas, format="ascii.ecsv" if fmt == "ecsv" else "ascii.csv", overwrite=True)
    scn = tmp_path / "star.toml"
    scn.write_text(toml({"star": star_table, "campaign": {"toas": toas.name, **(campaign or {})}}))
    out = tmp_path / "fit.json"
    status = main(["fit", str(toas), "--scenario", str(scn), "--json", str(out), "--quiet"])
    return status, (json.loads(out.read_text()) if out.exists() else None)


def _dra(a, b):
    """a - b in degrees of right ascension, taken across 0h the short way."""
    return (a - b + 180.0) % 360.0 - 180.0


def truth_offsets(star, star_table):
    """The truth as the fit reports it: offsets from the [star] position (mas), motion, parallax."""
    cosd = math.cos(math.radians(star.dec))
    return {"ra_mas": _dra(star.ra, star_table["ra"]) * 3.6e6 * cosd, "dec_mas": (star.dec - star_table["dec"]) * 3.6e6,
            "pm_ra_cosdec_masyr": star.pm_ra_cosdec, "pm_dec_masyr": star.pm_dec, "parallax_mas": star.parallax}


def pulls(d, star, star_table):
    truth = truth_offsets(star, star_table)
    return {k: (d["values"][k] - truth[k]) / d["sigma"][k] for k in truth}


def check_truth(d, star, star_table, nsig=4.0):
    assert d["converged"] is True
    for k, p in pulls(d, star, star_table).items():
        assert abs(p) < nsig, (k, d["values"][k], d["sigma"][k], truth_offsets(star, star_table)[k])
    # absolute position (ra_deg, dec_deg) at the epoch against the truth
    cosd = math.cos(math.radians(star.dec))
    assert 0.0 <= d["ra_deg"] < 360.0
    assert abs(_dra(d["ra_deg"], star.ra)) * 3.6e6 * cosd < nsig * d["sigma"]["ra_mas"]
    assert abs(d["dec_deg"] - star.dec) * 3.6e6 < nsig * d["sigma"]["dec_mas"]
    # white noise modelled: reduced chi-square ~ 1 within 4 sqrt(2/dof)
    dof = d["n_toas"] - d["n_parameters"]
    assert abs(d["chi2_reduced"] - 1) < 4 * math.sqrt(2 / dof) + 1e-9, d["chi2_reduced"]


def site_keys(site=SITE):
    return {"toa_reference": "site", "site_longitude": site["lon"], "site_latitude": site["lat"],
            "site_height": f"{site['height']} m"}


def site_meta(site=SITE):
    return {"toa_reference": "site", "site_longitude": f"{site['lon']} deg", "site_latitude": f"{site['lat']} deg",
            "site_height": f"{site['height']} m"}


# --- the invented stars -----------------------------------------------------------------------------------
MSP = Star("Orrel-4", 83.2, -12.4, 7.42, -12.9, 0.84, "0.0031183276450913", "1.37e-20")  # ecliptic lat -36 deg
SLOW = Star("Brindle-9", 205.4, 41.8, -31.7, 18.3, 1.9, "0.30731846209", "4.71e-15")
XRAY = Star("Caldera X-7", 301.3, -35.2, 23.8, -41.5, 2.6, "0.20417736251", "9.3e-15")
NEAR_ECLIPTIC = Star("Tarrow-2", 121.7, 20.35, -4.1, 9.6, 1.3, "0.0047719381127441", "2.9e-20")  # beta 0.10 deg
NEAR_POLE = Star("Vessil-8", 269.6, 66.9, 22.5, 31.0, 2.2, "0.41730266518", "3.3e-15")  # beta 89.6 deg
FAST = Star("Quorra-5", 312.8, 17.6, 151.0, -132.0, 3.1, "0.5172839468", "2.2e-15")  # 200.5 mas/yr
MID_LATITUDE = Star("Hollin-6", 219.53, 31.67, -6.3, 11.8, 1.1, "0.0066218450372917", "2.3e-20")  # beta 44.2 deg
DISPERSED = replace(MSP, name="Pellow-3", ra=64.9, dec=8.7, dm=27.41)

#: fit JSON keys that are interfaces (the list of interfaces names the first eight; toa_reference is the fit's
#: [campaign] key; README: every results JSON carries provenance)
FIT_KEYS = ("values", "sigma", "ra_deg", "dec_deg", "chi2_reduced", "n_toas", "converged", "iterations",
            "toa_reference", "provenance")
VALUE_KEYS = ("ra_mas", "dec_mas", "pm_ra_cosdec_masyr", "pm_dec_masyr", "parallax_mas")


# --- cases ---------------------------------------------------------------------------------------------------
def test_millisecond_pulsar_site_toas_in_utc_through_the_cli(tmp_path):
    # 3.1 ms pulsar, 150 TOAs of 1 us from an (invented) telescope over 6.5 yr, times in UTC as observatories
    # write them; the start is 3 and 2 mas off the truth with the motion known to ~0.3 mas/yr
    sec = generate(MSP, nominal(150, 6.5, 2), 1e-6, np.random.default_rng(102), site=SITE)
    st = start_star(MSP, 3.0, -2.0, (0.3, -0.2))
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec, "utc", SITE), 1e-6, {"time_scale": "utc"}),
                        campaign=site_keys())
    assert status == 0
    for key in FIT_KEYS:
        assert key in d, key
    assert set(VALUE_KEYS) <= set(d["values"]) and set(VALUE_KEYS) <= set(d["sigma"])
    assert d["toa_reference"] == "site" and d["n_toas"] == 150
    check_truth(d, MSP, st)
    # sigmas sensible, within a factor 3 of the amplitudes of the delays (Lorimer & Kramer 2005, ch. 8; AU/c =
    # 499.005 s): position ~ sigma_t / (2.42 us per arcsec) / sqrt(N/2); parallax: the term
    # (|r|^2 - (r.s)^2)/(2 c d) = 1.21 us/mas x (1 - cos^2 beta cos^2(lambda - lambda_sun)) has a semi-annual
    # part of amplitude 1.21 us/mas x cos^2(beta) / 2
    beta = _ecliptic_axes(MSP)[1]
    for k in ("ra_mas", "dec_mas"):
        assert 1 / 3 < d["sigma"][k] / (1e-6 / (499.005 * MAS) / math.sqrt(75)) < 3, k
    plx_amplitude = 499.005 * MAS / 2 * math.cos(beta) ** 2 / 2  # s per mas
    assert 1 / 3 < d["sigma"]["parallax_mas"] / (1e-6 / plx_amplitude / math.sqrt(75)) < 3
    # the same TOAs fitted at the geocentre are wrong by the site's light time (up to ~21 ms diurnal)
    status, geo = fit_cli(tmp_path, st, toa_table(mjd_text(sec, "utc", SITE), 1e-6, {"time_scale": "utc"}))
    assert status == 1 or geo["chi2_reduced"] > 100


def test_slow_pulsar_geocentric_pulls_over_seeds():
    # 0.31 s pulsar, 80 geocentric TDB TOAs of 30 us over 6 yr, 10 seeds, through kinage.fit with Tables:
    # pulls (fit - truth) / sigma of a correct linear Gaussian fit are standard normal (any least-squares
    # text, e.g. Press et al., Numerical Recipes, sec. 15.6): 50 pulls, sd within ~3 standard errors of 1
    st = start_star(SLOW, 40.0, -25.0, (1.5, -2.0))
    all_pulls, chi2 = [], []
    for seed in range(10):
        sec = generate(SLOW, nominal(80, 6.0, 300 + seed), 30e-6, np.random.default_rng(400 + seed))
        res = kinage.fit(toa_table(mjd_text(sec), 30e-6), {"star": st})
        d = res.to_dict()
        check_truth(d, SLOW, st)
        all_pulls.append(list(pulls(d, SLOW, st).values()))
        chi2.append(d["chi2_reduced"])
    p = np.array(all_pulls)
    assert 0.7 < np.std(p) < 1.3 and abs(np.mean(p)) < 0.45
    assert abs(np.mean(chi2) - 1) < 3 * math.sqrt(2 / 72 / 10)


def test_xray_pulsar_barycentred_for_an_offset_position(tmp_path):
    # 0.20 s X-ray pulsar, 300 TOAs of 1 ms over 8 yr, barycentred by the observer's tool for a catalogue
    # position 3.2 arcsec from the truth; [star] gives that catalogue position and no motion
    cosd = math.cos(math.radians(XRAY.dec))
    b_ra, b_dec = XRAY.ra + 2.6 / 3600 / cosd, XRAY.dec - 1.8 / 3600
    sec = barycentre(generate(XRAY, nominal(300, 8.0, 7), 1e-3, np.random.default_rng(107)), b_ra, b_dec)
    st = start_star(XRAY, 2600.0, -1800.0)
    st.update(ra=b_ra, dec=b_dec, pm_ra_cosdec=0.0, pm_dec=0.0)
    meta = {"toa_reference": "barycentre", "barycentred_ra": f"{b_ra!r} deg", "barycentred_dec": f"{b_dec!r} deg"}
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec), 1e-3, meta))
    assert status == 0 and d["toa_reference"] == "barycentre"
    check_truth(d, XRAY, st)
    # the fitted position is the star's, not the barycentring position (3.2 arcsec >> its error of ~40 mas)
    assert abs(d["values"]["ra_mas"] + 2600.0) < 4 * d["sigma"]["ra_mas"] < 500
    # the same keys in [campaign] instead of the table's metadata, through the Python front door
    res = kinage.fit(toa_table(mjd_text(sec), 1e-3), {"star": st, "campaign": {
        "toa_reference": "barycentre", "barycentred_ra": b_ra, "barycentred_dec": b_dec}})
    assert res.to_dict()["values"] == pytest.approx(d["values"], rel=1e-9)


def _ecliptic_axes(star):
    """Unit vectors (ra*cos dec, dec components) of increasing ecliptic longitude and latitude at the star."""
    from astropy.coordinates import GeocentricTrueEcliptic, SkyCoord

    c = SkyCoord(star.ra * u.deg, star.dec * u.deg).transform_to(GeocentricTrueEcliptic(equinox="J2000"))
    out = []
    for dlon, dlat in ((1e-4 / math.cos(c.lat.rad), 0.0), (0.0, 1e-4)):
        moved = GeocentricTrueEcliptic(lon=c.lon + dlon * u.deg, lat=c.lat + dlat * u.deg, equinox="J2000")
        m = SkyCoord(moved).icrs
        v = np.array([(m.ra.deg - star.ra) * math.cos(math.radians(star.dec)), m.dec.deg - star.dec])
        out.append(v / np.linalg.norm(v))
    return out, c.lat.rad


def test_star_near_the_ecliptic_with_toas_near_the_sun(tmp_path):
    # 4.8 ms pulsar 0.1 deg from the ecliptic; radio TOAs taken through solar conjunction (each July), where
    # the solar Shapiro delay reaches tens of us (Lorimer & Kramer 2005, ch. 8)
    # the Sun passes ecliptic longitude 119.5 deg around 22 July: 209 d after 25 December
    conj = np.array([EPOCH_MJD - 3 * 365.25 + 209 + 365.25 * k + dd for k in range(7) for dd in (-6, -2, 2, 6)])
    mjd = np.sort(np.concatenate([nominal(120, 6.5, 4), conj[(conj > EPOCH_MJD - 1187) & (conj < EPOCH_MJD + 1187)]]))
    sec = generate(NEAR_ECLIPTIC, mjd, 1e-6, np.random.default_rng(104), site=SITE)
    # the generator's own Shapiro term varies by > 20 us over these TOAs: a fit without it would fail chi-square
    r, _, sun = _observer(sec, SITE)
    s = _unit(NEAR_ECLIPTIC.ra, NEAR_ECLIPTIC.dec)[0]
    cos_el = (sun - r) @ s / np.linalg.norm(sun - r, axis=1)
    shapiro = -2 * T_SUN * np.log(1 - cos_el)
    assert np.ptp(shapiro) > 20e-6
    st = start_star(NEAR_ECLIPTIC, 3.0, -2.0, (0.3, -0.2))
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec, "utc", SITE), 1e-6, {"time_scale": "utc"}),
                        campaign=site_keys())
    assert status == 0
    check_truth(d, NEAR_ECLIPTIC, st)
    # timing measures ecliptic latitude through r.s ~ R sin(beta): its error is ~1/|sin beta| that of longitude
    # (derived from the Roemer delay; Lorimer & Kramer 2005, ch. 8), within a factor 2
    (e_lon, e_lat), beta = _ecliptic_axes(NEAR_ECLIPTIC)
    cov = np.array(d["covariance"])[:2, :2]
    ratio = math.sqrt(e_lat @ cov @ e_lat / (e_lon @ cov @ e_lon))
    assert 0.5 < ratio * abs(math.sin(beta)) < 2


def _noise_free_mid_latitude_fit(tmp_path):
    # 6.6 ms pulsar at ecliptic latitude 44 deg, 480 site TOAs over 10 yr given 1 us errors, no noise added
    sec = generate(MID_LATITUDE, nominal(480, 10.0, 8), 0.0, np.random.default_rng(0), site=SITE)
    st = start_star(MID_LATITUDE, 2.0, -1.5, (0.2, -0.1))
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec, "utc", SITE), 1e-6, {"time_scale": "utc"}),
                        campaign=site_keys())
    assert status == 0 and d["converged"] is True
    return pulls(d, MID_LATITUDE, st)


def test_noise_free_site_toas_with_the_full_solar_shapiro_delay_give_unbiased_astrometry(tmp_path, monkeypatch):
    # the generator's Shapiro delay keeps the observer-Sun distance (far-emitter limit of Shapiro 1964): on
    # noise-free TOAs every astrometric offset from the truth is a bias, and each stays below 0.3 of its sigma
    for k, p in _noise_free_mid_latitude_fit(tmp_path).items():
        assert abs(p) < 0.3, (k, p)
    # the check is sensitive: with the angle-only form -2 T_sun ln(1 - cos elongation) (Lorimer & Kramer 2005,
    # sec. 8.2) in place of kinage's delay, the annual +-0.16 us distance term biases the position by > 1 sigma
    import kinage.timing.model as timing_model

    def angle_only(direction, sun):
        return -2 * T_SUN * np.log1p(-np.einsum("ij,ij->i", direction, sun) / np.linalg.norm(sun, axis=1))

    monkeypatch.setattr(timing_model, "solar_shapiro_delay", angle_only)
    biased = _noise_free_mid_latitude_fit(tmp_path)
    assert max(abs(biased["ra_mas"]), abs(biased["dec_mas"])) > 1.0, biased


def test_star_near_the_ecliptic_pole():
    # 0.42 s pulsar 0.4 deg from the ecliptic pole, 30 us geocentric TOAs: the parallax term
    # (|r|^2 - (r.s)^2)/(2 c d) is then nearly constant over the year (only the orbit's eccentricity
    # 0.0167 modulates it), so timing hardly measures the parallax; the position and motion it does
    sec = generate(NEAR_POLE, nominal(90, 6.0, 5), 30e-6, np.random.default_rng(105))
    st = start_star(NEAR_POLE, 30.0, 20.0, (2.0, -1.0))
    d = kinage.fit(toa_table(mjd_text(sec), 30e-6), {"star": st}).to_dict()
    check_truth(d, NEAR_POLE, st)
    # same TOA dates and errors for the star at mid ecliptic latitude: parallax error far smaller
    mid = replace(NEAR_POLE, name="Vessil-8 (moved)", ra=205.4, dec=41.8)
    sec_mid = generate(mid, nominal(90, 6.0, 5), 30e-6, np.random.default_rng(105))
    d_mid = kinage.fit(toa_table(mjd_text(sec_mid), 30e-6), {"star": start_star(mid)}).to_dict()
    assert d["sigma"]["parallax_mas"] > 10 * d_mid["sigma"]["parallax_mas"]
    assert d["sigma"]["pm_dec_masyr"] < 3 * d_mid["sigma"]["pm_dec_masyr"]


@pytest.mark.parametrize("ra", [0.0003, 359.9997])
def test_position_across_zero_hours_of_right_ascension(ra):
    # the start lies 3 arcsec across 0h from the truth: the fitted right ascension (ra_deg) is in [0, 360)
    # (the ICRS longitude convention, as astropy's Longitude wraps it) and at the truth
    star = replace(SLOW, name="Brindle-9 (at 0h)", ra=ra, dec=12.0)
    sec = generate(star, nominal(80, 6.0, 1), 30e-6, np.random.default_rng(5))
    st = start_star(star, 3000.0 if ra > 180 else -3000.0)
    st["ra"] %= 360.0
    d = kinage.fit(toa_table(mjd_text(sec), 30e-6), {"star": st}).to_dict()
    assert (st["ra"] > 180) != (ra > 180)  # the start really is on the other side of 0h
    check_truth(d, star, st)


def test_unsorted_toas_fit_as_sorted(tmp_path):
    # TOAs merged from two receivers come in any order (common practice, no source): same numbers
    sec = generate(SLOW, nominal(80, 6.0, 1), 30e-6, np.random.default_rng(5))
    st = start_star(SLOW, 40.0, -25.0, (1.5, -2.0))
    tab = toa_table(mjd_text(sec), 30e-6)
    shuffled = tab[np.random.default_rng(0).permutation(len(tab))]
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    status_a, a = fit_cli(tmp_path / "a", st, tab)
    status_b, b = fit_cli(tmp_path / "b", st, shuffled)
    assert status_a == status_b == 0
    check_truth(b, SLOW, st)
    assert b["values"] == pytest.approx(a["values"], rel=1e-9) and b["chi2"] == pytest.approx(a["chi2"], rel=1e-9)


def test_frequency_column_and_dispersion_measure_in_ecsv_and_csv(tmp_path):
    # 3.1 ms pulsar, DM 27.41 pc cm^-3, 60 epochs x 3 bands (820, 1400, 2300 MHz) of 1 us; the start DM is
    # 0.1% off: the fit measures the DM offset along with the astrometry
    epochs = nominal(60, 6.5, 8)
    mjd = np.repeat(epochs, 3) + np.tile([0.0, 0.01, 0.02], epochs.size)
    freq = np.tile([820.0, 1400.0, 2300.0], epochs.size)
    sec = generate(DISPERSED, mjd, 1e-6, np.random.default_rng(108), freq_mhz=freq)
    st = start_star(DISPERSED, 3.0, -2.0, (0.3, -0.2))
    tab = toa_table(mjd_text(sec), 1e-6, freq_mhz=freq)
    (tmp_path / "ecsv").mkdir()
    status, d = fit_cli(tmp_path / "ecsv", st, tab)
    assert status == 0
    check_truth(d, DISPERSED, st)
    assert abs(d["dispersion_measure"] - DISPERSED.dm) < 4 * d["dispersion_measure_sigma"]
    # DM error ~ sigma_t / (K |1/f_lo^2 - 1/f_hi^2|) / sqrt(N/3) (Lorimer & Kramer 2005, ch. 4), within 3
    k = K_DM * (1 / 820.0**2 - 1 / 2300.0**2)
    assert 1 / 3 < d["dispersion_measure_sigma"] / (1e-6 / k / math.sqrt(60)) < 3
    # CSV carries no units: errors in s, frequencies in MHz (the documented defaults); same fit
    tab_csv = tab.copy()
    tab_csv["error"] = tab["error"].to(u.s)
    (tmp_path / "csv").mkdir()
    status, c = fit_cli(tmp_path / "csv", st, tab_csv, fmt="csv")
    assert status == 0
    assert c["values"] == pytest.approx(d["values"], rel=1e-9)
    assert c["dispersion_measure"] == pytest.approx(d["dispersion_measure"], rel=1e-12)
    # one band only: the DM is held at the [star] value, and the fit says so
    one = kinage.fit(tab[freq == 1400.0], {"star": st}).to_dict()
    assert one["dispersion_measure"] is None and any("dispersion measure is held" in w for w in one["warnings"])


def test_just_enough_toas(tmp_path, capsys):
    # 9 TOAs for 8 parameters (5 astrometric, phase, frequency, its derivative) fit; 8 are refused
    st = start_star(SLOW, 40.0, -25.0, (1.5, -2.0))
    sec = generate(SLOW, nominal(9, 6.0, 11), 30e-6, np.random.default_rng(111))
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec), 30e-6))
    assert status == 0 and d["converged"] and d["n_toas"] == 9 and d["n_parameters"] == 8
    for k, p in pulls(d, SLOW, st).items():
        assert abs(p) < 4, k
    capsys.readouterr()
    (tmp_path / "eight").mkdir()
    status, d = fit_cli(tmp_path / "eight", st, toa_table(mjd_text(sec[:8]), 30e-6))
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and d is None and len(err) == 1 and "more TOAs than fitted parameters" in err[0]


def test_high_proper_motion_with_the_default_epoch(tmp_path):
    # 200 mas/yr (1.2 arcsec over the 6 yr), start motion 5 mas/yr off; no [star] epoch: the fit's epoch is
    # the middle of the TOAs (kinage keys: 'default: campaign middle'), so the start is given there and the
    # truth is carried there on its straight line
    mjd = nominal(80, 6.0, 6)
    sec = generate(FAST, mjd, 30e-6, np.random.default_rng(106))
    t = [float(EPOCH_MJD + x / DAY) for x in sec]
    mid = round(0.5 * (t[0] + t[-1]))
    dt = Fraction(mid - EPOCH_MJD) * 86400
    f, fdot = _spin(FAST)
    f_mid = f + fdot * dt
    # the truth at the fit's epoch (its direction from the straight-line position)
    p = _star_position(FAST, [float(dt)])[0]
    ra_mid = math.degrees(math.atan2(p[1], p[0])) % 360
    dec_mid = math.degrees(math.asin(p[2] / np.linalg.norm(p)))
    truth = replace(FAST, ra=ra_mid, dec=dec_mid)
    st = start_star(truth, 30.0, 20.0, (5.0, -4.0))
    del st["epoch"]
    st["spin_period"] = float(1 / f_mid)
    st["spin_period_derivative"] = float(-fdot / f_mid**2)
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec), 30e-6))
    assert status == 0 and d["epoch_mjd_tdb"] == mid
    check_truth(d, truth, st)


def test_spin_period_at_another_epoch_is_a_cycle_count_failure(tmp_path, capsys):
    # the practitioner's P and Pdot refer to EPOCH, but [star] epoch says 40 days later: the spin is then off
    # by fdot x 40 d ~ 2e-7 Hz, ~20 cycles over 6 yr; the pulses are misnumbered and that is no solution:
    # exit status 1, the last iterate written with converged false and the cause in words
    sec = generate(SLOW, nominal(80, 6.0, 1), 30e-6, np.random.default_rng(5))
    st = start_star(SLOW, 40.0, -25.0, (1.5, -2.0))
    st["epoch"] = float(EPOCH_MJD + 40)
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec), 30e-6))
    assert status == 1 and d["converged"] is False
    assert any("cycle-count" in w and "epoch" in w for w in d["warnings"])
    assert "not converged" in capsys.readouterr().err
    with pytest.raises(kinage.errors.ConvergenceError):
        kinage.fit(toa_table(mjd_text(sec), 30e-6), {"star": st})


def test_utc_time_column_at_a_site_gets_the_site_time_scale():
    # a Table whose mjd column is an astropy Time in UTC (no location) at a site: TDB at the site needs the
    # site's location (astropy Time with location; the topocentric TDB-TT term is up to ~2 us), as a text
    # column with meta time_scale = 'utc' gets it
    sec = generate(MSP, nominal(150, 6.5, 2), 1e-6, np.random.default_rng(102), site=SITE)
    text = mjd_text(sec, "utc", SITE)
    st = start_star(MSP, 3.0, -2.0, (0.3, -0.2))
    ref = kinage.fit(toa_table(text, 1e-6, {"time_scale": "utc", **site_meta()}), {"star": st}).to_dict()
    tab = Table()
    tab["mjd"] = Time(text, format="mjd", scale="utc")
    tab["error"] = np.full(len(text), 1.0) * u.us
    tab.meta.update(site_meta())
    d = kinage.fit(tab, {"star": st, "campaign": site_keys()}).to_dict()  # [campaign] of reference keys only
    assert d["chi2"] == pytest.approx(ref["chi2"], rel=1e-6)
    assert d["values"] == pytest.approx(ref["values"], rel=1e-6, abs=1e-6 * ref["sigma"]["ra_mas"])
    check_truth(d, MSP, st)


def test_cli_fit_with_the_scenario_alone(tmp_path):
    # `kinage fit star.toml --json OUT` fits the scenario's [campaign] toas, as kinage.fit(scenario) does
    sec = generate(SLOW, nominal(40, 6.0, 12), 30e-6, np.random.default_rng(112))
    st = start_star(SLOW, 40.0, -25.0, (1.5, -2.0))
    status, d = fit_cli(tmp_path, st, toa_table(mjd_text(sec), 30e-6))
    out = tmp_path / "alone.json"
    assert main(["fit", str(tmp_path / "star.toml"), "--json", str(out), "--quiet"]) == 0
    alone = json.loads(out.read_text())
    assert status == 0 and alone["values"] == pytest.approx(d["values"], rel=1e-12)
    assert kinage.fit(tmp_path / "star.toml").to_dict()["values"] == pytest.approx(d["values"], rel=1e-12)


def _bad(kind):
    """A TOA table with one practitioner's mistake, and what the one-line error must name."""
    sec = generate(SLOW, nominal(30, 4.0, 13), 30e-6, np.random.default_rng(113))
    mjd = mjd_text(sec)
    tab = toa_table(mjd, 30e-6)
    if kind == "microseconds_in_csv":  # CSV has no units: 30 (meant as us) is read as 30 s > P/2
        tab["error"] = np.full(len(mjd), 30.0)
        return tab, "csv", ("'error'", "half the spin period", "microseconds")
    if kind == "frequency_in_ghz":
        tab["frequency"] = np.full(len(mjd), 1.4)
        return tab, "csv", ("row 1", "'frequency'", "GHz")
    if kind == "duplicate_row_unsorted":
        tab = Table(tab[[0, 5, 1, 2, 3, 4, 5, 6]], copy=True)  # row 7 repeats row 2
        return tab, "ecsv", ("row 7", "'mjd'", "duplicate", "row 2")
    if kind == "julian_dates":
        tab["mjd"] = [str(Decimal(m) + Decimal("2400000.5")) for m in mjd]
        return tab, "ecsv", ("row 1", "'mjd'", "Julian date")
    if kind == "error_without_time_unit":
        tab["error"] = np.full(len(mjd), 30.0) * u.mas
        return tab, "ecsv", ("'error'", "time unit")
    if kind == "text_in_mjd":
        tab["mjd"] = [m if i != 3 else "58O12.5" for i, m in enumerate(mjd)]
        return tab, "csv", ("row 4", "'mjd'", "58O12.5")
    raise KeyError(kind)


@pytest.mark.parametrize("kind", ["microseconds_in_csv", "frequency_in_ghz", "duplicate_row_unsorted",
                                  "julian_dates", "error_without_time_unit", "text_in_mjd"])
def test_bad_toa_tables_give_one_line(tmp_path, capsys, kind):
    # README: mistakes are reported one per line, exit status 2, before anything runs (nothing written)
    tab, fmt, words = _bad(kind)
    st = start_star(SLOW)
    capsys.readouterr()
    status, d = fit_cli(tmp_path, st, tab, fmt=fmt)
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and d is None and len(err) == 1, err
    assert f"toas.{fmt}" in err[0] and "Traceback" not in err[0]
    for w in words:
        assert w in err[0], (w, err[0])
    with pytest.raises(kinage.errors.InputError):  # the Python front door: an InputError, the same words
        kinage.fit(tmp_path / f"toas.{fmt}", {"star": st})


def test_errors_that_do_not_describe_the_scatter_are_named():
    # TOAs scattering 2x their stated errors: chi-square/dof ~ 4, far beyond its spread sqrt(2/dof) (any
    # statistics text); the fit says the sigmas are too small and names the keys that model the extra noise.
    # With error_scale = 2 the fit is calibrated again (truth within 4 sigma, no such warning)
    st = start_star(SLOW, 40.0, -25.0, (1.5, -2.0))
    sec = generate(SLOW, nominal(80, 6.0, 14), 60e-6, np.random.default_rng(114))
    tab = toa_table(mjd_text(sec), 30e-6)
    bad = kinage.fit(tab, {"star": st}).to_dict()
    assert bad["chi2_reduced"] > 2.5
    assert any("sigmas are too small" in w and "error_scale" in w for w in bad["warnings"])
    good = kinage.fit(tab, {"star": st, "campaign": {"error_scale": 2.0}}).to_dict()
    check_truth(good, SLOW, st)
    assert not any("reduced chi-square" in w for w in good["warnings"])
    # errors stated 20x too large (a unit slip the half-period check cannot see): named too
    loose = kinage.fit(toa_table(mjd_text(sec), 1.2e-3), {"star": st}).to_dict()
    assert any("sigmas are too large" in w and "unit" in w for w in loose["warnings"])
