"""Cooling curves and cooling ages against published cooling behaviour."""

import astropy.units as u
import numpy as np
import pytest

from kinage.ages.cooling import cooling_curve, field_decay_heating
from kinage.ages.cooling_age import cooling_age
from kinage.errors import InputError, ModelRangeError


def test_slow_cooling_through_the_transition_matches_an_independent_ode_solution():
    # The default model (modified Urca, no pairing) is the isothermal-core equation
    #   C0 T9 dT/dt = -L0 T9^8 - L_gamma(T),  T9 = T / 1e9 K
    # (Yakovlev & Pethick 2004, ARA&A 42, 169, sec. 4; C0 = 1e39 erg/K, L0 = 1e40 erg/s, values from memory),
    # with L_gamma = 4 pi R^2 red^2 sigma Ts^4 and the envelope Ts = 0.87e6 K g14^(1/4) (Tb / 1e8 K)^0.55,
    # Tb = T / red (Gudmundsson, Pethick & Epstein 1983, ApJ 272, 286).  Solved here with scipy's solve_ivp
    # (Radau) from the neutrino-era closed form at 10 yr, with constants from astropy: through the transition
    # from neutrino to photon cooling (1e4 - 3e5 yr) the redshifted temperatures agree to 0.2 %.
    import astropy.constants as const
    from scipy.integrate import solve_ivp

    c0, l0, year = 1.0e39, 1.0e40, 365.25 * 86400.0
    m, r = 1.4 * u.M_sun, 12.0 * u.km
    red = np.sqrt(1 - (2 * const.G * m / const.c**2 / r).decompose().value)
    g14 = (const.G * m / r**2 / red).to_value(u.cm / u.s**2) / 1e14
    area = 4 * np.pi * r.to_value(u.cm) ** 2 * red**2 * const.sigma_sb.cgs.value

    def ts_of(temp):
        return 0.87e6 * g14**0.25 * (temp / red / 1e8) ** 0.55

    def rhs(t, y):
        temp = y[0]
        loss = l0 * (temp / 1e9) ** 8 + area * ts_of(temp) ** 4
        return [-loss / (c0 * temp / 1e9) * year]

    t0, ages = 10.0, np.array([1e4, 3e4, 1e5, 3e5])
    start = 1e9 * (1e9 * c0 / (6 * l0 * t0 * year)) ** (1 / 6)
    sol = solve_ivp(rhs, (t0, ages[-1]), [start], method="Radau", t_eval=ages, rtol=1e-10, atol=1.0)
    expected = red * ts_of(sol.y[0])
    c = cooling_curve(1.4, 12.0, "gpe83", ages)
    np.testing.assert_allclose(c.T_inf_K, expected, rtol=2e-3)
    assert np.log10(expected[0]) > 6.0 > np.log10(expected[-1])  # the test spans the transition


def test_neutrino_era_then_photon_era():
    # neutrino cooling dominates young stars, photon cooling takes over near 1e5 yr
    # (Yakovlev & Pethick 2004, ARA&A 42, 169, sec. 4)
    c = cooling_curve(1.4, 12.0, "iron")
    ratio = c.L_nu_erg_s / c.L_inf_erg_s
    assert ratio[np.argmin(np.abs(c.t_yr - 1e3))] > 10
    assert ratio[np.argmin(np.abs(c.t_yr - 1e6))] < 0.1
    crossing = c.t_yr[np.nonzero(ratio < 1)[0][0]]
    assert 2e4 < crossing < 5e5


def test_neutrino_era_slope_matches_analytic_solution():
    # with C ~ T and L_MU ~ T^8 and photon losses negligible, T ~ t^(-1/6)
    # (Yakovlev & Pethick 2004, eq. for slow cooling; closed-form solution of C dT/dt = -L_nu)
    c = cooling_curve(1.4, 12.0, "iron", [200.0, 2000.0])
    slope = np.diff(np.log(c.T_core_K))[0] / np.log(10.0)
    assert slope == pytest.approx(-1.0 / 6.0, abs=0.01)


def test_accreted_envelope_hotter_early_colder_late():
    # Potekhin, Chabrier & Yakovlev 1997 abstract: accreted envelopes give higher Teff in the neutrino
    # cooling stage and lower Teff in the subsequent photon stage
    fe = cooling_curve(1.4, 12.0, "iron", [1e3, 3e5])
    acc = cooling_curve(1.4, 12.0, "accreted", [1e3, 3e5])
    assert acc.T_inf_K[0] > 1.3 * fe.T_inf_K[0]
    assert acc.T_inf_K[1] < fe.T_inf_K[1]


