"""The invented demo cases: listing, the radio chain (timing -> trace), invented values, report screenshots."""

import json
import math
import tomllib

import numpy as np
import pytest

from kinage.cli import main
from kinage.demo import DEMO_CASES, demo_folder

from .conftest import screenshot

# Known nearby thermally emitting neutron stars (the "Magnificent Seven") and a few famous pulsars:
# (name, spin period s, kT_inf eV or None, distance pc or None).  Values from memory (Haberl 2007, Ap&SS 308,
# 181; Kaplan & van Kerkwijk 2009; ATNF catalogue), to a few per cent; used only to show the demo is not them.
KNOWN = [
    ("RX J1856.5-3754", 7.06, 61, 123), ("RX J0720.4-3125", 8.39, 86, 360), ("RX J1605.3+3249", 3.39, 96, 390),
    ("RX J0806.4-4123", 11.37, 95, 250), ("RX J1308.6+2127", 10.31, 100, 500), ("RX J2143.0+0654", 9.43, 104, 430),
    ("RX J0420.0-5022", 3.45, 45, 345), ("Geminga", 0.237, 42, 250), ("Vela", 0.0893, 93, 290),
    ("Crab", 0.0334, None, 2000), ("PSR B0656+14", 0.385, 70, 288), ("PSR B1055-52", 0.197, 70, 350),
    ("PSR B0950+08", 0.253, None, 262), ("PSR B1929+10", 0.2265, None, 361), ("PSR B0919+06", 0.4306, None, 1100),
    ("PSR B1508+55", 0.7397, None, 2100), ("PSR B1133+16", 1.188, None, 372), ("PSR B0329+54", 0.7145, None, 1000),
]


def test_list_prints_one_line_per_case_name_first(capsys):
    assert main(["demo", "--list"]) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    assert len(lines) == len(DEMO_CASES)
    assert [ln.split()[0] for ln in lines] == [c.name for c in DEMO_CASES]
    assert {"xray", "radio", "population"} <= {ln.split()[0] for ln in lines}


def test_unknown_case_is_an_input_error(tmp_path, capsys):
    assert main(["demo", "--case", "no-such-case", "--out", str(tmp_path / "o")]) == 2
    assert "--case" in capsys.readouterr().err
    assert not (tmp_path / "o").exists()


def _stars():
    """(name, period s, kT eV or None, distance pc) of every invented demo star."""
    from astropy.table import Table

    root = demo_folder()
    out = []
    for folder in ("", "radio"):
        star = tomllib.loads((root / folder / "scenario.toml").read_text())["star"]
        period = float(str(star["spin_period"]).split()[0])
        kt = float(str(star["temperature"]).split()[0]) if "temperature" in star else None
        if "parallax" in star:
            dist = 1000.0 / float(str(star["parallax"]).split()[0])
        else:
            dist = float(str(star["distance"]).split()[0])
        out.append((star["name"], period, kt, dist))
    pop = Table.read(root / "population.ecsv")
    for r in pop:
        out.append((str(r["name"]), float(r["spin_period"]), float(r["temperature"]), 1000.0 / float(r["parallax"])))
    return out


@pytest.mark.parametrize("star", _stars(), ids=lambda s: s[0])
def test_demo_stars_are_not_known_neutron_stars(star):
    name, period, kt, dist = star
    for kname, kp, kkt, kd in KNOWN:
        assert kname.split()[-1] not in name
        near_p = abs(period / kp - 1) < 0.03
        if near_p:
            # a period may be shared by chance: then temperature and distance must differ clearly
            assert (kkt is None or kt is None or abs(kt / kkt - 1) > 0.15) or abs(dist / kd - 1) > 0.3, kname
    # the periods the house rule keeps away from (the full list: tests/foundation/test_invented_stars.py)
    for avoid in (3.45, 7.06, 8.39, 9.43, 10.31, 11.37, 0.0334, 0.0893, 0.237):
        assert abs(period / avoid - 1) >= 0.03


