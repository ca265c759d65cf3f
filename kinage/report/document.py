"""The run report: one self-contained HTML page and a Markdown twin.

Order: a caution, the summary answering the three questions in plain words
(each sentence is the stage's own ``summary()``, also stored in
``results.json``), then one section per question.  Inside a section every
figure sits next to the numbers it shows, with a one-sentence caption saying
what to read from it; then the tables written (linked), the assumptions and
the parameter sets.  A provenance block closes the page: versions, seed,
parameter sets with references, input hashes and the command line.
"""

import html
import platform
import sys
from pathlib import Path

from .._version import __version__
from ..io.results import atomic_write, provenance, to_jsonable
from . import numbers as nb
from .escape import md_code, md_text
from .html_blocks import _CSS, _html_rows, _img

__all__ = ["write_reports", "render_html", "render_markdown", "QUESTIONS", "CAPTIONS", "CAUTION", "md_escape",
           "report_sections"]

#: the three questions, the stages that answer them and the table that asks
QUESTIONS = (
    ("Can a timing campaign measure the star's motion?", ("forecast", "fit"), "campaign"),
    ("Where and when was it born?", ("trace",), "trace"),
    ("Do the ages agree?", ("ages",), "ages"),
)
_TITLES = {"forecast": "Timing forecast", "fit": "Timing fit", "astrometry": "Proper motion used for tracing",
           "trace": "Birthplace tracing", "ages": "Ages"}
#: one sentence per figure (file stem): what to read from it
CAPTIONS = {
    "forecast_baseline": "Read off how the forecast proper-motion and parallax errors fall with baseline, and where "
                         "the significance of the expected motion crosses the target.",
    "forecast_schedules": "Compare the proper-motion and parallax errors of the visit schedules with the same "
                          "number of visits.",
    "forecast_birthplace": "Compare each candidate's probability today (diamond) with its spread over the campaign's "
                           "simulated outcomes, and see how the chance of settling the birthplace grows with years "
                           "of timing.",
    "forecast_plan": "See when the visits fall against the yearly parallax and the growing proper-motion "
                     "signatures: visits near the extremes measure them best.",
    "fit_residuals": "Check that the post-fit residuals (bottom) scatter within their errors and that the fitted "
                     "astrometric delay (top) follows the data.",
    "astrometry_pm_ellipses": "Read which measurement fixes the proper motion: the smallest ellipse dominates the "
                              "combination the trace uses.",
    "trace_sky": "Follow the star's tracks back in time (arrows) to where they meet an association's track; the "
                 "favoured association is drawn in vermilion and ranked first in the legend.",
    "trace_dmin_tau": "Encounters are the draws below the radius criterion and younger than the association; their "
                      "times give the kinematic age.",
    "trace_dmin_control": "A real birthplace shows star draws piling up at small d_min well above the control draws, "
                          "close to the common-origin curve.",
    "trace_plane_crossing": "The time since the last crossing of the Galactic mid-plane: an upper bound on the age "
                            "only if the star was born in the plane, not a kinematic age.",
    "trace_tau_hist": "The encounter times (kinematic age) against the closest-approach times of all draws.",
    "trace_birth_xyz": "At the birth time the star's draws should overlap the association's within its radius.",
    "ages_ladder": "Ages whose 68% bars overlap agree; a gap between the kinematic and spin-down ages points to "
                   "field decay or a long initial period.",
    "ages_cooling_curves": "Where the star's point (kinematic age, temperature) falls among the cooling curves says "
                           "which envelope and mass fit, or that none does.",
}
CAUTION = ("These are research estimates. They rest on the assumptions listed in each section (a static Galactic "
           "potential, an assumed velocity distribution for the unknown radial velocity, a simple cooling model, "
           "a linearised timing model); check them before quoting a number.")
