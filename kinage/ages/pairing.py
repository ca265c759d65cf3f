"""Nucleon pairing ingredients of neutron-star cooling: gaps, heat-capacity reduction, pair-breaking control functions.

Pairing types (Levenfish & Yakovlev 1994, Astron. Rep. 38, 247; Yakovlev,
Kaminker, Gnedin & Haensel 2001, Phys. Rep. 354, 1, sec. 2.3):

``"A"``
    singlet 1S0 pairing (neutrons in the inner crust, protons in the core):
    isotropic gap.
``"B"``
    triplet 3P2 pairing with m_J = 0 (neutrons in the core): gap
    Delta(theta)^2 = Delta_0^2 (1 + 3 cos^2 theta).

Dimensionless gap v = Delta(T) / k_B T (for type B, Delta_0) as a function of
tau = T / T_c (Levenfish & Yakovlev 1994 fits)::

    v_A = sqrt(1 - tau) (1.456 - 0.157 / sqrt(tau) + 1.764 / tau),
    v_B = sqrt(1 - tau) (0.7893 + 1.188 / tau).

Heat-capacity reduction factors (same paper)::

    R_C^A = (0.4186 + sqrt(1.007^2 + (0.5010 v)^2))^2.5 exp(1.456 - sqrt(1.456^2 + v^2)),
    R_C^B = (0.6893 + sqrt(0.790^2 + (0.2824 v)^2))^2 exp(1.934 - sqrt(1.934^2 + v^2)).

Both reproduce BCS theory where it is exact: v_A -> 3.06 sqrt(1 - tau) near
T_c and 1.764 / tau as tau -> 0, the specific-heat jump R_C(T_c) = 2.43 (A)
and 2.19 (B), and the low-temperature law R_C^A -> 0.762 v^2.5 exp(-v); the
tests check these.

Pair breaking and formation (Yakovlev, Kaminker & Levenfish 1999, A&A 343,
650): the emissivity is proportional to a control function F(v), defined by
the integral F_A(v) = v^2 int_0^inf z^4 / (e^z + 1)^2 dx, z = sqrt(x^2 + v^2),
and for type B its average over the gap's angular dependence.  F_A uses their
fit (1 % of the integral)::

    F_A = (0.602 v^2 + 0.5942 v^4 + 0.288 v^6) sqrt(0.5547 + sqrt(0.4453^2 + 0.0113 v^2))
          exp(2.245 - sqrt(4 v^2 + 2.245^2));

F_B is the angle average of F_A(v sqrt(1 + 3 cos^2 theta)), tabulated once by
quadrature and interpolated (the type-B fit of the paper could not be
consulted).  The fit coefficients above are quoted from memory (value from
memory); the BCS limits and the defining integral are what the tests check.

Critical temperatures: :func:`critical_temperature` evaluates the gap fits
of the ``pairing`` parameter sets (:mod:`kinage.params.pairing`) and turns
the zero-temperature gap into T_c with the BCS ratios above (Delta(0) =
1.764 k T_c for type A, 1.188 k T_c for the type-B amplitude).  The
reduction factors of modified Urca and bremsstrahlung and the pair-breaking
emissivity are in :mod:`.superfluid_neutrinos`.
"""

from functools import lru_cache

import numpy as np

__all__ = ["gap_v", "heat_capacity_reduction", "pbf_control", "critical_temperature", "PAIRING_TYPES", "K_PER_MEV"]

PAIRING_TYPES = ("A", "B")
#: kelvin per MeV, 1 / k_B (CODATA 2018)
K_PER_MEV = 1.160451812e10
#: Delta(T = 0) / k_B T_c of BCS theory: isotropic gap, and the amplitude of the 3P2 m_J = 0 gap (the low-T limits
#: of :func:`gap_v`)
_GAP_OVER_TC = {"A": 1.764, "B": 1.188}


def _type(kind):
    k = str(kind).upper()
    if k not in PAIRING_TYPES:
        raise ValueError(f"pairing type must be 'A' (1S0) or 'B' (3P2, m_J = 0), got {kind!r}")
    return k


def gap_v(tau, kind="A"):
    """Dimensionless gap v = Delta / k_B T at tau = T / T_c (0 for tau >= 1).

    Parameters
    ----------
    tau : float or ndarray
        T / T_c (positive).
    kind : {'A', 'B'}

    Returns
    -------
    float or ndarray
    """
    t = np.asarray(tau, float)
    tc = np.clip(t, 1e-12, 1.0)
    if _type(kind) == "A":
        v = np.sqrt(1 - tc) * (1.456 - 0.157 / np.sqrt(tc) + 1.764 / tc)
    else:
        v = np.sqrt(1 - tc) * (0.7893 + 1.188 / tc)
    return np.where(t < 1.0, v, 0.0)


