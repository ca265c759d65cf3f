"""Heat capacity and neutrino luminosity of an npe core, unpaired or with nucleon pairing, integrated over a TOV star.

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

Paired nucleons (:func:`paired_core_tables`, a ``pairing`` parameter set):
with critical temperatures T_c(k_F) from the set's gap fits
(:func:`.pairing.critical_temperature`; neutrons take the channel, singlet
or triplet, with the higher T_c at each point) and the local temperature
T = T~ exp(-Phi), each point of the core gets

- heat capacity c_n R_C(v_n) + c_p R_C(v_p) + c_e (:func:`.pairing.heat_capacity_reduction`);
- modified Urca and bremsstrahlung times their reduction factors
  (:mod:`.superfluid_neutrinos`; both species paired: the product),
  neutron branch R_M3(v_n) R_M1(v_p), proton branch R_M1(v_n) R_M3(v_p),
  nn R_B4(v_n), np R_B2(v_n) R_B2(v_p), pp R_B4(v_p);
- pair breaking and formation of neutrons (singlet or triplet) and protons;

and C(T~), L_nu^inf(T~) are tabulated on a grid of T~ (1e5-1e11 K, 60 points
a decade) for the cooling equation, cached per (EOS, mass, effective masses,
pairing set).  Not modelled: the crust (its heat capacity, the inner-crust
neutron singlet pairing and its pair-breaking emission), muons.
"""

from functools import lru_cache

import numpy as np

from . import superfluid_neutrinos as sn
from .pairing import critical_temperature, gap_v, heat_capacity_reduction
from .structure import C_CGS, M_U_G, eos_model, proton_fraction, structure_for_mass

__all__ = ["npe_core_coefficients", "fermi_heat_capacity", "paired_core_tables", "core_profile"]

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
    return sum(_emissivity_parts_t9_1(nn, npr, pfn, pfp, pfe, mn, mp))


def _emissivity_parts_t9_1(nn, npr, pfn, pfp, pfe, mn, mp):
    """(Q_Mn, Q_Mp, Q_nn, Q_np, Q_pp) of unpaired matter at T9 = 1, erg cm^-3 s^-1."""
    alpha_n = 1.76 - 0.63 * (N0_CM3 / nn) ** (2 / 3)
    q_mn = 8.1e21 * mn**3 * mp * (npr / N0_CM3) ** (1 / 3) * alpha_n * 0.68
    open_p = pfn < 3 * pfp + pfe
    q_mp = np.where(open_p, q_mn * (mp / mn) ** 2 * (pfe + 3 * pfp - pfn) ** 2 / (8 * pfe * pfp), 0.0)
    q_nn = 7.4e19 * mn**4 * (nn / N0_CM3) ** (1 / 3) * 0.59 * 0.56 * 3
    q_np = 1.5e20 * (mn * mp) ** 2 * (npr / N0_CM3) ** (1 / 3) * 1.06 * 0.66 * 3
    q_pp = 7.4e19 * mp**4 * (npr / N0_CM3) ** (1 / 3) * 0.11 * 0.7 * 3
    return q_mn, q_mp, q_nn, q_np, q_pp


M_N, M_P = 1.67492749804e-24, 1.67262192369e-24  # g (CODATA 2018)


@lru_cache(maxsize=64)
def core_profile(eos, mass):
    """Profiles of the npe core of the star of ``mass`` (Msun) for ``eos``: a dict of arrays (cgs), centre outwards.

    Keys: ``r`` (cm), ``dv`` (proper volume per cm), ``exp_phi``, ``nn``, ``np`` (cm^-3), ``pfn``, ``pfp``,
    ``pfe`` (g cm/s), ``kfn``, ``kfp`` (fm^-1), ``radius_km``.
    """
    s = structure_for_mass(eos, mass)
    core = s.rho >= eos_model(eos).rho_core
    n = s.rho[core] / M_U_G
    x = proton_fraction(n * 1e-39)
    nn, npr = (1 - x) * n, x * n
    pfn, pfp = (HBAR * (3 * np.pi**2 * k) ** (1 / 3) for k in (nn, npr))
    return {"r": s.r_cm[core], "dv": s.volume_element[core], "exp_phi": s.exp_phi[core], "nn": nn, "np": npr,
            "pfn": pfn, "pfp": pfp, "pfe": pfp,  # charge neutrality: n_e = n_p
            "kfn": (3 * np.pi**2 * nn * 1e-39) ** (1 / 3), "kfp": (3 * np.pi**2 * npr * 1e-39) ** (1 / 3),
            "radius_km": float(s.radius_km)}


def _heat_capacities_1k(p, m_eff_n, m_eff_p):
    """(c_n, c_p, c_e) of normal matter at T = 1 K, erg cm^-3 K^-1 (they scale as T)."""
    m_e_eff = np.sqrt(M_E**2 + (p["pfe"] / C_CGS) ** 2)
    return (fermi_heat_capacity(p["nn"], m_eff_n * M_N, 1.0), fermi_heat_capacity(p["np"], m_eff_p * M_P, 1.0),
            fermi_heat_capacity(p["np"], m_e_eff, 1.0))


@lru_cache(maxsize=64)
def _coefficients(eos, mass, m_eff_n, m_eff_p):
    p = core_profile(eos, mass)
    r, dv, ephi = p["r"], p["dv"], p["exp_phi"]
    c1 = sum(_heat_capacities_1k(p, m_eff_n, m_eff_p))  # erg cm^-3 K^-2
    q1 = _emissivity_t9_1(p["nn"], p["np"], p["pfn"], p["pfp"], p["pfe"], m_eff_n, m_eff_p)
    c0 = 1e9 * np.trapezoid(c1 / ephi * dv, r)
    l0 = np.trapezoid(q1 / ephi**6 * dv, r)
    return float(c0), float(l0), p["radius_km"]


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