_STAGE_ORDER = ("forecast", "fit", "astrometry", "trace", "ages")
#: HTML ids of the verdict lines in the summary, in the order of QUESTIONS (keys of summary.verdicts)
_VERDICT_IDS = ("motion", "birthplace", "ages")
_FIGURE_ORDER = {stem: i for i, stem in enumerate(CAPTIONS)}


def md_escape(text):
    """User text (titles, names) safe inside Markdown: see :func:`kinage.report.escape.md_text`."""
    from .escape import md_text

    return md_text(text)


def _caption(fig):
    return CAPTIONS.get(Path(fig).stem, Path(fig).stem.replace("_", " "))


#: trace figures about one association: with none favoured they show the most probable candidate
_ONE_ASSOCIATION = ("trace_dmin_tau", "trace_dmin_control", "trace_tau_hist", "trace_birth_xyz")


def _stage_caption(stage, fig, data):
    """The figure's caption, saying which association a per-association trace figure shows when none is favoured."""
    text = _caption(fig)
    stem = Path(fig).stem
    measured = nb.fit_constrained(data) if stage == "fit" else {}
    if stem == "fit_residuals" and measured and not (measured["proper_motion"] or measured["parallax"]):
        text = ("Check that the post-fit residuals (bottom) scatter within their errors; the fit constrains no "
                "astrometry, so no astrometric delay is drawn (top: residuals with the unconstrained fitted delay).")
    if stage == "trace" and not data.get("favoured") and data.get("associations"):
        name = data["associations"][0].get("name")
        if stem in _ONE_ASSOCIATION:
            text += f" No association is favoured: shown is the most probable candidate, {name}."
        if stem == "trace_birth_xyz":
            text += (" The time shown is the star's median encounter (or closest-approach) time with it, not an "
                     "established birth time.")
    return text


def _answers(run):
    """[(question, verdict line, paragraph)]: the stages' summaries after the question's verdict line."""
    from .verdicts import run_verdicts

    lines = run_verdicts({n: to_jsonable(r.to_dict()) for n, r in run.stages.items()}, run.planned, run.failed)
    out = []
    for (question, stages, table), verdict in zip(QUESTIONS, lines.values()):
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
        out.append((question, verdict, " ".join(parts)))
    return out


def _files(run, folder, suffixes):
    d = run.out_dir / folder
    return sorted((p for p in run.files if Path(p).suffix in suffixes and Path(p).parent == d),
                  key=lambda p: (_FIGURE_ORDER.get(Path(p).stem, 99), Path(p).name))


def _param_refs(result):
    return [p.summary() for p in getattr(result, "parameter_sets", []) or []]


