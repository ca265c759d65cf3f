"""Propagation delays beyond the geometric (Roemer and parallax) terms.

Sign convention as in :mod:`kinage.timing.model`: a barycentric emission-frame
time is t_b = t + D, so a delay that makes the pulse arrive later enters D
with a minus sign.

Solar Shapiro delay (Lorimer & Kramer 2005, Handbook of Pulsar Astronomy,
sec. 8.2; Lorimer 2008, Living Rev. Relativ. 11, 8, eq. 12)::

    Delta_S = -2 T_sun ln(1 - cos(elongation)),   T_sun = G M_sun / c^3 = 4.925490947 us,

elongation the angle between the Sun and the star seen from the observer.
It changes by ~10 us over a year for a star near the ecliptic.

Cold-plasma dispersion delay (Lorimer & Kramer 2005, eq. 4.7)::

    Delta_DM = 4.148808e3 s x DM / f^2,   DM in pc cm^-3, f in MHz,

at the frequency in the barycentre frame, f_b = f_obs (1 - v.s/c) for an
observer moving with velocity v (first order Doppler shift).
"""

import numpy as np

__all__ = ["T_SUN_S", "DISPERSION_CONSTANT_S", "solar_shapiro_delay", "dispersion_delay", "barycentric_frequency",
           "cos_elongation"]

#: G M_sun / c^3 in seconds (IAU 2015 nominal solar mass parameter GM_sun = 1.3271244e20 m^3 s^-2)
T_SUN_S = 4.925490947e-6
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
    """Delta_S = -2 T_sun ln(1 - cos elongation), seconds (positive: the pulse arrives later)."""
    return -2.0 * T_SUN_S * np.log1p(-cos_elongation(direction, sun))


def barycentric_frequency(freq_mhz, velocity, direction):
    """Observing frequency in the barycentre frame, f (1 - v.s/c); ``velocity`` in units of c."""
    return freq_mhz * (1.0 - np.einsum("ij,ij->i", velocity, direction))


def dispersion_delay(dm, freq_mhz):
    """Delta_DM = 4.148808e3 s DM / f^2, seconds; ``dm`` in pc cm^-3, ``freq_mhz`` in MHz."""
    return DISPERSION_CONSTANT_S * dm / freq_mhz**2
