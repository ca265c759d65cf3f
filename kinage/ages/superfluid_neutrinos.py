"""Neutrino emission of paired nucleons: reduction factors of modified Urca and bremsstrahlung, pair breaking.

Reduction factors
-----------------
Superfluidity of a nucleon species opens a gap in its spectrum and
suppresses every reaction it takes part in.  For a reaction whose energy
integral is ``J = int dx_nu x_nu^p int prod_j dx_j f(z_j) delta(x_nu - sum_j z_j)``
(``f`` the Fermi function, ``z_j = sign(x_j) sqrt(x_j^2 + v_j^2)`` for a
paired participant with ``v_j = Delta / k_B T``, ``z_j = x_j`` otherwise;
p = 3 for modified Urca with 5 degenerate fermions, p = 4 for nucleon
bremsstrahlung with 4), the reduction factor is R = J(v) / J(0)
(Yakovlev & Levenfish 1995, A&A 297, 717; Yakovlev, Kaminker, Gnedin &
Haensel 2001, Phys. Rep. 354, 1, sec. 3.6).  What matters is how many
participants are paired: with k paired participants of one species and an
isotropic gap (type A), the published fits are (coefficients from memory,
value from memory; the tests check them against J(v)/J(0) computed here by
direct quadrature and against their asymptotes)::

    modified Urca, one paired participant (neutron branch, protons paired; proton branch, neutrons paired):
        R_M1 = (a^7.5 + b^5.5) / 2 exp(3.4370 - sqrt(3.4370^2 + v^2)),
        a = 0.1477 + sqrt(0.8523^2 + (0.1175 v)^2),  b = 0.1477 + sqrt(0.8523^2 + (0.1297 v)^2);
    modified Urca, three paired participants (proton branch, protons paired; neutron branch, neutrons paired):
        R_M3 = a^7 exp(5.339 - sqrt(5.339^2 + 4 v^2)),  a = 0.2414 + sqrt(0.7586^2 + (0.1318 v)^2);
    np bremsstrahlung, one species paired (two paired participants):
        R_B2 = [a exp(1.306 - sqrt(1.306^2 + v^2)) + 1.732 b^7 exp(3.303 - sqrt(3.303^2 + 4 v^2))] / 2.732,
        a = 0.9982 + sqrt(0.0018^2 + (0.3815 v)^2),  b = 0.3949 + sqrt(0.6051^2 + (0.2666 v)^2);
    nn (pp) bremsstrahlung, neutrons (protons) paired (four paired participants):
        R_B4 = [a^2 exp(4.228 - sqrt(4.228^2 + 4 v^2)) + b^7.5 exp(7.762 - sqrt(7.762^2 + 9 v^2))] / 2,
        a = 0.1747 + sqrt(0.8253^2 + (0.07933 v)^2),  b = 0.7333 + sqrt(0.2667^2 + (0.1678 v)^2).

Well below T_c they fall as exp(-v) (R_M1, R_B2) and exp(-2 v) (R_M3, R_B4):
the energy of the cheapest set of quasiparticles that lets the reaction go.
Approximations, stated:

- both species paired: the product of the two one-species factors
  (the common approximation, e.g. Yakovlev et al. 2001, sec. 3.6 and the
  cooling codes that follow it); it over-suppresses where both gaps are
  comparable to k_B T;
- triplet (3P2, m_J = 0) neutrons: the isotropic fits with v the minimum of
  the anisotropic gap over directions, v = Delta_0 / k_B T (:func:`.pairing.gap_v`
  of type 'B'; an approximation, no fit for the anisotropic gap is used).

Pair breaking and formation (PBF)
---------------------------------
Emissivity of one paired species N (Yakovlev, Kaminker & Levenfish 1999,
A&A 343, 650)::

    Q_PBF = 4 G_F^2 m*_N p_F,N / (15 pi^5 hbar^10 c^6) (k_B T)^7 N_nu a_N F(v)
          = 1.170e21 (m*_N / m_N) (p_F,N / m_N c) T9^7 N_nu a_N F(v)  erg cm^-3 s^-1,

with N_nu = 3 neutrino flavours and F the control function of
:func:`.pairing.pbf_control`.  The weak couplings a_N follow Leinson & Perez
2006 (Phys. Lett. B 638, 114) and Page, Lattimer, Prakash & Steiner 2009
(ApJ 707, 1131): conservation of the vector current removes the vector part,
which leaves

- triplet neutrons: a = 2 g_A^2 = 3.18 (g_A = 1.26; the old value
  1 + 2 g_A^2 = 4.17 less its vector part, the ~25 % suppression Leinson &
  Perez quote);
- singlet neutrons and protons: only the axial part, of order (v_F / c)^2:
  a = g_A^2 (v_F / c)^2 (order of magnitude, value from memory; with
  v_F / c ~ 0.1-0.3 this is 1e-2-1e-1 of the triplet coupling, and the
  singlet channels matter little, as Page et al. 2009 conclude).
"""

