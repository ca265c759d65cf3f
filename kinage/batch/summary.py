"""Summary of a batch: one ECSV row per star and a population figure."""

import json
from pathlib import Path

import numpy as np

from ..io.results import atomic_path, provenance, write_json

__all__ = ["collect_records", "summary_table", "write_summary", "plot_population", "COLUMNS"]


def collect_records(out_dir, expected=None):
    """The per-star records found under ``out_dir/stars``, sorted by name.

    ``expected`` (``{name: input hash}``) keeps only the stars of one batch
    with those inputs: a folder reused with a smaller or changed star table
    never mixes earlier stars into the summary.
    """
    recs = []
    for f in sorted(Path(out_dir, "stars").glob("*/star.json")):
        try:
            rec = json.loads(f.read_text())
        except (OSError, ValueError):
            continue
        if expected is not None and (not isinstance(rec, dict) or expected.get(rec.get("name")) is None
                                     or expected.get(rec.get("name")) != rec.get("input_hash")):
            continue
        recs.append(rec)
    return sorted(recs, key=lambda r: r["name"])


def _get(d, *path):
    for p in path:
        if not isinstance(d, dict):
            return None
        d = d.get(p)
    return d


#: columns of ``summary.ecsv`` in order (ages in yr)
COLUMNS = ("name", "status", "reason", "favoured_association", "best_association", "probability",
           "probability_error", "field_probability", "field_probability_error", "encounter_fraction",
           "chance_fraction", "kinematic_age", "kinematic_age_lo68", "kinematic_age_hi68", "kinematic_age_source",
           "plane_crossing_time", "plane_crossing_time_lo68", "plane_crossing_time_hi68", "plane_crossing_fraction",
           "characteristic_age", "cooling_age", "samples_used", "precision_reached")
_YR = ("kinematic_age", "kinematic_age_lo68", "kinematic_age_hi68", "plane_crossing_time", "plane_crossing_time_lo68",
       "plane_crossing_time_hi68", "characteristic_age", "cooling_age")


def summary_table(records):
    """An astropy Table with one row per star (:data:`COLUMNS`).

    ``best_association`` is the most probable candidate and ``probability`` (+ ``_error``) its birth
    probability, favoured or not (``favoured_association`` is empty unless it reaches the threshold);
    ``kinematic_age`` comes from the favoured association only; ``plane_crossing_time`` is the time since
    the last Galactic-plane crossing, given only when at least half of the draws crossed (their share in
    ``plane_crossing_fraction``) and never a kinematic age.
    """
    import astropy.units as u
    from astropy.table import Table

    cols = {k: [] for k in COLUMNS}
    for r in records:
        res = r.get("results") or {}
        tr, ag = res.get("trace") or {}, res.get("ages") or {}
        best = (tr.get("associations") or [{}])[0]
        fav = tr.get("favoured") or ""
        kin = (best.get("age_yr") or {}) if fav and best.get("name") == fav else {}
        pc = tr.get("plane_crossing_age_yr") or {}
        frac = _num(tr.get("plane_crossing_fraction"))
        crossed = np.isfinite(frac) and frac >= 0.5
        cols["name"].append(r["name"])
        cols["status"].append(r.get("status", "failed"))
        cols["reason"].append(r.get("reason") or "")
        cols["favoured_association"].append(fav)
        cols["best_association"].append(best.get("name") or "")
        cols["probability"].append(_num(best.get("probability")))
        cols["probability_error"].append(_num(best.get("probability_error")))
        cols["field_probability"].append(_num(tr.get("field_probability")))
        cols["field_probability_error"].append(_num(tr.get("field_probability_error")))
        cols["encounter_fraction"].append(_num(best.get("encounter_fraction")))
        cols["chance_fraction"].append(_num(best.get("chance_fraction")))
        for q in ("", "_lo68", "_hi68"):
            key = "median" if not q else q[1:]
            cols["kinematic_age" + q].append(_num(kin.get(key)))
            cols["plane_crossing_time" + q].append(_num(pc.get(key)) if crossed else np.nan)
        cols["kinematic_age_source"].append(ag.get("kinematic_age_source") or "")
        cols["plane_crossing_fraction"].append(frac)
        cols["characteristic_age"].append(_num(ag.get("characteristic_age_yr")))
        cols["cooling_age"].append(_num(_get(ag, "cooling_age_yr", "median")))
        cols["samples_used"].append(int(tr.get("samples_used") or tr.get("n_samples") or 0))
        cols["precision_reached"].append(bool(tr.get("precision_reached", True)))
    t = Table(cols)
    for c in _YR:
        t[c].unit = u.yr
    return t


def _num(x):
    try:
        return float(x) if x is not None else np.nan
    except (TypeError, ValueError):
        return np.nan


