"""Optimised visit schedules: exchange algorithm vs exhaustive search, the schedules' promises checked with an
independent Fisher matrix and astropy's Sun, the forecast's warnings, words and figures, bad input.

Method under test: the exchange algorithm for exact c-optimal designs on the Fisher information
(Fedorov 1972, Theory of Optimal Experiments; Atkinson, Donev & Tobias 2007, Optimum Experimental
Designs, with SAS, ch. 12), nuisance parameters kept in the information matrix.
"""

import itertools
import json

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import SkyCoord, get_body_barycentric, get_sun
from astropy.table import Table
from astropy.time import Time

from kinage.cli import main
from kinage.errors import InputError
from kinage.io.scenario import scenario_from_dict
from kinage.timing.design import criterion, exchange_design, year_blocks
from kinage.timing.plan import SunWindow, candidate_rows, make_plan, regular_epochs, schedule_combinations

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function", "ignore:.*dubious year")

# -- independent references (numpy + astropy only) -----------------------------------------------------
C_M_S = 299792458.0                  # exact (SI)
AU_LIGHT_S = 149597870700.0 / C_M_S  # IAU 2012 au in light-seconds
MAS = np.pi / (180 * 3600e3)


def _delay(r, ra, dec, p, years):
    """Roemer + parallax delay r.s/c - (|r|^2 - (r.s)^2)/(2 c d), s (Lorimer & Kramer 2005, Handbook of
    Pulsar Astronomy, ch. 8); p = (dra*, ddec, pm_ra*, pm_dec [mas, mas/yr], parallax [mas])."""
    d = np.radians(dec) + (p[1] + p[3] * years) * MAS
    a = np.radians(ra) + (p[0] + p[2] * years) * MAS / np.cos(np.radians(dec))
    s = np.stack([np.cos(d) * np.cos(a), np.cos(d) * np.sin(a), np.sin(d)], axis=1)
    rs = np.sum(r * s, axis=1)
    return rs - p[4] * MAS * (np.sum(r * r, axis=1) - rs**2) / (2 * AU_LIGHT_S)


def independent_errors(mjd, ra, dec, sigma_s, direction, epoch_mjd=None, spin_terms=2):
    """Parallax and proper-motion errors from a Fisher matrix built here: numerical partials of the delay
    formula with astropy's Earth positions, spin polynomial 1, t, t^2/2 (white noise sigma_s)."""
    mjd = np.asarray(mjd, float)
    epoch = np.round(0.5 * (mjd[0] + mjd[-1])) if epoch_mjd is None else epoch_mjd
    t = Time(mjd, format="mjd", scale="tdb")
    r = get_body_barycentric("earth", t).xyz.to_value(u.m).T / C_M_S
    years = (mjd - epoch) / 365.25
    cols = []
    for k in range(5):
        h = np.zeros(5)
        h[k] = 10.0
        cols.append((_delay(r, ra, dec, h, years) - _delay(r, ra, dec, -h, years)) / 20.0)
    sec = (mjd - epoch) * 86400.0
    cols += [np.ones_like(sec), sec, sec**2 / 2, sec**3 / 6][: 1 + spin_terms]
    x = np.column_stack(cols) / sigma_s
    scale = np.linalg.norm(x, axis=0)
    cov = np.linalg.inv((x / scale).T @ (x / scale)) / np.outer(scale, scale)
    d = np.asarray(direction, float) / np.hypot(*direction)
    return {"parallax": float(np.sqrt(cov[4, 4])), "pm_along": float(np.sqrt(d @ cov[2:4, 2:4] @ d))}


def sun_angle(mjd, ra, dec):
    """Sun-source angle, deg, from astropy's get_sun (geocentric apparent Sun)."""
    sun = get_sun(Time(np.asarray(mjd, float), format="mjd", scale="tdb"))
    return sun.separation(SkyCoord(ra * u.deg, dec * u.deg).transform_to(sun.frame)).deg


# -- the optimiser against brute force -----------------------------------------------------------------
def _exhaustive(rows, cmat, blocks, counts):
    """Brute force: the criterion of every admissible design (every subset of each block); the minimum."""
    scale = np.sqrt(np.mean(rows**2, axis=0))
    x, cm = rows / scale, cmat / scale[:, None]
    info = []
    for b, n in enumerate(counts):
        subsets = np.array(list(itertools.combinations(np.flatnonzero(blocks == b), n)))
        info.append(np.einsum("sni,snj->sij", x[subsets], x[subsets]))
    total = (info[0][:, None] + info[1][None, :]).reshape(-1, x.shape[1], x.shape[1])
    sol = np.linalg.solve(total, np.broadcast_to(cm, (total.shape[0],) + cm.shape))
    return float(np.min(np.einsum("kpc,pc->k", sol, cm)))


