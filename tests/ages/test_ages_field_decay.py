"""Field-decay ages: closed forms against numerical integrals and published limits."""

import numpy as np
import pytest
from scipy.integrate import quad

from kinage.ages.field_decay import (exponential_characteristic_age, exponential_decay_timescale, exponential_field,
                                     ohm_hall_characteristic_age, ohm_hall_field, ohm_hall_timescale,
                                     ohm_hall_true_age)


def _numerical_tau_c(field, t):
    # tau_c = int_0^t B^2 dt' / B(t)^2 for P0 << P (P Pdot proportional to B^2; Lorimer & Kramer 2005, sec. 3.1)
    return quad(lambda x: field(x) ** 2, 0.0, t, epsabs=0, epsrel=1e-11, limit=200)[0] / field(t) ** 2


@pytest.mark.parametrize("t, tau_d", [(1e4, 1e6), (3e5, 1e6), (1e6, 2e5), (5e5, 5e5)])
def test_exponential_closed_form_matches_integral_of_b_squared(t, tau_d):
    # closed form (tau_d / 2)(exp(2 t / tau_d) - 1) against a numerical integral of B^2 (scipy.quad)
    numeric = _numerical_tau_c(lambda x: exponential_field(x, tau_d), t)
    assert exponential_characteristic_age(t, tau_d) == pytest.approx(numeric, rel=1e-8)


def test_exponential_no_decay_limit():
    # tau_d -> infinity: constant field, tau_c = t (closed-form limit)
    assert exponential_characteristic_age(1e5, np.inf) == 1e5
    assert exponential_characteristic_age(1e5, 1e12) == pytest.approx(1e5, rel=1e-6)


def test_exponential_inversion_round_trip():
    rng = np.random.default_rng(5)
    t = 10 ** rng.uniform(3, 6, 200)
    tau = t * 10 ** rng.uniform(-1.3, 2, 200)
    tc = exponential_characteristic_age(t, tau)
    np.testing.assert_allclose(exponential_decay_timescale(t, tc), tau, rtol=1e-6)


def test_exponential_inversion_has_no_solution_when_kinematic_older():
    # decay only makes a star look older: tau_c <= t has no solution (closed-form property)
    assert np.isnan(exponential_decay_timescale(2e5, 1e5))
    assert np.isnan(exponential_decay_timescale(1e5, 1e5))


@pytest.mark.parametrize("t, to, th", [(1e5, 1e6, 1e5), (3e5, 1e6, 2e5), (2e6, 5e5, 1e4), (1e3, 1e6, 1e7)])
def test_ohm_hall_closed_form_matches_integral(t, to, th):
    # Aguilera, Pons & Miralles 2008 (ApJ 673, L167) B(t), integrated numerically with scipy.quad
    numeric = _numerical_tau_c(lambda x: ohm_hall_field(x, to, th), t)
    assert ohm_hall_characteristic_age(t, to, th) == pytest.approx(numeric, rel=1e-7)


def test_ohm_hall_limits():
    # tau_H -> infinity: pure Ohmic (exponential) decay with tau_O (Aguilera, Pons & Miralles 2008, eq. 1)
    assert ohm_hall_characteristic_age(3e5, 1e6, 1e20) == pytest.approx(exponential_characteristic_age(3e5, 1e6),
                                                                        rel=1e-9)
    # tau_O -> infinity: B = B0 / (1 + t / tau_H), whose integral gives tau_c = t (1 + t / tau_H) (closed form)
    t, th = 2e5, 5e4
    assert ohm_hall_characteristic_age(t, 1e14, th) == pytest.approx(t * (1 + t / th), rel=1e-6)


def test_ohm_hall_inversions_round_trip():
    t, to, th = np.array([1e5, 3e5, 1e6]), 1e6, np.array([3e4, 2e5, 1e6])
    tc = ohm_hall_characteristic_age(t, to, th)
    np.testing.assert_allclose(ohm_hall_timescale(t, tc, ohmic_timescale_yr=to), th, rtol=1e-6)
    np.testing.assert_allclose(ohm_hall_timescale(t, tc, hall_timescale_yr=th), to, rtol=1e-6)
    np.testing.assert_allclose(ohm_hall_true_age(tc, to, th), t, rtol=1e-6)
    # a characteristic age below the pure-Ohmic value cannot be reached by adding Hall decay
    assert np.isnan(ohm_hall_timescale(3e5, 0.9 * exponential_characteristic_age(3e5, to), ohmic_timescale_yr=to))
