"""Fisher forecast: closed-form white-noise precision, sweep, reverse question, JSON keys."""

import json

import numpy as np
import pytest
from astropy.coordinates import SkyCoord
import astropy.units as u

from kinage.errors import InputError, ScenarioError
from kinage.io.results import write_json
from kinage.io.scenario import scenario_from_dict
from kinage.timing import forecast
import astropy.constants as const

# Roemer amplitude AU/c (s) and the mas-to-radian factor from astropy, not from kinage
AU_C_S = (const.au / const.c).to_value(u.s)
MAS_RAD = (1 * u.mas).to_value(u.rad)

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")

def _scenario(star=None, trace=None, **camp):
    s = {"ra": 53.2, "dec": -12.5, "distance": "300 pc", "spin_period": 0.27, "spin_period_derivative": 1e-15,
         "pm_ra_cosdec": 30.0, "pm_dec": -20.0}
    s.update(star or {})
    s = {k: v for k, v in s.items() if v is not None}
    c = {"start": "2028-01-01", "baseline": 4, "visits_per_year": 6, "toa_error": "30 us", "max_baseline": 12}
    c.update(camp)
    raw = {"star": s, "campaign": {k: v for k, v in c.items() if v is not None}}
    if trace:
        raw["trace"] = trace
    return scenario_from_dict(raw)


def test_json_keys():
    res = forecast(_scenario())
    d = res.to_dict()
    for key in ("toa_error_s", "n_toas", "baseline_yr", "sigma", "pm_significance", "baseline_needed_yr"):
        assert key in d
    assert set(d["sigma"]) == {"ra_mas", "dec_mas", "pm_ra_cosdec_masyr", "pm_dec_masyr", "parallax_mas"}
    assert d["toa_error_s"] == pytest.approx(30e-6)
    assert d["n_toas"] == 25 and d["baseline_yr"] == 4
    assert res.solution.sigma_dict() == d["sigma"]
    json.dumps(d)  # plain JSON types
    assert isinstance(res.summary(), str) and res.assumptions


def test_closed_form_white_noise_precision():
    # Uniform sampling, white noise: a proper motion adds A mu t cos(w t + psi) to the residuals; least squares
    # with t centred on the epoch gives Var(mu) = sigma^2 / (A^2 sum t^2 cos^2) ~ sigma^2 / (A^2 N T^2 / 24),
    # so sigma_mu = sqrt(24) sigma / (A sqrt(N) T) (derivation standard; Roemer amplitude from Lorimer &
    # Kramer 2005, sec. 8.2): A = AU/c per radian along ecliptic longitude and (AU/c) sin(beta) along
    # ecliptic latitude beta.  The full Fisher result (spin and parallax marginalised) agrees within 15%.
    # (At the ecliptic pole the parallax is nearly degenerate with position, so a mid latitude is used.)
    sigma, vpy, base, beta = 50e-6, 24, 10.0, 45.0
    frame = dict(frame="barycentrictrueecliptic", equinox="J2000")
    src = SkyCoord(lon=30 * u.deg, lat=beta * u.deg, **frame).icrs
    pa = src.position_angle(SkyCoord(lon=0 * u.deg, lat=90 * u.deg, **frame).icrs).rad
    u_lat = np.array([np.sin(pa), np.cos(pa)])  # (ra*cos dec, dec) components of ecliptic north
    u_lon = np.array([np.cos(pa), -np.sin(pa)])
    s = _scenario(star={"ra": src.ra.deg, "dec": src.dec.deg}, toa_error=sigma * u.s, visits_per_year=vpy,
                  baseline=base, sun_avoidance=0, max_baseline=base)
    res = forecast(s)
    cov = res.solution.covariance[2:4, 2:4]
    closed = np.sqrt(24) * sigma / (AU_C_S * MAS_RAD * np.sqrt(res.plan.n_visits) * base)
    assert np.sqrt(u_lon @ cov @ u_lon) == pytest.approx(closed, rel=0.15)
    assert np.sqrt(u_lat @ cov @ u_lat) == pytest.approx(closed / np.sin(np.radians(beta)), rel=0.15)


def _ecliptic_source(beta_deg):
    frame = dict(frame="barycentrictrueecliptic", equinox="J2000")
    src = SkyCoord(lon=30 * u.deg, lat=beta_deg * u.deg, **frame).icrs
    pa = src.position_angle(SkyCoord(lon=0 * u.deg, lat=90 * u.deg, **frame).icrs).rad
    return src, np.array([np.cos(pa), -np.sin(pa)])  # (ra*cos dec, dec) components of ecliptic longitude