@pytest.mark.parametrize("schedule,direction", [("parallax", None), ("motion", (0.6, -0.8)), ("motion", None)])
def test_exchange_finds_the_exhaustive_optimum(schedule, direction):
    # two campaign years with 11 and 9 candidate days (every 36.5 d), 5 visits a year, spin_terms=1 (7 parameters):
    # 462 x 126 = 58,212 designs searched exhaustively (the definition of the exact optimum)
    start = 61500.0
    cand = start + np.arange(20) * 36.5
    rows = candidate_rows(210.0, 35.0, cand, spin_terms=1)
    block, counts = year_blocks(cand, start + np.arange(10) * 73.05, start, 2)
    assert counts.tolist() == [5, 5]
    cmat = schedule_combinations(schedule, None if direction is None else np.array(direction), rows.shape[1])
    best = _exhaustive(rows, cmat, block, counts)
    res = exchange_design(rows, cmat, block, counts)
    assert res.value == pytest.approx(best, rel=1e-6)
    assert criterion(rows[res.chosen] / res.scale, cmat / res.scale[:, None]) == pytest.approx(best, rel=1e-6)
    assert np.bincount(block[res.chosen], minlength=2).tolist() == [5, 5]


# -- the schedules' promises ---------------------------------------------------------------------------
def _campaign(ra, dec, **kw):
    c = {"start": "2029-02-10", "baseline": 3, "visits_per_year": 4, "toa_error": "1 ms", "sun_avoidance": 50}
    c.update(kw)
    return scenario_from_dict({"star": {"ra": ra, "dec": dec}, "campaign": c}).campaign


# invented stars: ra, dec (deg), position angle of the motion (deg east of north); the third near the ecliptic
STARS = [(247.3, -12.8, 30.0), (31.0, 62.0, 140.0), (118.5, 21.0, 250.0), (300.2, -70.1, 300.0)]


@pytest.mark.parametrize("ra,dec,pa", STARS)
def test_motion_schedule_never_worse_than_even(ra, dec, pa):
    c = _campaign(ra, dec)
    direction = np.array([np.sin(np.radians(pa)), np.cos(np.radians(pa))])
    start = Time("2029-02-10", scale="tdb").mjd
    window = SunWindow.compute(ra, dec, 50.0, start, start + 3.1 * 365.25)
    even = make_plan(c, ra, dec, window=window)
    motion = make_plan(c, ra, dec, window=window, direction=direction, schedule="motion")
    assert motion.n_visits == even.n_visits and motion.schedule == "motion"
    # errors from this test's own Fisher matrix, not kinage's
    e_even = independent_errors(even.mjd, ra, dec, 1e-3, direction)
    e_motion = independent_errors(motion.mjd, ra, dec, 1e-3, direction)
    assert e_motion["pm_along"] <= e_even["pm_along"] * (1 + 1e-6)
    assert np.all(sun_angle(motion.mjd, ra, dec) >= 50.0)
    # as many visits in each campaign year as the regular cadence
    nominal = regular_epochs(start, 3, 4)
    yr = lambda m: np.clip(np.floor((m - start) / 365.25), 0, 2).astype(int)  # noqa: E731
    assert np.bincount(yr(motion.mjd), minlength=3).tolist() == np.bincount(yr(nominal), minlength=3).tolist()
    assert np.unique(np.floor(motion.mjd)).size == motion.n_visits  # one visit a day


@pytest.mark.parametrize("schedule", ["even", "parallax"])
def test_visits_during_the_day_keep_the_sun_angle(schedule):
    # a start at 17:00 TDB for a source near the ecliptic: visits keep their time of day (even) or move to
    # 00:00 (optimised); either way astropy's Sun is at least 45 deg away at the visit itself
    ra, dec = 118.5, 21.0
    c = _campaign(ra, dec, start="2029-02-10T17:00:00", sun_avoidance=45, visits_per_year=12, baseline=2)
    plan = make_plan(c, ra, dec, schedule=schedule)
    assert np.all(sun_angle(plan.mjd, ra, dec) >= 45.0)


# -- the forecast through the command line -------------------------------------------------------------
# an invented star whose quarterly visits from 2029-01-13 fall near the zero crossings of the half-yearly
# parallax signature (found by scanning the start date with independent_errors above)
ALIAS_STAR = {"name": "Test-Q", "ra": 247.3, "dec": -12.8, "spin_period": "0.68 s", "distance": "250 pc",
              "pm_ra_cosdec": "15 mas/yr", "pm_dec": "-22 mas/yr"}
