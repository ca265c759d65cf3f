"""Heat-blanketing envelopes and the stellar quantities they need.

An envelope relation gives the local effective surface temperature Ts from
the temperature Tb at the bottom of the envelope (density ~1e10 g/cm^3) and
the surface gravity g.  Relations offered (names used in scenario files):

``"gpe83"``
    Gudmundsson, Pethick & Epstein 1983, ApJ 272, 286:
    Ts = 0.87e6 K g14^(1/4) (Tb / 1e8 K)^0.55.
``"iron"``
    Potekhin, Chabrier & Yakovlev 1997, A&A 323, 415, appendix fit for a
    non-accreted (iron) envelope:
    Ts6^4 = g14 [(7 zeta)^2.25 + (zeta / 3)^1.25],
    zeta = Tb9 - 1e-3 g14^(1/4) sqrt(7 Tb9).
``"accreted"``
    the same paper, fully accreted (light-element) envelope:
    Ts6^4 = g14 (18.1 Tb9)^2.42.

``"light-12"`` (``light`` followed by log10(Delta M / M))
    the same paper, partially accreted: a light-element layer of mass
    Delta M on top of iron, interpolating between the two fits above with
    eta = g14^2 Delta M / M:
    Ts^4 = [a Ts_Fe^4 + Ts_acc^4] / (a + 1),
    a = [1.2 + (5.3e-6 / eta)^0.38] Tb9^(5/3).
    Small eta gives the iron relation, large eta (and low Tb) the fully
    accreted one.  Named by :func:`light_element_envelope` from the scenario
    key ``[ages] light_element_mass``; log10(Delta M / M) from
    :data:`LIGHT_ELEMENT_LOG_RANGE` (-17 to -7: from ~1e-16 Msun of light
    elements, the least that changes Ts, up to the ~1e-7 M of the whole
    envelope above 1e10 g/cm^3, where light elements have burnt; value from
    memory).

Here Ts6 = Ts / 1e6 K, Tb9 = Tb / 1e9 K, g14 = g / 1e14 cm s^-2.  The fit
coefficients of the 1997 paper are quoted from memory (the paper itself could
not be consulted when this was written; value from memory); the iron fit
reproduces the 1983 relation to ~6 % at its worked point, which the tests check.

Declared validity (raises :class:`~kinage.errors.ModelRangeError` outside):
Ts >= 5e4 K (the 1997 calculations cover Teff > 5e4 K, paper abstract) and
1e5 K <= Tb <= 1e10 K (common practice, no source).
"""

import numpy as np

from .._units import quantity_edge
from ..errors import InputError, ModelRangeError

__all__ = [
    "ENVELOPES",
    "TS_MIN_K",
    "TB_MIN_K",
    "TB_MAX_K",
    "surface_temperature",
    "gpe83",
    "pcy97_iron",
    "pcy97_accreted",
    "pcy97_light",
    "LIGHT_ELEMENT_LOG_RANGE",
    "light_element_envelope",
    "light_element_log_mass",
    "envelope_relation",
    "envelope_label",
    "StarStructure",
    "star_structure",
]

TS_MIN_K = 5.0e4
TB_MIN_K = 1.0e5
TB_MAX_K = 1.0e10

_G_CGS = 6.67430e-8
_C_CGS = 2.99792458e10
_MSUN_G = 1.988409870698051e33


@quantity_edge("K", tb_k="K", g14="1e14 cm / s2")
def gpe83(tb_k, g14):
    """Gudmundsson, Pethick & Epstein (1983) relation; Ts in K for Tb in K."""
    return 0.87e6 * np.asarray(g14, float) ** 0.25 * (np.asarray(tb_k, float) / 1e8) ** 0.55


@quantity_edge("K", tb_k="K", g14="1e14 cm / s2")
def pcy97_iron(tb_k, g14):
    """Potekhin, Chabrier & Yakovlev (1997) iron-envelope fit; Ts in K (coefficients from memory)."""
    tb9 = np.asarray(tb_k, float) / 1e9
    g14 = np.asarray(g14, float)
    zeta = np.maximum(tb9 - 1e-3 * g14**0.25 * np.sqrt(7.0 * tb9), 0.0)
    return 1e6 * (g14 * ((7.0 * zeta) ** 2.25 + (zeta / 3.0) ** 1.25)) ** 0.25


