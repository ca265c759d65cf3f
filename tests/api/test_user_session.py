"""A notebook session with an invented star ("Quillon-4") and invented associations, front door by front door.

Each case is something a notebook user does: SkyCoords in other frames, Python objects as scenario values,
in-memory tables in other units, every result's repr / HTML / table / figures, and wrong input, which must
come back as one clear :class:`kinage.InputError` naming the field.
"""

import json
import pickle
import warnings

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import CartesianDifferential, CartesianRepresentation, Galactic, SkyCoord
from astropy.table import QTable, Table

import kinage

# invented values (no known star or association)
STAR_COORD = dict(ra=212.47 * u.deg, dec=-41.93 * u.deg, distance=410 * u.pc,
                  pm_ra_cosdec=-33.2 * u.mas / u.yr, pm_dec=17.6 * u.mas / u.yr)
SMALL_TRACE = {"samples": 60, "association_samples": 20, "max_age": 3 * u.Myr, "time_steps": 11,
               "control_runs": 1, "seed": 7}


def _star(**extra):
    values = dict(name="Quillon-4", distance_error=30 * u.pc, pm_ra_cosdec_error=0.4 * u.mas / u.yr,
                  pm_dec_error=0.4 * u.mas / u.yr, spin_period=1873 * u.ms, spin_period_derivative=4.4e-15,
                  temperature=63 * u.eV, temperature_error=5 * u.eV)
    values.update(extra)
    return kinage.star_from_skycoord(SkyCoord(**STAR_COORD), **values)


def _associations():
    return QTable({"name": ["Brenmark OB3", "Ythel Group", "Sorrow Drift"],
                   "ra": [218.0, 205.3, 226.9] * u.deg, "dec": [-44.5, -38.2, -50.1] * u.deg,
                   "distance": [0.45, 0.52, 0.39] * u.kpc, "pm_ra_cosdec": [-12.1, -8.3, -15.4] * u.mas / u.yr,
                   "pm_dec": [-6.2, -4.0, -9.9] * u.mas / u.yr, "radial_velocity": [4.0, 9.0, 2.0] * u.km / u.s,
                   "radius": [18.0, 25.0, 14.0] * u.pc, "age": [2.5, 9.0, 5.0] * u.Myr,
                   "distance_error": [25, 30, 20] * u.pc, "pm_dec_error": [0.3, 0.4, 0.5] * u.mas / u.yr,
                   "age_error": [0.5, 1.0, 0.8] * u.Myr})


# ------------------------------------------------------------------ SkyCoords
def test_galactic_skycoord_with_radial_velocity_keeps_its_motion():
    # astropy carries a Galactic velocity with a radial part as a Cartesian differential after the ICRS
    # transform; the proper motions and radial velocity must still be astropy's own ICRS values
    g = SkyCoord(l=318.2 * u.deg, b=18.4 * u.deg, distance=410 * u.pc, pm_l_cosb=-12.0 * u.mas / u.yr,
                 pm_b=30.0 * u.mas / u.yr, radial_velocity=20 * u.km / u.s, frame=Galactic)
    star = kinage.star_from_skycoord(g, name="Quillon-4g")
    icrs = g.icrs
    for key, unit in (("ra", u.deg), ("dec", u.deg), ("pm_ra_cosdec", u.mas / u.yr), ("pm_dec", u.mas / u.yr),
                      ("radial_velocity", u.km / u.s), ("distance", u.pc)):
        assert key in star, key
        assert star[key].to_value(unit) == pytest.approx(getattr(icrs, key).to_value(unit), rel=1e-12, abs=1e-9)
    # the same star given as Galactic Cartesian position and velocity (astropy builds both)
    rep = CartesianRepresentation([100, -300, 120] * u.pc,
                                  differentials=CartesianDifferential([10, -40, 5] * u.km / u.s))
    cart = SkyCoord(Galactic(rep))
    star2 = kinage.star_from_skycoord(cart)
    icrs2 = cart.icrs
    assert star2["pm_dec"].to_value(u.mas / u.yr) == pytest.approx(icrs2.pm_dec.to_value(u.mas / u.yr), rel=1e-12)
    assert star2["radial_velocity"].to_value(u.km / u.s) == pytest.approx(
        icrs2.radial_velocity.to_value(u.km / u.s), rel=1e-12)
    assert star2["distance"].to_value(u.pc) == pytest.approx(np.sqrt(100**2 + 300**2 + 120**2), rel=1e-12)
    kinage.scenario_from_dict({"star": star})  # a valid [star] table


