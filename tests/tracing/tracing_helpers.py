"""Helpers for the tracing tests."""

import numpy as np


def random_states(rng, n, spread_kpc=0.5, speed=300.0):
    """Galactocentric positions (kpc) near the Sun and velocities (km/s)."""
    pos = np.column_stack([-8.1 + spread_kpc * rng.normal(size=n), spread_kpc * rng.normal(size=n),
                           0.1 * rng.normal(size=n)])
    vel = np.column_stack([rng.normal(0, speed, n), 230 + rng.normal(0, speed, n), rng.normal(0, speed, n)])
    return pos, vel


# The Sun of galpy's MWPotential2014 set-up, typed in from the papers rather than taken from kinage's parameter
# sets: R0 = 8 kpc, vc = 220 km/s (Bovy 2015, ApJS 216, 29), (U, V, W) = (11.1, 12.24, 7.25) km/s (Schoenrich,
# Binney & Dehnen 2010, MNRAS 403, 1829), z_sun = 20.8 pc (Bennett & Bovy 2019, MNRAS 482, 1417).
R0_KPC, Z_SUN_KPC = 8.0, 0.0208
V_SUN_KMS = (11.1, 220.0 + 12.24, 7.25)


def galpy_flown_star(assoc, age_myr, kick_kms, rng):
    """Present ICRS SkyCoord of a star born at an association's centre ``age_myr`` ago, flown with galpy alone.

    The association (dict with ra, dec [deg], distance [pc], pm_ra_cosdec, pm_dec [mas/yr], rv [km/s]) is
    flown back with galpy's own ``Orbit`` built from a ``SkyCoord`` (Bovy 2015, ApJS 216, 29; MWPotential2014,
    ro = 8 kpc, vo = 220 km/s), the star launched with an isotropic kick and flown forward: nothing of
    kinage's integrator or frames is used, so its errors cannot cancel.
    """
    import astropy.coordinates as coord
    import astropy.units as u

    from kinage._galpy import import_galpy

    import_galpy()
    from galpy.orbit import Orbit
    from galpy.potential import MWPotential2014

    c = coord.SkyCoord(ra=assoc["ra"] * u.deg, dec=assoc["dec"] * u.deg, distance=assoc["distance"] * u.pc,
                       pm_ra_cosdec=assoc["pm_ra_cosdec"] * u.mas / u.yr, pm_dec=assoc["pm_dec"] * u.mas / u.yr,
                       radial_velocity=assoc["rv"] * u.km / u.s, galcen_distance=R0_KPC * u.kpc,
                       z_sun=Z_SUN_KPC * u.kpc, galcen_v_sun=coord.CartesianDifferential(V_SUN_KMS * u.km / u.s))
    a = Orbit(c, ro=8.0, vo=220.0)
    a.integrate(np.linspace(0.0, -age_myr, 201) * u.Myr, MWPotential2014, method="dop853_c")
    tb = -age_myr * u.Myr
    kick = rng.normal(size=3)
    kick *= kick_kms / np.linalg.norm(kick)
    phi = a.phi(tb)
    vx, vy = a.vx(tb, quantity=False) + kick[0], a.vy(tb, quantity=False) + kick[1]
    vz = a.vz(tb, quantity=False) + kick[2]
    vr, vt = vx * np.cos(phi) + vy * np.sin(phi), -vx * np.sin(phi) + vy * np.cos(phi)
    s = Orbit([a.R(tb, quantity=False) / 8.0, vr / 220.0, vt / 220.0, a.z(tb, quantity=False) / 8.0, vz / 220.0, phi],
              ro=8.0, vo=220.0, zo=Z_SUN_KPC, solarmotion=a._solarmotion)
    s.integrate(np.linspace(0.0, age_myr, 201) * u.Myr, MWPotential2014, method="dop853_c")
    return s.SkyCoord(age_myr * u.Myr).icrs
