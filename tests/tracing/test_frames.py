"""Heliocentric <-> Galactocentric conversions checked against astropy's Galactocentric frame."""

import astropy.coordinates as coord
import astropy.units as u
import numpy as np
import pytest

from kinage.orbits.frames import KMS_TO_PCMYR, solar_frame


@pytest.mark.parametrize("name", ["astropy-v4.0", "galpy-default", "mcmillan17"])
def test_to_galactocentric_matches_astropy(name):
    # Reference: astropy.coordinates.Galactocentric with galcen_distance=r0, z_sun=z0,
    # galcen_v_sun=v_sun, roll (astropy documentation, "Transforming to Galactocentric coordinates").
    f = solar_frame(name)
    rng = np.random.default_rng(11)
    n = 200
    ra, dec = rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    d, pa, pd, rv = rng.uniform(5, 8000, n), rng.normal(0, 80, n), rng.normal(0, 80, n), rng.normal(0, 200, n)
    pos, vel = f.to_galactocentric(ra, dec, d, pa, pd, rv)
    sc = coord.SkyCoord(ra=ra * u.deg, dec=dec * u.deg, distance=d * u.pc, pm_ra_cosdec=pa * u.mas / u.yr,
                        pm_dec=pd * u.mas / u.yr, radial_velocity=rv * u.km / u.s)
    gc = sc.transform_to(coord.Galactocentric(galcen_distance=f.r0_kpc * u.kpc, z_sun=f.z0_kpc * u.kpc,
                                              galcen_v_sun=f.v_sun_kms * u.km / u.s, roll=f.roll_deg * u.deg))
    np.testing.assert_allclose(pos, gc.cartesian.xyz.to_value(u.kpc).T, atol=1e-9)
    np.testing.assert_allclose(vel, gc.velocity.d_xyz.to_value(u.km / u.s).T, atol=1e-8)
    # and back: Galactic longitude / latitude / distance seen from the Sun (astropy Galactic frame)
    lon, lat, dist = f.to_galactic_lb(pos)
    dl = (lon - sc.galactic.l.deg + 180) % 360 - 180
    assert np.max(np.abs(dl * np.cos(np.radians(lat)))) < 1e-8
    np.testing.assert_allclose(lat, sc.galactic.b.deg, atol=1e-8)
    np.testing.assert_allclose(dist * 1000, d, rtol=1e-10)


def test_unit_constants():
    # 1 au/yr in km/s and 1 km/s in pc/Myr from astropy units (IAU 2012 au, Julian year)
    from kinage.orbits.frames import K_MASYR_KPC

    assert K_MASYR_KPC == pytest.approx((1 * u.au / u.yr).to_value(u.km / u.s), rel=1e-12)
    assert KMS_TO_PCMYR == pytest.approx((1 * u.km / u.s).to_value(u.pc / u.Myr), rel=1e-12)


def test_corotating_frame_keeps_lsr_point_fixed():
    # a point on the Sun's circular orbit (angular speed v_c / R0) must stay where the Sun is today
    f = solar_frame("galpy-default")
    om = f.circular_speed_kms * KMS_TO_PCMYR / (f.r0_kpc * 1000)
    p = f.offset_kpc
    R, phi0 = np.hypot(p[0], p[1]), np.arctan2(p[1], p[0])
    t = np.array([-1.0, -5.0, -10.0])
    pt = np.stack([R * np.cos(phi0 - om * t), R * np.sin(phi0 - om * t), np.full(3, p[2])], axis=-1)
    np.testing.assert_allclose(f.corotating(pt, t), np.tile(p, (3, 1)), atol=1e-12)