def test_radial_velocity_alone_gives_no_proper_motion():
    # a SkyCoord with only a radial velocity: no proper motion is invented (common practice, no source)
    c = SkyCoord(ra=212.47 * u.deg, dec=-41.93 * u.deg, distance=410 * u.pc, radial_velocity=20 * u.km / u.s)
    star = kinage.star_from_skycoord(c)
    assert "pm_ra_cosdec" not in star and star["radial_velocity"] == 20 * u.km / u.s
    c2 = SkyCoord(ra=212.47 * u.deg, dec=-41.93 * u.deg, pm_ra_cosdec=-33.2 * u.mas / u.yr, pm_dec=17.6 * u.mas / u.yr)
    star2 = kinage.star_from_skycoord(c2, parallax=2.44 * u.mas, parallax_error=0.3 * u.mas)
    assert "radial_velocity" not in star2 and "distance" not in star2


# ------------------------------------------------------------------ scenario values
def test_scenario_list_values_as_python_objects():
    star = _star()
    kg = [2.6e30, 3.0e30] * u.kg
    scn = kinage.scenario_from_dict({"star": star, "ages": {"masses": [1.3 * u.solMass, 1.5 * u.solMass],
                                                            "envelopes": ("iron",)}})
    assert scn.ages.masses == (1.3, 1.5) and scn.ages.envelopes == ("iron",)
    scn_kg = kinage.scenario_from_dict({"star": star, "ages": {"masses": kg}})
    # astropy's solar mass is the reference for the conversion
    np.testing.assert_allclose(scn_kg.ages.masses, kg.to_value(u.solMass), rtol=1e-12)
    with pytest.raises(kinage.InputError, match=r"\[ages\] masses: expected numbers in solMass"):
        kinage.scenario_from_dict({"star": star, "ages": {"masses": [1.3, 1.5] * u.km}})


def test_scenario_html_shows_values_as_given():
    scn = kinage.scenario_from_dict({"star": dict(_star(), ra="14:09:52.8"),
                                     "campaign": {"start": "2029-03-01", "baseline": 5 * u.yr,
                                                  "visits_per_year": 3, "exposure": "35 ks", "toa_error": 0.3 * u.ms}})
    html = scn._repr_html_()
    # what the user typed, in the unit they use (kinage holds 7.3e5 K and 35000 s inside)
    for text in ("temperature=63 eV", "temperature_error=5 eV", "exposure=35 ks", "ra=14:09:52.8",
                 "dec=-41.930000 deg", "spin_period=1873 ms"):
        assert text in html, text
    assert scn.star.value("temperature", "K") == pytest.approx(
        (63 * u.eV).to_value(u.K, equivalencies=u.temperature_energy()), rel=1e-12)


# ------------------------------------------------------------------ wrong input at the front doors
def test_front_doors_name_the_argument_for_wrong_objects():
    scn = kinage.scenario_from_dict({"star": _star(), "trace": SMALL_TRACE})
    with pytest.raises(kinage.InputError, match=r"\[trace\] associations: expected a file path"):
        kinage.trace(scn, associations=42)
    with pytest.raises(kinage.InputError, match=r"\[trace\] associations: expected a file path"):
        kinage.trace(scn, associations={"name": ["Brenmark OB3"]})
    with pytest.raises(kinage.InputError, match="toas: expected a TOA file path"):
        kinage.fit({"star": _star()}, 5)
    with pytest.raises(kinage.InputError, match="trace: expected the TraceResult"):
        kinage.compare_ages({"star": _star()}, trace=3)
    # numpy.random.default_rng takes None, a non-negative int, a SeedSequence, a BitGenerator or a Generator
    # (numpy documentation); anything else is named before any work
    for bad in ("abc", -1, 2.5, True):
        with pytest.raises(kinage.InputError, match="rng: expected a non-negative integer seed"):
            kinage.compare_ages({"star": _star()}, rng=bad)
    with pytest.raises(kinage.InputError, match="method: expected 'woodbury' or 'dense'"):
        kinage.forecast({"star": _star(), "campaign": {"start": "2029-01-01", "baseline": "3 yr",
                                                       "visits_per_year": 4, "toa_error": "1 ms"}}, method="bogus")


