"""Summary of a batch: one ECSV row per star and a population figure."""

import json
from pathlib import Path

import numpy as np

from ..io.results import atomic_path, provenance, write_json

__all__ = ["collect_records", "summary_table", "write_summary"]


def collect_records(out_dir):
    """All per-star records found under ``out_dir/stars``, sorted by name."""
    recs = []
    for f in sorted(Path(out_dir, "stars").glob("*/star.json")):
        try:
            recs.append(json.loads(f.read_text()))
        except (OSError, ValueError):
            continue
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


def _population_figure(table, path):
    from ..report.style import color, new_figure, save_figure, style_context

    with style_context():
        fig, (ax1, ax2) = new_figure(ncols=2, width="page", aspect=0.42)
        ok = np.isfinite(table["kinematic_age"]) & np.isfinite(table["characteristic_age"])
        if ok.any():
            k = np.asarray(table["kinematic_age"][ok]) / 1e6
            lo = k - np.asarray(table["kinematic_age_lo68"][ok]) / 1e6
            hi = np.asarray(table["kinematic_age_hi68"][ok]) / 1e6 - k
            c = np.asarray(table["characteristic_age"][ok]) / 1e6
            assoc = np.array([str(s).startswith("trace: encounters") for s in table["kinematic_age_source"][ok]])
            for sel, label, face in ((assoc, "from a birth association", color(0)),
                                     (~assoc, "other (plane crossing, scenario)", "white")):
                if sel.any():
                    ax1.errorbar(c[sel], k[sel], yerr=[np.nan_to_num(lo[sel]), np.nan_to_num(hi[sel])], fmt="o",
                                 ms=3.5, mfc=face, color=color(0), lw=0.8, label=label)
            lim = [min(c.min(), k.min()) / 2, max(c.max(), k.max()) * 2]
            ax1.plot(lim, lim, ls="--", color="0.4", lw=0.8, label="equal ages")
            ax1.set_xscale("log")
            ax1.set_yscale("log")
            ax1.legend(loc="upper left")
        else:
            ax1.text(0.5, 0.5, "no star has both ages", ha="center", va="center", transform=ax1.transAxes)
        ax1.set_xlabel("characteristic age P/(2 Pdot) [Myr]")
        ax1.set_ylabel("kinematic age [Myr]")
        ef = np.asarray(table["encounter_fraction"], float)
        cf = np.asarray(table["chance_fraction"], float)
        idx = np.arange(len(table))
        ax2.bar(idx - 0.2, np.nan_to_num(ef), width=0.4, color=color(0), label="encounter fraction")
        ax2.bar(idx + 0.2, np.nan_to_num(cf), width=0.4, color=color(1), label="chance fraction")
        ax2.set_xticks(idx, [str(n) for n in table["name"]], rotation=90, fontsize=5)
        ax2.set_ylabel("fraction of draws (best association)")
        ax2.legend(loc="upper right")
        return save_figure(fig, path)


def write_summary(out_dir, seed=None, timing=None):
    """Write ``summary.ecsv``, ``population.png`` and ``batch.json`` into ``out_dir``."""
    out_dir = Path(out_dir)
    records = collect_records(out_dir)
    table = summary_table(records)
    with atomic_path(out_dir / "summary.ecsv") as tmp:
        table.write(tmp, format="ascii.ecsv", overwrite=True)
    files = [out_dir / "summary.ecsv", _population_figure(table, out_dir / "population.png")]
    n_failed = int(np.sum(table["status"] != "ok")) if len(table) else 0
    files.append(write_json(out_dir / "batch.json",
                            {"n_stars": len(table), "n_failed": n_failed, "timing": timing or {},
                             "failed": [{"name": r["name"], "reason": r.get("reason")} for r in records
                                        if r.get("status") != "ok"],
                             "stars": [{"name": r["name"], "status": r.get("status"), "seed": r.get("seed"),
                                        "input_hash": r.get("input_hash")} for r in records]},
                            provenance(seed=seed, command="batch")))
    return files
