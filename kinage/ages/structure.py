"""Neutron-star structure: piecewise-polytrope equation of state, TOV solution, npe composition.

Equation of state (Read, Lackey, Owen & Friedman 2009, PRD 79, 124032,
eqs. 2-7): on piece i, p = K_i rho^Gamma_i and the energy density is
eps / c^2 = (1 + a_i) rho + K_i rho^Gamma_i / (Gamma_i - 1), with a_i fixed
by continuity of eps; rho is the rest-mass density.  Pressures are carried
as p / c^2 in g/cm^3 (the units of Read et al.'s K).  The parameters are
``eos`` parameter sets (:mod:`kinage.params.eos`).

Structure: the Tolman-Oppenheimer-Volkoff equations (e.g. Shapiro &
Teukolsky 1983, eqs. 5.7.6-5.7.8)::

    dm/dr = 4 pi r^2 eps/c^2,
    dp/dr = -G (eps/c^2 + p)(m + 4 pi r^3 p) / (r^2 (1 - 2 G m / r c^2)),
    dPhi/dr = -(dp/dr) / (eps/c^2 + p),     exp(Phi(R)) = sqrt(1 - 2 G M / R c^2),

integrated with :func:`scipy.integrate.solve_ivp` (LSODA) from the centre to
rho = 1e4 g/cm^3.  ``exp(Phi)`` is the redshift factor of the local
temperature: an isothermal star has T(r) exp(Phi(r)) uniform.

Composition in the core: neutrons, protons and electrons in beta
equilibrium, mu_n - mu_p = 4 S(n) (1 - 2 x) = mu_e = hbar c (3 pi^2 x n)^(1/3)
for a proton fraction x and baryon density n = rho / m_u, with the symmetry
energy S(n) = S0 (n / n0)^gamma_S, S0 = 32 MeV, gamma_S = 0.6,
n0 = 0.16 fm^-3 (the parabolic approximation, e.g. Lattimer & Prakash 2016,
Phys. Rep. 621, 127; S0 and L = 3 gamma_S S0 ~ 58 MeV within their quoted
ranges; value from memory).  The piecewise polytrope itself carries no
composition, so this is an added assumption (muons left out).  Fermi
momenta k_F,i = (3 pi^2 n_i)^(1/3).

Structures are cached per (EOS, mass): a mass is found by root-finding the
central density on the stable branch (below the maximum mass).
"""

from bisect import bisect_right
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import brentq, minimize_scalar

from ..errors import InputError

__all__ = ["PiecewisePolytrope", "eos_model", "Structure", "tov", "max_mass", "structure_for_mass",
           "proton_fraction", "G_CGS", "C_CGS", "MSUN_G", "M_U_G"]

G_CGS = 6.67430e-8  # CODATA 2018
C_CGS = 2.99792458e10
MSUN_G = 1.988409870698051e33  # IAU 2015 nominal GM_sun / G
M_U_G = 1.66053906660e-24  # atomic mass unit (CODATA 2018)
_HBARC_MEV_FM = 197.3269804
_N0_FM3 = 0.16
_S0_MEV = 32.0
_GAMMA_S = 0.6
_RHO_SURFACE = 1.0e4


@dataclass(frozen=True)
class PiecewisePolytrope:
    """A piecewise-polytropic equation of state (Read et al. 2009).

    Attributes
    ----------
    name : str
    rho_lo : ndarray
        Lower rest-mass density of each piece, g/cm^3.
    k : ndarray
        K_i with p/c^2 = K_i rho^Gamma_i (g/cm^3 units).
    gamma : ndarray
    a : ndarray
        Energy-continuity constants a_i.
    rho_core : float
        Crust-core boundary (start of the first core piece), g/cm^3.
    """

    name: str
    rho_lo: np.ndarray
    k: np.ndarray
    gamma: np.ndarray
    a: np.ndarray
    rho_core: float

    def _piece_rho(self, rho):
        return np.clip(np.searchsorted(self.rho_lo, rho, side="right") - 1, 0, len(self.k) - 1)

    def pressure(self, rho):
        """p / c^2 in g/cm^3 at rest-mass density ``rho`` (g/cm^3)."""
        rho = np.asarray(rho, float)
        i = self._piece_rho(rho)
        return self.k[i] * rho ** self.gamma[i]

    def energy_density(self, rho):
        """eps / c^2 in g/cm^3 at rest-mass density ``rho`` (g/cm^3)."""
        rho = np.asarray(rho, float)
        i = self._piece_rho(rho)
        return (1.0 + self.a[i]) * rho + self.k[i] * rho ** self.gamma[i] / (self.gamma[i] - 1.0)

    def density_at_pressure(self, p):
        """Rest-mass density (g/cm^3) at p / c^2 = ``p`` (g/cm^3)."""
        p = np.asarray(p, float)
        p_lo = self.k * self.rho_lo ** self.gamma
        i = np.clip(np.searchsorted(p_lo, p, side="right") - 1, 0, len(self.k) - 1)
        return (np.maximum(p, 0.0) / self.k[i]) ** (1.0 / self.gamma[i])