def test_baseline_sweep_and_baseline_needed_follow_the_closed_form():
    # Same closed form as above, sigma_mu = sqrt(24) sigma / (A sqrt(N) T) with A = AU/c for motion along the
    # ecliptic longitude and N = visits_per_year T + 1: at a fixed cadence sigma_mu falls as T^-3/2, and the
    # baseline for a significance mu / sigma_mu = k is T = (k sqrt(24) sigma / (A mu sqrt(visits_per_year)))^(2/3).
    sigma, vpy, mu, k = 40e-6, 12, 2.0, 3.0
    src, along = _ecliptic_source(45.0)
    pm = mu * along
    s = _scenario(star={"ra": src.ra.deg, "dec": src.dec.deg, "pm_ra_cosdec": pm[0], "pm_dec": pm[1]},
                  toa_error=sigma, visits_per_year=vpy, baseline=4, sun_avoidance=0, max_baseline=14,
                  target_significance=k)
    res = forecast(s)
    a_mas = AU_C_S * MAS_RAD
    for base, n, err in zip(res.sweep["baseline_yr"], res.sweep["n_toas"], res.sweep["pm_error_masyr"]):
        if base >= 3:  # a few years: the spin and parallax terms decouple from the motion (see above)
            assert err == pytest.approx(np.sqrt(24) * sigma / (a_mas * np.sqrt(n) * base), rel=0.15), base
    closed = (k * np.sqrt(24) * sigma / (a_mas * mu * np.sqrt(vpy))) ** (2 / 3)
    assert 3 < closed < 14
    assert res.baseline_needed_yr == pytest.approx(closed, rel=0.1)


def test_errors_scale_with_toa_error_and_noise_terms():
    a = forecast(_scenario()).to_dict()["sigma"]["pm_ra_cosdec_masyr"]
    b = forecast(_scenario(toa_error="60 us")).to_dict()["sigma"]["pm_ra_cosdec_masyr"]
    assert b == pytest.approx(2 * a, rel=1e-6)  # linear model: errors proportional to sigma
    c = forecast(_scenario(error_scale=2.0)).to_dict()["sigma"]["pm_ra_cosdec_masyr"]
    assert c == pytest.approx(b, rel=1e-6)
    red = forecast(_scenario(red_noise_amplitude=1e-11, red_noise_index=5.0)).to_dict()["sigma"]
    assert red["pm_ra_cosdec_masyr"] > a


def test_woodbury_and_dense_forecasts_agree():
    s = _scenario(red_noise_amplitude=3e-12, red_noise_index=4.0, red_noise_modes=10)
    w = forecast(s).solution.covariance
    d = forecast(s, method="dense").solution.covariance
    assert np.allclose(w, d, rtol=1e-6, atol=0)


def test_baseline_needed_reaches_target():
    s = _scenario(star={"pm_ra_cosdec": 3.0, "pm_dec": -2.0}, baseline=2, max_baseline=15)
    res = forecast(s)
    need = res.baseline_needed_yr
    assert need is not None and need > 2
    # a plan of that baseline (rounded up to the cadence) is close to the target significance
    sig = np.asarray(res.sweep["pm_significance"])
    assert np.all(np.diff(sig) > -0.05 * sig[1:])  # significance grows with baseline
    base = np.ceil(need * 6) / 6
    again = forecast(_scenario(star={"pm_ra_cosdec": 3.0, "pm_dec": -2.0}, baseline=base, max_baseline=15))
    assert again.pm_significance == pytest.approx(3.0, rel=0.15)


def test_no_baseline_within_max():
    res = forecast(_scenario(star={"pm_ra_cosdec": 0.01, "pm_dec": 0.0}, max_baseline=6))
    assert res.baseline_needed_yr is None
    assert res.to_dict()["baseline_needed_yr"] is None
    assert any("no baseline" in w for w in res.warnings)


def test_reverse_question_is_consistent():
    s = _scenario(target_pm_error=0.5)
    res = forecast(s)
    need = res.reverse["toa_error_needed_s"]
    again = forecast(_scenario(target_pm_error=0.5, toa_error=need * u.s))
    assert again.pm_error_along_motion == pytest.approx(0.5, rel=1e-3)


