"""Heat capacity and neutrino luminosity of an unpaired npe core, integrated over a TOV star.

For an isothermal interior after thermal relaxation the redshifted
temperature T~ = T(r) exp(Phi(r)) is uniform (Gnedin, Yakovlev & Potekhin
2001, MNRAS 324, 725), so with the local temperature T = T~ exp(-Phi) the
totals that enter the cooling equation C(T~) dT~/dt = -L_nu^inf - L_gamma^inf are
(e.g. Yakovlev & Pethick 2004, ARA&A 42, 169, eqs. 3-4)::

    C(T~)      = int c_V(T) dV,                 dV = 4 pi r^2 dr / sqrt(1 - 2 G m / r c^2),
    L_nu^inf(T~) = int Q_nu(T) exp(2 Phi) dV.

Unpaired matter gives c_V = c1 T and Q_nu = q1 T9^8, hence C = C0 T~9 and
L_nu^inf = L0 T~9^8 with C0 = 1e9 K int c1 exp(-Phi) dV and
L0 = int q1 exp(-6 Phi) dV: the coefficients the isothermal cooling equation
of :mod:`.cooling` uses, now computed from the star instead of scaled from a
reference star.

Ingredients (core only, rho above the crust-core boundary; the crust holds
~1 % of the heat capacity of a slowly cooling star and is left out):

- heat capacity of each degenerate species i (n, p, e): c_i = m*_i p_F,i k_B^2 T / (3 hbar^3)
  (Fermi-liquid result, e.g. Yakovlev et al. 2001, Phys. Rep. 354, 1, sec. 1;
  equal to (pi^2/2) n k_B (k_B T / eps_F) for a non-relativistic gas);
  electrons with m*_e = sqrt(m_e^2 + p_F,e^2 / c^2);
- modified Urca, neutron and proton branches, and nn, np, pp bremsstrahlung,
  erg cm^-3 s^-1 (Yakovlev et al. 2001, eqs. 140, 142, 165-167, after
  Friman & Maxwell 1979; coefficients from memory, value from memory)::

      Q_Mn = 8.1e21 (m*_n)^3 m*_p (n_p/n0)^(1/3) alpha_n beta_n T9^8,
             alpha_n = 1.76 - 0.63 (n0/n_n)^(2/3), beta_n = 0.68,
      Q_Mp = Q_Mn (m*_p/m*_n)^2 (p_Fe + 3 p_Fp - p_Fn)^2 / (8 p_Fe p_Fp)   (p_Fn < 3 p_Fp + p_Fe),
      Q_nn = 7.4e19 (m*_n)^4 (n_n/n0)^(1/3) 0.59 x 0.56 x 3 T9^8,
      Q_np = 1.5e20 (m*_n m*_p)^2 (n_p/n0)^(1/3) 1.06 x 0.66 x 3 T9^8,
      Q_pp = 7.4e19 (m*_p)^4 (n_p/n0)^(1/3) 0.11 x 0.7 x 3 T9^8,

  with m* in units of the bare nucleon masses and n0 = 0.16 fm^-3;
- effective masses m*/m = 0.8 for both nucleons unless the model says
  otherwise (common practice, no source).

Results are cached per (EOS, mass, effective masses).
"""

from functools import lru_cache

import numpy as np

from .structure import C_CGS, M_U_G, eos_model, proton_fraction, structure_for_mass

__all__ = ["npe_core_coefficients", "fermi_heat_capacity"]

HBAR = 1.054571817e-27  # erg s (CODATA 2018)
K_B = 1.380649e-16  # erg/K
M_E = 9.1093837015e-28  # g
N0_CM3 = 0.16e39