ALIAS_CAMPAIGN = {"start": "2029-01-13", "baseline": "4 yr", "visits_per_year": 4, "toa_error": "50 us",
                  "sun_avoidance": "45 deg", "max_baseline": "6 yr"}


def _toml(d):
    lines = []
    for table, keys in d.items():
        lines.append(f"[{table}]")
        lines += [f"{k} = {json.dumps(v)}" for k, v in keys.items()]
    return "\n".join(lines) + "\n"


def _run_forecast(tmp_path, name, campaign, star=ALIAS_STAR, extra=(), out=True):
    scn = tmp_path / f"{name}.toml"
    scn.write_text(_toml({"star": star, "campaign": campaign}))
    folder, js = tmp_path / f"{name}_out", tmp_path / f"{name}.json"
    args = ["forecast", str(scn), "--json", str(js), *extra] + (["--out", str(folder)] if out else [])
    return main(args), js, folder


@pytest.fixture(scope="module")
def alias_runs(tmp_path_factory):
    """The three schedules through the CLI; products (plan table, figures) written for 'parallax' only."""
    import contextlib
    import io

    tmp = tmp_path_factory.mktemp("schedules")
    runs = {}
    for schedule in ("even", "parallax", "motion"):
        text = io.StringIO()
        extra = ("--compare-schedules",) if schedule == "even" else ("--quiet",)
        with contextlib.redirect_stdout(text):
            status, js, out = _run_forecast(tmp, schedule, {**ALIAS_CAMPAIGN, "schedule": schedule}, extra=extra,
                                            out=schedule == "parallax")
        assert status == 0
        data = _results(json.loads(js.read_text()))
        runs[schedule] = {"json": data, "out": out, "stdout": text.getvalue(),
                          "mjd": np.asarray(data["schedules"][schedule]["mjd"], float)}
    runs["parallax"]["table"] = Table.read(runs["parallax"]["out"] / "forecast_plan.ecsv", format="ascii.ecsv")
    return runs


def _results(d):
    return d.get("results", d)


def test_parallax_schedule_halves_the_aliased_parallax_error(alias_runs):
    even, par, mot = (alias_runs[k]["json"] for k in ("even", "parallax", "motion"))
    assert par["n_toas"] == even["n_toas"] == mot["n_toas"]
    assert par["sigma"]["parallax_mas"] <= 0.5 * even["sigma"]["parallax_mas"]
    assert mot["pm_error_along_motion_masyr"] <= even["pm_error_along_motion_masyr"]
    # the even forecast warns and names the better schedule and dates
    warn = [w for w in even["warnings"] if "parallax" in w]
    assert warn and 'schedule = "parallax"' in warn[0] and "2029-" in warn[0]
    assert even["schedules"]["parallax"]["parallax_error_mas"] == pytest.approx(par["sigma"]["parallax_mas"], rel=1e-6)


@pytest.mark.parametrize("schedule", ["even", "parallax", "motion"])
def test_planned_dates_reproduce_errors_and_keep_away_from_the_sun(alias_runs, schedule):
    d, mjd = alias_runs[schedule]["json"], alias_runs[schedule]["mjd"]
    assert mjd.size == d["n_toas"] and d["schedule"] == schedule
    ref = independent_errors(mjd, ALIAS_STAR["ra"], ALIAS_STAR["dec"], 50e-6, (15.0, -22.0),
                             epoch_mjd=d["epoch_mjd_tdb"])
    assert d["sigma"]["parallax_mas"] == pytest.approx(ref["parallax"], rel=0.10)
    assert d["pm_error_along_motion_masyr"] == pytest.approx(ref["pm_along"], rel=0.10)
    assert np.all(sun_angle(mjd, ALIAS_STAR["ra"], ALIAS_STAR["dec"]) >= 45.0)


def test_plan_table_lists_the_chosen_dates(alias_runs):
    run = alias_runs["parallax"]
    tab = run["table"]
    assert tab.meta["schedule"] == "parallax"
    assert np.allclose(np.asarray(tab["mjd"], float), run["mjd"])
    assert (run["out"] / "forecast_plan.png").stat().st_size > 0


def test_compare_schedules_prints_a_table(alias_runs):
    lines = alias_runs["even"]["stdout"].splitlines()
    rows = [ln.split() for ln in lines if ln.split() and ln.split()[0] in ("even", "parallax", "motion")]
    assert [r[0] for r in rows] == ["even", "parallax", "motion"]
    sch = alias_runs["even"]["json"]["schedules"]
    assert float(rows[1][-3]) == pytest.approx(sch["parallax"]["parallax_error_mas"], rel=0.06)  # 2 digits shown