@lru_cache(maxsize=16)
def _eos(name):
    from ..params import get
    from ..params.eos import CRUST_GAMMA, CRUST_K, CRUST_RHO_G_CM3, RHO1_G_CM3, RHO2_G_CM3

    v = get("eos", name, "[ages] eos").values
    g1, g2, g3 = float(v["gamma1"]), float(v["gamma2"]), float(v["gamma3"])
    p1 = 10.0 ** float(v["log10_p1_dyn_cm2"]) / C_CGS**2
    k1 = p1 / RHO1_G_CM3**g1
    k2 = p1 / RHO1_G_CM3**g2
    k3 = k2 * RHO2_G_CM3 ** (g2 - g3)
    crust_k = [CRUST_K[0]]  # continuity of p fixes K_1-K_3 from K_0 (Read et al. 2009; their table rounds them)
    for i in range(1, len(CRUST_K)):
        crust_k.append(crust_k[-1] * CRUST_RHO_G_CM3[i] ** (CRUST_GAMMA[i - 1] - CRUST_GAMMA[i]))
    kc, gc = crust_k[-1], CRUST_GAMMA[-1]
    rho0 = (kc / k1) ** (1.0 / (g1 - gc))  # where the last crust piece meets the first core piece
    rho_lo = np.array(list(CRUST_RHO_G_CM3) + [rho0, RHO1_G_CM3, RHO2_G_CM3])
    k = np.array(crust_k + [k1, k2, k3])
    gamma = np.array(list(CRUST_GAMMA) + [g1, g2, g3])
    a = np.zeros(len(k))
    for i in range(1, len(k)):
        r = rho_lo[i]
        eps_prev = (1 + a[i - 1]) * r + k[i - 1] * r ** gamma[i - 1] / (gamma[i - 1] - 1)
        a[i] = eps_prev / r - 1 - k[i] * r ** (gamma[i] - 1) / (gamma[i] - 1)
    return PiecewisePolytrope(get("eos", name).name, rho_lo, k, gamma, a, float(rho0))


def eos_model(name, where="[ages] eos"):
    """The :class:`PiecewisePolytrope` of an ``eos`` parameter set (InputError naming ``where`` if unknown)."""
    from ..params import get

    get("eos", name, where)
    return _eos(str(name).lower())


@dataclass(frozen=True)
class Structure:
    """A TOV solution.

    Attributes
    ----------
    eos : str
    mass_msun, radius_km : float
        Gravitational mass and circumferential radius.
    rho_c : float
        Central rest-mass density, g/cm^3.
    r_cm, rho, pressure, eps, mass_g, exp_phi : ndarray
        Profiles from the centre outwards: radius (cm), rest-mass density
        (g/cm^3), p/c^2 and eps/c^2 (g/cm^3), enclosed mass (g) and the
        redshift factor exp(Phi).
    """

    eos: str
    mass_msun: float
    radius_km: float
    rho_c: float
    r_cm: np.ndarray
    rho: np.ndarray
    pressure: np.ndarray
    eps: np.ndarray
    mass_g: np.ndarray
    exp_phi: np.ndarray

    @property
    def volume_element(self):
        """Proper volume per unit radius, 4 pi r^2 / sqrt(1 - 2 G m / r c^2), cm^2."""
        r = np.maximum(self.r_cm, 1.0)
        compact = np.where(self.r_cm > 0, 2 * G_CGS * self.mass_g / (r * C_CGS**2), 0.0)
        return 4 * np.pi * self.r_cm**2 / np.sqrt(1 - compact)

    def core(self, eos_model_):
        """Boolean mask of the uniform-matter core (rho above the crust-core boundary)."""
        return self.rho >= eos_model_.rho_core


