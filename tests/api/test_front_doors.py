"""The Python front doors: lazy import, scenarios from Python objects, SkyCoord stars, in-memory tables, warnings."""

import json
import logging
import subprocess
import sys
import warnings
from importlib import metadata
from pathlib import Path

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import Angle, Galactic, SkyCoord
from astropy.table import QTable, Table
from astropy.time import Time

import kinage

ROOT = Path(__file__).resolve().parents[2]
HEAVY = ("astropy.coordinates", "galpy", "scipy.stats", "matplotlib")


def test_import_is_cheap_and_front_doors_are_listed():
    code = ("import sys, kinage; print([m for m in %r if m in sys.modules]); print(sorted(dir(kinage)))" % (HEAVY,))
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd="/").stdout
    loaded, names = out.splitlines()
    assert loaded == "[]"
    for name in ("load_scenario", "scenario_from_dict", "star_from_skycoord", "forecast", "fit", "trace",
                 "compare_ages", "run", "__version__", "KinageWarning"):
        assert name in names
    assert kinage.__version__ == metadata.version("kinage")  # the installed distribution's own record


def test_scenario_values_may_be_python_objects():
    # the same scenario written with unit strings (parsed by astropy) and with astropy objects
    text = kinage.scenario_from_dict({"star": {"ra": "11:43:44.6", "dec": "-28:22:48", "parallax": "3.1 mas",
                                               "parallax_error": "0.2 mas", "spin_period": "627.1 ms",
                                               "temperature": "58 eV", "epoch": "2028-02-01"},
                                      "ages": {"masses": [1.3, 1.5]}})
    objs = kinage.scenario_from_dict({"star": {"ra": Angle("11h43m44.6s"), "dec": Angle("-28d22m48s"),
                                               "parallax": 3100 * u.uas, "parallax_error": np.float64(0.2),
                                               "spin_period": 0.6271 * u.s, "temperature": 58 * u.eV,
                                               "epoch": Time("2028-02-01", scale="tdb")},
                                      "ages": {"masses": [1.3, 1.5] * u.solMass}})
    for key, unit in (("ra", "deg"), ("dec", "deg"), ("parallax", "mas"), ("parallax_error", "mas"),
                      ("spin_period", "s"), ("temperature", "K")):
        assert objs.star.value(key, unit) == pytest.approx(text.star.value(key, unit), rel=1e-12), key
    assert objs.star.epoch.tdb.mjd == pytest.approx(text.star.epoch.tdb.mjd, abs=1e-9)
    assert objs.ages.masses == text.ages.masses


def test_star_from_galactic_skycoord_matches_astropy():
    # a Galactic-frame SkyCoord with proper motions: ICRS values must be astropy's own transform
    g = SkyCoord(l=287.3 * u.deg, b=31.2 * u.deg, distance=320 * u.pc, pm_l_cosb=-21.0 * u.mas / u.yr,
                 pm_b=13.0 * u.mas / u.yr, frame=Galactic, obstime=Time("2027-06-01"))
    star = kinage.star_from_skycoord(g, name="Tamsin-7", distance_error=25 * u.pc, spin_period=0.6271 * u.s)
    icrs = g.icrs
    assert star["ra"].to_value(u.deg) == pytest.approx(icrs.ra.deg, abs=1e-12)
    assert star["dec"].to_value(u.deg) == pytest.approx(icrs.dec.deg, abs=1e-12)
    assert star["pm_ra_cosdec"].to_value(u.mas / u.yr) == pytest.approx(icrs.pm_ra_cosdec.to_value(u.mas / u.yr))
    assert star["pm_dec"].to_value(u.mas / u.yr) == pytest.approx(icrs.pm_dec.to_value(u.mas / u.yr))
    assert star["distance"].to_value(u.pc) == pytest.approx(320.0)
    assert star["epoch"] == g.obstime
    # without a distance the parallax given beside it is used
    noz = SkyCoord(ra=175.9 * u.deg, dec=-28.4 * u.deg, pm_ra_cosdec=48 * u.mas / u.yr, pm_dec=4 * u.mas / u.yr)
    star2 = kinage.star_from_skycoord(noz, parallax=3.1 * u.mas, parallax_error=0.2 * u.mas)
    assert "distance" not in star2 and star2["parallax"] == 3.1 * u.mas
    # a distance made from a parallax, with the parallax error beside it: the parallax goes into [star]
    from astropy.coordinates import Distance

    px = SkyCoord(ra=175.9 * u.deg, dec=-28.4 * u.deg, distance=Distance(parallax=3.1 * u.mas),
                  pm_ra_cosdec=48 * u.mas / u.yr, pm_dec=4 * u.mas / u.yr)
    star3 = kinage.star_from_skycoord(px, parallax_error=0.2 * u.mas)
    assert "distance" not in star3 and star3["parallax"].to_value(u.mas) == pytest.approx(3.1, rel=1e-12)


