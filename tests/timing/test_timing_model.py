"""Timing model: constants, ephemeris, analytic partials against finite differences, time precision."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import SkyCoord, get_body_barycentric
from astropy.time import Time

from kinage.timing.model import AU_LIGHT_S, MAS_RAD, TimeGrid, TimingModel, earth_position

REF = Time(61200.0, format="mjd", scale="tdb")


def _ecliptic_pole():
    pole = SkyCoord(lon=0 * u.deg, lat=90 * u.deg, frame="barycentrictrueecliptic", equinox="J2000").icrs
    return pole.ra.deg, pole.dec.deg


def _grid(n=200, days=730.0):
    return TimeGrid.from_times(REF + np.linspace(-days / 2, days / 2, n) * u.d, REF)


def test_au_light_seconds_from_astropy_constants():
    # IAU 2012 Resolution B2: au = 149 597 870 700 m exactly; AU/c = 499.004784 s
    assert AU_LIGHT_S == pytest.approx(const.au.to_value(u.m) / const.c.to_value(u.m / u.s), rel=1e-15)
    assert AU_LIGHT_S == pytest.approx(499.004784, abs=1e-6)


def test_delay_per_arcsec_at_ecliptic_pole():
    # Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, sec. 8.2: a position error of 1 arcsec gives an
    # annual residual of amplitude (AU/c) x 1 arcsec ~ 2.42 ms (scaled by the Earth's distance, 0.983-1.017 au)
    ra, dec = _ecliptic_pole()
    model = TimingModel(ra, dec)
    part = model.astro_partials(_grid(400, 365.25))
    amp_ms = np.max(np.hypot(part[:, 0], part[:, 1])) * 1000.0 * 1e3
    assert AU_LIGHT_S * 4.8481368e-6 * 1e3 == pytest.approx(2.42, abs=0.005)
    assert 0.975 * 2.419 < amp_ms < 1.03 * 2.419


def test_earth_distance_range_over_a_year():
    # facts of the trade: perihelion ~0.983 au, aphelion ~1.017 au (heliocentric); the barycentric distance
    # differs by the Sun's offset from the barycentre (<~0.01 au)
    t = Time(61000, format="mjd", scale="tdb") + np.arange(0, 366, 0.5) * u.d
    helio = (get_body_barycentric("earth", t) - get_body_barycentric("sun", t)).norm().to_value(u.au)
    assert helio.min() == pytest.approx(0.9833, abs=0.001)
    assert helio.max() == pytest.approx(1.0167, abs=0.001)
    bary = np.linalg.norm(earth_position(t), axis=1) / AU_LIGHT_S
    assert 0.97 < bary.min() < 0.995
    assert 1.005 < bary.max() < 1.03


def test_astrometric_partials_match_finite_differences_of_full_delay():
    # analytic derivatives of r.s/c - varpi (|r|^2 - (r.s)^2)/(2 c AU) against central differences
    model = TimingModel(83.1, -31.4)
    grid = _grid(60, 3000.0)
    astro = np.array([20.0, -15.0, 60.0, -35.0, 5.0])
    part = model.astro_partials(grid, astro)
    for i, h in enumerate((0.5, 0.5, 0.5, 0.5, 0.5)):
        step = np.zeros(5)
        step[i] = h
        fd = (model.delay(grid, astro + step) - model.delay(grid, astro - step)) / (2 * h)
        assert np.max(np.abs(fd - part[:, i])) < 1e-5 * np.max(np.abs(part[:, i]))


def test_proper_motion_partials_are_position_partials_times_time():
    model = TimingModel(201.0, 40.0)
    grid = _grid(30, 2000.0)
    part = model.astro_partials(grid)
    yr = grid.seconds / (365.25 * 86400)
    assert np.allclose(part[:, 2], part[:, 0] * yr, rtol=1e-12, atol=0)
    assert np.allclose(part[:, 3], part[:, 1] * yr, rtol=1e-12, atol=0)


def test_parallax_amplitude():
    # parallax delay amplitude (AU^2/(2 c d)) : 1.21 us for d = 1 kpc (Lorimer & Kramer 2005, sec. 8.2)
    ra, dec = _ecliptic_pole()
    model = TimingModel(ra, dec)
    # at the ecliptic pole r.s ~ 0, so the delay is -(|r|^2)/(2 c d): constant ~1.21 us at 1 mas
    d_plx = model.astro_partials(_grid(100, 365.25))[:, 4]
    assert np.median(-d_plx) * 1e6 == pytest.approx(AU_LIGHT_S * MAS_RAD / 2 * 1e6, rel=0.04)
    assert AU_LIGHT_S * MAS_RAD / 2 * 1e6 == pytest.approx(1.21, abs=0.005)


def test_spin_columns_match_finite_differences():
    model = TimingModel(10.0, 20.0, freq=2.5, freq_dot=-3e-13, spin_terms=3)
    grid = _grid(40, 2000.0)
    theta = model.start_vector([1.0, 2.0, 3.0, 4.0, 0.5])
    pulses = model.pulse_numbers(grid, theta)
    design = model.design_matrix(grid, theta, pulses)
    for i, h in ((5, 1e-2), (6, 1e-10), (7, 3e-18), (8, 1e-25)):  # steps of ~0.01 cycle
        step = np.zeros(theta.size)
        step[i] = h
        fd = (model.residuals(grid, theta + step, pulses) - model.residuals(grid, theta - step, pulses)) / (2 * h)
        assert np.allclose(fd, design[:, i], rtol=1e-4, atol=1e-6 * np.max(np.abs(design[:, i])))


def test_time_grid_keeps_sub_microsecond_precision():
    # two-part times: a 0.1 us offset survives, while float64 MJD near 6e4 has a 0.6 us ulp
    base = Time(61000, 0.123456789, format="mjd", scale="tdb")
    shifted = base + 1e-7 * u.s
    grid = TimeGrid.from_times(Time([base, shifted]), REF)
    assert grid.seconds[1] - grid.seconds[0] == pytest.approx(1e-7, abs=2e-9)
    assert np.spacing(61000.123456789) * 86400 > 5e-7