def _figure_rows(stage, stem, data, raw, expected_parallax=None):
    """The numbers a figure shows: (header or None, rows)."""
    if stage == "trace":
        best = next((a for a in data.get("associations") or [] if a.get("name") == data.get("favoured")), None)
        if best is None and data.get("associations"):
            best = data["associations"][0]
        if stem == "trace_sky":
            header, rows = nb.association_rows(data.get("associations") or [],
                                               field=(data.get("field_probability"),
                                                      data.get("field_probability_error")),
                                               favoured=data.get("favoured"))
            return header, rows
        if best is None:
            return None, []
        shown = best["name"] if data.get("favoured") else f"{best['name']} (most probable candidate; none favoured)"
        if stem == "trace_dmin_tau":
            return None, [("association", shown),
                          ("encounter fraction", nb._pct(best.get("encounter_fraction"),
                                                         best.get("encounter_fraction_error"))),
                          ("kinematic age (encounter times)", nb.fmt_age_interval(best.get("age_yr"))),
                          ("radius criterion", f"{best['radius_pc'] * (data.get('settings') or {}).get('encounter_radius_factor', 1.0):.3g} pc"),
                          ("association age", f"{best['age_myr']:.3g} Myr")]
        if stem == "trace_dmin_control":
            co = best.get("common_origin") or {}
            rows = [("association", shown),
                    ("encounter fraction, star draws", nb._pct(best.get("encounter_fraction"),
                                                                best.get("encounter_fraction_error"))),
                    ("encounter fraction, control draws", nb._pct(best.get("chance_fraction"),
                                                                   best.get("chance_fraction_error")))]
            if best.get("probability") is not None:
                rows.append(("birth probability", nb._pct(best["probability"], best.get("probability_error"))))
            if co.get("sigma_pc") is not None:
                rows.append(("common-origin σ (Hoogerwerf et al. 2001)", f"{nb.fmt_power(co['sigma_pc'])} pc"))
            if co.get("ks_statistic") is not None:
                rows.append(("KS distance from the common-origin curve", f"{co['ks_statistic']:.2f}"))
            return None, rows
        if stem == "trace_plane_crossing":
            return None, nb.plane_crossing_rows(data)
        if stem == "trace_tau_hist":
            return None, [("association", shown),
                          ("closest-approach time, all draws", nb.fmt_age_interval(best.get("tau_all_yr"))),
                          ("kinematic age (encounters)", nb.fmt_age_interval(best.get("age_yr")))]
        return None, []
    if stage == "forecast" and stem == "forecast_baseline":
        return None, nb.forecast_rows(data, expected_parallax)
    if stage == "fit" and stem == "fit_residuals":
        return None, nb.fit_rows(data, expected_parallax)
    if stage == "ages" and stem == "ages_ladder":
        return None, nb.ages_rows(data, (raw or {}).get("star"))
    if stage == "ages" and stem == "ages_cooling_curves":
        rows = []
        for r in data.get("cooling_age_per_model") or []:
            rows.append((f"cooling age, {r['envelope']} envelope, {r['mass_msun']:g} M☉", nb.fmt_age_interval(r)))
        return None, rows
    return None, []


def report_sections(run):
    """The report's content as plain data: [(question, [(stage, blocks)])].

    Each block is a dict with ``kind`` ('text', 'pair', 'rows', 'files', 'list', 'psets') and its content.
    Shared by the HTML and the Markdown renderers.
    """
    raw = getattr(run.scenario, "raw", {}) or {}
    plx = nb.expected_parallax_mas(getattr(run.scenario, "star", None))
    out = []
    for question, stages, _ in QUESTIONS:
        stage_list = list(stages) + (["astrometry"] if "fit" in stages or "forecast" in stages else [])
        parts = []
        for name in stage_list:
            if name == "astrometry":
                figs = _files(run, "astrometry", (".png",))
                if figs:
                    parts.append((name, [{"kind": "pair", "figure": f, "caption": _caption(f), "header": None,
                                          "rows": _astrometry_rows(run)} for f in figs]))
                continue
            if name not in run.stages:
                continue
            result = run.stages[name]
            data = to_jsonable(result.to_dict())
            blocks = [{"kind": "text", "text": result.summary()}]
            if name == "trace" and isinstance(data.get("distance_pc"), dict) and data["distance_pc"].get("median"):
                # the star's one distance, stated once: the ages stage's Shklovskii term uses the same draws
                blocks.append({"kind": "text", "text": _distance_sentence(data, "ages" in run.stages)})
            used = False
            for f in _files(run, name, (".png",)):
                header, rows = _figure_rows(name, Path(f).stem, data, raw, plx)
                used = used or bool(rows)
                blocks.append({"kind": "pair", "figure": f, "caption": _stage_caption(name, f, data),
                               "header": header, "rows": rows})
            if not used:
                blocks.append({"kind": "rows", "rows": nb.stage_rows(name, data, raw)})
            warn = [str(w) for w in data.get("warnings") or []] if isinstance(data.get("warnings"), list) else []
            if name == "ages":
                blocks.append({"kind": "list", "title": "Verdicts",
                               "items": [v["text"] for v in data.get("verdicts") or [] if isinstance(v, dict)]})
            if warn:
                blocks.append({"kind": "list", "title": "Warnings", "items": warn})
            tables = _files(run, name, (".ecsv", ".csv"))
            if tables:
                blocks.append({"kind": "files", "files": tables})
            assumptions = getattr(result, "assumptions", []) or []
            if assumptions:
                blocks.append({"kind": "list", "title": "Assumptions", "items": list(assumptions)})
            refs = _param_refs(result)
            if refs:
                blocks.append({"kind": "psets", "items": refs})
            parts.append((name, blocks))
        out.append((question, parts))
    return out