import numpy as np

from .pairing import pbf_control

__all__ = ["reduction_mu_one", "reduction_mu_three", "reduction_brems_two", "reduction_brems_four",
           "pbf_emissivity", "pbf_coupling", "PBF_NORMALISATION", "G_A", "N_NU"]

#: 4 G_F^2 m_n (m_n c) (k_B 1e9 K)^7 / (15 pi^5 hbar^10 c^6), erg cm^-3 s^-1 (Yakovlev, Kaminker & Levenfish 1999;
#: the tests recompute it from CODATA constants and G_F)
PBF_NORMALISATION = 1.170e21
#: axial coupling of the nucleon (Page et al. 2009 use 1.26; value from memory)
G_A = 1.26
#: neutrino flavours
N_NU = 3


def _s(a, v, k=1.0):
    return np.exp(a - np.sqrt(a * a + (k * v) ** 2))


def _v(v):
    return np.maximum(np.asarray(v, float), 0.0)


def reduction_mu_one(v):
    """Modified Urca with one paired participant (e.g. neutron branch, protons paired); 1 at v = 0."""
    v = _v(v)
    a = 0.1477 + np.sqrt(0.8523**2 + (0.1175 * v) ** 2)
    b = 0.1477 + np.sqrt(0.8523**2 + (0.1297 * v) ** 2)
    return (a**7.5 + b**5.5) / 2 * _s(3.4370, v)


def reduction_mu_three(v):
    """Modified Urca with three paired participants (e.g. proton branch, protons paired); 1 at v = 0."""
    v = _v(v)
    a = 0.2414 + np.sqrt(0.7586**2 + (0.1318 * v) ** 2)
    return a**7 * _s(5.339, v, 2.0)


def reduction_brems_two(v):
    """np bremsstrahlung with one species paired (two paired participants); 1 at v = 0."""
    v = _v(v)
    a = 0.9982 + np.sqrt(0.0018**2 + (0.3815 * v) ** 2)
    b = 0.3949 + np.sqrt(0.6051**2 + (0.2666 * v) ** 2)
    # capped at 1: the fit overshoots the integral by up to ~0.2 % near v = 0.5, where a gap cannot add phase space
    return np.minimum((a * _s(1.306, v) + 1.732 * b**7 * _s(3.303, v, 2.0)) / 2.732, 1.0)


def reduction_brems_four(v):
    """nn (pp) bremsstrahlung with neutrons (protons) paired (four paired participants); 1 at v = 0."""
    v = _v(v)
    a = 0.1747 + np.sqrt(0.8253**2 + (0.07933 * v) ** 2)
    b = 0.7333 + np.sqrt(0.2667**2 + (0.1678 * v) ** 2)
    return 0.5 * (a * a * _s(4.228, v, 2.0) + b**7.5 * _s(7.762, v, 3.0))


def pbf_coupling(channel, v_fermi_c=0.0):
    """Weak coupling a_N of pair breaking and formation (module docstring).

    Parameters
    ----------
    channel : {'singlet', 'triplet'}
    v_fermi_c : float or ndarray
        Fermi velocity over c of the paired species (used by the singlet channel).
    """
    if channel == "triplet":
        return 2.0 * G_A**2 + 0.0 * np.asarray(v_fermi_c, float)
    if channel == "singlet":
        return G_A**2 * np.asarray(v_fermi_c, float) ** 2
    raise ValueError(f"channel must be 'singlet' or 'triplet', got {channel!r}")


def pbf_emissivity(t9, v, m_eff, p_fermi_mc, channel):
    """Pair breaking and formation emissivity of one paired species, erg cm^-3 s^-1.

    Parameters
    ----------
    t9 : float or ndarray
        Local temperature, 1e9 K.
    v : float or ndarray
        Dimensionless gap (:func:`.pairing.gap_v`); 0 for unpaired matter.
    m_eff : float or ndarray
        Effective mass in units of the bare nucleon mass.
    p_fermi_mc : float or ndarray
        Fermi momentum over m_N c.
    channel : {'singlet', 'triplet'}
        Singlet (isotropic gap, control function of type A) or triplet
        (3P2 m_J = 0, type B).
    """
    kind = "B" if channel == "triplet" else "A"
    v_fermi = np.asarray(p_fermi_mc, float) / np.maximum(np.asarray(m_eff, float), 1e-30)
    a = pbf_coupling(channel, v_fermi)
    return PBF_NORMALISATION * m_eff * p_fermi_mc * np.asarray(t9, float) ** 7 * N_NU * a * pbf_control(v, kind)