#: redshifted temperatures of the paired-core tables, K
T_TABLE_K = np.geomspace(1e5, 1e11, 361)


def local_rates(p, temp_local_k, m_eff_n, m_eff_p, pairing_values):
    """Heat capacity (erg cm^-3 K^-1) and neutrino emissivity (erg cm^-3 s^-1) of paired npe matter.

    Parameters
    ----------
    p : dict
        :func:`core_profile` (or arrays of the same keys).
    temp_local_k : ndarray
        Local temperature, K, broadcastable against the profile arrays.
    m_eff_n, m_eff_p : float
    pairing_values : Mapping
        Values of a ``pairing`` parameter set.

    Returns
    -------
    c_v, q_nu, parts : ndarray, ndarray, dict
        ``parts`` splits q_nu into ``murca``, ``brems``, ``pbf_n``, ``pbf_p``.
    """
    t = np.asarray(temp_local_k, float)
    tc_s = critical_temperature(p["kfn"], pairing_values.get("neutron_singlet_gap"), "A")
    tc_t = critical_temperature(p["kfn"], pairing_values.get("neutron_triplet_gap"), "B")
    tc_p = critical_temperature(p["kfp"], pairing_values.get("proton_singlet_gap"), "A")
    triplet = tc_t > tc_s
    tc_n = np.where(triplet, tc_t, tc_s)
    with np.errstate(divide="ignore"):
        tau_n = np.where(tc_n > 0, t / np.where(tc_n > 0, tc_n, 1.0), np.inf)
        tau_p = np.where(tc_p > 0, t / np.where(tc_p > 0, tc_p, 1.0), np.inf)
    v_n = np.where(triplet, gap_v(tau_n, "B"), gap_v(tau_n, "A"))
    v_p = gap_v(tau_p, "A")
    cn, cp, ce = _heat_capacities_1k(p, m_eff_n, m_eff_p)
    rc_n = np.where(triplet, heat_capacity_reduction(v_n, "B"), heat_capacity_reduction(v_n, "A"))
    c_v = (cn * rc_n + cp * heat_capacity_reduction(v_p, "A") + ce) * t
    t9 = t / 1e9
    q_mn, q_mp, q_nn, q_np, q_pp = _emissivity_parts_t9_1(p["nn"], p["np"], p["pfn"], p["pfp"], p["pfe"],
                                                          m_eff_n, m_eff_p)
    murca = (q_mn * sn.reduction_mu_three(v_n) * sn.reduction_mu_one(v_p)
             + q_mp * sn.reduction_mu_one(v_n) * sn.reduction_mu_three(v_p)) * t9**8
    brems = (q_nn * sn.reduction_brems_four(v_n) + q_np * sn.reduction_brems_two(v_n) * sn.reduction_brems_two(v_p)
             + q_pp * sn.reduction_brems_four(v_p)) * t9**8
    pbf_n = np.where(triplet, sn.pbf_emissivity(t9, v_n, m_eff_n, p["pfn"] / (M_N * C_CGS), "triplet"),
                     sn.pbf_emissivity(t9, v_n, m_eff_n, p["pfn"] / (M_N * C_CGS), "singlet"))
    pbf_p = sn.pbf_emissivity(t9, v_p, m_eff_p, p["pfp"] / (M_P * C_CGS), "singlet")
    parts = {"murca": murca, "brems": brems, "pbf_n": pbf_n, "pbf_p": pbf_p}
    return c_v, murca + brems + pbf_n + pbf_p, parts


@lru_cache(maxsize=64)
def _paired(eos, mass, m_eff_n, m_eff_p, pairing):
    from ..params import get

    p = core_profile(eos, mass)
    ephi, dv, r = p["exp_phi"], p["dv"], p["r"]
    t_loc = T_TABLE_K[:, None] / ephi[None, :]
    c_v, q_nu, _ = local_rates(p, t_loc, m_eff_n, m_eff_p, get("pairing", pairing).values)
    cap = np.trapezoid(c_v * dv, r, axis=1)
    lum = np.trapezoid(q_nu * ephi**2 * dv, r, axis=1)
    # a fully paired core emits next to nothing when cold (exp(-2 v)); floor far below any photon luminosity
    return np.log(T_TABLE_K), np.log(cap), np.log(np.maximum(lum, 1e-30))


def paired_core_tables(eos, mass_msun, m_eff_n=0.8, m_eff_p=0.8, pairing="none", where="[ages] masses"):
    """ln T~ (K), ln C (erg/K) and ln L_nu^inf (erg/s) of a paired npe core on :data:`T_TABLE_K`.

    C(T~) = int c_V(T~ e^-Phi) dV and L_nu^inf(T~) = int Q_nu(T~ e^-Phi) e^(2 Phi) dV (module docstring).

    Parameters
    ----------
    eos : str
        ``eos`` parameter set.
    mass_msun : float
    m_eff_n, m_eff_p : float
    pairing : str
        ``pairing`` parameter set ('none': unpaired, the same star as :func:`npe_core_coefficients`).
    """
    from ..params import get

    structure_for_mass(eos, mass_msun, where)
    name = get("pairing", pairing, "[ages] pairing").name.lower()
    return _paired(str(eos).lower(), round(float(mass_msun), 10), float(m_eff_n), float(m_eff_p), name)