def fermi_heat_capacity(n_cm3, m_eff_g, temperature_k):
    """Heat capacity per volume of a degenerate Fermi gas, m* p_F k_B^2 T / (3 hbar^3), erg cm^-3 K^-1.

    Parameters
    ----------
    n_cm3 : float or ndarray
        Number density (spin 1/2), cm^-3.
    m_eff_g : float or ndarray
        Effective mass at the Fermi surface (p_F / v_F), g.
    temperature_k : float
        Temperature, K.
    """
    pf = HBAR * (3 * np.pi**2 * np.asarray(n_cm3, float)) ** (1 / 3)
    return m_eff_g * pf * K_B**2 * temperature_k / (3 * HBAR**3)


def _emissivity_t9_1(nn, npr, pfn, pfp, pfe, mn, mp):
    """Modified Urca plus nucleon bremsstrahlung at T9 = 1 (module docstring), erg cm^-3 s^-1."""
    alpha_n = 1.76 - 0.63 * (N0_CM3 / nn) ** (2 / 3)
    q_mn = 8.1e21 * mn**3 * mp * (npr / N0_CM3) ** (1 / 3) * alpha_n * 0.68
    open_p = pfn < 3 * pfp + pfe
    q_mp = np.where(open_p, q_mn * (mp / mn) ** 2 * (pfe + 3 * pfp - pfn) ** 2 / (8 * pfe * pfp), 0.0)
    q_nn = 7.4e19 * mn**4 * (nn / N0_CM3) ** (1 / 3) * 0.59 * 0.56 * 3
    q_np = 1.5e20 * (mn * mp) ** 2 * (npr / N0_CM3) ** (1 / 3) * 1.06 * 0.66 * 3
    q_pp = 7.4e19 * mp**4 * (npr / N0_CM3) ** (1 / 3) * 0.11 * 0.7 * 3
    return q_mn + q_mp + q_nn + q_np + q_pp


@lru_cache(maxsize=64)
def _coefficients(eos, mass, m_eff_n, m_eff_p):
    s = structure_for_mass(eos, mass)
    core = s.rho >= eos_model(eos).rho_core
    r, dv, ephi = s.r_cm[core], s.volume_element[core], s.exp_phi[core]
    n = s.rho[core] / M_U_G
    x = proton_fraction(n * 1e-39)
    nn, npr = (1 - x) * n, x * n
    pfn, pfp = (HBAR * (3 * np.pi**2 * k) ** (1 / 3) for k in (nn, npr))
    pfe = pfp  # charge neutrality: n_e = n_p
    m_n, m_p = 1.67492749804e-24, 1.67262192369e-24
    m_e_eff = np.sqrt(M_E**2 + (pfe / C_CGS) ** 2)
    c1 = (fermi_heat_capacity(nn, m_eff_n * m_n, 1.0) + fermi_heat_capacity(npr, m_eff_p * m_p, 1.0)
          + fermi_heat_capacity(npr, m_e_eff, 1.0))  # erg cm^-3 K^-2
    q1 = _emissivity_t9_1(nn, npr, pfn, pfp, pfe, m_eff_n, m_eff_p)
    c0 = 1e9 * np.trapezoid(c1 / ephi * dv, r)
    l0 = np.trapezoid(q1 / ephi**6 * dv, r)
    return float(c0), float(l0), float(s.radius_km)


def npe_core_coefficients(eos, mass_msun, m_eff_n=0.8, m_eff_p=0.8, where="[ages] masses"):
    """(C0 [erg/K], L0 [erg/s], radius [km]) of an unpaired npe core: C = C0 T~9, L_nu^inf = L0 T~9^8.

    Parameters
    ----------
    eos : str
        ``eos`` parameter set.
    mass_msun : float
        Gravitational mass, solar masses (below the EOS's maximum mass).
    m_eff_n, m_eff_p : float
        Nucleon effective masses in units of the bare masses.
    """
    structure_for_mass(eos, mass_msun, where)  # the one-line error for a mass outside the stable stars
    return _coefficients(str(eos).lower(), round(float(mass_msun), 10), float(m_eff_n), float(m_eff_p))