# ------------------------------------------------------------------ results
def test_simulation_table_is_a_table_and_gives_a_qtable():
    scn = kinage.scenario_from_dict({"star": _star(), "campaign": {
        "start": "2029-03-01", "baseline": 3 * u.yr, "visits_per_year": 3, "toa_error": 0.3 * u.ms}})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", kinage.KinageWarning)
        sim = kinage.simulate(scn, rng=3)
    assert isinstance(sim.table, Table) and len(sim.table) == sim.to_dict()["n_toas"]
    q = sim.table()  # like every result's table()
    assert isinstance(q, QTable) and q["error"].unit == u.s
    np.testing.assert_allclose(q["error"].to_value(u.ms), 0.3, rtol=1e-12)  # astropy's s -> ms
    assert q["mjd"].scale == "tdb"
    again = pickle.loads(pickle.dumps(sim))
    assert again.table().colnames == q.colnames
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", kinage.KinageWarning)
        a, b = kinage.fit(scn, sim.table), kinage.fit(scn, q)
    assert a.to_dict()["values"] == b.to_dict()["values"]  # the same TOAs (common practice, no source)
    # the repr rounds each value to the precision of its error (common practice, no source); errors beyond
    # 1 arcsec (/yr) mean the linearised timing model says nothing, and the repr says so
    import re

    text = repr(a)
    pairs = re.findall(r"(-?[0-9.]+) \+/- ([0-9.]+) ", text)
    sig = a.solution.sigma_dict()
    assert pairs or "not constrained by timing" in text, text
    for value, error in pairs:
        assert len(value.partition(".")[2]) == len(error.partition(".")[2]), text
    if sig["parallax_mas"] > 1000:
        assert re.search(r"parallax not constrained by timing \(formal error [0-9.e+]+ mas\)", text), text


def test_ages_figures_listed_are_the_ones_it_can_draw():
    import matplotlib.pyplot as plt

    no_temp = kinage.compare_ages({"star": {"spin_period": 1.873, "spin_period_derivative": 4.4e-15},
                                   "ages": {"samples": 200}}, kinematic_age=1.2 * u.Myr)
    assert no_temp.plot_kinds() == ["ladder"]
    with pytest.raises(kinage.InputError, match="no cooling age"):
        no_temp.plot("cooling")
    ages = kinage.compare_ages({"star": _star(), "ages": {"samples": 200, "masses": [1.4] * u.solMass}},
                               kinematic_age=1.2 * u.Myr, rng=1)
    assert ages.plot_kinds() == ["ladder", "cooling"]
    for kind in ages.plot_kinds():
        fig, ax = plt.subplots()
        assert ages.plot(kind, ax=ax) is fig and ax.has_data(), kind
        plt.close(fig)
    t = ages.table()
    assert isinstance(t, QTable) and t["median"].unit == u.yr
    # tau_c = P / (2 Pdot) (Lorimer & Kramer 2005, eq. 3.14) by astropy, before the Shklovskii correction
    # (which lowers Pdot and so raises the age, by < 1% here)
    row = [r for r in t if str(r["age"]).startswith("characteristic")][0]
    tau = (1873 * u.ms / (2 * 4.4e-15)).to(u.yr)
    assert 1.0 <= (row["median"] / tau).to_value(u.one) < 1.01
    assert repr(ages).startswith("<AgesResult") and "<table>" in ages._repr_html_()
    # ages in the unit their size calls for: a cooling age below 1 Myr in kyr (common practice, no source)
    cooling = ages.cooling.pooled["median"]
    assert f"cooling age {cooling / 1e3:.3g} kyr" in repr(ages) if cooling < 1e6 else "Myr" in repr(ages)