def _distance_sentence(data, ages):
    """'Distance: 800 pc (68%: 730–890 pc) from ... .' for the trace section."""
    words = (data.get("settings") or {}).get("distance_words")
    text = nb.distance_text(data["distance_pc"], data.get("distance_source"), words=words)
    vt = data.get("transverse_velocity_kms") or {}
    speed = f"; transverse speed {nb.fmt_interval(vt, 'km/s')} (heliocentric)" if vt.get("median") else ""
    tail = "; the ages stage's Shklovskii correction uses the same draws" if ages else ""
    return f"Distance of the star, over all draws: {text}{speed}{tail}."


def _astrometry_rows(run):
    from .figures import pm_ellipse_inputs

    rows = []
    for lab, v, c in pm_ellipse_inputs(run.scenario, fit=run.stages.get("fit"), forecast=run.stages.get("forecast")):
        s = [c[0][0] ** 0.5, c[1][1] ** 0.5]
        if max(s) >= 1000.0:
            rows.append((f"{lab} proper motion", f"not constrained (errors {max(s):.2g} mas/yr)"))
        elif lab.endswith("(forecast)"):
            rows.append((f"{lab} proper-motion errors", f"{s[0]:.2g} (ra*cos dec), {s[1]:.2g} (dec) mas/yr"))
        else:
            rows.append((f"{lab} proper motion, ra*cos(dec)", nb.value_error(v[0], s[0], "mas/yr")))
            rows.append((f"{lab} proper motion, dec", nb.value_error(v[1], s[1], "mas/yr")))
    tr = run.stages.get("trace")
    if tr is not None:
        rows.append(("astrometry the trace used", nb.astrometry_source_words(tr.settings.get("astrometry_source"))))
    return rows


def _command_line(run):
    cmd = getattr(run, "command", None)
    if cmd:
        return cmd
    prog = Path(sys.argv[0]).name if sys.argv and sys.argv[0] else ""
    if prog in ("kinage", "__main__.py"):
        return "kinage " + " ".join(sys.argv[1:])
    return f"Python: kinage.pipeline.run_pipeline (from {prog or 'an interactive session'})"


def provenance_rows(run):
    """(label, text) rows of the provenance block and the per-file hashes."""
    prov = provenance(scenario=run.scenario, seed=run.seed, parameter_sets=run.parameter_sets(),
                      command=_command_line(run))
    versions = [f"kinage {__version__}", f"Python {platform.python_version()}"]
    for mod in ("numpy", "scipy", "astropy", "galpy", "matplotlib"):
        m = sys.modules.get(mod)
        if m is None:
            try:
                m = __import__(mod)
            except ImportError:  # pragma: no cover
                continue
        versions.append(f"{mod} {getattr(m, '__version__', '?')}")
    rows = [("command line", prov["command"]), ("seed", str(prov["seed"])), ("created (UTC)", prov["created_utc"]),
            ("software", ", ".join(versions))]
    hashes = [(str(Path(f).name), h) for f, h in prov["input_sha256"].items()]
    hashes += [(f"{where} (in memory, {t.get('rows')} rows; recorded in results.json)", t["sha256"])
               for where, t in (prov.get("input_tables") or {}).items()]
    return rows, prov["parameter_sets"], hashes


# --------------------------------------------------------------------------- Markdown
def _md_rows(header, rows):
    if not rows:
        return []
    if header:
        return (["| " + " | ".join(header) + " |", "|" + "---|" * len(header)]
                + ["| " + " | ".join(md_text(c, cell=True) for c in r) + " |" for r in rows] + [""])
    return (["| quantity | value |", "|---|---|"]
            + [f"| {md_text(k, cell=True)} | {md_text(v, cell=True)} |" for k, v in rows] + [""])


