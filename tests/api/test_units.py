"""Units at the edge: every public ages function that takes a physical value, with Quantities and plain numbers.

Each case calls a function twice, once with plain numbers in the documented unit and once with
astropy Quantities in other units of the same dimension (converted by astropy, the outside
reference), and requires the same answer; Quantity calls give Quantities in the documented unit.
"""

import importlib
import inspect

import astropy.units as u
import numpy as np
import pytest

from kinage import UnitInputError
from kinage.ages import envelope, field_decay, spindown
from kinage.ages.cooling import cooling_curve, field_decay_heating
from kinage.errors import InputError

cooling_age_mod = importlib.import_module("kinage.ages.cooling_age")  # kinage.ages.cooling_age is also a function

# (function, plain args, plain kwargs, quantity args, quantity kwargs, documented output unit or None)
CASES = [
    (spindown.characteristic_age, (4.08, 3.1e-14), {}, (4080 * u.ms, 3.1e-14 * u.s / u.s), {}, "yr"),
    (spindown.dipole_field, (4.08, 3.1e-14), {}, (4080 * u.ms, 3.1e-14), {}, "G"),
    (spindown.spin_down_luminosity, (0.6271, 2.1e-15), {"moment_of_inertia": 1.2e45},
     (627.1 * u.ms, 2.1e-15), {"moment_of_inertia": 1.2e38 * u.kg * u.m**2}, "erg/s"),
    (spindown.braking_index_age, (2.4, 1.1e-13, 2.7, 0.05), {}, (2400 * u.ms, 1.1e-13, 2.7, 50 * u.ms), {}, "yr"),
    (spindown.max_braking_index_age, (2.4, 1.1e-13, 2.5), {}, (2.4 * u.s, 1.1e-13, 2.5), {}, "yr"),
    (spindown.implied_initial_period, (2.4, 1.1e-13, 1.5e5, 3.0), {}, (2.4 * u.s, 1.1e-13, 150 * u.kyr, 3.0), {}, "s"),
    (spindown.transverse_velocity, (48.0, 0.32), {}, (0.048 * u.arcsec / u.yr, 320 * u.pc), {}, "km/s"),
    (spindown.shklovskii_pdot, (0.6271, 48.0, 0.32), {}, (0.6271 * u.s, 48.0 * u.mas / u.yr, 320 * u.pc), {}, ""),
    (field_decay.exponential_field, (3e5, 1e6), {}, (0.3 * u.Myr, 1e6 * u.yr), {}, None),
    (field_decay.exponential_characteristic_age, (3e5, 1e6), {}, (300 * u.kyr, 1 * u.Myr), {}, "yr"),
    (field_decay.exponential_decay_timescale, (3e5, 1.8e6), {}, (0.3 * u.Myr, 1.8 * u.Myr), {}, "yr"),
    (field_decay.ohm_hall_field, (3e5, 1e6, 2e5), {}, (0.3 * u.Myr, 1 * u.Myr, 200 * u.kyr), {}, None),
    (field_decay.ohm_hall_characteristic_age, (3e5, 1e6, 2e5), {}, (0.3 * u.Myr, 1 * u.Myr, 200 * u.kyr), {}, "yr"),
    (field_decay.ohm_hall_timescale, (3e5, 2e6), {"ohmic_timescale_yr": 1e6},
     (0.3 * u.Myr, 2 * u.Myr), {"ohmic_timescale_yr": 1 * u.Myr}, "yr"),
    (field_decay.ohm_hall_true_age, (2e6, 1e6, 2e5), {}, (2 * u.Myr, 1 * u.Myr, 200 * u.kyr), {}, "yr"),
    (envelope.gpe83, (1e8, 1.6), {}, (1e8 * u.K, 1.6e12 * u.m / u.s**2), {}, "K"),
    (envelope.pcy97_iron, (3e8, 1.6), {}, (3e8 * u.K, 1.6e14 * u.cm / u.s**2), {}, "K"),
    (envelope.pcy97_accreted, (3e8, 1.6), {}, (3e8 * u.K, 1.6e12 * u.m / u.s**2), {}, "K"),
    (envelope.surface_temperature, (3e8, 1.6, "iron"), {}, (3e8 * u.K, 1.6e14 * u.cm / u.s**2, "iron"), {}, "K"),
]


def _plain(x, unit):
    if isinstance(x, u.Quantity):
        assert unit is not None, "a Quantity result needs a documented unit"
        return x.to_value(unit)
    return x


@pytest.mark.parametrize("func, pargs, pkw, qargs, qkw, unit", CASES, ids=[c[0].__name__ for c in CASES])
def test_quantity_and_plain_number_agree(func, pargs, pkw, qargs, qkw, unit):
    plain = func(*pargs, **pkw)
    quantity = func(*qargs, **qkw)
    assert not isinstance(plain, u.Quantity)  # plain numbers keep the documented unit
    if unit is not None:
        assert isinstance(quantity, u.Quantity) and quantity.unit == u.Unit(unit)
    # same numbers: astropy's unit conversion is the outside reference
    np.testing.assert_allclose(_plain(quantity, unit), plain, rtol=1e-9)


