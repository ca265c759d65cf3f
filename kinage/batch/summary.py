"""Summary of a batch: one ECSV row per star and a population figure."""

import json
from pathlib import Path

import numpy as np

from ..io.results import atomic_path, provenance, write_json

__all__ = ["collect_records", "summary_table", "write_summary", "plot_population"]


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


def summary_table(records):
    """An astropy Table with one row per star: status, best association, ages."""
    import astropy.units as u
    from astropy.table import Table

    cols = {k: [] for k in ("name", "status", "reason", "favoured_association", "encounter_fraction",
                            "chance_fraction", "kinematic_age", "kinematic_age_lo68", "kinematic_age_hi68", "kinematic_age_source",
                            "plane_crossing_age", "characteristic_age", "cooling_age")}
    for r in records:
        res = r.get("results") or {}
        tr, ag = res.get("trace") or {}, res.get("ages") or {}
        best = (tr.get("associations") or [{}])[0]
        kin = ag.get("kinematic_age_yr") or {}
        cols["name"].append(r["name"])
        cols["status"].append(r.get("status", "failed"))
        cols["reason"].append(r.get("reason") or "")
        cols["favoured_association"].append(tr.get("favoured") or "")
        cols["encounter_fraction"].append(_num(best.get("encounter_fraction")))
        cols["chance_fraction"].append(_num(best.get("chance_fraction")))
        cols["kinematic_age"].append(_num(kin.get("median")))
        cols["kinematic_age_lo68"].append(_num(kin.get("lo68")))
        cols["kinematic_age_hi68"].append(_num(kin.get("hi68")))
        cols["kinematic_age_source"].append(ag.get("kinematic_age_source") or "")
        cols["plane_crossing_age"].append(_num(_get(tr, "plane_crossing_age_yr", "median")))
        cols["characteristic_age"].append(_num(ag.get("characteristic_age_yr")))
        cols["cooling_age"].append(_num(_get(ag, "cooling_age_yr", "median")))
    t = Table(cols)
    for c in ("kinematic_age", "kinematic_age_lo68", "kinematic_age_hi68", "plane_crossing_age",
              "characteristic_age", "cooling_age"):
        t[c].unit = u.yr
    return t


def _num(x):
    try:
        return float(x) if x is not None else np.nan
    except (TypeError, ValueError):
        return np.nan


def plot_population(table, axes=None):
    """Population figure: ages of the traced stars against their characteristic ages, and encounter rates.

    Kinematic ages (from a birth association: filled circles with 68% bars) and
    plane-crossing times (no association favoured: open squares, on the same
    axes but labelled as such, since the time since the last Galactic-plane
    crossing is not a kinematic age) are kept apart.  ``axes``: two Axes, or
    None for a new figure.  Returns the Figure.
    """
    from ..report.style import FAVOURED_COLOR, STAR_COLOR, color, new_figure

    if axes is None:
        fig, (ax1, ax2) = new_figure(ncols=2, width="page", aspect=0.42)
    else:
        ax1, ax2 = axes
        fig = ax1.figure
    c_all = np.asarray(table["characteristic_age"], float) / 1e6
    k_all = np.asarray(table["kinematic_age"], float) / 1e6
    pc_all = np.asarray(table["plane_crossing_age"], float) / 1e6
    assoc = np.array([str(s).startswith("trace: encounters") for s in table["kinematic_age_source"]], bool)
    sel_k = assoc & np.isfinite(k_all) & np.isfinite(c_all)
    sel_p = ~assoc & np.isfinite(pc_all) & np.isfinite(c_all)
    vals = []
    if sel_k.any():
        k = k_all[sel_k]
        lo = k - np.asarray(table["kinematic_age_lo68"], float)[sel_k] / 1e6
        hi = np.asarray(table["kinematic_age_hi68"], float)[sel_k] / 1e6 - k
        ax1.errorbar(c_all[sel_k], k, yerr=[np.nan_to_num(lo), np.nan_to_num(hi)], fmt="o", ms=4, mfc=STAR_COLOR,
                     color=STAR_COLOR, lw=0.8, label="kinematic age (traced to a birth association)")
        vals += list(k) + list(c_all[sel_k])
    if sel_p.any():
        ax1.plot(c_all[sel_p], pc_all[sel_p], "s", ms=4, mfc="white", mec=FAVOURED_COLOR,
                 label="time since the last plane crossing (no association; not a kinematic age)")
        vals += list(pc_all[sel_p]) + list(c_all[sel_p])
    if vals:
        lim = [min(vals) / 2, max(vals) * 2]
        ax1.plot(lim, lim, ls="--", color="0.4", lw=0.8, label="equal to the characteristic age")
        ax1.set_xscale("log")
        ax1.set_yscale("log")
        ax1.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=5.5)
    else:
        ax1.text(0.5, 0.5, "no star has a kinematic age or a plane crossing", ha="center", va="center",
                 transform=ax1.transAxes)
    ax1.set_xlabel("characteristic age P/(2 Pdot) (Myr)")
    ax1.set_ylabel("kinematic age or plane-crossing time (Myr)")
    ef = np.asarray(table["encounter_fraction"], float)
    cf = np.asarray(table["chance_fraction"], float)
    idx = np.arange(len(table))
    ax2.bar(idx - 0.2, np.nan_to_num(ef), width=0.4, color=color(0), label="encounter fraction (star draws)")
    ax2.bar(idx + 0.2, np.nan_to_num(cf), width=0.4, color=color(1), label="chance fraction (control draws)")
    ax2.set_xticks(idx, [str(n) + (" *" if a else "") for n, a in zip(table["name"], assoc)], rotation=90,
                   fontsize=5)
    ax2.set_ylabel("fraction of draws, best association")
    ax2.set_xlabel("* traced to a favoured association", fontsize=6)
    ax2.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=6, ncol=2)
    return fig


def _population_figure(table, path):
    from ..report.style import save_figure, style_context

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
