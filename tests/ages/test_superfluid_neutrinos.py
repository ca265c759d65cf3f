"""Reduction factors and pair-breaking emissivity of paired nucleons against their defining integrals."""

from functools import lru_cache

import numpy as np
import pytest

from kinage.ages.pairing import gap_v
from kinage.ages.superfluid_neutrinos import (PBF_NORMALISATION, pbf_coupling, pbf_emissivity, reduction_brems_four,
                                              reduction_brems_two, reduction_mu_one, reduction_mu_three)

_H, _L = 0.02, 34.0


def _measure(v):
    """The distribution of the energy z of one fermion (gap v) weighted by f(z) dx, binned at width _H."""
    edges = np.arange(-_L, _L + _H / 2, _H)
    x = np.arange(-_L, _L, _H / 20) + _H / 40
    z = np.sign(x) * np.sqrt(x**2 + v**2) if v > 0 else x
    g, _ = np.histogram(z, edges, weights=_H / 20 / (np.exp(np.clip(z, -700, 700)) + 1))
    return g


@lru_cache(maxsize=None)
def _energy_integral(gaps, power):
    """J = int_0^inf dx x^power int prod_j dx_j f(z_j) delta(x - sum_j z_j), by convolving the binned measures
    (the defining integral of Yakovlev & Levenfish 1995, A&A 297, 717; Yakovlev et al. 2001, Phys. Rep. 354, 1)."""
    g = None
    for v in gaps:
        m = _measure(v)
        g = m if g is None else np.convolve(g, m)
    s = -_L * len(gaps) + _H * (np.arange(g.size) + 0.5 * len(gaps))
    ok = s > 0
    return float(np.sum(s[ok] ** power * g[ok]))


def test_energy_integrals_reproduce_the_published_constants():
    # unpaired matter: modified Urca 11513 pi^8 / 120960, direct Urca 457 pi^6 / 5040 (Yakovlev et al. 2001,
    # Phys. Rep. 354, 1, sec. 3; Friman & Maxwell 1979), bremsstrahlung 164 pi^8 / 4725 for the pair integral
    # with the 1/5 of its omega^4 weight (same source; values from memory): validates the quadrature below
    assert _energy_integral((0.0,) * 5, 3) == pytest.approx(11513 * np.pi**8 / 120960, rel=1e-4)
    assert _energy_integral((0.0,) * 3, 3) == pytest.approx(457 * np.pi**6 / 5040, rel=1e-4)
    assert _energy_integral((0.0,) * 4, 4) / 5 == pytest.approx(164 * np.pi**8 / 4725, rel=1e-4)


@pytest.mark.parametrize("v", [0.5, 1.0, 2.0, 4.0, 7.0])
def test_reduction_fits_follow_the_defining_integral(v):
    # R = J(v) / J(0) with the number of paired participants of each reaction (module docstring); the published
    # fits (Yakovlev & Levenfish 1995; Yakovlev et al. 2001, sec. 3.6; coefficients from memory) hold to a few
    # per cent of the integral here, ~5 % for the four-participant bremsstrahlung fit at v = 7
    mu, br = _energy_integral((0.0,) * 5, 3), _energy_integral((0.0,) * 4, 4)
    assert reduction_mu_one(v) == pytest.approx(_energy_integral((v,) + (0.0,) * 4, 3) / mu, rel=0.02)
    assert reduction_mu_three(v) == pytest.approx(_energy_integral((v,) * 3 + (0.0,) * 2, 3) / mu, rel=0.04)
    assert reduction_brems_two(v) == pytest.approx(_energy_integral((v,) * 2 + (0.0,) * 2, 4) / br, rel=0.045)
    assert reduction_brems_four(v) == pytest.approx(_energy_integral((v,) * 4, 4) / br, rel=0.06)


def test_reduction_factors_are_one_above_tc_and_fall_with_the_published_exponents():
    # above T_c the gap vanishes (v = 0) and every factor is 1; far below T_c they fall as exp(-v) with one or two
    # paired participants and exp(-2 v) with three or four (Yakovlev & Levenfish 1995; Yakovlev et al. 2001,
    # sec. 3.6: the energy of the cheapest quasiparticles that let the reaction go)
    v0 = gap_v(np.array([1.0, 1.3]), "A")
    for r in (reduction_mu_one, reduction_mu_three, reduction_brems_two, reduction_brems_four):
        np.testing.assert_allclose(r(v0), 1.0, rtol=1e-12)
        assert np.all(np.diff(r(np.linspace(0, 20, 41))) <= 0) and np.all(r(np.linspace(1, 20, 39)) < 1)
    v = np.linspace(100.0, 150.0, 11)  # log R = c + p log v - k v: the exponent k apart from the power-law prefactor
    design = np.column_stack([np.ones_like(v), np.log(v), -v])
    for r, slope in ((reduction_mu_one, -1), (reduction_brems_two, -1), (reduction_mu_three, -2),
                     (reduction_brems_four, -2)):
        assert np.linalg.lstsq(design, np.log(r(v)), rcond=None)[0][2] == pytest.approx(-slope, abs=0.01)


