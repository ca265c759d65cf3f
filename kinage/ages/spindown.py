"""Spin-down ages and the quantities derived from P and Pdot.

All functions take plain floats or numpy arrays in fixed units (period in s,
period derivative dimensionless s/s, ages in yr), or astropy Quantities of any
compatible unit (the result is then a Quantity in the documented unit), and are
vectorised; they
return ``nan`` where a value does not exist (e.g. a spinning-up star), so
that Monte Carlo draws can be pushed through them in one call.

References
----------
Lorimer & Kramer 2005, *Handbook of Pulsar Astronomy*, sections 3.1-3.3
(characteristic age, braking-index age, dipole field, spin-down luminosity);
Shklovskii 1970, Soviet Astron. 13, 562 (apparent Pdot from transverse motion).
"""

import numpy as np

from .._units import quantity_edge

__all__ = [
    "SECONDS_PER_YEAR",
    "characteristic_age",
    "dipole_field",
    "spin_down_luminosity",
    "braking_index_age",
    "max_braking_index_age",
    "implied_initial_period",
    "shklovskii_pdot",
    "transverse_velocity",
]

#: Julian year in seconds
SECONDS_PER_YEAR = 365.25 * 86400.0
_C_CM_S = 2.99792458e10
_KPC_CM = 3.0856775814913673e21
_MAS_YR_TO_RAD_S = np.pi / (180.0 * 3600.0 * 1000.0) / SECONDS_PER_YEAR


def _pos(x):
    """Array with non-positive values replaced by nan."""
    x = np.asarray(x, float)
    return np.where(x > 0, x, np.nan)


@quantity_edge("yr", period_s="s", pdot="")
def characteristic_age(period_s, pdot):
    """Characteristic age tau_c = P / (2 Pdot).

    Parameters
    ----------
    period_s : float or ndarray, s
    pdot : float or ndarray, s/s

    Returns
    -------
    float or ndarray, yr
        ``nan`` where Pdot <= 0 (spinning up).

    Notes
    -----
    Equals the true age for a braking index n = 3 and an initial period much
    shorter than today's (Lorimer & Kramer 2005, eq. 3.14).
    """
    return np.asarray(period_s, float) / (2.0 * _pos(pdot)) / SECONDS_PER_YEAR


@quantity_edge("G", period_s="s", pdot="", radius_km="km", moment_of_inertia="g cm2")
def dipole_field(period_s, pdot, radius_km=10.0, moment_of_inertia=1e45):
    """Surface dipole field estimate B = 3.2e19 sqrt(P Pdot) G for R = 10 km and I = 1e45 g cm^2.

    Parameters
    ----------
    period_s : float or ndarray, s
    pdot : float or ndarray, s/s
    radius_km : float, km
        Stellar radius (default 10 km, the convention of the 3.2e19 G coefficient).
    moment_of_inertia : float, g cm^2

    Returns
    -------
    float or ndarray, gauss
        Field at the magnetic equator.

    Notes
    -----
    Magnetic-dipole braking in vacuum of an orthogonal rotator,
    B = sqrt(3 c^3 I P Pdot / (8 pi^2 R^6)) (Lorimer & Kramer 2005, eq. 3.15),
    i.e. 3.2e19 G sqrt(P Pdot) (I / 1e45 g cm^2)^(1/2) (R / 10 km)^-3; force-free
    magnetospheres give values lower by a factor of order unity.
    """
    scale = np.sqrt(float(moment_of_inertia) / 1e45) * (10.0 / float(radius_km)) ** 3
    return 3.2e19 * scale * np.sqrt(np.asarray(period_s, float) * _pos(pdot))


@quantity_edge("erg/s", period_s="s", pdot="", moment_of_inertia="g cm2")
def spin_down_luminosity(period_s, pdot, moment_of_inertia=1e45):
    """Spin-down luminosity Edot = 4 pi^2 I Pdot / P^3.

    Parameters
    ----------
    period_s : float or ndarray, s
    pdot : float or ndarray, s/s
    moment_of_inertia : float, g cm^2

    Returns
    -------
    float or ndarray, erg/s
        (Lorimer & Kramer 2005, eq. 3.6).
    """
    p = np.asarray(period_s, float)
    return 4.0 * np.pi**2 * moment_of_inertia * _pos(pdot) / p**3