def tov(eos, rho_c, n_out=400):
    """Integrate the TOV equations for one central density.

    Parameters
    ----------
    eos : PiecewisePolytrope or str
    rho_c : float
        Central rest-mass density, g/cm^3.
    n_out : int
        Points of the returned profiles.

    Returns
    -------
    Structure
    """
    m = eos if isinstance(eos, PiecewisePolytrope) else eos_model(eos)
    gc2 = G_CGS / C_CGS**2
    p_c = float(m.pressure(rho_c))
    p_surf = float(m.pressure(_RHO_SURFACE))

    p_lo = (m.k * m.rho_lo**m.gamma).tolist()
    ks, gs, as_ = m.k.tolist(), m.gamma.tolist(), m.a.tolist()

    def rhs(r, y):  # plain floats: this runs ~1,000 times per star
        mass, p, _ = y
        p = max(p, p_surf * 1e-3)
        i = max(bisect_right(p_lo, p) - 1, 0)
        rho = (p / ks[i]) ** (1.0 / gs[i])
        eps = (1.0 + as_[i]) * rho + ks[i] * rho ** gs[i] / (gs[i] - 1.0)
        dp = -gc2 * (eps + p) * (mass + 4 * np.pi * r**3 * p) / (r**2 * (1 - 2 * gc2 * mass / r))
        return [4 * np.pi * r**2 * eps, dp, -dp / (eps + p)]

    def surface(r, y):
        return y[1] - p_surf

    surface.terminal = True
    r0 = 1.0  # cm: start off the centre with the series m = 4/3 pi r^3 eps_c
    eps_c = float(m.energy_density(rho_c))
    sol = solve_ivp(rhs, (r0, 5e6), [4 / 3 * np.pi * r0**3 * eps_c, p_c, 0.0], method="LSODA", events=surface,
                    rtol=1e-8, atol=[1e10, p_surf * 1e-6, 1e-12], dense_output=True)
    radius = float(sol.t_events[0][0]) if sol.t_events[0].size else float(sol.t[-1])
    r = np.concatenate([[0.0], np.geomspace(r0, radius, n_out - 1)])
    y = sol.sol(np.maximum(r, r0))
    mass_total = float(y[0, -1])
    # Phi(R) = ln sqrt(1 - 2GM/Rc^2); Phi(r) = Phi(R) - (nu(R) - nu(r)) with nu the integral of dPhi/dr
    phi = 0.5 * np.log(1 - 2 * gc2 * mass_total / radius) - (y[2, -1] - y[2])
    p = np.maximum(y[1], 0.0)
    rho = m.density_at_pressure(p)
    return Structure(m.name, mass_total / MSUN_G, radius / 1e5, float(rho_c), r, rho, p, m.energy_density(rho),
                     np.maximum(y[0], 0.0), np.exp(phi))


@lru_cache(maxsize=16)
def _max_mass(name):
    m = eos_model(name)
    f = lambda lr: -tov(m, 10.0**lr, n_out=20).mass_msun  # noqa: E731
    res = minimize_scalar(f, bounds=(14.8, 16.2), method="bounded", options={"xatol": 1e-4})
    return float(-res.fun), float(10.0**res.x)


def max_mass(eos):
    """(maximum mass in Msun, its central density in g/cm^3) of the non-rotating stars of an EOS."""
    return _max_mass(str(eos).lower())


@lru_cache(maxsize=64)
def _for_mass(name, mass):
    mmax, rho_max = _max_mass(name)
    m = eos_model(name)
    lo = 14.0
    f = lambda lr: tov(m, 10.0**lr, n_out=20).mass_msun - mass  # noqa: E731
    lr = brentq(f, lo, np.log10(rho_max), xtol=1e-7)
    return tov(m, 10.0**lr)


def structure_for_mass(eos, mass_msun, where="[ages] masses"):
    """The stable star of a given gravitational mass (Msun) for an EOS.

    Raises
    ------
    InputError
        Mass at or above the EOS's maximum mass, or below 0.2 Msun.
    """
    mass = float(mass_msun)
    mmax, _ = max_mass(eos)
    if not 0.2 <= mass < mmax:
        raise InputError(where, f"{mass:g} solMass is outside the stable stars of EOS '{eos_model(eos).name}' "
                                f"(0.2 to {mmax:.3f} solMass, its maximum mass)")
    return _for_mass(str(eos).lower(), round(mass, 10))


def proton_fraction(n_fm3):
    """Proton fraction x of npe matter in beta equilibrium at baryon density ``n_fm3`` (fm^-3), module docstring."""
    n = np.atleast_1d(np.asarray(n_fm3, float))
    out = np.zeros_like(n)
    for i, nb in enumerate(n):
        s = _S0_MEV * (nb / _N0_FM3) ** _GAMMA_S

        def f(x):
            return 4 * s * (1 - 2 * x) - _HBARC_MEV_FM * (3 * np.pi**2 * x * nb) ** (1 / 3)

        out[i] = brentq(f, 1e-8, 0.5, xtol=1e-12) if nb > 0 else 0.0
    return out if np.ndim(n_fm3) else float(out[0])