def test_star_from_skycoord_rejects_bad_input():
    with pytest.raises(kinage.InputError, match="SkyCoord"):
        kinage.star_from_skycoord((175.9, -28.4))
    c = SkyCoord(ra=[1, 2] * u.deg, dec=[3, 4] * u.deg)
    with pytest.raises(kinage.InputError, match="one position"):
        kinage.star_from_skycoord(c)
    with pytest.raises(kinage.InputError, match="parallax_error"):
        kinage.star_from_skycoord(SkyCoord(ra=1 * u.deg, dec=2 * u.deg), parallax=3 * u.mas, parallax_error=-1)


def _assoc_qtable():
    return QTable({"name": ["Corvan OB2", "Lysa Group"], "ra": [160.0, 150.5] * u.deg, "dec": [-28.0, -40.1] * u.deg,
                   "distance": [0.42, 0.55] * u.kpc, "pm_ra_cosdec": [-7.1, -5.2] * u.mas / u.yr,
                   "pm_dec": [2.3, 3.9] * u.mas / u.yr, "radial_velocity": [14.0, 18.0] * u.km / u.s,
                   "radius": [15.0, 20.0] * u.pc, "age": [1.5, 8.0] * u.Myr,
                   "distance_error": [20, 30] * u.pc})


def test_association_qtable_equals_plain_table_in_default_units():
    from kinage.associations import associations_from_table

    q = associations_from_table(_assoc_qtable())
    plain = Table({"name": ["Corvan OB2", "Lysa Group"], "ra": [160.0, 150.5], "dec": [-28.0, -40.1],
                   "distance": [420.0, 550.0], "pm_ra_cosdec": [-7.1, -5.2], "pm_dec": [2.3, 3.9],
                   "radial_velocity": [14.0, 18.0], "radius": [15.0, 20.0], "age": [1.5, 8.0],
                   "distance_error": [20.0, 30.0]})
    p = associations_from_table(plain)
    for col in ("ra", "dec", "distance", "pm_ra_cosdec", "pm_dec", "radial_velocity", "radius", "age",
                "distance_error"):
        np.testing.assert_allclose(q.column(col), p.column(col), rtol=1e-12)
    bad = _assoc_qtable()
    bad["distance"] = [0.42, 0.55] * u.km / u.s
    with pytest.raises(kinage.InputError, match="distance"):
        associations_from_table(bad)


def _star():
    coord = SkyCoord(ra=175.936 * u.deg, dec=-28.380 * u.deg, distance=320 * u.pc,
                     pm_ra_cosdec=48.05 * u.mas / u.yr, pm_dec=4.02 * u.mas / u.yr)
    return kinage.star_from_skycoord(coord, name="Tamsin-7", distance_error=25 * u.pc,
                                     pm_ra_cosdec_error=0.3 * u.mas / u.yr, pm_dec_error=0.3 * u.mas / u.yr,
                                     spin_period=0.6271 * u.s, spin_period_derivative=2.1e-15)


