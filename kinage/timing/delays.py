"""Propagation delays beyond the geometric (Roemer and parallax) terms.

Sign convention as in :mod:`kinage.timing.model`: a barycentric emission-frame
time is t_b = t + D, so a delay that makes the pulse arrive later enters D
with a minus sign.

Solar Shapiro delay for a source at infinity, with the observer's distance
from the Sun.  The delay of a ray from an emitter at distance r_e from the
Sun to an observer at distance r (emitter-observer distance rho) is
(Shapiro 1964, Phys. Rev. Lett. 13, 789; e.g. Backer & Hellings 1986,
ARA&A 24, 537)::

    2 T_sun ln[(r_e + r + rho) / (r_e + r - rho)],   T_sun = G M_sun / c^3 = 4.925490947 us.

For a distant source in direction s seen from the observer, with R the
Sun-to-observer vector (|R| = r), r_e = |R + rho s| -> rho + R.s, so the
numerator tends to 2 rho (the same for every TOA) and the denominator to
r + R.s = r (1 - cos(elongation)), elongation the Sun-star angle seen from
the observer.  Dropping the constant (absorbed by the pulse phase)::

    Delta_S = -2 T_sun ln[ (r / 1 au) (1 - cos(elongation)) ],

r measured in astronomical units (the constant convention: Delta_S is the
angle-only form of Lorimer & Kramer 2005, Handbook of Pulsar Astronomy,
sec. 8.2, at r = 1 au).  The angle-only form drops the ln r term, which
has an annual part of about +-2 T_sun e = +-0.16 us (e = 0.0167, Earth's
orbital eccentricity).  The whole delay changes by ~10 us over a year for a
star near the ecliptic.

Cold-plasma dispersion delay (Lorimer & Kramer 2005, eq. 4.7)::

    Delta_DM = 4.148808e3 s x DM / f^2,   DM in pc cm^-3, f in MHz,

at the frequency in the barycentre frame, f_b = f_obs (1 - v.s/c) for an
observer moving with velocity v (first order Doppler shift).
"""

import numpy as np

__all__ = ["T_SUN_S", "AU_LIGHT_S", "DISPERSION_CONSTANT_S", "solar_shapiro_delay", "dispersion_delay",
           "barycentric_frequency", "cos_elongation"]

#: G M_sun / c^3 in seconds (IAU 2015 nominal solar mass parameter GM_sun = 1.3271244e20 m^3 s^-2)
T_SUN_S = 4.925490947e-6
#: astronomical unit in light-seconds (IAU 2012: 149597870700 m exactly; c = 299792458 m/s)
AU_LIGHT_S = 149597870700.0 / 299792458.0
#: dispersion constant, s MHz^2 pc^-1 cm^3 (Lorimer & Kramer 2005, eq. 4.7)
DISPERSION_CONSTANT_S = 4.148808e3


def cos_elongation(direction, sun):
    """cos of the Sun-star angle seen from the observer.

    Parameters
    ----------
    direction : ndarray (n, 3)
        Unit vectors to the star.
    sun : ndarray (n, 3)
        Observer-to-Sun vectors (any length unit).
    """
    return np.einsum("ij,ij->i", direction, sun) / np.linalg.norm(sun, axis=1)


def solar_shapiro_delay(direction, sun):
    """Solar Shapiro delay of a distant source, seconds (positive: the pulse arrives later).

    Delta_S = -2 T_sun ln[(r / 1 au) (1 - cos elongation)] = -2 T_sun ln[(r - sun.s) / 1 au],
    r = |sun| the observer-Sun distance (module docstring for the derivation).

    Parameters
    ----------
    direction : ndarray (n, 3)
        Unit vectors to the star.
    sun : ndarray (n, 3)
        Observer-to-Sun vectors, light-seconds.
    """
    r = np.linalg.norm(sun, axis=1)
    return -2.0 * T_SUN_S * np.log((r - np.einsum("ij,ij->i", direction, sun)) / AU_LIGHT_S)


def barycentric_frequency(freq_mhz, velocity, direction):
    """Observing frequency in the barycentre frame, f (1 - v.s/c); ``velocity`` in units of c."""
    return freq_mhz * (1.0 - np.einsum("ij,ij->i", velocity, direction))


def dispersion_delay(dm, freq_mhz):
    """Delta_DM = 4.148808e3 s DM / f^2, seconds; ``dm`` in pc cm^-3, ``freq_mhz`` in MHz."""
    return DISPERSION_CONSTANT_S * dm / freq_mhz**2
