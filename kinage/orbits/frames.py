"""Heliocentric ICRS <-> Galactocentric Cartesian coordinates in plain numpy.

The Galactocentric frame is astropy's (right-handed): the Galactic centre at
the origin, the Sun at x ~ -R0, y pointing along Galactic rotation at the Sun,
z towards the north Galactic pole.  The transformation follows the
construction documented for astropy's ``Galactocentric`` frame: rotate ICRS so
that x points at the Galactic centre (``galcen_coord``), roll about x so the
Galactic plane is the x-y plane, translate by the Sun-centre distance, tilt by
asin(z_sun / R0) about y, and add the Sun's velocity ``galcen_v_sun``.  The
matrices are built once per :class:`SolarFrame`; the per-draw work is a few
vectorised array operations.  Tests compare with astropy's frame.

Units: positions in kpc, velocities in km/s, angles in degrees, proper motions
in mas/yr, distances in pc.
"""

import functools
from dataclasses import dataclass

import numpy as np

from ..params import get

__all__ = ["SolarFrame", "solar_frame", "K_MASYR_KPC", "KMS_TO_PCMYR", "GALCEN_RA_DEG", "GALCEN_DEC_DEG",
           "ROLL0_DEG", "SOLAR_PECULIAR_KMS", "icrs_to_galactic_matrix"]

#: km/s per (mas/yr x kpc): 1 au / yr in km/s (IAU 2012 au, Julian year)
K_MASYR_KPC = 149597870.7 / (365.25 * 86400.0)
#: pc/Myr per km/s
KMS_TO_PCMYR = 1e6 * 365.25 * 86400.0 / 3.0856775814913673e13
#: ICRS position of Sgr A* used by astropy's Galactocentric frame (Reid & Brunthaler 2004)
GALCEN_RA_DEG = 266.4051
GALCEN_DEC_DEG = -28.936175
#: roll that aligns the frame with the Galactic plane (astropy ``Galactocentric.get_roll0``)
ROLL0_DEG = 58.5986320306
#: solar motion relative to the local standard of rest (U, V, W), km/s:
#: Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829
SOLAR_PECULIAR_KMS = (11.1, 12.24, 7.25)


def _rot(angle_deg, axis):
    """Coordinate-system rotation matrix (astropy ``rotation_matrix`` convention)."""
    a = np.radians(angle_deg)
    c, s = np.cos(a), np.sin(a)
    if axis == "x":
        return np.array([[1, 0, 0], [0, c, s], [0, -s, c]])
    if axis == "y":
        return np.array([[c, 0, -s], [0, 1, 0], [s, 0, c]])
    return np.array([[c, s, 0], [-s, c, 0], [0, 0, 1]])


def _icrs_basis(ra_deg, dec_deg):
    """Unit vectors (radial, east, north) in ICRS Cartesian, each shape (..., 3)."""
    a, d = np.radians(ra_deg), np.radians(dec_deg)
    ca, sa, cd, sd = np.cos(a), np.sin(a), np.cos(d), np.sin(d)
    rhat = np.stack([cd * ca, cd * sa, sd], axis=-1)
    ehat = np.stack([-sa, ca, np.zeros_like(a)], axis=-1)
    nhat = np.stack([-sd * ca, -sd * sa, cd], axis=-1)
    return rhat, ehat, nhat


