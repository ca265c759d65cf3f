"""Monte Carlo draws of association centres and their motion.

Each association's centre position, distance, proper motion and radial
velocity are drawn independently from Gaussians with the table's errors (the
distance truncated at zero); radius and age are kept fixed.
"""

from dataclasses import dataclass

import numpy as np

from ..kinematics.distance import sample_distance_gaussian

__all__ = ["AssociationDraws", "draw_associations"]


@dataclass
class AssociationDraws:
    """Draws of all associations, stacked: rows ``j * m ... (j + 1) * m - 1`` belong to association j.

    Attributes
    ----------
    names : list of str
    m : int
        Draws per association.
    ra_deg, dec_deg, distance_pc, pm_ra_cosdec, pm_dec, radial_velocity : ndarray, shape (n_assoc * m,)
        In deg, deg, pc, mas/yr, mas/yr, km/s.
    radius_pc, age_myr : ndarray, shape (n_assoc,)
    """

    names: list
    m: int
    ra_deg: np.ndarray
    dec_deg: np.ndarray
    distance_pc: np.ndarray
    pm_ra_cosdec: np.ndarray
    pm_dec: np.ndarray
    radial_velocity: np.ndarray
    radius_pc: np.ndarray
    age_myr: np.ndarray

    @property
    def n_assoc(self):
        return len(self.names)

    def rows(self, j):
        """Rows of association ``j``."""
        return np.arange(j * self.m, (j + 1) * self.m)

    def galactocentric(self, frame):
        """Positions (kpc) and velocities (km/s) in the Galactocentric frame of ``frame``."""
        return frame.to_galactocentric(self.ra_deg, self.dec_deg, self.distance_pc,
                                       self.pm_ra_cosdec, self.pm_dec, self.radial_velocity)


def draw_associations(table, m, rng):
    """Draw ``m`` realisations of every association.

    Parameters
    ----------
    table : AssociationTable
    m : int
        Draws per association.
    rng : numpy.random.Generator | int | None

    Returns
    -------
    AssociationDraws
    """
    rng = np.random.default_rng(rng)
    parts = {k: [] for k in ("ra", "dec", "d", "pm_ra_cosdec", "pm_dec", "rv")}
    for a in table:
        dec = a.dec + a.dec_error * rng.standard_normal(m)
        dec = np.clip(dec, -90.0, 90.0)
        ra = (a.ra + a.ra_error * rng.standard_normal(m) / np.cos(np.radians(a.dec))) % 360.0
        parts["ra"].append(ra)
        parts["dec"].append(dec)
        parts["d"].append(sample_distance_gaussian(a.distance, a.distance_error, m, rng))
        parts["pm_ra_cosdec"].append(a.pm_ra_cosdec + a.pm_ra_cosdec_error * rng.standard_normal(m))
        parts["pm_dec"].append(a.pm_dec + a.pm_dec_error * rng.standard_normal(m))
        parts["rv"].append(a.radial_velocity + a.radial_velocity_error * rng.standard_normal(m))
    cat = {k: np.concatenate(v) for k, v in parts.items()}
    return AssociationDraws(table.names, int(m), cat["ra"], cat["dec"], cat["d"], cat["pm_ra_cosdec"], cat["pm_dec"],
                            cat["rv"], table.column("radius"), table.column("age"))