def test_reverse_question_exposure_from_photons():
    s = _scenario(toa_error=None, exposure="20 ks", source_rate=0.5, background_rate=0.1, pulsed_fraction=0.2,
                  target_pm_error=2.0)
    res = forecast(s)
    r = res.reverse
    # photon-limited: sigma_TOA ~ exposure^-1/2, so exposure scales as (sigma_now / sigma_needed)^2
    assert r["exposure_needed_s"] == pytest.approx(2e4 * (res.toa_error_s / r["toa_error_needed_s"]) ** 2, rel=1e-6)
    ph = res.to_dict()["photon_statistics"]
    assert ph["expected_z2"] > 4 and ph["detection_sigma_per_visit"] > 0  # values: test_expected_z2_and_...


def test_expected_motion_from_velocity_prior():
    # Hobbs et al. 2005 (MNRAS 360, 974): 3-D Maxwellian sigma = 265 km/s; its projected speed is Rayleigh
    # with median sigma sqrt(2 ln 2) = 312.0 km/s; mu = v_t / (4.74047 d[kpc]) mas/yr
    s = _scenario(star={"pm_ra_cosdec": None, "pm_dec": None, "distance": "250 pc"})
    res = forecast(s)
    expected = 265 * np.sqrt(2 * np.log(2)) / (4.74047 * 0.25)
    assert res.motion.pm_masyr == pytest.approx(expected, rel=1e-4)
    assert res.parameter_sets and res.parameter_sets[0].name == "hobbs2005"
    named = forecast(_scenario(star={"pm_ra_cosdec": None, "pm_dec": None, "transverse_velocity": 100.0}))
    assert named.motion.pm_masyr == pytest.approx(100 / (4.74047 * 0.3), rel=1e-6)


def _buccheri_expected_z2(pulsed_fraction, source_rate, background_rate, exposure_s, harmonics=2):
    # E[Z^2_n] = 2n + (N/2) sum_k a_k^2 for a profile 1 + sum a_k cos(2 pi k phi) (Buccheri et al. 1983,
    # A&A 128, 245; leading order in N); background dilutes a_1 = pulsed fraction by S / (S + B)
    a = pulsed_fraction * source_rate / (source_rate + background_rate)
    n_photons = (source_rate + background_rate) * exposure_s
    return 2 * harmonics + 0.5 * n_photons * a**2


def _gaussian_sigma(z2, harmonics=2):
    # Z^2_n of pure noise is chi^2 with 2n dof (Buccheri et al. 1983); Gaussian equivalent from scipy
    from scipy import stats

    return stats.norm.isf(stats.chi2.sf(z2, 2 * harmonics))


def _photon_scenario(exposure_s, s_rate=0.05, b_rate=1.0, pf=0.1):
    return _scenario(toa_error=None, exposure=f"{exposure_s} s", source_rate=s_rate, background_rate=b_rate,
                     pulsed_fraction=pf)


def test_expected_z2_and_detection_sigma_in_forecast_json():
    ph = forecast(_photon_scenario(2e4, s_rate=0.5, b_rate=0.1, pf=0.2)).to_dict()["photon_statistics"]
    z2 = _buccheri_expected_z2(0.2, 0.5, 0.1, 2e4)
    assert ph["harmonics"] == 2
    assert ph["expected_z2"] == pytest.approx(z2, rel=1e-9)
    assert ph["detection_sigma_per_visit"] == pytest.approx(_gaussian_sigma(z2), rel=1e-6)


def test_undetectable_pulse_is_reported():
    # exposure at which the expected Z^2_2 reaches 3 sigma (the threshold, common practice, no source):
    # z = chi2.isf(norm.sf(3), 4), N = 2 (z - 4) / a_diluted^2 photons (Buccheri et al. 1983 expectation)
    from scipy import stats

    s_rate, b_rate, pf = 0.05, 1.0, 0.1
    z_needed = stats.chi2.isf(stats.norm.sf(3.0), 4)
    a = pf * s_rate / (s_rate + b_rate)
    t_needed = 2 * (z_needed - 4) / a**2 / (s_rate + b_rate)
    faint = forecast(_photon_scenario(round(0.8 * t_needed)))
    assert faint.photon["detectable"] is False
    assert faint.photon["detection_sigma_per_visit"] == pytest.approx(
        _gaussian_sigma(_buccheri_expected_z2(pf, s_rate, b_rate, round(0.8 * t_needed))), rel=1e-6)
    assert any("no TOA exists" in w for w in faint.warnings)
    bright = forecast(_photon_scenario(round(1.25 * t_needed)))
    assert bright.photon["detectable"] is True
    assert not any("no TOA exists" in w for w in bright.warnings)