def render_markdown(run):
    """The report as Markdown text (figures and tables linked by relative path)."""
    title = run.scenario.title or run.scenario.star.get("name")
    rel = lambda p: Path(p).relative_to(run.out_dir).as_posix()  # noqa: E731
    lines = [f"# kinage report: {md_escape(title)}", "", f"> **Caution.** {CAUTION}", "", "## Summary", ""]
    answers = _answers(run)
    for q, verdict, _ in answers:
        lines += [f"**{q}** {md_text(verdict)}", ""]  # the verdict lines as in results.json (user names escaped)
    for i, (question, parts) in enumerate(report_sections(run), 1):
        lines += [f"## {i}. {question}", "", f"> {md_text(answers[i - 1][1])}", ""]
        if not parts:
            lines += ["Not computed in this run.", ""]
        for name, blocks in parts:
            lines += [f"### {_TITLES.get(name, name)}", ""]
            for b in blocks:
                if b["kind"] == "text":
                    lines += [md_text(b["text"]), ""]
                elif b["kind"] == "pair":
                    cap = md_text(b["caption"])
                    lines += [f"![{cap}]({rel(b['figure'])})", "", f"*{cap}*", ""]
                    lines += _md_rows(b["header"], b["rows"])
                elif b["kind"] == "rows":
                    lines += _md_rows(None, b["rows"])
                elif b["kind"] == "files":  # noqa: SIM114
                    lines += ["Tables: " + ", ".join(f"[{rel(t)}]({rel(t)})" for t in b["files"]), ""]
                elif b["kind"] == "list" and b["items"]:
                    lines += [f"{b['title']}:", ""] + [f"- {md_escape(x)}" for x in b["items"]] + [""]
                elif b["kind"] == "psets":
                    lines += ["Parameter sets:", ""]
                    for p in b["items"]:
                        lines.append(f"- {p['kind']} {md_code(p['name'])}: " + md_text(
                            p["description"] + (f" ({'; '.join(p['references'])})" if p["references"] else "")))
                    lines.append("")
    for name, msg in run.failed.items():
        lines += [f"## Stage '{name}' failed", "", md_code(msg), "",
                  "The results of the stages before it are complete and in results.json.", ""]
    rows, psets, hashes = provenance_rows(run)
    lines += ["## Provenance", ""] + _md_rows(None, rows)
    if psets:
        lines += ["Parameter sets used:", ""] + [
            f"- {p['kind']} {md_code(p['name'])}: {md_text('; '.join(p['references']))}" for p in psets] + [""]
    if hashes:
        lines += ["| input file | SHA-256 |", "|---|---|"] + [
            f"| {md_text(f, cell=True)} | `{h}` |" for f, h in hashes] + [""]
    lines += ["All numbers are in [results.json](results.json).", ""]
    return "\n".join(lines)


