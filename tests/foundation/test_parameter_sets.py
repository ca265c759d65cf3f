"""Parameter sets against their published sources."""

import numpy as np
import pytest

from kinage.errors import InputError
from kinage.kinematics.velocity_prior import velocity_prior
from kinage.params import ParameterSet, available, get, register


def test_schoenrich_solar_motion_in_galpy_default_set():
    # Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829: (U, V, W) = (11.1, 12.24, 7.25) km/s
    v = get("solar_parameters", "galpy-default")["v_sun_kms"]
    assert v[0] == pytest.approx(11.1)
    assert v[1] - 220.0 == pytest.approx(12.24)
    assert v[2] == pytest.approx(7.25)


def test_astropy_solar_parameters_match_astropy_galactocentric_defaults():
    # reference library: astropy's Galactocentric frame defaults (parameter set v4.0)
    from astropy.coordinates import Galactocentric, galactocentric_frame_defaults

    with galactocentric_frame_defaults.set("v4.0"):
        g = Galactocentric()
    p = get("solar_parameters", "astropy-v4.0")
    assert p["r0_kpc"] == pytest.approx(g.galcen_distance.to_value("kpc"))
    assert p["z0_kpc"] == pytest.approx(g.z_sun.to_value("kpc"))
    assert np.allclose(p["v_sun_kms"], g.galcen_v_sun.xyz.to_value("km/s"))


def _circular_orbit_offset_pc(potential_name, radius_kpc, vc_kms, t_max_myr=60.0):
    """Largest distance (pc) between kinage's orbit of a star launched at vc and the closed-form circle.

    Goes through kinage's own set-up of the potential (``integrate_orbits`` with the parameter set's natural
    units and the frame flip); a circular orbit keeps R and sweeps phi = vc t / R (closed form).  In astropy's
    right-handed axes a star at -x moving to +y goes clockwise: (-R cos(w t), R sin(w t), 0), w = vc / R.
    """
    import astropy.units as u

    from kinage.orbits.integrate import integrate_orbits, time_grid

    t = time_grid(t_max_myr, 61)
    orbit = integrate_orbits(np.array([[-radius_kpc, 0.0, 0.0]]), np.array([[0.0, vc_kms, 0.0]]), t,
                             get("potential", potential_name))
    w = vc_kms * (u.km / u.s).to(u.kpc / u.Myr) / radius_kpc
    ref = np.column_stack([-radius_kpc * np.cos(w * t), radius_kpc * np.sin(w * t), np.zeros_like(t)])
    return np.max(np.linalg.norm(orbit.positions(np.arange(t.size))[0] - ref, axis=-1)) * 1000


def test_mwpotential2014_circular_velocity_220_at_8kpc():
    # Bovy 2015, ApJS 216, 29: MWPotential2014 has vc = 220 km/s at R0 = 8 kpc.  Checked by flying a circular
    # orbit through kinage's unit conversion: 1 pc over ~13 kpc of arc in 60 Myr (a 1 % error in vc, ro or vo
    # moves the star by > 100 pc)
    assert _circular_orbit_offset_pc("MWPotential2014", 8.0, 220.0) < 1.0
    assert _circular_orbit_offset_pc("MWPotential2014", 8.0, 220.0 * 1.01) > 20.0


@pytest.mark.slow  # galpy builds McMillan17's expansion on first use (~10 s)
def test_mcmillan17_circular_velocity_at_sun():
    # McMillan 2017, MNRAS 465, 76: vc(R0 = 8.21 kpc) = 233.1 +- 1.4 km/s, checked through kinage's set-up of the
    # potential by the closed-form circular orbit: 25 pc over 14 kpc of arc in 60 Myr is 0.4 km/s in vc
    # (galpy's fit gives ~233.3), while a 1 % error in vc, ro or vo moves the star by > 100 pc
    assert _circular_orbit_offset_pc("McMillan17", 8.21, 233.1) < 25.0
    assert _circular_orbit_offset_pc("McMillan17", 8.21, 233.1 * 1.01) > 80.0


def test_hobbs2005_mean_speed():
    # Hobbs et al. 2005, MNRAS 360, 974: sigma = 265 km/s, mean 3-D speed 400 +- 40 km/s;
    # a Maxwellian's mean is 2 sigma sqrt(2/pi) = 422.9 km/s (analytic)
    p = velocity_prior("hobbs2005")
    assert p.mean_speed() == pytest.approx(2 * 265 * np.sqrt(2 / np.pi))
    assert 360 < p.mean_speed() < 440


def test_verbunt2017_mean_speeds_of_components():
    # Verbunt, Igoshev & Cator 2017, A&A 608, A57 abstract: mean speeds 120 and 540 km/s, weights 42/58 %
    p = velocity_prior("verbunt2017")
    means = 2 * p.sigmas * np.sqrt(2 / np.pi)
    assert np.allclose(means, [120, 540], rtol=1e-9)
    assert np.allclose(p.weights, [0.42, 0.58])


def test_igoshev2020_young_pulsars():
    # Igoshev 2020, MNRAS 494, 3663 abstract: young pulsars 20% sigma1 = 56 km/s, sigma2 = 336 km/s
    p = velocity_prior("igoshev2020")
    assert np.allclose(p.sigmas, [56, 336]) and np.allclose(p.weights, [0.2, 0.8])


def test_speed_pdf_is_normalised_and_matches_scipy_maxwell():
    # reference: scipy.stats.maxwell with scale sigma
    from scipy import integrate, stats

    p = velocity_prior("hobbs2005")
    v = np.linspace(0, 2000, 7)
    assert np.allclose(p.speed_pdf(v), stats.maxwell(scale=265).pdf(v))
    assert integrate.quad(lambda x: float(p.speed_pdf(x)), 0, 4000)[0] == pytest.approx(1, abs=1e-8)


def test_radial_given_transverse_reproduces_mean_speed():
    # draw v_t from the projected distribution, v_r conditionally: the 3-D speeds must follow
    # the prior (Hobbs et al. 2005 Maxwellian; KS test against scipy.stats.maxwell)
    from scipy import stats

    rng = np.random.default_rng(5)
    p = velocity_prior("verbunt2017")
    vel = p.sample_velocity(20000, rng)
    vt = np.hypot(vel[:, 0], vel[:, 1])
    vr = p.sample_radial_given_transverse(vt, rng)
    speed = np.hypot(vt, vr)
    cdf = lambda x: p.weights @ stats.maxwell(scale=p.sigmas[:, None]).cdf(np.atleast_1d(x))  # noqa: E731
    assert stats.kstest(speed, cdf).pvalue > 0.01


def test_unknown_name_lists_choices():
    with pytest.raises(InputError, match="choose one of: .*hobbs2005"):
        get("velocity_prior", "nope", where="[trace] velocity_prior")


def test_user_registration_and_read_only():
    ps = register(ParameterSet("velocity_prior", "test-slow", {"components": ((1.0, 50.0),)}, references=("none",)))
    assert "test-slow" in available("velocity_prior")
    with pytest.raises(TypeError):
        ps.values["components"] = ()
    with pytest.raises(InputError, match="exists already"):
        register(ParameterSet("potential", "MWPotential2014", {}), overwrite=True)