def plot_population(table, axes=None):
    """Population figure: ages against characteristic ages (left), birth probabilities (right).

    Left: kinematic ages (from a favoured birth association: filled circles
    with 68% bars) and times since the last Galactic-plane crossing (no
    association favoured: open squares, labelled as such, never a kinematic
    age) against the characteristic age.  Right: every star's probability of
    birth in its most probable association and its field probability, stars
    sorted by the former (a scatter, readable for thousands of stars), with the
    threshold for a favoured association.  ``axes``: two Axes, or None for a
    new figure.  Returns the Figure.
    """
    from ..display.style import FAVOURED_COLOR, OTHER_COLOR, STAR_COLOR, new_figure, plain_log_ticks
    from ..orbits.probability import PROBABILITY_THRESHOLD

    if axes is None:
        fig, (ax1, ax2) = new_figure(ncols=2, width="page", aspect=0.5)
    else:
        ax1, ax2 = axes
        fig = ax1.figure
    c_all = np.asarray(table["characteristic_age"], float) / 1e6
    k_all = np.asarray(table["kinematic_age"], float) / 1e6
    pc_all = np.asarray(table["plane_crossing_time"], float) / 1e6
    sel_k = np.isfinite(k_all) & np.isfinite(c_all) & (k_all > 0) & (c_all > 0)
    sel_p = ~sel_k & np.isfinite(pc_all) & np.isfinite(c_all) & (pc_all > 0) & (c_all > 0)
    many = len(table) > 200
    vals = []
    if sel_k.any():
        k = k_all[sel_k]
        lo = k - np.asarray(table["kinematic_age_lo68"], float)[sel_k] / 1e6
        hi = np.asarray(table["kinematic_age_hi68"], float)[sel_k] / 1e6 - k
        ax1.errorbar(c_all[sel_k], k, yerr=None if many else [np.nan_to_num(lo), np.nan_to_num(hi)], fmt="o",
                     ms=2 if many else 4, mfc=STAR_COLOR, color=STAR_COLOR, lw=0.8,
                     label="kinematic age (favoured association)")
        vals += list(k) + list(c_all[sel_k])
    if sel_p.any():
        ax1.plot(c_all[sel_p], pc_all[sel_p], "s", ms=2 if many else 4, mfc="white", mec=FAVOURED_COLOR,
                 label="time since plane crossing (no association;\nnot a kinematic age)")
        vals += list(pc_all[sel_p]) + list(c_all[sel_p])
    if vals:
        lim = [min(vals) / 1.5, max(vals) * 1.5]
        ax1.plot(lim, lim, ls="--", color="0.4", lw=0.8, label="equal to the characteristic age")
        ax1.set_xscale("log")
        ax1.set_yscale("log")
        ax1.set_xlim(lim)
        ax1.set_ylim(lim)
        plain_log_ticks(ax1.xaxis)
        plain_log_ticks(ax1.yaxis)
        ax1.legend(loc="upper left", fontsize=6, frameon=True, framealpha=0.85)
    else:
        ax1.text(0.5, 0.5, "no star has a kinematic age\nor a plane-crossing time", ha="center", va="center",
                 transform=ax1.transAxes, fontsize=7)
    ax1.set_xlabel("characteristic age P/(2 Pdot) (Myr)")
    ax1.set_ylabel("age or crossing time (Myr)")
    p = np.asarray(table["probability"], float)
    pe = np.asarray(table["probability_error"], float)
    pf = np.asarray(table["field_probability"], float)
    ok = np.isfinite(p)
    order = np.argsort(np.where(ok, p, -1.0), kind="stable")[::-1]
    order = order[ok[order]]
    x = np.arange(1, order.size + 1)
    if order.size:
        ax2.axhline(PROBABILITY_THRESHOLD, color="0.4", ls="--", lw=0.8,
                    label=f"favoured from {PROBABILITY_THRESHOLD:g}")
        ax2.errorbar(x, p[order], yerr=None if many else np.nan_to_num(pe[order]), fmt="o", ms=2 if many else 4,
                     color=STAR_COLOR, lw=0.8, label="most probable association")
        ax2.plot(x, pf[order], "x", ms=2 if many else 4, color=OTHER_COLOR, label="field (no listed association)")
        ax2.set_xlim(0.5, order.size + 0.5)
        ax2.legend(loc="upper center", fontsize=6, ncol=2, frameon=True, framealpha=0.85)
    else:
        ax2.text(0.5, 0.5, "no birth probabilities\n(no control draws)", ha="center", va="center",
                 transform=ax2.transAxes, fontsize=7)
    ax2.set_ylim(-0.03, 1.3)  # the band above 1 holds the legend, clear of the points
    ax2.set_yticks(np.linspace(0.0, 1.0, 6))
    ax2.set_xlabel("stars, by probability of their most probable association")
    ax2.set_ylabel("probability of birth there")
    return fig


def _population_figure(table, path):
    from ..display.style import save_figure, style_context

    with style_context():
        return save_figure(plot_population(table), path)


def write_summary(out_dir, seed=None, timing=None, figures=True, expected=None):
    """Write ``summary.ecsv``, ``population.png`` (unless ``figures`` is False) and ``batch.json`` into ``out_dir``.

    ``expected`` (``{name: input hash}``): list only these stars (see :func:`collect_records`).
    """
    out_dir = Path(out_dir)
    records = collect_records(out_dir, expected)
    table = summary_table(records)
    with atomic_path(out_dir / "summary.ecsv") as tmp:
        table.write(tmp, format="ascii.ecsv", overwrite=True)
    files = [out_dir / "summary.ecsv"]
    if figures:
        files.append(_population_figure(table, out_dir / "population.png"))
    n_failed = int(np.sum(table["status"] != "ok")) if len(table) else 0
    files.append(write_json(out_dir / "batch.json",
                            {"n_stars": len(table), "n_failed": n_failed, "timing": timing or {},
                             "failed": [{"name": r["name"], "reason": r.get("reason")} for r in records
                                        if r.get("status") != "ok"],
                             "stars": [{"name": r["name"], "status": r.get("status"), "seed": r.get("seed"),
                                        "input_hash": r.get("input_hash")} for r in records]},
                            provenance(seed=seed, command="batch")))
    return files
