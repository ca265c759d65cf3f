"""The report of a batch (population) run: one self-contained HTML page and a Markdown twin.

Reads what ``kinage batch`` wrote (``summary.ecsv``, ``population.png``,
``batch.json``) and lays it out like the single-star report: caution,
summary, the figure next to its numbers with a caption, the table linked,
and a provenance block.
"""

import base64
import html
import json
from pathlib import Path

import numpy as np

from ..io.results import atomic_write
from .document import CAUTION, md_escape
from .numbers import fmt_age

__all__ = ["write_population_report", "population_summary", "POPULATION_CAPTION"]

POPULATION_CAPTION = ("Left: stars traced to a favoured birth association (filled) have kinematic ages to set "
                      "against their characteristic ages; stars without one show only the time since their last "
                      "Galactic-plane crossing (open squares), which is not a kinematic age. Right: each star's "
                      "probability of birth in its most probable association (with its Monte Carlo error) and of "
                      "birth elsewhere, stars sorted by the former; the dashed line is the threshold for a "
                      "favoured association.")


def _name(x):
    """Association name from a summary cell; '' for none (empty, masked or written as '--')."""
    t = str(x).strip()
    return "" if t in ("", "--", "None", "nan") or getattr(x, "mask", False) is True else t


def _col(table, key):
    return np.asarray(table[key], float) if key in table.colnames else np.full(len(table), np.nan)


def population_summary(table):
    """Plain sentences about a batch summary table (astropy Table from ``summary.ecsv``)."""
    n = len(table)
    ok = np.asarray(table["status"]) == "ok"
    fav = np.array([bool(_name(x)) for x in table["favoured_association"]], bool) & ok
    crossed = np.isfinite(_col(table, "plane_crossing_time")) & ok & ~fav
    neither = ok & ~fav & ~crossed
    parts = [f"{n} stars: {int(ok.sum())} finished, {n - int(ok.sum())} failed."]
    nf, nc, nn = int(fav.sum()), int(crossed.sum()), int(neither.sum())
    parts.append(f"{nf} {'is' if nf == 1 else 'are'} traced to a favoured birth association and "
                 f"{'has' if nf == 1 else 'have'} a kinematic age; of the {int((ok & ~fav).sum())} without one, "
                 f"{nc} crossed the Galactic plane (the time since that crossing is known, an age only if the star "
                 f"was born in the mid-plane) and {nn} {'has' if nn == 1 else 'have'} neither (most draws did not "
                 "cross within the time searched).")
    p = _col(table, "probability")
    close = ok & ~fav & np.isfinite(p) & (p >= 0.3)
    if close.any():
        m = int(close.sum())
        parts.append(f"{m} of those without a favoured association {'has' if m == 1 else 'have'} a most probable "
                     f"association at 0.3 or more (column probability in summary.ecsv).")
    if "precision_reached" in table.colnames:
        short = ok & ~np.asarray(table["precision_reached"], bool)
        if short.any():
            parts.append(f"For {int(short.sum())} the probabilities' Monte Carlo errors stayed above the precision "
                         "asked for within [trace] max_samples draws.")
    k = _col(table, "kinematic_age")[fav]
    c = _col(table, "characteristic_age")[fav]
    good = np.isfinite(k) & np.isfinite(c) & (k > 0) & (c > 0)
    if good.any():
        ratio = np.median(c[good] / k[good])
        parts.append(f"For the traced stars the median characteristic-to-kinematic age ratio is {ratio:.2g} "
                     f"(kinematic ages {fmt_age(np.min(k[good]), 2)} to {fmt_age(np.max(k[good]), 2)}).")
    return " ".join(parts)


def _prob(p, err):
    """A probability with its Monte Carlo error, to the error's precision."""
    if not np.isfinite(p):
        return "n/a"
    if not np.isfinite(err) or err <= 0:
        return f"{p:.2f}"
    digits = 3 if err < 0.005 else 2
    return f"{p:.{digits}f} ± {max(err, 10.0**-digits):.{digits}f}"


def _age(x):
    return fmt_age(float(x), 2) if np.isfinite(x) else "n/a"


