"""Orbits against galpy used directly and against the circular-orbit closed form in a real potential.

kinage converts ICRS astrometry to its own Galactocentric axes, flips them into galpy's left-handed frame
and back, and scales by the potential's natural units; galpy's own ``Orbit`` built from an astropy
``SkyCoord`` (Bovy 2015, ApJS 216, 29) does all of that independently.  The two must give the same
heliocentric positions at every time.
"""

import astropy.coordinates as coord
import astropy.units as u
import numpy as np
import pytest

from kinage._galpy import import_galpy
from kinage.orbits.frames import solar_frame
from kinage.orbits.integrate import integrate_orbits, time_grid
from kinage.params import get

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning", "ignore::RuntimeWarning")

# invented stars: (ra deg, dec deg, distance pc, pm_ra_cosdec mas/yr, pm_dec mas/yr, radial velocity km/s),
# one close to the north celestial pole and one just below ra = 360 deg
STARS = np.array([[75.0, 30.0, 400.0, 60.0, -35.0, 40.0],
                  [300.0, -60.0, 1500.0, -20.0, 15.0, -100.0],
                  [12.0, 89.8, 250.0, 110.0, 70.0, 5.0],
                  [359.95, -4.0, 800.0, -45.0, 10.0, 220.0]])


# The Sun of galpy's MWPotential2014 set-up, typed in from the papers rather than taken from kinage's parameter
# sets (so a wrong solar value in kinage cannot cancel): R0 = 8 kpc and vc = 220 km/s (Bovy 2015, ApJS 216, 29),
# solar motion (U, V, W) = (11.1, 12.24, 7.25) km/s (Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829),
# z_sun = 20.8 pc (Bennett & Bovy 2019, MNRAS 482, 1417); astropy's Galactocentric v_sun = (U, vc + V, W).
R0_KPC, Z_SUN_KPC = 8.0, 0.0208
V_SUN_KMS = (11.1, 220.0 + 12.24, 7.25)


def _galpy_heliocentric(stars, t_myr):
    """ICRS Cartesian positions (kpc) from the Sun at times t, from galpy's Orbit(SkyCoord) alone."""
    import_galpy()
    from galpy.orbit import Orbit
    from galpy.potential import MWPotential2014

    c = coord.SkyCoord(ra=stars[:, 0] * u.deg, dec=stars[:, 1] * u.deg, distance=stars[:, 2] * u.pc,
                       pm_ra_cosdec=stars[:, 3] * u.mas / u.yr, pm_dec=stars[:, 4] * u.mas / u.yr,
                       radial_velocity=stars[:, 5] * u.km / u.s, galcen_distance=R0_KPC * u.kpc,
                       z_sun=Z_SUN_KPC * u.kpc, galcen_v_sun=coord.CartesianDifferential(V_SUN_KMS * u.km / u.s))
    o = Orbit(c, ro=8.0, vo=220.0)  # MWPotential2014's natural units (Bovy 2015)
    o.integrate(t_myr * u.Myr, MWPotential2014, method="dop853_c")
    sc = o.SkyCoord(t_myr * u.Myr).icrs.cartesian
    return np.stack([sc.x.to_value(u.kpc), sc.y.to_value(u.kpc), sc.z.to_value(u.kpc)], axis=-1)


def test_back_traced_positions_match_galpy_orbit_from_skycoord():
    frame = solar_frame("galpy-default")  # Sun of galpy's MWPotential2014 set-up (R0 = 8 kpc, Schoenrich 2010)
    t = time_grid(5.0, 101)
    pos, vel = frame.to_galactocentric(*STARS.T)
    ours = frame.to_heliocentric_icrs(integrate_orbits(pos, vel, t, get("potential", "MWPotential2014"))
                                      .positions(np.arange(t.size)))
    ref = _galpy_heliocentric(STARS, t)
    moved = np.linalg.norm(ref - ref[:, :1], axis=-1).max() * 1000
    assert moved > 500  # pc: the stars really move
    # 0.01 pc after 5 Myr (the integrators agree to ~1e-3 pc; a unit or sign slip gives parsecs)
    assert np.max(np.linalg.norm(ours - ref, axis=-1)) * 1000 < 0.01


@pytest.mark.parametrize("radius_kpc", [4.0, 8.0, 12.0])
def test_circular_orbit_closed_form_in_mwpotential2014(radius_kpc):
    # A circular orbit at R with v = vc(R) keeps R and sweeps phi = vc t / R (closed form).  vc(8 kpc) = 220 km/s
    # (Bovy 2015, ApJS 216, 29, MWPotential2014); at other radii vc comes from galpy's vcirc in physical units,
    # which does not pass through kinage's own unit conversion.
    import_galpy()
    from galpy.potential import MWPotential2014, vcirc

    vc = 220.0 if radius_kpc == 8.0 else vcirc(MWPotential2014, radius_kpc * u.kpc, ro=8.0, vo=220.0, quantity=False)
    _circular_orbit_check(get("potential", "MWPotential2014"), radius_kpc, vc)


def _circular_orbit_check(pset, radius_kpc, vc_kms, t_max_myr=60.0):
    # astropy's right-handed Galactocentric axes: a star at -x moving towards +y (like the Sun) goes clockwise
    # seen from +z, so at time t it is at (-R cos(w t), R sin(w t), 0) with w = vc / R
    t = time_grid(t_max_myr, 61)
    pos = np.array([[-radius_kpc, 0.0, 0.0]])
    vel = np.array([[0.0, vc_kms, 0.0]])
    p = integrate_orbits(pos, vel, t, pset).positions(np.arange(t.size))[0]
    w = vc_kms * (u.km / u.s).to(u.kpc / u.Myr) / radius_kpc  # rad/Myr
    ref = np.column_stack([-radius_kpc * np.cos(w * t), radius_kpc * np.sin(w * t), np.zeros_like(t)])
    assert abs(w * t[-1]) > 1.0  # over a radian of the orbit
    # 1 pc over ~1000 pc of arc: 1e-3 of the motion (a 1 % unit error moves it by > 10 pc)
    assert np.max(np.linalg.norm(p - ref, axis=-1)) * 1000 < 1.0
