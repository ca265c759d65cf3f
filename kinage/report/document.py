"""The run report: one self-contained HTML page and a Markdown twin.

The page opens with a summary answering the three questions in plain words
(each sentence is the stage's own ``summary()``, also stored in
``results.json``), then one section per stage with its figures, its numbers
and the assumptions and parameter sets (with references) they rest on.
"""

import base64
import datetime
import html
from pathlib import Path

from .._version import __version__
from ..io.results import atomic_write, to_jsonable
from .numbers import stage_rows

__all__ = ["write_reports", "render_html", "render_markdown", "QUESTIONS", "CAPTIONS"]

#: the three questions and the stages that answer them
QUESTIONS = (
    ("Can a timing campaign measure the star's motion?", ("forecast", "fit"), "campaign"),
    ("Where and when was it born?", ("trace",), "trace"),
    ("Do the ages agree?", ("ages",), "ages"),
)
_TITLES = {"forecast": "Timing forecast", "fit": "Timing fit", "trace": "Birthplace tracing", "ages": "Ages"}
#: captions of the stages' figures (file stem -> text); unknown figures are captioned by their file name
CAPTIONS = {
    "forecast_baseline": "Forecast proper-motion and parallax errors (top) and proper-motion significance (bottom) "
                         "against campaign baseline; the dotted line marks this plan.",
    "fit_residuals": "Timing fit: residuals with the fitted astrometric delay added back, and that delay (top); "
                     "post-fit residuals (bottom).",
    "trace_birth_xyz": "Positions of the star's draws and of the favoured association's draws at the birth time, "
                       "Galactic x-y and x-z, with the association's radius criterion.",
    "trace_dmin_tau": "Closest approach d_min against its time tau for every draw; encounters lie below the radius "
                      "criterion and before the association's age plus tolerance.",
    "trace_sky": "Past tracks of star and association draws on the sky (Galactic coordinates).",
    "trace_tau_hist": "Times of closest approach: all draws and encounters.",
    "ages_ladder": "Age ladder: each age with its 68% interval on one logarithmic axis.",
    "ages_cooling_curves": "Cooling curves for the envelope compositions and masses, with the star's temperature "
                           "and kinematic age marked.",
}


def _caption(fig):
    return CAPTIONS.get(Path(fig).stem, Path(fig).stem.replace("_", " "))


def _answers(run):
    out = []
    for question, stages, table in QUESTIONS:
        parts = []
        for s in stages:
            if s in run.stages:
                parts.append(run.stages[s].summary())
            elif s in run.failed:
                parts.append(f"The {s} stage failed: {run.failed[s]}")
        if not parts:
            if any(s in run.planned for s in stages):
                parts.append("Not reached: an earlier stage failed.")
            else:
                parts.append(f"Not asked: the scenario has no [{table}] table.")
        out.append((question, " ".join(parts)))
    return out


def _figures(run, stage):
    d = run.out_dir / stage
    return sorted(p for p in run.files if Path(p).suffix == ".png" and Path(p).parent == d)


def _tables(run, stage):
    d = run.out_dir / stage
    return sorted(p for p in run.files if Path(p).suffix in (".ecsv", ".csv") and Path(p).parent == d)


def _param_refs(result):
    return [p.summary() for p in getattr(result, "parameter_sets", []) or []]


def render_markdown(run):
    """The report as Markdown text (figures linked by relative path)."""
    title = run.scenario.title or run.scenario.star.get("name")
    lines = [f"# kinage report: {title}", "",
             f"kinage {__version__}, seed {run.seed}, "
             f"{datetime.datetime.now(datetime.timezone.utc):%Y-%m-%d %H:%M} UTC. "
             "Results are research estimates; the assumptions are listed in each section.", "", "## Summary", ""]
    for q, a in _answers(run):
        lines += [f"**{q}** {a}", ""]
    for name, result in run.stages.items():
        lines += [f"## {_TITLES.get(name, name)}", "", result.summary(), ""]
        rows = stage_rows(name, to_jsonable(result.to_dict()))
        if rows:
            lines += ["| quantity | value |", "|---|---|"] + [f"| {k} | {v} |" for k, v in rows] + [""]
        for fig in _figures(run, name):
            lines += [f"![{_caption(fig)}]({Path(fig).relative_to(run.out_dir).as_posix()})", "",
                      f"*{_caption(fig)}*", ""]
        for t in _tables(run, name):
            lines += [f"Table: `{Path(t).relative_to(run.out_dir).as_posix()}`", ""]
        assumptions = getattr(result, "assumptions", []) or []
        if assumptions:
            lines += ["Assumptions:", ""] + [f"- {a}" for a in assumptions] + [""]
        refs = _param_refs(result)
        if refs:
            lines += ["Parameter sets:", ""]
            for p in refs:
                lines.append(f"- {p['kind']} `{p['name']}`: {p['description']}"
                             + (f" ({'; '.join(p['references'])})" if p["references"] else ""))
            lines.append("")
    for name, msg in run.failed.items():
        lines += [f"## Stage '{name}' failed", "", f"`{msg}`", "",
                  "The results of the stages before it are complete and in results.json.", ""]
    return "\n".join(lines)