@pytest.mark.parametrize("sigma_p, at_risk", [(3e-9, True), (1e-10, False)])
def test_phase_connection_risk(sigma_p, at_risk):
    # phase error over the longest gap dt from the a-priori spin errors (Lorimer & Kramer 2005, sec. 8.4:
    # f = 1/P so sigma_f = sigma_P / P^2, sigma_fdot ~ sigma_Pdot / P^2):
    # sqrt((sigma_f dt)^2 + (sigma_fdot dt^2 / 2)^2 + 2 (sigma_TOA / P)^2) cycles, at risk above 0.1 cycle
    # (common practice, no source).  Half-yearly visits, P = 0.27 s, 30 us TOAs.
    p, sigma_pdot, toa = 0.27, 1e-17, 30e-6
    res = forecast(_scenario(star={"spin_period_error": sigma_p, "spin_period_derivative_error": sigma_pdot},
                             visits_per_year=2))
    pc = res.phase_connection
    dt = pc["max_gap_days"] * 86400.0
    assert pc["max_gap_days"] == pytest.approx(365.25 / 2, rel=0.05)
    expected = np.sqrt((sigma_p / p**2 * dt) ** 2 + (sigma_pdot / p**2 * dt**2 / 2) ** 2 + 2 * (toa / p) ** 2)
    assert pc["phase_error_cycles"] == pytest.approx(expected, rel=1e-9)
    assert bool(expected > 0.1) is at_risk  # the two cases (0.65 and 0.022 cycles) straddle the limit
    assert pc["at_risk"] is at_risk
    assert any("phase connection at risk" in w for w in res.warnings) is at_risk


def test_prior_reduces_errors():
    s = _scenario(prior_pm_ra_cosdec=30.0, prior_pm_ra_cosdec_error=0.1)
    d = forecast(s).to_dict()
    assert d["sigma_with_prior"]["pm_ra_cosdec_masyr"] < min(0.1, d["sigma"]["pm_ra_cosdec_masyr"])


def test_products_written(tmp_path):
    res = forecast(_scenario())
    paths = res.write_products(tmp_path)
    assert {p.name for p in paths} == {"forecast_sweep.ecsv", "forecast_plan.ecsv", "forecast_baseline.png",
                                       "forecast_plan.png"}
    assert all(p.stat().st_size > 0 for p in paths)
    write_json(tmp_path / "f.json", res.to_dict())


@pytest.mark.parametrize("camp,field", [
    ({"pulsed_fraction": 1.3}, "pulsed_fraction"),
    ({"pulsed_fraction": 0.0}, "pulsed_fraction"),
    ({"source_rate": 0.0}, "source_rate"),
    ({"source_rate": -1.0}, "source_rate"),
    ({"baseline": 0.1}, "baseline"),
])
def test_bad_campaign_input(camp, field):
    base = {"toa_error": None, "exposure": "20 ks", "source_rate": 1.0, "pulsed_fraction": 0.2}
    base.update(camp)
    with pytest.raises((InputError, ScenarioError), match=field):
        forecast(_scenario(**base))


def test_too_few_visits():
    with pytest.raises(InputError, match="visits"):
        forecast(_scenario(baseline=1, visits_per_year=4))


def test_forecast_from_existing_toa_table(tmp_path):
    # a scenario that only names a TOA table is forecast on that table's epochs and errors
    from kinage.timing import simulate_toas

    planned = _scenario(sun_avoidance=0)
    path = simulate_toas(planned, rng=2).write(tmp_path / "t.ecsv")
    star = {"ra": 53.2, "dec": -12.5, "distance": "300 pc", "spin_period": 0.27, "pm_ra_cosdec": 30.0,
            "pm_dec": -20.0}
    from_table = forecast(scenario_from_dict({"star": star, "campaign": {"toas": str(path), "max_baseline": 8}}))
    direct = forecast(planned)
    assert from_table.plan.n_visits == direct.plan.n_visits
    assert np.allclose(from_table.solution.sigma, direct.solution.sigma, rtol=1e-3)