@quantity_edge("K", tb_k="K", g14="1e14 cm / s2")
def pcy97_accreted(tb_k, g14):
    """Potekhin, Chabrier & Yakovlev (1997) fully accreted envelope fit; Ts in K (coefficients from memory)."""
    tb9 = np.asarray(tb_k, float) / 1e9
    return 1e6 * (np.asarray(g14, float) * (18.1 * tb9) ** 2.42) ** 0.25


#: log10(Delta M / M) of a light-element layer that the partially accreted relation covers
LIGHT_ELEMENT_LOG_RANGE = (-17.0, -7.0)


def pcy97_light(tb_k, g14, log_dm):
    """Potekhin, Chabrier & Yakovlev (1997) partially accreted envelope; Ts in K (coefficients from memory).

    Parameters
    ----------
    tb_k : float or ndarray, K
        Local temperature at the bottom of the envelope.
    g14 : float or ndarray, 1e14 cm s^-2
        Local surface gravity.
    log_dm : float
        log10(Delta M / M) of the light-element layer.

    Returns
    -------
    float or ndarray, K
    """
    tb = np.asarray(tb_k, float)
    g14 = np.asarray(g14, float)
    eta = g14**2 * 10.0 ** float(log_dm)
    a = (1.2 + (5.3e-6 / eta) ** 0.38) * (tb / 1e9) ** (5.0 / 3.0)
    ts4 = (a * pcy97_iron(tb, g14) ** 4 + pcy97_accreted(tb, g14) ** 4) / (a + 1.0)
    return ts4**0.25


def light_element_envelope(log_dm, where="[ages] light_element_mass"):
    """The envelope name of a light-element layer with log10(Delta M / M) = ``log_dm``, e.g. ``'light-12'``.

    Raises
    ------
    InputError
        ``log_dm`` outside :data:`LIGHT_ELEMENT_LOG_RANGE`.
    """
    x = float(log_dm)
    lo, hi = LIGHT_ELEMENT_LOG_RANGE
    if not (np.isfinite(x) and lo <= x <= hi):
        raise InputError(where, f"log10(Delta M / M) of the light-element envelope must be within {lo:g} to {hi:g} "
                                f"(Potekhin, Chabrier & Yakovlev 1997; got {log_dm!r})")
    return f"light{x:+g}"


def light_element_log_mass(name):
    """log10(Delta M / M) of a ``'light<x>'`` envelope name, else None."""
    if not name.startswith("light") or len(name) == 5:
        return None
    try:
        return float(name[5:])
    except ValueError:
        return None


def envelope_label(name):
    """Words for an envelope name: ``'light-12'`` -> ``'light elements, Delta M/M = 1e-12'``."""
    x = light_element_log_mass(str(name).lower())
    return str(name) if x is None else f"light elements, Delta M/M = 1e{x:g}"


def envelope_relation(name, where="[ages] envelopes"):
    """The relation Ts(Tb [K], g14) [K] of an envelope name (:data:`ENVELOPES` or ``'light<log10 dM/M>'``)."""
    env = str(name).lower()
    if env in ENVELOPES:
        return ENVELOPES[env]
    x = light_element_log_mass(env)
    if x is None:
        raise InputError(where, f"unknown envelope {name!r}; choose one of: {', '.join(ENVELOPES)}, or "
                                "light<log10 dM/M> such as 'light-12'")
    light_element_envelope(x, where)

    def relation(tb_k, g14):
        return pcy97_light(tb_k, g14, x)

    return relation


#: envelope name -> relation Ts(Tb [K], g14) [K]; partially accreted ones are named 'light<log10 dM/M>'
ENVELOPES = {"iron": pcy97_iron, "accreted": pcy97_accreted, "gpe83": gpe83}


