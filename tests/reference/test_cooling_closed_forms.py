"""Cooling curves pinned to the closed-form solutions of C dT/dt = -L in each era.

The isothermal-core equation C(T) dT/dt = -L_nu - L_gamma (Yakovlev & Pethick 2004, ARA&A 42, 169, sec. 4)
has closed-form solutions when one loss dominates.  The coefficients are the published ones
(C = C0 T9 with C0 = 1e39 erg/K, L_MU = L0 T9^8 with L0 = 1e40 erg/s: Yakovlev & Pethick 2004; values from
memory), typed here and NOT read from kinage's parameter set, so a wrong constant in the code fails.
The default cooling model is used through its values (whatever it is named).
"""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest

from kinage.ages.cooling import cooling_curve

C0_ERG_K = 1.0e39  # Yakovlev & Pethick 2004 (memory): C = C0 T9
L0_ERG_S = 1.0e40  # Yakovlev & Pethick 2004 (memory): L_MU = L0 T9^8
YEAR_S = 365.25 * 86400.0
MASS, RADIUS = 1.4, 12.0  # the reference star of the published coefficients


def _structure(mass_msun, radius_km):
    """(redshift factor sqrt(1 - rg/R), g14) from astropy constants (GR surface gravity, e.g. Yakovlev & Pethick)."""
    m, r = mass_msun * u.M_sun, radius_km * u.km
    red = np.sqrt(1 - (2 * const.G * m / const.c**2 / r).decompose().value)
    g14 = (const.G * m / r**2 / red).to_value(u.cm / u.s**2) / 1e14
    return red, g14


@pytest.mark.parametrize("t_yr", [300.0, 1000.0, 3000.0])
def test_neutrino_era_closed_form(t_yr):
    # C0 T9 dT/dt = -L0 T9^8 with T = 1e9 T9 K integrates (from a hot start) to
    # T9 = (1e9 C0 / (6 L0 t))^(1/6)  (C0 in erg/K, hence the 1e9: heat capacity per unit T9).
    # Photon losses are <= 3 % of the neutrino losses here, so the closed form holds to ~1 %.
    c = cooling_curve(MASS, RADIUS, "iron", [t_yr])
    expected = 1e9 * (1e9 * C0_ERG_K / (6 * L0_ERG_S * t_yr * YEAR_S)) ** (1 / 6)
    assert c.T_core_K[0] == pytest.approx(expected, rel=0.02)
    # the neutrino luminosity reported is L0 T9^8 at that temperature
    assert c.L_nu_erg_s[0] == pytest.approx(L0_ERG_S * (c.T_core_K[0] / 1e9) ** 8, rel=1e-6)


def test_photon_era_closed_form():
    # Photon era, GPE83 envelope Ts = 0.87e6 K g14^(1/4) (Tb / 1e8 K)^0.55 (Gudmundsson, Pethick & Epstein 1983,
    # ApJ 272, 286), Tb = T / red, L_gamma = 4 pi R^2 red^2 sigma Ts^4 = A T^2.2 (redshifted, Yakovlev & Pethick
    # 2004).  C0 (T / 1e9) dT/dt = -A T^2.2 gives dT/dt = -k T^1.2 with k = 1e9 A / C0, so
    # T^-0.2 = T1^-0.2 + 0.2 k (t - t1).  Neutrinos are < 1e-6 of the losses after 1e6 yr.
    red, g14 = _structure(MASS, RADIUS)
    sigma = const.sigma_sb.cgs.value
    area = 4 * np.pi * (RADIUS * 1e5) ** 2 * red**2 * sigma
    a_coef = area * (0.87e6 * g14**0.25) ** 4 * (1 / (red * 1e8)) ** 2.2
    k = 1e9 * a_coef / C0_ERG_K
    t1, t2 = 1.0e6, np.array([2.0e6, 3.0e6])
    c = cooling_curve(MASS, RADIUS, "gpe83", np.concatenate([[t1], t2]))
    assert np.all(c.L_nu_erg_s[1:] < 1e-4 * c.L_inf_erg_s[1:])
    temp1 = c.T_core_K[0]
    expected = (temp1**-0.2 + 0.2 * k * (t2 - t1) * YEAR_S) ** -5
    np.testing.assert_allclose(c.T_core_K[1:], expected, rtol=0.02)
    # and the observed temperature is the envelope's Ts redshifted: T_inf = red Ts(T / red)
    ts = 0.87e6 * g14**0.25 * (c.T_core_K / red / 1e8) ** 0.55
    np.testing.assert_allclose(c.T_inf_K, red * ts, rtol=1e-6)