_CSS = """
body{font-family:system-ui,-apple-system,Segoe UI,Helvetica,Arial,sans-serif;max-width:58rem;margin:2rem auto;
padding:0 1rem;line-height:1.45;color:#1b1b1b}
h1{font-size:1.5rem}h2{font-size:1.2rem;border-bottom:1px solid #ddd;padding-bottom:.2rem;margin-top:2rem}
.summary{background:#f4f7fb;border-left:4px solid #0072B2;padding:.6rem 1rem}
.summary dt{font-weight:600;margin-top:.4rem}.summary dd{margin-left:0}
table{border-collapse:collapse;font-size:.9rem;margin:.5rem 0}td,th{border:1px solid #ddd;padding:.2rem .5rem;
text-align:left;vertical-align:top}figure{margin:1rem 0}img{max-width:100%;height:auto}
.failed{background:#fff3f0;border-left:4px solid #D55E00;padding:.5rem 1rem}.meta{color:#555;font-size:.85rem}
"""


def render_html(run):
    """The report as one self-contained HTML page (figures embedded as data URIs)."""
    e = html.escape
    title = run.scenario.title or run.scenario.star.get("name")
    body = [f"<h1>kinage report: {e(str(title))}</h1>",
            f"<p class='meta'>kinage {e(__version__)}, seed {run.seed}, "
            f"{datetime.datetime.now(datetime.timezone.utc):%Y-%m-%d %H:%M} UTC. Results are research estimates; "
            "the assumptions they rest on are listed in each section. All numbers are in results.json.</p>",
            "<h2>Summary</h2>", "<dl class='summary'>"]
    for q, a in _answers(run):
        body.append(f"<dt>{e(q)}</dt><dd>{e(a)}</dd>")
    body.append("</dl>")
    for name, result in run.stages.items():
        body += [f"<h2 id='{name}'>{e(_TITLES.get(name, name))}</h2>", f"<p>{e(result.summary())}</p>"]
        rows = stage_rows(name, to_jsonable(result.to_dict()))
        if rows:
            body.append("<table><tr><th>quantity</th><th>value</th></tr>"
                        + "".join(f"<tr><td>{e(k)}</td><td>{e(v)}</td></tr>" for k, v in rows) + "</table>")
        for fig in _figures(run, name):
            raw = Path(fig).read_bytes()
            data = base64.b64encode(raw).decode("ascii")
            # same scale for every figure: 7.5rem per inch of the figure's size at 200 dpi
            width = f" style='width:{_png_width_px(raw) / 200 * 7.5:.1f}rem'" if _png_width_px(raw) else ""
            body.append(f"<figure><img alt='{e(_caption(fig))}'{width} src='data:image/png;base64,{data}'>"
                        f"<figcaption>{e(_caption(fig))}</figcaption></figure>")
        tables = _tables(run, name)
        if tables:
            body.append("<p>Tables: " + ", ".join(f"<code>{e(Path(t).relative_to(run.out_dir).as_posix())}</code>"
                                                  for t in tables) + "</p>")
        assumptions = getattr(result, "assumptions", []) or []
        if assumptions:
            body.append("<p><b>Assumptions</b></p><ul>" + "".join(f"<li>{e(a)}</li>" for a in assumptions) + "</ul>")
        refs = _param_refs(result)
        if refs:
            body.append("<p><b>Parameter sets</b></p><ul>" + "".join(
                f"<li>{e(p['kind'])} <code>{e(p['name'])}</code>: {e(p['description'])}"
                + (f" ({e('; '.join(p['references']))})" if p["references"] else "") + "</li>" for p in refs) + "</ul>")
    for name, msg in run.failed.items():
        body.append(f"<div class='failed'><h2>Stage '{e(name)}' failed</h2><p><code>{e(msg)}</code></p>"
                    "<p>The results of the stages before it are complete and in results.json.</p></div>")
    return ("<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
            f"<meta name='viewport' content='width=device-width, initial-scale=1'><title>kinage: {e(str(title))}</title>"
            f"<style>{_CSS}</style></head><body>\n" + "\n".join(body) + "\n</body></html>\n")


def _png_width_px(raw):
    """Width in pixels from a PNG's IHDR chunk (0 if not a PNG)."""
    if raw[:8] != b"\x89PNG\r\n\x1a\n" or len(raw) < 24:
        return 0
    return int.from_bytes(raw[16:20], "big")


def write_reports(run, out_dir):
    """Write ``report.html`` and ``report.md`` into ``out_dir`` (atomically)."""
    out_dir = Path(out_dir)
    return [atomic_write(out_dir / "report.html", render_html(run)),
            atomic_write(out_dir / "report.md", render_markdown(run))]