@quantity_edge("K", tb_k="K", g14="1e14 cm / s2")
def surface_temperature(tb_k, g14, envelope="iron", check=True, where="envelope"):
    """Local effective surface temperature from the envelope-base temperature.

    Parameters
    ----------
    tb_k : float or ndarray, K
        Local temperature at the bottom of the envelope.
    g14 : float or ndarray, 1e14 cm s^-2
        Local surface gravity.
    envelope : {'iron', 'accreted', 'gpe83'} or 'light<log10 dM/M>'
    check : bool
        Raise :class:`ModelRangeError` outside the declared validity range.
    where : str
        Field named in error messages.

    Returns
    -------
    float or ndarray, K
    """
    relation = envelope_relation(envelope, where)
    tb = np.asarray(tb_k, float)
    ts = relation(tb, g14)
    if check:
        bad_tb = (tb < TB_MIN_K) | (tb > TB_MAX_K)
        if np.any(bad_tb):
            raise ModelRangeError(where, f"envelope relation '{envelope}' is valid for {TB_MIN_K:.0e} K <= Tb <= "
                                  f"{TB_MAX_K:.0e} K (got Tb = {np.min(tb):.3g}-{np.max(tb):.3g} K)")
        if np.any(ts < TS_MIN_K):
            raise ModelRangeError(where, f"envelope relation '{envelope}' is valid for Ts >= {TS_MIN_K:.0e} K "
                                  f"(got Ts = {np.min(ts):.3g} K)")
    return ts


class StarStructure:
    """Mass, radius and the general-relativistic factors derived from them.

    Attributes
    ----------
    mass_msun : float
    radius_km : float
    rg_km : float
        Schwarzschild radius 2 G M / c^2.
    redshift_factor : float
        sqrt(1 - rg / R): T_inf = Ts * redshift_factor.
    g14 : float
        Local surface gravity G M / (R^2 sqrt(1 - rg/R)) in 1e14 cm s^-2.
    """

    __slots__ = ("mass_msun", "radius_km", "rg_km", "redshift_factor", "g14")

    def __init__(self, mass_msun, radius_km, rg_km, redshift_factor, g14):
        self.mass_msun = mass_msun
        self.radius_km = radius_km
        self.rg_km = rg_km
        self.redshift_factor = redshift_factor
        self.g14 = g14

    def __repr__(self):
        return (f"StarStructure(M={self.mass_msun} Msun, R={self.radius_km} km, rg={self.rg_km:.3f} km, "
                f"sqrt(1-rg/R)={self.redshift_factor:.4f}, g14={self.g14:.4f})")


@quantity_edge(None, mass_msun="solMass", radius_km="km")
def star_structure(mass_msun, radius_km, where_mass="[ages] mass", where_radius="[ages] radius"):
    """Check a mass-radius pair and compute redshift and surface gravity.

    Parameters
    ----------
    mass_msun : float, solar masses
    radius_km : float, km

    Returns
    -------
    StarStructure

    Raises
    ------
    InputError
        Non-positive values, R at or below the Schwarzschild radius, or R not
        above the Buchdahl limit 9/4 G M / c^2 (no static star is more compact;
        Buchdahl 1959, Phys. Rev. 116, 1027).
    """
    m = float(mass_msun)
    r = float(radius_km)
    if not m > 0:
        raise InputError(where_mass, f"must be positive (got {m} solMass)")
    if not r > 0:
        raise InputError(where_radius, f"must be positive (got {r} km)")
    rg_km = 2.0 * _G_CGS * m * _MSUN_G / _C_CGS**2 / 1e5
    if r <= rg_km:
        raise InputError(where_radius, f"R = {r} km is not above the Schwarzschild radius 2GM/c^2 = {rg_km:.2f} km "
                         f"for M = {m} solMass")
    if r <= 1.125 * rg_km:
        raise InputError(where_radius, f"R = {r} km is not above the Buchdahl limit 9/4 GM/c^2 = "
                         f"{1.125 * rg_km:.2f} km for M = {m} solMass (no static star is that compact)")
    x = rg_km / r
    red = np.sqrt(1.0 - x)
    g = _G_CGS * m * _MSUN_G / (r * 1e5) ** 2 / red
    return StarStructure(m, r, rg_km, float(red), float(g / 1e14))