def test_trace_from_path_table_and_qtable_in_other_units(tmp_path):
    q = _associations()
    path = tmp_path / "invented_associations.ecsv"
    q.write(path)
    odd = QTable(q, copy=True)  # the same table in other units; astropy converts them
    odd["ra"], odd["dec"] = q["ra"].to(u.hourangle), q["dec"].to(u.rad)
    odd["distance"], odd["radius"] = q["distance"].to(u.lyr), q["radius"].to(u.au)
    odd["age"], odd["age_error"] = q["age"].to(u.kyr), q["age_error"].to(u.yr)
    odd["radial_velocity"], odd["pm_dec"] = q["radial_velocity"].to(u.m / u.s), q["pm_dec"].to(u.arcsec / u.kyr)
    odd["distance_error"] = q["distance_error"].to(u.kpc)
    scn = kinage.scenario_from_dict({"star": _star(), "trace": SMALL_TRACE})
    results = [kinage.trace(scn, associations=a) for a in (path, str(path), Table(q), odd)]
    ref = results[0].to_dict()["associations"]
    for res in results[1:]:
        for a, b in zip(ref, res.to_dict()["associations"]):
            assert a["name"] == b["name"]
            for key in ("probability", "encounter_fraction", "radius_pc"):
                assert b[key] == pytest.approx(a[key], rel=1e-9, abs=0), key
            assert b["dmin_pc"]["median"] == pytest.approx(a["dmin_pc"]["median"], rel=1e-6)
    # kernel-weighted intervals: the effective sample size (Kish) is a count of draws, not a time
    for a in ref:
        n_age = a["age_if_born_here_yr"].get("n_effective")
        n_rv = a["radial_velocity_if_born_here_kms"].get("n_effective")
        if n_age is not None:
            assert n_age == pytest.approx(n_rv, rel=1e-9)  # the same kernel weights
            assert 0 <= n_age <= SMALL_TRACE["samples"] * SMALL_TRACE["association_samples"]
    json.dumps(results[-1].to_dict(), default=str)


def test_lists_mixing_quantities_and_plain_numbers():
    # a list may mix Quantities with plain numbers in the documented unit (s for periods); astropy converts
    from kinage.ages import characteristic_age

    mixed = characteristic_age([1873 * u.ms, 2.0], 4.4e-15)
    plain = characteristic_age([1.873, 2.0], 4.4e-15)
    assert mixed.unit == u.yr
    np.testing.assert_allclose(mixed.to_value(u.yr), plain, rtol=1e-12)
    # tau_c = P / (2 Pdot) (Lorimer & Kramer 2005, eq. 3.14), by astropy
    np.testing.assert_allclose(mixed.to_value(u.Myr), ([1.873, 2.0] * u.s / (2 * 4.4e-15)).to_value(u.Myr), rtol=1e-12)
    with pytest.raises(kinage.UnitInputError, match=r"\[1\]: expected a quantity of time"):
        characteristic_age([1.873 * u.s, 2.0 * u.m], 4.4e-15)


def test_multi_panel_figure_needs_a_grid_cell():
    import matplotlib.pyplot as plt

    scn = kinage.scenario_from_dict({"star": _star(), "trace": dict(SMALL_TRACE, control_runs=0)})
    res = kinage.trace(scn, associations=_associations())
    fig, axes = plt.subplots(1, 2)
    assert res.plot("birth", ax=axes[1]) is fig  # two panels in the cell of axes[1] (matplotlib subfigure)
    assert len(fig.axes) == 3
    free = plt.figure()
    with pytest.raises(kinage.InputError, match="ax: this figure has several panels"):
        res.plot("birth", ax=free.add_axes((0.1, 0.1, 0.8, 0.8)))
    plt.close("all")