def heat_capacity_reduction(v, kind="A"):
    """R_C(v): heat capacity of the paired species over its normal value (1 at v = 0 from above T_c).

    ``v = 0`` means normal matter (tau >= 1) and returns 1; the jump at T_c is
    reached as v -> 0 from the paired side (:func:`gap_v` gives v > 0 only
    below T_c).
    """
    v = np.asarray(v, float)
    if _type(kind) == "A":
        r = (0.4186 + np.sqrt(1.007**2 + (0.5010 * v) ** 2)) ** 2.5 * np.exp(1.456 - np.sqrt(1.456**2 + v**2))
    else:
        r = (0.6893 + np.sqrt(0.790**2 + (0.2824 * v) ** 2)) ** 2 * np.exp(1.934 - np.sqrt(1.934**2 + v**2))
    return np.where(v > 0, r, 1.0)


def _fa(v):
    v = np.asarray(v, float)
    return ((0.602 * v**2 + 0.5942 * v**4 + 0.288 * v**6) * np.sqrt(0.5547 + np.sqrt(0.4453**2 + 0.0113 * v**2))
            * np.exp(2.245 - np.sqrt(4 * v**2 + 2.245**2)))


@lru_cache(maxsize=1)
def _fb_table():
    # angle average over mu = cos(theta) of F_A(v sqrt(1 + 3 mu^2)), Gauss-Legendre on [0, 1] (48 nodes: the
    # integrand is smooth), on a log grid of v; beyond the grid F_B is below 1e-30 of its peak
    x, w = np.polynomial.legendre.leggauss(48)
    mu, w = 0.5 * (x + 1), 0.5 * w
    v = np.concatenate([[0.0], np.geomspace(1e-4, 80.0, 600)])
    fb = np.array([np.sum(w * _fa(vv * np.sqrt(1 + 3 * mu**2))) for vv in v])
    return v, fb


def pbf_control(v, kind="A"):
    """Pair breaking and formation control function F(v) (Yakovlev, Kaminker & Levenfish 1999); 0 at v = 0."""
    v = np.asarray(v, float)
    if _type(kind) == "A":
        return np.where(v > 0, _fa(v), 0.0)
    grid, fb = _fb_table()
    lf = np.interp(np.clip(v, grid[1], grid[-1]), grid[1:], np.log(np.maximum(fb[1:], 1e-300)))
    return np.where((v > 0) & (v <= grid[-1]), np.exp(lf), 0.0)


def critical_temperature(kf_fm, gap, kind="A"):
    """Critical temperature (K) at neutron or proton Fermi wave numbers ``kf_fm`` (fm^-1) for one gap fit.

    Parameters
    ----------
    kf_fm : float or ndarray
        Fermi wave number, fm^-1.
    gap : sequence of 5 floats or None
        (Delta_0 [MeV], k_0 [fm^-1], k_1 [fm^-2], k_2 [fm^-1], k_3 [fm^-2]) of
        Delta(k_F) = Delta_0 (k_F - k_0)^2 / ((k_F - k_0)^2 + k_1) (k_F - k_2)^2 / ((k_F - k_2)^2 + k_3) for
        k_0 < k_F < k_2, zero outside (Kaminker, Haensel & Yakovlev 2001; Ho et al. 2015, PRC 91, 015806);
        None: no pairing in this channel.
    kind : {'A', 'B'}
        Singlet (T_c = Delta / 1.764 k_B) or triplet m_J = 0 (T_c = Delta / 1.188 k_B).

    Returns
    -------
    float or ndarray
        T_c in K (0 where the channel is closed).
    """
    kf = np.asarray(kf_fm, float)
    if gap is None:
        return np.zeros_like(kf)
    d0, k0, k1, k2, k3 = (float(x) for x in gap)
    delta = d0 * (kf - k0) ** 2 / ((kf - k0) ** 2 + k1) * (kf - k2) ** 2 / ((kf - k2) ** 2 + k3)
    return np.where((kf > k0) & (kf < k2), delta, 0.0) * K_PER_MEV / _GAP_OVER_TC[_type(kind)]