def test_forecast_figures_keep_units_apart():
    import matplotlib.pyplot as plt

    from kinage.timing.forecast import forecast
    from kinage.timing.plots import forecast_figure, plan_figure

    res = forecast(scenario_from_dict({"star": ALIAS_STAR, "campaign": {**ALIAS_CAMPAIGN, "max_baseline": "4 yr"}}))
    fig = forecast_figure(res)
    labels = [a.get_ylabel() for a in fig.axes]
    # proper motion and parallax on separate axes, each in one unit; significance on a log axis
    assert any("mas/yr" in s for s in labels) and any("(mas)" in s for s in labels)
    assert not any("mas/yr" in s and "(mas)" in s for s in labels)
    assert fig.axes[-1].get_yscale() == "log" and "significance" in fig.axes[-1].get_ylabel()
    fig2, ax = plt.subplots()
    assert plan_figure(res, ax=ax) is fig2
    plt.close("all")


def test_motion_schedule_not_worse_with_red_noise():
    # the optimiser assumes white noise; under red noise the forecast keeps whichever dates do better
    # (common practice, no source: the even plan is always a feasible answer)
    from kinage.timing.forecast import forecast

    camp = {**ALIAS_CAMPAIGN, "red_noise_amplitude": 1e-11, "max_baseline": "4 yr"}
    res = {k: forecast(scenario_from_dict({"star": ALIAS_STAR, "campaign": {**camp, "schedule": k}}))
           for k in ("even", "motion")}
    assert res["motion"].pm_error_along_motion <= res["even"].pm_error_along_motion * (1 + 1e-9)


def test_words_when_timing_cannot_measure(tmp_path, capsys):
    # a slow, faint star: TOAs of tens of ms from a few photons; pm error far above 1 arcsec/yr
    star = {"ra": 140.2, "dec": 33.1, "spin_period": "4.9 s", "distance": "300 pc"}
    camp = {"start": "2028-03-01", "baseline": "4 yr", "visits_per_year": 4, "exposure": "20 ks",
            "source_rate": "0.5 1/s", "background_rate": "0.05 1/s", "pulsed_fraction": 0.1, "max_baseline": "6 yr"}
    status, js, _ = _run_forecast(tmp_path, "faint", camp, star=star, out=False)
    assert status == 0
    d = _results(json.loads(js.read_text()))
    assert d["sigma"]["pm_ra_cosdec_masyr"] > 1000  # the numbers stay in the JSON
    assert d["constrained"]["proper_motion"] is False
    text = capsys.readouterr().out
    assert "does not constrain the proper motion" in text and "imaging" in text and "times more photons" in text
    assert "e+" not in text and "ks per visit" not in text  # no absurd numbers in prose


@pytest.mark.parametrize("change,key", [
    ({"schedule": "clever"}, "schedule"),
    ({"schedule": "parallax", "dates": ["2029-02-01", "2029-05-01", "2029-08-01"]}, "schedule"),
    ({"visits_per_year": 250, "sun_avoidance": "120 deg"}, "visits_per_year"),
])
def test_bad_schedule_input(tmp_path, capsys, change, key):
    camp = {**ALIAS_CAMPAIGN, **change}
    status, js, out = _run_forecast(tmp_path, "bad", camp)
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1 and key in err[0]
    assert not js.exists() and not (out / "forecast_plan.ecsv").exists()
    with pytest.raises(InputError, match=key):
        make_plan(scenario_from_dict({"star": ALIAS_STAR, "campaign": camp}).campaign, 247.3, -12.8)


def test_simulated_toas_fall_on_the_forecast_motion_dates(alias_runs):
    # the simulation visits the dates the forecast chose (the 'motion' schedule depends on the expected
    # direction of motion, which both must take from the star's proper motion); consistency, no source
    from kinage.timing.simulate import simulate_toas

    scn = scenario_from_dict({"star": ALIAS_STAR, "campaign": {**ALIAS_CAMPAIGN, "schedule": "motion"}})
    sim = simulate_toas(scn, rng=5)
    toa = np.sort(sim.table["mjd"].to_value("mjd", "float"))
    planned = np.sort(alias_runs["motion"]["mjd"])
    assert toa.size == planned.size
    # arrival times differ from the visit times by the light travel across the Earth's orbit (< 0.006 d)
    assert np.max(np.abs(toa - planned)) < 0.01