def test_compare_ages_kinematic_age_forms():
    scn = {"star": _star(), "ages": {"samples": 200}}
    # "1.2 Myr" as in a scenario file, parsed by astropy: the same as the Quantity
    a = kinage.compare_ages(scn, kinematic_age="1.2 Myr", rng=1)
    b = kinage.compare_ages(scn, kinematic_age=1.2 * u.Myr, rng=1)
    assert a.to_dict()["kinematic_age_yr"]["median"] == pytest.approx((1.2 * u.Myr).to_value(u.yr), rel=1e-12)
    assert a.to_dict()["kinematic_age_yr"] == b.to_dict()["kinematic_age_yr"]
    for bad, match in (("abc", "kinematic_age: expected a number in yr"), (-1 * u.Myr, "finite, positive"),
                       ({"age": 1}, "expected a time Quantity"), (1.2 * u.pc, "expected a quantity of time")):
        with pytest.raises(kinage.InputError, match=match):
            kinage.compare_ages(scn, kinematic_age=bad)
    with pytest.raises(kinage.InputError, match="kinematic_age_samples: expected at least one"):
        kinage.compare_ages(scn, kinematic_age_samples=[] * u.Myr)


def test_run_names_out_dir_when_it_cannot_be_used(tmp_path):
    raw = {"star": _star(), "ages": {"samples": 200, "kinematic_age": 1.2 * u.Myr}}
    blocker = tmp_path / "a_file"
    blocker.write_text("not a folder\n")
    foreign = tmp_path / "my_notes"
    foreign.mkdir()
    (foreign / "notes.txt").write_text("keep me\n")
    for out, match in ((blocker, "out_dir: expected a folder"), (blocker / "sub", "out_dir: a part of the path"),
                       (foreign, "out_dir: .* holds files")):
        with pytest.raises(kinage.InputError, match=match):
            kinage.run(raw, out)
    assert (foreign / "notes.txt").read_text() == "keep me\n" and sorted(p.name for p in tmp_path.iterdir()) == [
        "a_file", "my_notes"]  # nothing written


def test_warnings_point_at_the_notebook_line():
    # a warning's file and line are the caller's (Python's warnings.warn stacklevel), as a notebook shows them
    small = dict(SMALL_TRACE, control_runs=0, solar_parameters="astropy-v4.0")  # a Sun from another Galaxy
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        kinage.trace({"star": _star(), "trace": small}, associations=_associations())
        kinage.compare_ages({"star": {"temperature": 63 * u.eV}, "ages": {"samples": 100}},
                            kinematic_age=1 * u.Myr)
    ours = [w for w in caught if issubclass(w.category, kinage.KinageWarning)]
    assert {w.category.__name__ for w in ours} == {"TraceWarning", "AgesWarning"}
    assert all(w.filename == __file__ for w in ours), [(w.filename, w.lineno) for w in ours]


def test_run_with_an_in_memory_table_records_it(tmp_path):
    # a notebook run must be reproducible from its outputs: the table's rows and a SHA-256 (hashlib, over
    # canonical JSON) are stored in the provenance; common practice, no source
    import hashlib

    scn = kinage.scenario_from_dict({"star": _star(), "trace": {**SMALL_TRACE, "associations": _associations()}})
    kinage.run(scn, tmp_path / "out")
    prov = json.loads((tmp_path / "out" / "results.json").read_text())["provenance"]
    rec = prov["input_tables"]["[trace] associations"]
    assert rec["rows"] == 3
    names = [a["name"] for a in rec["content"]["associations"]]
    assert names == ["Brenmark OB3", "Ythel Group", "Sorrow Drift"]
    assert rec["content"]["associations"][0]["distance"] == pytest.approx(450.0)  # 0.45 kpc in pc
    text = json.dumps(rec["content"], sort_keys=True, separators=(",", ":"))
    assert rec["sha256"] == hashlib.sha256(text.encode()).hexdigest()
    assert rec["sha256"] in (tmp_path / "out" / "report.html").read_text()
