"""Each potential goes with its own Sun: checked against galpy's own numbers."""

import numpy as np
import pytest

from kinage import scenario_from_dict
from kinage.orbits.frames import solar_frame
from kinage.params import get
from kinage.params.registry import galaxy_mismatch, galaxy_pair


def _galpy():
    from kinage._galpy import import_galpy

    import_galpy()


def test_default_pairs_are_consistent():
    # the potential's own Sun: galpy-default with MWPotential2014, mcmillan17 with McMillan17 (Bovy 2015; McMillan 2017)
    for pot, sun in (("MWPotential2014", "galpy-default"), ("McMillan17", "mcmillan17"), ("none", "galpy-default")):
        p, s, mismatch = galaxy_pair(pot)
        assert s.name == sun and mismatch is None
        assert galaxy_mismatch(p, s) is None


def test_galpy_default_sun_matches_galpy_orbit_defaults():
    # reference library: galpy's Orbit with radec=True and its default ro, vo, zo and solar motion
    # (Bovy 2015, ApJS 216, 29: R0 = 8 kpc, vc = 220 km/s; Schoenrich et al. 2010 solar motion)
    _galpy()
    from galpy.orbit import Orbit

    f = solar_frame(galaxy_pair("MWPotential2014")[1].name)
    rng = np.random.default_rng(3)
    n = 20
    ra, dec = rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    d_pc, pmra, pmdec, rv = rng.uniform(100, 2000, n), rng.normal(0, 30, n), rng.normal(0, 30, n), rng.normal(0, 80, n)
    o = Orbit(np.column_stack([ra, dec, d_pc / 1e3, pmra, pmdec, rv]), radec=True)
    assert o._ro == pytest.approx(f.r0_kpc) and o._vo == pytest.approx(220.0)
    pos, vel = f.to_galactocentric(ra, dec, d_pc, pmra, pmdec, rv)
    R = np.hypot(pos[:, 0], pos[:, 1])
    vR = (pos[:, 0] * vel[:, 0] + pos[:, 1] * vel[:, 1]) / R
    vT = -(pos[:, 0] * vel[:, 1] - pos[:, 1] * vel[:, 0]) / R  # astropy's frame is right-handed, galpy's left-handed
    # galpy's ro is the Sun's in-plane distance, astropy's (and kinage's) r0 the 3-D one:
    # sqrt(8^2 + 0.0208^2) - 8 kpc = 2.7e-5 kpc, so agree to 5e-5 kpc
    np.testing.assert_allclose(R, o.R(), atol=5e-5)
    np.testing.assert_allclose(pos[:, 2], o.z(), atol=1e-6)
    np.testing.assert_allclose(vR, o.vR(), atol=1e-3)
    np.testing.assert_allclose(vT, o.vT(), atol=1e-3)
    np.testing.assert_allclose(vel[:, 2], o.vz(), atol=1e-3)


@pytest.mark.parametrize("pot_name", ["MWPotential2014", pytest.param("McMillan17", marks=pytest.mark.slow)])
def test_own_sun_is_on_a_circular_orbit_of_the_potential(pot_name):
    # galpy: vcirc of the model at the Sun's R0 equals the Sun's circular speed v_sun_y - 12.24 km/s
    # (Schoenrich, Binney & Dehnen 2010 peculiar V); MWPotential2014 220 km/s at 8 kpc (Bovy 2015),
    # McMillan17 233.1 km/s at 8.21 kpc (McMillan 2017, MNRAS 465, 76), as implemented in galpy
    # (McMillan17 is slow to import: ~20 s of set-up in galpy)
    _galpy()
    from galpy.potential import vcirc
    from galpy.potential.mwpotentials import McMillan17, MWPotential2014
    from galpy.util.conversion import get_physical

    pot_obj = {"MWPotential2014": MWPotential2014, "McMillan17": McMillan17}[pot_name]
    pset, sun, _ = galaxy_pair(pot_name)
    phys = get_physical(pot_obj)
    ro = phys["ro"] if pot_name == "McMillan17" else 8.0  # MWPotential2014 carries galpy's default units
    vo = phys["vo"] if pot_name == "McMillan17" else 220.0
    assert sun["r0_kpc"] == pytest.approx(ro, abs=1e-9)
    import astropy.units as u

    vc = vcirc(pot_obj, sun["r0_kpc"] * u.kpc, ro=ro, vo=vo, quantity=True).to_value(u.km / u.s)
    assert sun["v_sun_kms"][1] - 12.24 == pytest.approx(vc, rel=5e-3)


def test_inconsistent_explicit_choice_is_named():
    # astropy v4.0 Sun (R0 = 8.122 kpc, 245.6 km/s; GRAVITY 2018) with MWPotential2014 (8 kpc, 220 km/s)
    msg = galaxy_mismatch(get("potential", "MWPotential2014"), get("solar_parameters", "astropy-v4.0"))
    assert msg is not None and "astropy-v4.0" in msg and "galpy-default" in msg
    assert galaxy_mismatch(get("potential", "none"), get("solar_parameters", "astropy-v4.0")) is None


def _tiny_scenario(tmp_path, **trace_kw):
    # invented association and star; values only need to trace
    (tmp_path / "a.csv").write_text("name,ra,dec,distance,pm_ra_cosdec,pm_dec,radial_velocity,radius,age\n"
                                    "Tessel-1,40.0,10.0,300,2.0,-3.0,5.0,12,3\n")
    raw = {"star": {"name": "Invented J0101", "ra": 45.0, "dec": 12.0, "parallax": 3.1, "parallax_error": 0.1,
                    "pm_ra_cosdec": 20.0, "pm_ra_cosdec_error": 0.2, "pm_dec": -15.0, "pm_dec_error": 0.2},
           "trace": {"associations": str(tmp_path / "a.csv"), "samples": 60, "association_samples": 10,
                     "control_runs": 2, "max_age": 1.0, "time_steps": 51, "seed": 3, **trace_kw}}
    return scenario_from_dict(raw)


def test_trace_warns_on_inconsistent_pair_and_records_it(tmp_path):
    from kinage.orbits import trace

    with pytest.warns(UserWarning, match="do not match"):
        d = trace(_tiny_scenario(tmp_path, solar_parameters="astropy-v4.0")).to_dict()
    assert d["solar_parameters"] == "astropy-v4.0" and d["warnings"]
    d = trace(_tiny_scenario(tmp_path, potential="none")).to_dict()
    assert d["solar_parameters"] == "galpy-default" and d["warnings"] == []
