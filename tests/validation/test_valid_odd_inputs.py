"""Valid but unusual inputs run correctly; user text is escaped in the Markdown report."""

import json

import astropy.units as u
import numpy as np
import pytest
from astropy.table import Table

from .conftest import DEMO, run_cli, scenario_dict, write_case


def test_unicode_association_names_run(tmp_path, capsys):
    tab = Table.read(DEMO / "associations.ecsv", format="ascii.ecsv")
    names = list(tab["name"].astype(str))
    names[0] = "Şerrat ÖB3 — 東"  # invented, non-ASCII
    tab["name"] = names
    (tmp_path / "in").mkdir()
    tab.write(tmp_path / "in" / "associations.ecsv", format="ascii.ecsv")
    scn = write_case(tmp_path / "in", scenario_dict(tables=("trace",)))
    status, _, err = run_cli(["trace", scn, "--json", tmp_path / "t.json", "--quiet"], capsys)
    assert status == 0, err
    d = json.loads((tmp_path / "t.json").read_text(encoding="utf-8"))
    assert "Şerrat ÖB3 — 東" in [a["name"] for a in d["associations"]]


def test_toa_error_column_in_ms_gives_the_same_fit(tmp_path, capsys):
    tab = Table.read(DEMO / "toas.ecsv", format="ascii.ecsv")
    (tmp_path / "in").mkdir()
    s_path, ms_path = tmp_path / "in" / "toas_s.ecsv", tmp_path / "in" / "toas_ms.ecsv"
    tab.write(s_path, format="ascii.ecsv")
    err_s = np.asarray(tab["error"], float) * (tab["error"].unit or u.s)
    tab["error"] = err_s.to(u.ms)  # the same errors in ms: astropy converts them back
    tab.write(ms_path, format="ascii.ecsv")
    import tomllib

    # the star the demo TOAs were made for (a fit of another star's TOAs misnumbers the pulses and fails)
    star = tomllib.loads((DEMO / "scenario.toml").read_text())["star"]
    scn = write_case(tmp_path / "in", scenario_dict(tables=("campaign",), star=star))
    fits = []
    for path in (s_path, ms_path):
        out = tmp_path / f"{path.stem}.json"
        status, _, err = run_cli(["fit", path, "--scenario", scn, "--json", out, "--quiet"], capsys)
        assert status == 0, err
        fits.append(json.loads(out.read_text()))
    for k, v in fits[0]["sigma"].items():
        if isinstance(v, (int, float)):
            assert np.isclose(fits[1]["sigma"][k], v, rtol=1e-9), k  # ms -> s by astropy.units


@pytest.mark.parametrize("with_title", [True, False])
def test_markdown_report_escapes_user_text(tmp_path, capsys, with_title):
    import re

    hostile = "<script>alert(1)</script>\n# Injected heading\n| x | y |"
    raw = scenario_dict(tables=(), star={"name": hostile})  # no stage: the report still shows title or name
    if with_title:
        raw["title"] = "Title <img src=x onerror=alert(1)>\n\n[link](http://example.invalid)"
    else:
        raw.pop("title")  # the report is titled with the star's name
    out = tmp_path / "out"
    status, _, err = run_cli(["run", write_case(tmp_path / "in", raw), "--out", out, "--quiet"], capsys)
    assert status == 0, err
    md = (out / "report.md").read_text(encoding="utf-8")
    html = (out / "report.html").read_text(encoding="utf-8")
    assert ("img src=x" if with_title else "script") in md  # the user's text is there, escaped
    assert not re.search(r"(?<!\\)<(script|img)", md), [ln for ln in md.splitlines() if "script" in ln or "img" in ln]
    assert not re.search(r"(?<!\\)\]\(http://example.invalid\)", md)  # the bracket escaped: no link
    assert not any(line.startswith("# Injected") or line.startswith("| x") for line in md.splitlines())
    assert "<script" not in html and "<img src=x" not in html


def test_markdown_escaping_is_literal_under_commonmark():
    # CommonMark 0.31, section 2.4: a backslash before ASCII punctuation makes it literal
    from kinage.report.escape import md_code, md_text

    assert md_text("a*b_c") == "a*b_c"  # a lone intraword * or _ opens no emphasis (CommonMark 6.2)
    assert md_text("a*b*c_d_") == "a\\*b\\*c_d\\_"
    assert "\n" not in md_text("one\ntwo\r\nthree")
    assert md_code("x ` y") == "``x ` y``"


def test_nan_cell_in_star_table_means_not_given(tmp_path):
    """The documented rule (kinage.batch.stars): NaN, masked and empty cells mean 'not given'."""
    from kinage.batch.stars import read_star_rows, star_scenario

    tab = Table.read(DEMO / "population.ecsv", format="ascii.ecsv")
    tab["spin_period"][0] = np.nan
    tab["temperature"][1] = np.nan
    tab["temperature_error"][1] = np.nan
    path = tmp_path / "stars.ecsv"
    tab.write(path, format="ascii.ecsv")
    rows = read_star_rows(path)
    assert "spin_period" not in rows[0] and "temperature" not in rows[1]
    template = {"star": {"name": "t", "spin_period": "2.3 s"}, "ages": {"braking_index": 3}}
    s = star_scenario(rows[0], template, tmp_path)
    assert s.star.value("spin_period", "s") == 2.3  # the template's value fills the NaN
    s = star_scenario(rows[1], template, tmp_path)
    assert s.star.get("temperature") is None