def test_radio_fit_measures_proper_motion_and_parallax(radio_run):
    fit = radio_run.stages["fit"].to_dict()
    v, s = fit["values"], fit["sigma"]
    pm = math.hypot(v["pm_ra_cosdec_masyr"], v["pm_dec_masyr"])
    pm_err = math.hypot(s["pm_ra_cosdec_masyr"], s["pm_dec_masyr"])
    assert pm / pm_err >= 3 and v["parallax_mas"] / s["parallax_mas"] >= 3
    assert fit["converged"]
    # the values injected when the TOAs were simulated (scripts/make_demo.py, recorded in the table's meta) are
    # recovered within 4 sigma (common practice, no source)
    from astropy.table import Table

    injected = Table.read(radio_run.out_dir.parent / "toas.ecsv").meta["injected"]
    for key, inj in (("pm_ra_cosdec_masyr", "pm_ra_cosdec"), ("pm_dec_masyr", "pm_dec"), ("parallax_mas", "parallax")):
        assert abs(v[key] - injected[inj]) < 4 * s[key], key


def test_radio_trace_uses_the_timing_proper_motion(radio_run):
    trace, fit = radio_run.stages["trace"], radio_run.stages["fit"].to_dict()
    assert trace.settings["astrometry_source"].startswith("timing")
    draws = trace.data["draws"]
    scenario = tomllib.loads((radio_run.out_dir.parent / "scenario.toml").read_text())["star"]
    imaging = float(scenario["pm_ra_cosdec"].split()[0])
    fitted, err = fit["values"]["pm_ra_cosdec_masyr"], fit["sigma"]["pm_ra_cosdec_masyr"]
    centre = float(np.median(draws.pm_ra_cosdec))
    # the draws are centred on the fit (to 3 of its sigma), not on the coarse imaging value
    assert abs(centre - fitted) < 3 * err < abs(imaging - fitted)
    # and the star is traced back to the association it was made in (scripts/make_demo.py: 0.90 Myr ago)
    d = trace.to_dict()
    assert d["favoured"] == "Karrow Group"
    age = next(a for a in d["associations"] if a["name"] == "Karrow Group")["age_yr"]
    assert age["lo95"] < 0.90e6 < age["hi95"]


def _check_screenshot(run, tmp_path, name):
    from PIL import Image

    shot = tmp_path / f"{name}.png"
    r = screenshot(run.out_dir / "report.html" if hasattr(run, "out_dir") else run, shot, tmp_path / "profile")
    assert r.returncode == 0, r.stderr[-2000:]
    img = np.asarray(Image.open(shot).convert("RGB"), float)
    assert img.shape[0] >= 2000 and img.shape[1] >= 1000
    ink = np.mean(np.abs(img - 255).sum(axis=2) > 60)
    assert 0.03 < ink < 0.6  # text and figures, not a blank or broken page
    return img


def _has_colour(img, hex_colour, tol=30):
    rgb = np.array([int(hex_colour[i:i + 2], 16) for i in (1, 3, 5)], float)
    return int(np.sum(np.all(np.abs(img - rgb) < tol, axis=2)))


def test_xray_report_screenshot(xray_run, tmp_path):
    img = _check_screenshot(xray_run, tmp_path, "xray")
    assert _has_colour(img, "#E69F00") > 50  # the caution box's orange border (Okabe & Ito palette)
    html = (xray_run.out_dir / "report.html").read_text()
    assert "imaging" in html and "not constrained" in html


def test_radio_report_screenshot(radio_run, tmp_path):
    img = _check_screenshot(radio_run, tmp_path, "radio")
    assert _has_colour(img, "#0072B2") > 50  # the summary box's blue border
    html = (radio_run.out_dir / "report.html").read_text()
    for stem in ("trace_sky", "trace_dmin_control", "astrometry_pm_ellipses", "fit_residuals"):
        assert stem in json.dumps(str(list(map(str, radio_run.files))))


def test_population_case_and_report_screenshot(tmp_path):
    # the population case on its first three stars: the batch's own per-star task and summary, run in this
    # process (the dask scheduling has its own tests in tests/batch), then the population report
    from astropy.table import Table

    from kinage.batch.runner import plan_batch, run_one_star
    from kinage.batch.summary import write_summary
    from kinage.demo import copy_case, get_case
    from kinage.report.population import write_population_report

    out = copy_case(get_case("population"), tmp_path / "pop")
    Table.read(out / "population.ecsv")[:3].write(out / "population.ecsv", overwrite=True)
    plan = plan_batch(out / "population.ecsv", out / "population_template.toml", out / "results", samples=60)
    for task in plan.todo:
        assert run_one_star(**task)["status"] == "ok"
    write_summary(out / "results", seed=plan.seed)
    report = write_population_report(out / "results", command="test")
    html = report.read_text()
    assert "not a kinematic age" in html and "summary.ecsv" in html
    _check_screenshot(report, tmp_path, "population")
