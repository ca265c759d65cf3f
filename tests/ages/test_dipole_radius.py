"""The dipole field: the catalogue convention, and the same dipole for the scenario's radius, as the assumption line says."""

import pytest

import kinage
from kinage.ages.spindown import dipole_field


def test_dipole_field_scales_as_the_vacuum_dipole_formula():
    # B = sqrt(3 c^3 I P Pdot / (8 pi^2 R^6)) (Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, eq. 3.15):
    # the coefficient is 3.2e19 G at R = 10 km and I = 1e45 g cm^2, and B goes as R^-3 I^(1/2)
    c, p, pdot = 2.99792458e10, 0.6677, 2.0e-15
    for radius_km, inertia in ((10.0, 1e45), (12.0, 1e45), (11.5, 1.6e45)):
        exact = (3 * c**3 * inertia * p * pdot / (8 * 3.141592653589793**2 * (radius_km * 1e5) ** 6)) ** 0.5
        assert dipole_field(p, pdot, radius_km, inertia) == pytest.approx(exact, rel=2e-4)


def test_ages_assumption_and_values_name_both_radii():
    scn = {"star": {"name": "Brisk-7 (invented)", "spin_period": "0.6677 s", "spin_period_derivative": 2e-15},
           "ages": {"radius": "12 km", "kinematic_age": "0.6 Myr", "kinematic_age_error": "0.1 Myr", "samples": 200}}
    res = kinage.compare_ages(scn)
    text = " ".join(res.assumptions)
    assert "R = 10 km" in text and "radius R = 12 km" in text
    d = res.to_dict()
    assert d["dipole_field_input_radius_gauss"] == pytest.approx(dipole_field(0.6677, 2e-15) * (10 / 12) ** 3, rel=1e-9)
    assert d["dipole_field_gauss"] == pytest.approx(3.2e19 * (0.6677 * 2e-15) ** 0.5, rel=1e-9)
