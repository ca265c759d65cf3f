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


#: envelope name -> relation Ts(Tb [K], g14) [K]
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
    envelope : {'iron', 'accreted', 'gpe83'}
    check : bool
        Raise :class:`ModelRangeError` outside the declared validity range.
    where : str
        Field named in error messages.

    Returns
    -------
    float or ndarray, K
    """
    try:
        relation = ENVELOPES[str(envelope).lower()]
    except KeyError:
        raise InputError(where, f"unknown envelope {envelope!r}; choose one of: {', '.join(ENVELOPES)}") from None
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
