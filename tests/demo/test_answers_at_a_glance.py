"""Answers at a glance: the three verdict lines, report.md that reads as text, the verdicts above the fold."""

import html
import json
import re
import subprocess

import pytest

from .conftest import CHROMIUM_FLAGS, chromium

KEYS = ("motion", "birthplace", "ages")


@pytest.mark.parametrize("case", ["xray_run", "radio_run"])
def test_three_quotable_verdict_lines(case, request):
    run = request.getfixturevalue(case)
    data = json.loads((run.out_dir / "results.json").read_text(encoding="utf-8"))
    verdicts = data["summary"]["verdicts"]
    assert tuple(verdicts) == KEYS
    md = (run.out_dir / "report.md").read_text(encoding="utf-8")
    page = (run.out_dir / "report.html").read_text(encoding="utf-8")
    text = run.summary()
    for key in KEYS:
        line = verdicts[key]
        # one sentence a reader can quote: at most ~25 words (a quotable sentence; 30 allows for long names, common practice, no source)
        assert line.endswith(".") and len(line.split()) <= 30, line
        assert line.count(". ") == 0, line
        assert line in md and html.escape(line) in page and line in text
    # the summary shows the verdict lines first: all three before the first question's section
    first_section = md.index("## 1.")
    assert all(md.index(verdicts[k]) < first_section for k in KEYS)
    # numbers in a verdict are those of the stage (the favoured association's name and the fit's TOAs)
    trace = data["trace"]
    if trace.get("favoured"):
        assert trace["favoured"] in verdicts["birthplace"]
    if "fit" in data:
        assert f"{data['fit']['n_toas']} TOAs" in verdicts["motion"]


def _md_tokens(md):
    from markdown_it import MarkdownIt

    parser = MarkdownIt("commonmark").enable("table")
    return parser, parser.parse(md)


def _inline_children(tokens):
    for t in tokens:
        yield t
        for c in t.children or []:
            yield c


@pytest.mark.parametrize("case", ["xray_run", "radio_run"])
def test_report_md_reads_as_text_under_commonmark(case, request):
    # CommonMark 0.31 (https://spec.commonmark.org) through markdown-it-py, the reference-conformant parser
    pytest.importorskip("markdown_it")
    run = request.getfixturevalue(case)
    md = (run.out_dir / "report.md").read_text(encoding="utf-8")
    escapes = re.findall(r"\\[!-/:-@\[-`{-~]", md)
    assert len(escapes) <= 5, escapes  # a handful at most: the text reads as plain text too
    _, tokens = _md_tokens(md)
    kinds = {t.type for t in _inline_children(tokens)}
    assert not kinds & {"html_inline", "html_block"}
    for t in _inline_children(tokens):
        if t.type in ("link_open", "image"):
            target = t.attrGet("href") or t.attrGet("src")
            assert "://" not in target and not target.startswith(("/", "javascript")), target  # local files only
    # every number and name shown in the top summary renders as it reads (no emphasis or code inside)
    summary = md[md.index("## Summary"): md.index("## 1.")]
    _, stokens = _md_tokens(summary)
    inside = [c.type for t in stokens for c in t.children or []]
    assert inside.count("strong_open") == 3 and "em_open" not in inside and "code_inline" not in inside


def test_hostile_association_names_stay_text(tmp_path):
    # a name from a table is user text: rendered by CommonMark it must come back as the same literal text
    pytest.importorskip("markdown_it")
    from markdown_it import MarkdownIt

    from kinage.report.escape import md_text

    parser = MarkdownIt("commonmark").enable("table")
    names = ["<script>alert(1)</script>", "*Vask* _Group_ **2**", "[x](http://example.invalid)",
             "`code` & &amp; A&A", "# Heading", "- item", "1. first", "> quote", "a | b", "~~gone~~",
             "back\\slash\\", "[ref]: http://example.invalid", "![i](x.png)", "ra*cos(dec) and d_min"]
    for name in names:
        for context in ("{}", "- {}", "| a | b |\n|---|---|\n| {} | x |", "**Q?** born in {} 3 Myr ago"):
            out = parser.render(context.format(md_text(name)))
            assert html.escape(name, quote=False) in out.replace("&quot;", '"'), (name, context, out)
            assert "<script" not in out and "href=" not in out and "<img" not in out and "<code" not in out


def test_verdict_lines_above_the_fold(xray_run, tmp_path):
    # the three verdict lines sit in the first screen of a 1280 x 800 browser window (headless chromium
    # computes the layout; a small script writes the boxes of the verdict elements into the DOM it dumps)
    browser = chromium()
    if browser is None:
        pytest.skip("no /usr/bin/chromium (Debian: apt-get install -y chromium); layout not checked")
    page = (xray_run.out_dir / "report.html").read_text(encoding="utf-8")
    probe = ("<script>window.addEventListener('load',function(){var o=[];"
             "document.querySelectorAll('dd.verdict').forEach(function(e){var r=e.getBoundingClientRect();"
             "o.push(e.id+':'+Math.round(r.top)+':'+Math.round(r.bottom));});var p=document.createElement('pre');"
             "p.id='geometry';p.textContent=o.join(';')+'|'+window.innerHeight;document.body.appendChild(p);});"
             "</script>")
    probe_page = tmp_path / "report_probe.html"
    probe_page.write_text(page.replace("</body>", probe + "</body>"), encoding="utf-8")
    r = subprocess.run([browser, *CHROMIUM_FLAGS, f"--user-data-dir={tmp_path / 'profile'}", "--window-size=1280,800",
                        "--virtual-time-budget=5000", "--dump-dom", probe_page.resolve().as_uri()],
                       capture_output=True, text=True, timeout=120)
    m = re.search(r"<pre id=\"geometry\">([^<]*)</pre>", r.stdout)
    assert m, r.stderr[-2000:]
    boxes, height = m.group(1).split("|")
    found = {b.split(":")[0]: (int(b.split(":")[1]), int(b.split(":")[2])) for b in boxes.split(";") if b}
    assert set(found) == {f"verdict-{k}" for k in KEYS}
    assert all(0 < top < bottom <= min(int(height), 800) for top, bottom in found.values()), (found, height)