def test_pbf_normalisation_is_the_weak_interaction_constant():
    # 4 G_F^2 m_n p_F (k_B T)^7 / (15 pi^5 hbar^10 c^6) at p_F = m_n c, T = 1e9 K is the 1.170e21 erg cm^-3 s^-1 of
    # Yakovlev, Kaminker & Levenfish 1999 (A&A 343, 650; value from memory); constants CODATA 2018, G_F from the
    # Particle Data Group (1.1663787e-5 GeV^-2)
    hbar, c, kb, mn = 1.054571817e-27, 2.99792458e10, 1.380649e-16, 1.67492749804e-24
    gf = 1.1663787e-5 / 1.602176634e-3**2 * (hbar * c) ** 3  # erg cm^3
    assert 4 * gf**2 * mn * (mn * c) * (kb * 1e9) ** 7 / (15 * np.pi**5 * hbar**10 * c**6) == pytest.approx(
        PBF_NORMALISATION, rel=2e-3)


def test_pbf_emissivity_follows_its_definition_and_the_vector_current_suppression():
    # Q = 1.170e21 (m*/m) (p_F / m c) T9^7 N_nu a F(v) with F_A(v) = v^2 int z^4 / (e^z + 1)^2 dx (Yakovlev,
    # Kaminker & Levenfish 1999); after the vector current is removed the triplet coupling is 2 g_A^2 (Leinson &
    # Perez 2006: ~25 % below the older 1 + 2 g_A^2 = 4.17) and the singlet one is of order v_F^2 (Page et al. 2009,
    # ApJ 707, 1131); no emission from unpaired matter (v = 0)
    from scipy.integrate import quad

    v, t9, m_eff, pf = 2.0, 0.3, 0.8, 0.35
    fa = v**2 * quad(lambda x: np.sqrt(x * x + v * v) ** 4 / (np.exp(np.sqrt(x * x + v * v)) + 1) ** 2, 0, 60)[0]
    q = pbf_emissivity(t9, v, m_eff, pf, "singlet")
    assert q == pytest.approx(1.170e21 * m_eff * pf * t9**7 * 3 * 1.26**2 * (pf / m_eff) ** 2 * fa, rel=0.015)
    assert pbf_coupling("triplet") / (1 + 2 * 1.26**2) == pytest.approx(0.76, abs=0.01)
    assert pbf_coupling("singlet", 0.3) < 0.1 * pbf_coupling("triplet")
    assert pbf_emissivity(t9, 0.0, m_eff, pf, "triplet") == 0.0
    # the triplet control function is the angle average of the singlet one over the gap 1 + 3 cos^2 (m_J = 0)
    mu = np.linspace(0, 1, 2001)
    fb = np.trapezoid([v**2 * (1 + 3 * m * m) * quad(lambda x: np.sqrt(x * x + v * v * (1 + 3 * m * m)) ** 4
                       / (np.exp(np.sqrt(x * x + v * v * (1 + 3 * m * m))) + 1) ** 2, 0, 60)[0] for m in mu[::100]],
                      mu[::100])
    qb = pbf_emissivity(t9, v, m_eff, pf, "triplet")
    assert qb == pytest.approx(1.170e21 * m_eff * pf * t9**7 * 3 * 2 * 1.26**2 * fb, rel=0.02)


@pytest.mark.parametrize("v", [1.0, 2.0, 4.0])
def test_product_of_one_species_factors_approximates_both_species_paired(v):
    # neutron branch of modified Urca with neutrons (3 participants) and protons (1) paired with equal gaps: the
    # product of the one-species factors, the common approximation (Yakovlev et al. 2001, sec. 3.6), against the
    # defining integral with all four nucleons gapped; within 15 % here (it drifts as the suppression deepens)
    joint = _energy_integral((v,) * 4 + (0.0,), 3) / _energy_integral((0.0,) * 5, 3)
    assert reduction_mu_three(v) * reduction_mu_one(v) == pytest.approx(joint, rel=0.15)
