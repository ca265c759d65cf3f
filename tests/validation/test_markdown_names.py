"""Names from an association table reach report.md as text, wherever they appear (paragraphs, verdicts, tables)."""

import html
import re
import tomllib
import warnings

import pytest
from astropy.table import Table

import kinage

from .conftest import DEMO, write_case

HOSTILE = {"Vessen OB2": "<script>alert(1)</script>", "Tamsin Moving Group": "*Vask* [OB2](http://example.invalid)",
           "Verdane OB2": "`Brant` _Group_ & &amp;"}


def test_hostile_association_names_render_as_text(tmp_path):
    markdown_it = pytest.importorskip("markdown_it")
    tab = Table.read(DEMO / "associations.ecsv", format="ascii.ecsv")
    tab["name"] = [HOSTILE.get(str(n), str(n)) for n in tab["name"]]
    (tmp_path / "in").mkdir()
    tab.write(tmp_path / "in" / "associations.ecsv", format="ascii.ecsv")
    raw = tomllib.loads((DEMO / "scenario.toml").read_text())  # the demo star, whose favoured is renamed
    raw = {"title": "names as text (invented)", "star": raw["star"],
           "trace": dict(raw["trace"], samples=200, association_samples=20, control_runs=1)}
    scn = write_case(tmp_path / "in", raw)
    out = tmp_path / "out"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", kinage.KinageWarning)
        run = kinage.run(scn, out, products=False)  # the report without figures: its text is what is checked
    md = (out / "report.md").read_text(encoding="utf-8")
    assert HOSTILE["Vessen OB2"] in run.verdicts()["birthplace"]  # the hostile name is the favoured one
    # CommonMark (spec.commonmark.org 0.31) through markdown-it-py: no user text becomes HTML, a link or code
    rendered = markdown_it.MarkdownIt("commonmark").enable("table").render(md)
    assert "<script" not in rendered and "<em>" not in rendered and "<strong>Vask" not in rendered
    assert not re.search(r"<code>[^<]*Brant", rendered)  # kinage's own code spans (set names, hashes) only
    assert "example.invalid" not in " ".join(re.findall(r'href="([^"]*)"', rendered))
    text = html.unescape(re.sub(r"<[^>]+>", "", rendered))
    assert text.count(HOSTILE["Vessen OB2"]) >= 3  # verdict in the summary, above the section, in the paragraph
    # and report.md stays readable: a handful of escapes once the escaped names are taken out
    from kinage.report.escape import md_text

    rest = md
    for name in HOSTILE.values():
        rest = rest.replace(md_text(name), "").replace(md_text(name, cell=True), "")
    assert len(re.findall(r"\\[!-/:-@\[-`{-~]", rest)) <= 5
