"""Pairing ingredients against BCS theory and the defining integrals (scipy quadrature)."""

import numpy as np
import pytest
from scipy.integrate import quad

from kinage.ages.pairing import gap_v, heat_capacity_reduction, pbf_control


def test_gap_fits_reach_the_bcs_limits():
    # BCS: Delta(0) = 1.764 k T_c (1S0) and 1.188 k T_c for the 3P2 m_J = 0 gap amplitude; near T_c
    # Delta = 3.06 k T_c sqrt(1 - T/T_c) for 1S0 (Levenfish & Yakovlev 1994; BCS: e.g. Tinkham, Introduction to
    # Superconductivity, ch. 3); no gap above T_c
    tau = 1e-4
    assert gap_v(tau, "A") * tau == pytest.approx(1.764, rel=2e-3)
    assert gap_v(tau, "B") * tau == pytest.approx(1.188, rel=2e-3)
    near = 1 - 1e-6
    assert gap_v(near, "A") / np.sqrt(1 - near) == pytest.approx(3.06, rel=2e-3)
    assert gap_v(np.array([1.0, 1.5]), "A").tolist() == [0.0, 0.0]
    assert np.all(np.diff(gap_v(np.linspace(0.05, 0.999, 50), "B")) < 0)  # the gap grows as T falls


def test_specific_heat_jump_and_low_temperature_law():
    # BCS specific-heat jump C_s/C_n = 1 + 1.43 = 2.43 at T_c (isotropic gap); 2.19 for the 3P2 m_J = 0 gap
    # (Levenfish & Yakovlev 1994, value from memory); far below T_c (isotropic gap)
    # C_s/C_n = (3 sqrt 2 / pi^(3/2)) v^(5/2) exp(-v) = 0.762 v^2.5 e^-v (BCS low-temperature limit, derived from
    # the BCS heat capacity 2 sqrt(2 pi) N(0) k Delta (Delta/kT)^(3/2) e^(-Delta/kT) over (2 pi^2 / 3) N(0) k^2 T)
    tiny = 1e-9
    assert heat_capacity_reduction(tiny, "A") == pytest.approx(2.43, rel=3e-3)
    assert heat_capacity_reduction(tiny, "B") == pytest.approx(2.19, rel=3e-3)
    v = 60.0
    assert heat_capacity_reduction(v, "A") == pytest.approx(3 * np.sqrt(2) / np.pi**1.5 * v**2.5 * np.exp(-v),
                                                            rel=0.05)
    assert heat_capacity_reduction(0.0, "A") == 1.0  # normal matter
    t = np.linspace(0.02, 0.999, 80)
    r = heat_capacity_reduction(gap_v(t, "A"), "A")
    assert np.all(np.diff(r) > 0) and r[0] < 1e-10  # suppressed steeply at low temperature


def _fa_integral(v):
    # Yakovlev, Kaminker & Levenfish 1999 (A&A 343, 650): F_A(v) = v^2 int_0^inf z^4 / (e^z + 1)^2 dx,
    # z = sqrt(x^2 + v^2); evaluated here with scipy quadrature
    f = lambda x: np.hypot(x, v) ** 4 * np.exp(-2 * np.hypot(x, v)) / (1 + np.exp(-np.hypot(x, v))) ** 2  # noqa: E731
    return v * v * quad(f, 0, np.inf, epsabs=0, epsrel=1e-10)[0]


@pytest.mark.parametrize("v", [0.05, 0.5, 1.0, 2.0, 3.0, 5.0, 8.0, 12.0])
def test_pair_breaking_control_functions_match_their_integrals(v):
    # the 1S0 fit follows the integral to ~1 % (the paper's stated accuracy); the 3P2 function is the angle average
    # of the same integral over Delta(theta)^2 = Delta_0^2 (1 + 3 cos^2 theta), here by scipy quadrature
    assert pbf_control(v, "A") == pytest.approx(_fa_integral(v), rel=0.015)
    fb = quad(lambda mu: _fa_integral(v * np.sqrt(1 + 3 * mu * mu)), 0, 1, epsrel=1e-8)[0]
    assert pbf_control(v, "B") == pytest.approx(fb, rel=0.02)


def test_pair_breaking_peaks_below_tc_and_vanishes_above():
    # the emission switches on at T_c, peaks at T ~ 0.8 T_c and dies out exponentially (Yakovlev et al. 1999,
    # fig. 1; value read from the figure from memory: maximum near tau = 0.8-0.9)
    tau = np.linspace(0.05, 0.9999, 400)
    q = tau**7 * pbf_control(gap_v(tau, "A"), "A")  # emissivity ~ T^7 F(v) at fixed T_c
    assert 0.7 < tau[np.argmax(q)] < 0.95
    assert pbf_control(gap_v(1.2, "A"), "A") == 0.0 and pbf_control(0.0, "B") == 0.0


@pytest.mark.parametrize("kind, tol", [("A", 0.01), ("B", 0.025)])
@pytest.mark.parametrize("tau", [0.15, 0.3, 0.5, 0.7, 0.85, 0.95])
def test_heat_capacity_reduction_follows_bcs_theory(tau, kind, tol):
    # BCS heat capacity (Tinkham, Introduction to Superconductivity, eq. 3.50) over the normal (pi^2/3) value:
    # R = (3/pi^2) < int f(1-f) [z^2 - (a/(2 tau)) d(v^2 tau^2)/d tau] dx >, z = sqrt(x^2 + a v^2), f = 1/(e^z + 1),
    # a = 1 for the isotropic 1S0 gap and 1 + 3 cos^2 theta (averaged over angles) for the 3P2 m_J = 0 gap; the gap
    # v(tau) is the fit's, its derivative by finite differences.  The fits agree to 0.6 % (A) and 2 % (B).
    h = 1e-5
    d = ((gap_v(tau + h, kind) * (tau + h)) ** 2 - (gap_v(tau - h, kind) * (tau - h)) ** 2) / (2 * h)
    v = float(gap_v(tau, kind))

    def at_angle(mu):
        a = 1.0 if kind == "A" else 1 + 3 * mu * mu

        def integrand(x):
            z = np.hypot(x, v * np.sqrt(a))
            return np.exp(-z) / (1 + np.exp(-z)) ** 2 * (z * z - a * d / (2 * tau))

        return 3 / np.pi**2 * 2 * quad(integrand, 0, np.inf, epsabs=0, epsrel=1e-10)[0]

    bcs = at_angle(0.0) if kind == "A" else quad(at_angle, 0, 1, epsrel=1e-8)[0]
    assert heat_capacity_reduction(v, kind) == pytest.approx(bcs, rel=tol)