# --------------------------------------------------------------------------- HTML
def render_html(run):
    """The report as one self-contained HTML page (figures embedded as data URIs, tables linked)."""
    e = html.escape
    title = run.scenario.title or run.scenario.star.get("name")
    rel = lambda p: Path(p).relative_to(run.out_dir).as_posix()  # noqa: E731
    body = [f"<h1>kinage report: {e(str(title))}</h1>",
            f"<p class='meta'>kinage {e(__version__)}, seed {run.seed}. All numbers are in "
            "<a href='results.json'>results.json</a>; provenance at the end.</p>",
            f"<p class='caution'><b>Caution.</b> {e(CAUTION)}</p>",
            "<h2>Summary</h2>", "<dl class='summary'>"]
    answers = _answers(run)
    for i, (q, verdict, _) in enumerate(answers, 1):
        body.append(f"<dt><a href='#q{i}'>{e(q)}</a></dt><dd class='verdict' id='verdict-{_VERDICT_IDS[i - 1]}'>"
                    f"{e(verdict)}</dd>")
    body.append("</dl>")
    for i, (question, parts) in enumerate(report_sections(run), 1):
        body.append(f"<h2 id='q{i}'>{i}. {e(question)}</h2><p class='verdict-line'>{e(answers[i - 1][1])}</p>")
        if not parts:
            body.append("<p>Not computed in this run.</p>")
        for name, blocks in parts:
            body.append(f"<h3 id='{name}'>{e(_TITLES.get(name, name))}</h3>")
            for b in blocks:
                if b["kind"] == "text":
                    body.append(f"<p>{e(b['text'])}</p>")
                elif b["kind"] == "pair":
                    body.append("<div class='pair'>" + _img(b["figure"], b["caption"])
                                + f"<div class='nums'>{_html_rows(b['header'], b['rows'])}</div></div>")
                elif b["kind"] == "rows":
                    body.append(_html_rows(None, b["rows"]))
                elif b["kind"] == "files":
                    body.append("<p class='small'>Tables: " + ", ".join(
                        f"<a href='{e(rel(t))}'><code>{e(rel(t))}</code></a>" for t in b["files"]) + "</p>")
                elif b["kind"] == "list" and b["items"]:
                    body.append(f"<p class='small'><b>{e(b['title'])}</b></p><ul class='small'>"
                                + "".join(f"<li>{e(x)}</li>" for x in b["items"]) + "</ul>")
                elif b["kind"] == "psets":
                    body.append("<p class='small'><b>Parameter sets</b></p><ul class='small'>" + "".join(
                        f"<li>{e(p['kind'])} <code>{e(p['name'])}</code>: {e(p['description'])}"
                        + (f" ({e('; '.join(p['references']))})" if p["references"] else "") + "</li>"
                        for p in b["items"]) + "</ul>")
    for name, msg in run.failed.items():
        body.append(f"<div class='failed'><h2>Stage '{e(name)}' failed</h2><p><code>{e(msg)}</code></p>"
                    "<p>The results of the stages before it are complete and in results.json.</p></div>")
    rows, psets, hashes = provenance_rows(run)
    body.append("<h2 id='provenance'>Provenance</h2><table class='prov small'>"
                + "".join(f"<tr><td>{e(k)}</td><td>{e(str(v))}</td></tr>" for k, v in rows) + "</table>")
    if psets:
        body.append("<p class='small'><b>Parameter sets used</b></p><ul class='small'>" + "".join(
            f"<li>{e(p['kind'])} <code>{e(p['name'])}</code>: {e('; '.join(p['references']))}</li>" for p in psets)
            + "</ul>")
    if hashes:
        body.append("<table class='prov small'><tr><th>input file</th><th>SHA-256</th></tr>" + "".join(
            f"<tr><td>{e(f)}</td><td><code>{e(h)}</code></td></tr>" for f, h in hashes) + "</table>")
    return ("<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
            f"<meta name='viewport' content='width=device-width, initial-scale=1'><title>kinage: {e(str(title))}</title>"
            f"<style>{_CSS}</style></head><body>\n" + "\n".join(body) + "\n</body></html>\n")


def write_reports(run, out_dir):
    """Write the cross-stage figure, ``report.html`` and ``report.md`` into ``out_dir`` (atomically)."""
    from .figures import write_astrometry_figure

    out_dir = Path(out_dir)
    written = []
    try:
        fig = write_astrometry_figure(run, out_dir)
    except Exception as exc:  # noqa: BLE001 - a figure must not cost the report
        import warnings

        warnings.warn(f"proper-motion figure not drawn ({type(exc).__name__}: {exc})", RuntimeWarning, stacklevel=2)
        fig = None
    if fig is not None:
        run.files.append(fig)
        written.append(fig)
    return written + [atomic_write(out_dir / "report.html", render_html(run)),
                      atomic_write(out_dir / "report.md", render_markdown(run))]