def test_direct_urca_cools_a_heavy_star_much_faster():
    # fast (direct Urca) cooling L ~ 1e46 T9^6 makes heavy stars far colder at 1e3 yr
    # (Yakovlev & Pethick 2004, sec. 4)
    slow = cooling_curve(1.6, 12.0, "iron", [1e3], model="minimal")
    fast = cooling_curve(1.6, 12.0, "iron", [1e3], model="direct-urca")
    light = cooling_curve(1.2, 12.0, "iron", [1e3], model="direct-urca")
    assert fast.T_inf_K[0] < 0.5 * slow.T_inf_K[0]
    assert light.T_inf_K[0] == pytest.approx(cooling_curve(1.2, 12.0, "iron", [1e3]).T_inf_K[0], rel=1e-6)


def test_photon_luminosity_is_redshifted_blackbody():
    # L_inf = 4 pi R_inf^2 sigma T_inf^4 with R_inf = R / sqrt(1 - rg/R) (Yakovlev & Pethick 2004; astropy sigma_sb)
    from astropy.constants import sigma_sb

    from kinage.ages.envelope import star_structure

    c = cooling_curve(1.4, 12.0, "iron", [1e4])
    st = star_structure(1.4, 12.0)
    r_inf = 12.0 * u.km / st.redshift_factor
    expected = (4 * np.pi * r_inf**2 * sigma_sb * (c.T_inf_K[0] * u.K) ** 4).to_value(u.erg / u.s)
    assert c.L_inf_erg_s[0] == pytest.approx(expected, rel=1e-6)


def test_field_decay_heating_keeps_old_star_warmer():
    # energy balance C dT/dt = -L_nu - L_gamma + H (Yakovlev & Pethick 2004): a magnetar-strength decaying field
    heat = field_decay_heating(1e14, 1e6, radius_km=12.0)
    cold = cooling_curve(1.4, 12.0, "iron", [1e6])
    warm = cooling_curve(1.4, 12.0, "iron", [1e6], heating=heat)
    assert warm.T_inf_K[0] > 1.1 * cold.T_inf_K[0]


def test_quantities_and_range_errors():
    c = cooling_curve(1.4 * u.M_sun, 12 * u.km, "iron", [1e4] * u.yr)
    assert np.isfinite(c.T_inf_K[0])
    with pytest.raises(ModelRangeError, match="times_yr"):
        cooling_curve(1.4, 12.0, "iron", [10.0])
    with pytest.raises(InputError, match="radius"):
        cooling_curve(1.4, 4.0, "iron")


def test_cooling_age_round_trip_exact():
    # a temperature read off a curve returns that curve's age (interpolation of the precomputed curve)
    t_true = 3.0e4
    temp = cooling_curve(1.4, 12.0, "iron", [t_true]).T_inf_K[0]
    r = cooling_age(temp, None, masses=(1.4,), envelopes=("iron",))
    assert r.pooled["median"] == pytest.approx(t_true, rel=0.01)


def test_cooling_age_monte_carlo_and_range():
    temp = cooling_curve(1.4, 12.0, "iron", [5e4]).T_inf_K[0]
    r = cooling_age(temp, 0.03 * temp, rng=np.random.default_rng(3), samples=3000)
    per = {(m["envelope"], m["mass_msun"]): m for m in r.per_model}
    assert per[("iron", 1.4)]["median"] == pytest.approx(5e4, rel=0.05)
    assert per[("iron", 1.4)]["lo68"] < 5e4 < per[("iron", 1.4)]["hi68"]
    assert r.range_yr["lo68"] <= min(m["lo68"] for m in r.per_model)
    assert r.range_yr["median_min"] <= r.pooled["median"] <= r.range_yr["median_max"]
    # luminosity route gives the same age at the same point
    lum = cooling_curve(1.4, 12.0, "iron", [5e4]).L_inf_erg_s[0]
    rl = cooling_age(luminosity_erg_s=lum, masses=(1.4,), envelopes=("iron",))
    assert rl.pooled["median"] == pytest.approx(5e4, rel=0.01)


def test_cooling_age_outside_model_range():
    with pytest.raises(ModelRangeError, match=r"\[star\] temperature"):
        cooling_age(2e7, 1e5)
    with pytest.raises(InputError):
        cooling_age()