@dataclass(frozen=True)
class SolarFrame:
    """Where the Sun is and how it moves, with the matrices of the transformation.

    Attributes
    ----------
    name : str
        Name of the solar parameter set.
    r0_kpc : float
        Sun - Galactic centre distance, kpc.
    z0_kpc : float
        Height of the Sun above the mid-plane, kpc.
    v_sun_kms : ndarray, shape (3,)
        Sun's Galactocentric Cartesian velocity, km/s.
    roll_deg : float
        Extra roll about the x axis, degrees.
    """

    name: str
    r0_kpc: float
    z0_kpc: float
    v_sun_kms: np.ndarray
    roll_deg: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "v_sun_kms", np.asarray(self.v_sun_kms, float).reshape(3))

    @property
    def matrix(self):
        """Rotation ICRS -> Galactocentric axes (3x3), including the tilt."""
        R = _rot(ROLL0_DEG - self.roll_deg, "x") @ _rot(-GALCEN_DEC_DEG, "y") @ _rot(GALCEN_RA_DEG, "z")
        H = _rot(-np.degrees(np.arcsin(self.z0_kpc / self.r0_kpc)), "y")
        return H @ R

    @property
    def offset_kpc(self):
        """Galactocentric position of the Sun, kpc, shape (3,)."""
        H = _rot(-np.degrees(np.arcsin(self.z0_kpc / self.r0_kpc)), "y")
        return -(H @ np.array([self.r0_kpc, 0.0, 0.0]))

    @property
    def circular_speed_kms(self):
        """Local circular speed: Sun's y velocity minus its peculiar V (Schoenrich et al. 2010), km/s."""
        return float(self.v_sun_kms[1] - SOLAR_PECULIAR_KMS[1])

    def to_galactocentric(self, ra_deg, dec_deg, distance_pc, pm_ra_cosdec, pm_dec, radial_velocity):
        """Heliocentric ICRS -> Galactocentric Cartesian.

        Parameters
        ----------
        ra_deg, dec_deg : array_like, deg
        distance_pc : array_like, pc
        pm_ra_cosdec, pm_dec : array_like, mas/yr
        radial_velocity : array_like, km/s

        Returns
        -------
        pos : ndarray, shape (n, 3), kpc
        vel : ndarray, shape (n, 3), km/s
        """
        rhat, ehat, nhat = _icrs_basis(np.atleast_1d(ra_deg), np.atleast_1d(dec_deg))
        dk = np.atleast_1d(np.asarray(distance_pc, float)) / 1000.0
        A = self.matrix
        pos_icrs = rhat * dk[:, None]
        vt = K_MASYR_KPC * dk
        vel_icrs = (rhat * np.atleast_1d(radial_velocity)[:, None]
                    + ehat * (vt * np.atleast_1d(pm_ra_cosdec))[:, None]
                    + nhat * (vt * np.atleast_1d(pm_dec))[:, None])
        return pos_icrs @ A.T + self.offset_kpc, vel_icrs @ A.T + self.v_sun_kms

    def line_of_sight(self, ra_deg, dec_deg):
        """Unit vector from the Sun towards (ra, dec) in Galactocentric axes, shape (n, 3)."""
        rhat, _, _ = _icrs_basis(np.atleast_1d(ra_deg), np.atleast_1d(dec_deg))
        return rhat @ self.matrix.T

    def to_heliocentric_icrs(self, pos_kpc):
        """Galactocentric positions (kpc, shape (..., 3)) -> ICRS Cartesian from the Sun, kpc."""
        return (np.asarray(pos_kpc) - self.offset_kpc) @ self.matrix

    def to_galactic_lb(self, pos_kpc):
        """Galactocentric positions (kpc) -> Galactic longitude, latitude (deg) and distance (kpc) seen from the Sun."""
        xyz = self.to_heliocentric_icrs(pos_kpc) @ icrs_to_galactic_matrix().T
        d = np.linalg.norm(xyz, axis=-1)
        lon = np.degrees(np.arctan2(xyz[..., 1], xyz[..., 0])) % 360.0
        lat = np.degrees(np.arcsin(np.clip(xyz[..., 2] / np.where(d > 0, d, 1.0), -1, 1)))
        return lon, lat, d

    def lsr_velocity(self, pos_kpc):
        """Velocity of circular rotation (flat rotation curve) at Galactocentric positions, km/s."""
        pos = np.asarray(pos_kpc, float)
        R = np.hypot(pos[..., 0], pos[..., 1])
        f = self.circular_speed_kms / np.where(R > 0, R, 1.0)
        return np.stack([pos[..., 1] * f, -pos[..., 0] * f, np.zeros_like(R)], axis=-1)

    def corotating(self, pos_kpc, t_myr):
        """Positions rotated into the frame co-rotating with the local standard of rest.

        A point moving on the Sun's circular orbit keeps its present position.

        Parameters
        ----------
        pos_kpc : ndarray, shape (..., 3), kpc
        t_myr : array_like broadcastable to pos[..., 0], Myr (negative in the past)
        """
        omega = self.circular_speed_kms * KMS_TO_PCMYR / (self.r0_kpc * 1000.0)  # rad/Myr
        ang = omega * np.asarray(t_myr)  # rotation is clockwise seen from +z: undo phi(t) = phi0 - omega t
        c, s = np.cos(ang), np.sin(ang)
        x, y = pos_kpc[..., 0], pos_kpc[..., 1]
        return np.stack([c * x - s * y, s * x + c * y, pos_kpc[..., 2]], axis=-1)

    def summary(self):
        return {"name": self.name, "r0_kpc": self.r0_kpc, "z0_kpc": self.z0_kpc,
                "v_sun_kms": [float(v) for v in self.v_sun_kms], "roll_deg": self.roll_deg}


@functools.cache
def icrs_to_galactic_matrix():
    """Rotation ICRS -> Galactic (3x3; column j: Galactic components of ICRS axis j).

    IAU 1958 Galactic pole and origin in ICRS as used by astropy (Hipparcos
    1997, vol. 1, sect. 1.5.3); obtained from astropy on first use (not at
    import), so the per-draw work stays plain numpy.
    """
    from astropy.coordinates import ICRS, CartesianRepresentation, Galactic

    g = ICRS(CartesianRepresentation(np.eye(3).T)).transform_to(Galactic())
    return np.asarray(g.cartesian.xyz)


def __getattr__(name):
    if name == "_ICRS_TO_GALACTIC":  # older name, computed on first use
        return icrs_to_galactic_matrix()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def solar_frame(name, where="[trace] solar_parameters"):
    """The :class:`SolarFrame` of the solar parameter set ``name``."""
    p = get("solar_parameters", name, where=where)
    v = p.values
    return SolarFrame(p.name, float(v["r0_kpc"]), float(v["z0_kpc"]), np.asarray(v["v_sun_kms"], float),
                      float(v.get("roll_deg", 0.0)))
