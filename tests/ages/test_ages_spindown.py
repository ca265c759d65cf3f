"""Spin-down ages checked against published worked examples and closed forms."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest

from kinage.ages.spindown import (braking_index_age, characteristic_age, dipole_field, implied_initial_period,
                                  max_braking_index_age, shklovskii_pdot, spin_down_luminosity, transverse_velocity)

# Crab pulsar near epoch 1991: P = 33.39 ms, Pdot = 4.21e-13, n = 2.51, born 1054 AD
# (Lyne, Pritchard & Graham-Smith 1993, MNRAS 265, 1003).
P_CRAB, PDOT_CRAB, N_CRAB = 0.03339, 4.21e-13, 2.51
AGE_CRAB = 1991 - 1054


def test_crab_characteristic_age():
    # Lyne, Pritchard & Graham-Smith 1993 / Lorimer & Kramer 2005 eq. 3.14: tau_c ~ 1,260 yr
    assert characteristic_age(P_CRAB, PDOT_CRAB) == pytest.approx(1260, rel=0.01)


def test_crab_max_age_for_measured_braking_index():
    # t_max = P / ((n-1) Pdot) ~ 1,670 yr for n = 2.51 (Lorimer & Kramer 2005, eq. 3.13 with P0 -> 0)
    assert max_braking_index_age(P_CRAB, PDOT_CRAB, N_CRAB) == pytest.approx(1670, rel=0.01)


def test_crab_implied_initial_period():
    # the known age and n = 2.51 imply P0 ~ 19 ms (Lyne, Pritchard & Graham-Smith 1993)
    p0 = implied_initial_period(P_CRAB, PDOT_CRAB, AGE_CRAB, N_CRAB)
    assert p0 == pytest.approx(0.019, abs=0.001)


def test_crab_field_and_spin_down_luminosity():
    # Crab: B ~ 3.8e12 G and Edot ~ 4.5e38 erg/s (Lorimer & Kramer 2005, eqs. 3.6 and 3.15; value from memory)
    assert dipole_field(P_CRAB, PDOT_CRAB) == pytest.approx(3.8e12, rel=0.02)
    assert spin_down_luminosity(P_CRAB, PDOT_CRAB, 1e45) == pytest.approx(4.5e38, rel=0.02)


def test_spin_down_luminosity_matches_astropy_units():
    # Edot = I Omega Omegadot with Omega = 2 pi / P (Lorimer & Kramer 2005, eq. 3.6), computed with astropy units
    p, pdot, inertia = 0.2 * u.s, 3e-15, 1.2e45 * u.g * u.cm**2
    omega = 2 * np.pi / p
    omegadot = 2 * np.pi * pdot / p**2
    expected = (inertia * omega * omegadot).to_value(u.erg / u.s)
    assert spin_down_luminosity(0.2, 3e-15, 1.2e45) == pytest.approx(expected, rel=1e-10)


@pytest.mark.parametrize("n", [2.0, 2.5, 3.0, 3.5])
@pytest.mark.parametrize("p0_frac", [0.0, 0.3, 0.8])
def test_braking_index_age_round_trip(n, p0_frac):
    # closed-form inverse (Lorimer & Kramer 2005, eq. 3.13): age(P0) then P0(age) returns P0
    p, pdot = 0.5, 1e-14
    age = braking_index_age(p, pdot, n, p0_frac * p)
    assert implied_initial_period(p, pdot, age, n) == pytest.approx(p0_frac * p, abs=1e-9)


def test_n3_and_small_p0_give_characteristic_age():
    # Lorimer & Kramer 2005, eq. 3.13 -> 3.14 for n = 3, P0 << P
    assert braking_index_age(1.0, 1e-15, 3.0, 1e-4) == pytest.approx(characteristic_age(1.0, 1e-15), rel=1e-7)


def test_no_solution_and_spin_up_give_nan():
    tc = characteristic_age(1.0, 1e-15)
    assert np.isnan(implied_initial_period(1.0, 1e-15, 1.01 * tc, 3.0))  # older than the maximum age
    assert np.isnan(characteristic_age(1.0, -1e-15))
    assert np.isnan(braking_index_age(1.0, 1e-15, 1.0, 0.1))  # n <= 1
    assert np.isnan(braking_index_age(1.0, 1e-15, 3.0, 1.5))  # P0 >= P


def test_shklovskii_against_astropy():
    # Pdot_shk = P v_t^2 / (c d) (Shklovskii 1970), v_t = mu d, evaluated with astropy units and constants
    p, mu, d = 0.005 * u.s, 120 * u.mas / u.yr, 0.4 * u.kpc
    vt = (mu * d).to(u.km / u.s, equivalencies=u.dimensionless_angles())
    expected = (p * vt**2 / (const.c * d)).to_value(u.dimensionless_unscaled)
    assert shklovskii_pdot(0.005, 120.0, 0.4) == pytest.approx(expected, rel=1e-6, abs=0)  # abs=0: ~1e-20
    assert transverse_velocity(120.0, 0.4) == pytest.approx(vt.value, rel=1e-6)
    # and the common numerical form 2.43e-21 P[s] mu[mas/yr]^2 d[kpc] (Lorimer & Kramer 2005; value from memory)
    assert shklovskii_pdot(1.0, 1.0, 1.0) == pytest.approx(2.43e-21, rel=0.01, abs=0)