def _rows(table):
    out = []
    cols = set(table.colnames)
    for r in table:
        get = lambda k: float(r[k]) if k in cols else np.nan  # noqa: E731
        fav = _name(r["favoured_association"])
        best = _name(r["best_association"]) if "best_association" in cols else fav
        out.append([str(r["name"]), str(r["status"]), fav or "none", best or "n/a",
                    _prob(get("probability"), get("probability_error")),
                    _prob(get("field_probability"), get("field_probability_error")),
                    _age(get("kinematic_age")), _age(get("plane_crossing_time")), _age(get("characteristic_age")),
                    _age(get("cooling_age"))])
    return out


_HEADER = ["star", "status", "favoured association", "most probable association", "its probability",
           "field probability", "kinematic age", "time since plane crossing", "characteristic age", "cooling age"]


def write_population_report(out_dir, command=None):
    """Write ``report.html`` and ``report.md`` for a finished batch folder; returns the HTML path."""
    from astropy.table import Table

    out = Path(out_dir)
    table = Table.read(out / "summary.ecsv", format="ascii.ecsv")
    batch = json.loads((out / "batch.json").read_text()) if (out / "batch.json").is_file() else {}
    prov = batch.get("provenance", {})
    summary = population_summary(table)
    rows = _rows(table)
    e = html.escape
    fig = out / "population.png"
    img = ""
    if fig.is_file():
        data = base64.b64encode(fig.read_bytes()).decode("ascii")
        img = (f"<figure><img alt='{e(POPULATION_CAPTION)}' style='width:52rem' src='data:image/png;base64,{data}'>"
               f"<figcaption>{e(POPULATION_CAPTION)}</figcaption></figure>")
    prov_rows = [("command line", command or prov.get("command") or "kinage batch"),
                 ("seed", str(prov.get("seed"))), ("created (UTC)", str(prov.get("created_utc"))),
                 ("kinage", str(prov.get("kinage_version")))]
    table_html = ("<table><tr>" + "".join(f"<th>{e(h)}</th>" for h in _HEADER) + "</tr>"
                  + "".join("<tr>" + "".join(f"<td>{e(c)}</td>" for c in r) + "</tr>" for r in rows) + "</table>")
    body = ["<h1>kinage population report</h1>", f"<p class='caution'><b>Caution.</b> {e(CAUTION)}</p>",
            "<h2>Summary</h2>", f"<p class='summary'>{e(summary)}</p>",
            "<h2>Kinematic ages and birth associations</h2>", img, table_html,
            "<p>Tables: <a href='summary.ecsv'><code>summary.ecsv</code></a>, per-star results in "
            "<code>stars/NAME/results.json</code>; timing and failures in <a href='batch.json'>batch.json</a>.</p>",
            "<h2>Provenance</h2><table>" + "".join(f"<tr><td>{e(k)}</td><td>{e(v)}</td></tr>" for k, v in prov_rows)
            + "</table>"]
    css = ("body{font-family:system-ui,Helvetica,Arial,sans-serif;max-width:60rem;margin:1.5rem auto;padding:0 1rem;"
           "line-height:1.45;color:#1b1b1b}h2{font-size:1.15rem;border-bottom:1px solid #ddd}"
           ".caution{background:#fff8e6;border-left:4px solid #E69F00;padding:.45rem .9rem;font-size:.9rem}"
           ".summary{background:#f4f7fb;border-left:4px solid #0072B2;padding:.5rem 1rem}"
           "table{border-collapse:collapse;font-size:.82rem}td,th{border:1px solid #ddd;padding:.15rem .4rem;"
           "text-align:left}th{background:#f6f6f6}img{max-width:100%;height:auto}figcaption{font-size:.85rem}")
    page = ("<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'><title>kinage: population</title>"
            f"<style>{css}</style></head><body>\n" + "\n".join(body) + "\n</body></html>\n")
    md = ["# kinage population report", "", f"> **Caution.** {CAUTION}", "", "## Summary", "", summary, "",
          "![population](population.png)", "", f"*{POPULATION_CAPTION}*", "",
          "| " + " | ".join(_HEADER) + " |", "|" + "---|" * len(_HEADER)]
    md += ["| " + " | ".join(md_escape(c) for c in r) + " |" for r in rows]
    md += ["", "Tables: [summary.ecsv](summary.ecsv), [batch.json](batch.json)", "", "## Provenance", ""]
    md += [f"- {k}: {md_escape(v)}" for k, v in prov_rows] + [""]
    atomic_write(out / "report.md", "\n".join(md))
    return atomic_write(out / "report.html", page)