def test_trace_against_an_in_memory_qtable_needs_no_file(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    small = {"samples": 60, "association_samples": 20, "control_runs": 0, "max_age": 2 * u.Myr,
             "time_steps": 101}
    scn = kinage.scenario_from_dict({"star": _star(), "trace": small})  # associations given to trace
    res = kinage.trace(scn, associations=_assoc_qtable())
    assert sorted(a["name"] for a in res.associations) == ["Corvan OB2", "Lysa Group"]
    # the table inside the scenario gives the same numbers
    scn2 = kinage.scenario_from_dict({"star": _star(), "trace": dict(small, associations=_assoc_qtable())})
    res2 = kinage.trace(scn2)
    assert json.dumps(res.to_dict()["associations"], default=str) == json.dumps(res2.to_dict()["associations"],
                                                                             default=str)
    assert list(tmp_path.iterdir()) == []  # nothing was written
    t = res.table()
    assert isinstance(t, QTable) and t["dmin_median"].unit == u.pc
    samples = res.kinematic_age_samples(favoured_only=False)
    assert samples.unit == u.yr
    import matplotlib.pyplot as plt

    kinds = res.plot_kinds()
    assert kinds[0] == "sky" and "dmin_tau" in kinds
    for kind in kinds:  # every figure draws into the Axes it is given
        fig, ax = plt.subplots()
        assert res.plot(kind, ax=ax) is fig, kind
        plt.close(fig)
    with pytest.raises(kinage.InputError, match="associations"):
        kinage.trace(kinage.scenario_from_dict({"star": _star(), "trace": small}))


def test_forecast_warnings_are_raised_logged_and_recorded(caplog):
    scn = kinage.scenario_from_dict({"star": _star(), "campaign": {
        "start": "2028-02-01", "baseline": 4 * u.yr, "visits_per_year": 6, "toa_error": 0.15 * u.ms}})
    with caplog.at_level(logging.WARNING, logger="kinage"):
        with pytest.warns(kinage.KinageWarning) as caught:
            res = kinage.forecast(scn)
    assert res.warnings, "this plan moves visits away from the Sun, which the forecast records"
    texts = [str(w.message) for w in caught]
    assert all(t in texts for t in res.warnings)
    assert all(t in caplog.text for t in res.warnings)
    # a short repr with the key numbers, and an HTML one for notebooks
    r = repr(res)
    assert r.startswith("<ForecastResult") and len(r) < 500 and "sigma_parallax" in r
    html = res._repr_html_()
    assert "<table>" in html and "sigma_parallax" in html
    assert repr(scn.star).startswith("Section[star]")


def test_plot_draws_into_the_given_axes_and_keeps_the_backend():
    import matplotlib

    before = matplotlib.get_backend()
    import matplotlib.pyplot as plt
    from matplotlib.figure import Figure

    scn = kinage.scenario_from_dict({"star": _star(), "campaign": {
        "start": "2028-02-01", "baseline": 4 * u.yr, "visits_per_year": 4, "toa_error": 0.15 * u.ms}})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", kinage.KinageWarning)
        res = kinage.forecast(scn)
    fig, ax = plt.subplots()
    assert res.plot(ax=ax) is fig
    assert ax.has_data() or any(a.has_data() for a in fig.axes)
    own = res.plot()
    assert isinstance(own, Figure) and own is not fig
    with pytest.raises(kinage.InputError, match="plot kind"):
        res.plot("no-such-figure")
    plt.close("all")
    assert matplotlib.get_backend() == before


def test_no_matplotlib_use_in_the_package():
    offenders = [str(p.relative_to(ROOT)) for p in (ROOT / "kinage").rglob("*.py")
                 if "matplotlib.use(" in p.read_text(encoding="utf-8")]
    assert offenders == []


def test_progress_bar_uses_tqdm_auto_when_shown(monkeypatch):
    import tqdm.auto

    from kinage import progress

    class Terminal:
        def isatty(self):
            return True

        def write(self, s):
            return len(s)

        def flush(self):
            pass

    monkeypatch.setattr(progress.sys, "stderr", Terminal())
    progress.set_quiet(False)
    with progress.progress_bar(3, enabled=True) as bar:
        assert isinstance(bar, tqdm.auto.tqdm)
        bar.update(3)
    with progress.progress_bar(3, enabled=False) as bar:
        assert not isinstance(bar, tqdm.auto.tqdm)


def test_provenance_records_versions_and_command_line():
    from kinage.io.results import provenance

    prov = provenance(command="run")
    v = prov["versions"]
    for name in ("numpy", "astropy", "galpy", "scipy"):
        assert v[name] == metadata.version(name)  # importlib.metadata: the installed distributions
    assert v["kinage"] == kinage.__version__ and v["python"] == ".".join(map(str, sys.version_info[:3]))
    assert prov["numpy_version"] == v["numpy"] and prov["argv"] == sys.argv
    assert prov["command_line"].split()[-1] == Path(sys.argv[-1]).name or sys.argv[-1] in prov["command_line"]


def test_run_writes_results_with_provenance(tmp_path):
    raw = {"title": "Tamsin-7 (invented)", "star": _star(),
           "campaign": {"start": "2028-02-01", "baseline": 3 * u.yr, "visits_per_year": 4, "toa_error": 0.2 * u.ms},
           "ages": {"kinematic_age": 1.1 * u.Myr, "kinematic_age_error": 0.2 * u.Myr, "samples": 300,
                    "shklovskii": False}}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", kinage.KinageWarning)
        run = kinage.run(raw, tmp_path / "out", report=False, products=False)
    data = json.loads((tmp_path / "out" / "results.json").read_text())
    assert data["stages_completed"] == ["forecast", "ages"] and not run.failed
    prov = data["provenance"]
    assert prov["versions"]["astropy"] == metadata.version("astropy") and "command_line" in prov
    # tau_c = P / (2 Pdot) (Lorimer & Kramer 2005, eq. 3.14), by hand with astropy (no Shklovskii term)
    tau = (0.6271 * u.s / (2 * 2.1e-15)).to_value(u.yr)
    assert data["ages"]["characteristic_age_yr"] == pytest.approx(tau, rel=1e-9)
    assert repr(run).startswith("<RunResult") and len(repr(run)) < 400


def test_fit_takes_toas_as_path_or_table_in_either_order(tmp_path):
    import shutil

    from kinage._resources import demo_data_folder
    from kinage.timing import read_toas

    src = demo_data_folder()
    for name in ("scenario.toml", "toas.ecsv", "associations.ecsv"):
        shutil.copy2(src / name, tmp_path / name)
    scn_path, toa_path = tmp_path / "scenario.toml", tmp_path / "toas.ecsv"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", kinage.KinageWarning)
        a = kinage.fit(scn_path, toa_path)  # scenario first, as in the other front doors
        b = kinage.fit(kinage.load_scenario(scn_path), read_toas(toa_path))  # an astropy Table in memory
        with pytest.warns(DeprecationWarning, match="scenario first"):
            c = kinage.fit(toa_path, scn_path)  # the order of kinage 0.2 still works for one release
    # the same least-squares problem whichever way the TOAs arrive (common practice, no source)
    assert a.to_dict()["values"] == b.to_dict()["values"] == c.to_dict()["values"]
    assert a.n_toas == len(read_toas(toa_path))
    ages = kinage.compare_ages(scn_path, kinematic_age_samples=[0.9, 1.0, 1.1] * u.Myr)
    assert ages.to_dict()["kinematic_age_yr"]["median"] == pytest.approx(1.0e6, rel=0.1)


def test_trace_warnings_come_out_once_as_trace_warnings():
    small = {"samples": 40, "association_samples": 10, "control_runs": 0, "max_age": 2 * u.Myr, "time_steps": 101,
             "potential": "MWPotential2014", "solar_parameters": "astropy-v4.0"}  # a Sun from another Galaxy
    scn = kinage.scenario_from_dict({"star": _star(), "trace": small})
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = kinage.trace(scn, associations=_assoc_qtable())
    ours = [w for w in caught if issubclass(w.category, kinage.KinageWarning)]
    assert res.to_dict()["warnings"], "the mismatch is recorded in the result"
    assert len(ours) == 1 and ours[0].category.__name__ == "TraceWarning"
    assert "solar parameters" in str(ours[0].message).lower()