def test_characteristic_age_worked_example():
    # tau_c = P / (2 Pdot) (Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, eq. 3.14), by hand with astropy
    expected = (4080 * u.ms / (2 * 3.1e-14)).to(u.yr)
    tau = spindown.characteristic_age(4080 * u.ms, 3.1e-14)
    assert tau.to_value(u.yr) == pytest.approx(expected.value, rel=1e-12)
    assert tau.to_value(u.yr) == pytest.approx(2.085e6, rel=0.005)
    assert spindown.characteristic_age(4.08, 3.1e-14) == pytest.approx(expected.value, rel=1e-12)


def test_temperatures_as_energies():
    # kT = 86.17 eV at 1e6 K (Boltzmann constant 8.617333e-5 eV/K, CODATA 2018)
    t_k = envelope.gpe83(1e8, 1.6)
    t_q = envelope.gpe83((1e8 * u.K).to(u.eV, equivalencies=u.temperature_energy()), 1.6 * u.Unit("1e14 cm / s2"))
    assert t_q.to_value(u.K) == pytest.approx(t_k, rel=1e-9)


@pytest.mark.parametrize("call", [
    lambda: spindown.characteristic_age(7.2 * u.m, 6.4e-14),
    lambda: spindown.characteristic_age(7.2, 6.4e-14 * u.s),
    lambda: field_decay.exponential_characteristic_age(3e5 * u.pc, 1e6),
    lambda: envelope.gpe83(1e8 * u.K, 1.6 * u.km),
    lambda: envelope.star_structure(1.4 * u.km, 12.0),
], ids=["period in m", "pdot in s", "age in pc", "gravity in km", "mass in km"])
def test_wrong_dimension_is_rejected_clearly(call):
    with pytest.raises(UnitInputError) as info:
        call()
    err = info.value
    assert isinstance(err, InputError) and isinstance(err, u.UnitsError)  # both kinds of caller catch it
    assert "expected" in str(err) and "got a quantity in" in str(err)


def test_star_structure_with_quantities():
    # same structure whether mass and radius are plain (solMass, km) or Quantities (kg, m), converted by astropy
    plain = envelope.star_structure(1.4, 12.0)
    q = envelope.star_structure((1.4 * u.solMass).to(u.kg), 12000 * u.m)
    assert q.g14 == pytest.approx(plain.g14, rel=1e-12)
    assert q.redshift_factor == pytest.approx(plain.redshift_factor, rel=1e-12)


def test_cooling_age_and_curve_with_quantities():
    kw = dict(masses=(1.4,), envelopes=("iron",), samples=200, rng=3)
    plain = cooling_age_mod.cooling_age(6.7e5, 5e4, radius_km=12.0, **kw)
    kt = (6.7e5 * u.K).to(u.eV, equivalencies=u.temperature_energy())  # astropy's kT
    dkt = (5e4 * u.K).to(u.eV, equivalencies=u.temperature_energy())
    q = cooling_age_mod.cooling_age(kt, dkt, radius_km=12 * u.km, **dict(kw, masses=[1.4] * u.solMass))
    assert q.pooled["median"] == pytest.approx(plain.pooled["median"], rel=1e-6)
    c1 = cooling_curve(1.4, 12.0, "iron", [1e4, 1e5])
    c2 = cooling_curve(1.4 * u.solMass, 12 * u.km, "iron", [10, 100] * u.kyr)
    np.testing.assert_allclose(c2.T_inf_K, c1.T_inf_K, rtol=1e-9)


def test_field_decay_heating_with_quantities():
    # 1e13 G = 1e9 T (1 T = 1e4 G, SI definition); same heating rate from plain and Quantity arguments
    plain = field_decay_heating(1e13, 1e6, 12.0, 0.5)
    q = field_decay_heating(1e9 * u.T, 1 * u.Myr, 12000 * u.m, 0.5)
    assert q(3e5) == pytest.approx(plain(3e5), rel=1e-12)
    with pytest.raises(UnitInputError):
        field_decay_heating(1e13 * u.km, 1e6)


def test_every_physical_function_is_covered():
    covered = {c[0].__name__ for c in CASES} | {"star_structure", "cooling_age", "field_decay_heating"}
    for mod in (spindown, field_decay, envelope, cooling_age_mod, importlib.import_module("kinage.ages.cooling")):
        for name in mod.__all__:
            obj = getattr(mod, name)
            if inspect.isfunction(obj) and hasattr(obj, "__kinage_units__"):
                assert name in covered, f"{mod.__name__}.{name} takes physical values but has no unit test case"


def test_compare_ages_reads_kinematic_age_samples_with_their_unit():
    # the same kinematic ages in Myr (Quantity) and in yr (plain) give the same comparison
    import kinage

    scn = kinage.scenario_from_dict({"star": {"spin_period": 0.6271, "spin_period_derivative": 2.1e-15},
                                     "ages": {"samples": 300}})
    rng = np.random.default_rng(4)
    ages_myr = rng.normal(1.1, 0.1, 500)
    a = kinage.ages.compare_ages(scn, kinematic_age_samples=ages_myr * u.Myr, rng=1)
    b = kinage.ages.compare_ages(scn, kinematic_age_samples=ages_myr * 1e6, rng=1)
    assert a.to_dict()["kinematic_age_yr"]["median"] == pytest.approx(b.to_dict()["kinematic_age_yr"]["median"])
    assert a.to_dict()["kinematic_age_yr"]["median"] == pytest.approx(np.median(ages_myr) * 1e6, rel=0.05)