@quantity_edge("yr", period_s="s", pdot="", braking_index="", initial_period_s="s")
def braking_index_age(period_s, pdot, braking_index=3.0, initial_period_s=0.0):
    """True age for braking index n and initial period P0.

    t = P / ((n - 1) Pdot) [1 - (P0 / P)^(n - 1)]  (Lorimer & Kramer 2005, eq. 3.13)

    Parameters
    ----------
    period_s : float or ndarray, s
    pdot : float or ndarray, s/s
    braking_index : float or ndarray
        n > 1 (``nan`` returned otherwise).
    initial_period_s : float or ndarray, s
        P0 < P (``nan`` otherwise); 0 gives the maximum age 2 tau_c / (n - 1).

    Returns
    -------
    float or ndarray, yr
    """
    p = np.asarray(period_s, float)
    n = np.asarray(braking_index, float)
    p0 = np.asarray(initial_period_s, float)
    nm1 = np.where(n > 1, n - 1.0, np.nan)
    ratio = np.where((p0 >= 0) & (p0 < p), p0 / p, np.nan)
    return p / (nm1 * _pos(pdot)) * (1.0 - ratio**nm1) / SECONDS_PER_YEAR


@quantity_edge("yr", period_s="s", pdot="", braking_index="")
def max_braking_index_age(period_s, pdot, braking_index=3.0):
    """Largest possible age for braking index n (P0 -> 0), 2 tau_c / (n - 1), in yr."""
    return braking_index_age(period_s, pdot, braking_index, 0.0)


@quantity_edge("s", period_s="s", pdot="", age_yr="yr", braking_index="")
def implied_initial_period(period_s, pdot, age_yr, braking_index=3.0):
    """Initial period a star of given true age must have had.

    Inverts :func:`braking_index_age`:
    P0 = P [1 - (n - 1) t Pdot / P]^(1 / (n - 1)).

    Parameters
    ----------
    period_s : float or ndarray, s
    pdot : float or ndarray, s/s
    age_yr : float or ndarray, yr
        True age (e.g. the kinematic age).
    braking_index : float or ndarray
        n > 1.

    Returns
    -------
    float or ndarray, s
        ``nan`` where no solution exists: the age exceeds the maximum age
        2 tau_c / (n - 1), n <= 1, or Pdot <= 0.
    """
    p = np.asarray(period_s, float)
    n = np.asarray(braking_index, float)
    nm1 = np.where(n > 1, n - 1.0, np.nan)
    t = np.asarray(age_yr, float) * SECONDS_PER_YEAR
    base = 1.0 - nm1 * t * _pos(pdot) / p
    with np.errstate(invalid="ignore"):
        # base = 0 is the maximum age (P0 = 0); allow round-off just below it
        return np.where(base > -1e-12, p * np.maximum(base, 0.0) ** (1.0 / nm1), np.nan)


@quantity_edge("km/s", pm_total_masyr="mas/yr", distance_kpc="kpc")
def transverse_velocity(pm_total_masyr, distance_kpc):
    """Transverse speed v_t = mu d, in km/s, for mu in mas/yr and d in kpc."""
    return np.asarray(pm_total_masyr, float) * _MAS_YR_TO_RAD_S * np.asarray(distance_kpc, float) * _KPC_CM / 1e5


@quantity_edge("", period_s="s", pm_total_masyr="mas/yr", distance_kpc="kpc")
def shklovskii_pdot(period_s, pm_total_masyr, distance_kpc):
    """Apparent period derivative from transverse motion, P v_t^2 / (c d) = P mu^2 d / c.

    Parameters
    ----------
    period_s : float or ndarray, s
    pm_total_masyr : float or ndarray, mas/yr
        Total proper motion.
    distance_kpc : float or ndarray, kpc

    Returns
    -------
    float or ndarray, s/s
        To be subtracted from the observed Pdot (Shklovskii 1970).
    """
    mu = np.asarray(pm_total_masyr, float) * _MAS_YR_TO_RAD_S
    d = np.asarray(distance_kpc, float) * _KPC_CM
    return np.asarray(period_s, float) * mu**2 * d / _C_CM_S
