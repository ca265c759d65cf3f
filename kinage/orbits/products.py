"""Files written by the tracing stage: encounter tables (ECSV) and figures (PNG).

Tracks are drawn in the frame co-rotating with the local standard of rest and
seen from the Sun's present position (:meth:`SolarFrame.corotating`), so a
star at rest on the Sun's circular orbit would stay put.
"""

from pathlib import Path

import numpy as np

from ..io.results import atomic_path
from ..report.style import color, new_figure, save_figure, style_context
from .frames import _ICRS_TO_GALACTIC

__all__ = ["encounter_table", "association_table", "write_products"]


def _best_with_encounters(result, top):
    return [s for s in result.associations if s["n_encounters"] > 0][:top]


def encounter_table(result, top=3):
    """Per-draw encounters of the best ``top`` associations (astropy Table with units)."""
    import astropy.units as u
    from astropy.table import Table

    d = result.data
    draws, main = d["draws"], d["main"]
    cols = {k: [] for k in ("association", "draw", "dmin", "tau", "distance", "pm_ra_cosdec", "pm_dec",
                            "radial_velocity", "x", "y", "z")}
    for s in _best_with_encounters(result, top):
        j = d["index"][s["name"]]
        idx = np.flatnonzero(d["masks"][s["name"]])
        pos = np.full((idx.size, 3), np.nan)
        if j in main["birth"]:
            bi, bp = main["birth"][j]
            where = {int(i): k for k, i in enumerate(bi)}
            for r, i in enumerate(idx):
                k = where.get(int(i))
                if k is not None:
                    pos[r] = bp[k] * 1000.0
        cols["association"] += [s["name"]] * idx.size
        cols["draw"].append(idx)
        cols["dmin"].append(main["dmin"][j][idx].astype(float))
        cols["tau"].append(main["tau"][j][idx].astype(float) * 1e6)
        cols["distance"].append(draws.distance_pc[idx])
        cols["pm_ra_cosdec"].append(draws.pm_ra_cosdec[idx])
        cols["pm_dec"].append(draws.pm_dec[idx])
        cols["radial_velocity"].append(draws.radial_velocity[idx])
        for c, k in zip("xyz", range(3)):
            cols[c].append(pos[:, k])
    units = {"dmin": u.pc, "tau": u.yr, "distance": u.pc, "pm_ra_cosdec": u.mas / u.yr, "pm_dec": u.mas / u.yr,
             "radial_velocity": u.km / u.s, "x": u.pc, "y": u.pc, "z": u.pc}
    t = Table()
    t["association"] = np.array(cols["association"], dtype=str) if cols["association"] else np.array([], dtype=str)
    for k in list(cols)[1:]:
        arr = np.concatenate(cols[k]) if cols[k] else np.array([], dtype=int if k == "draw" else float)
        t[k] = arr * units[k] if k in units else arr
    t.meta["description"] = ("Monte Carlo draws of the star that met the encounter criterion; x, y, z: "
                             "Galactocentric position at closest approach (astropy frame, "
                             f"{result.settings['solar_parameters']})")
    t.meta["seed"] = result.seed
    return t


def association_table(result):
    """One row per association, best first (astropy Table)."""
    import astropy.units as u
    from astropy.table import Table

    rows = result.associations
    t = Table()
    t["rank"] = [s["rank"] for s in rows]
    t["name"] = [s["name"] for s in rows]
    t["encounter_fraction"] = [s["encounter_fraction"] for s in rows]
    t["chance_fraction"] = [np.nan if s["chance_fraction"] is None else s["chance_fraction"] for s in rows]
    t["ratio"] = [np.nan if s["ratio"] is None else s["ratio"] for s in rows]
    t["n_encounters"] = [s["n_encounters"] for s in rows]
    for key, unit, scale in (("age_yr", u.yr, 1.0), ("dmin_pc", u.pc, 1.0)):
        base = key.rsplit("_", 1)[0]
        for q in ("median", "lo68", "hi68"):
            t[f"{base}_{q}"] = [np.nan if s[key][q] is None else s[key][q] * scale for s in rows] * unit
    return t


def _write_table(t, path):
    with atomic_path(path) as tmp:
        t.write(tmp, format="ascii.ecsv", overwrite=True)
    return Path(path)


def _helio_galactic_pc(frame, pos_kpc):
    return (frame.to_heliocentric_icrs(pos_kpc) @ _ICRS_TO_GALACTIC.T) * 1000.0


def _wrap_lines(lon, lat):
    lon = (np.asarray(lon) + 180.0) % 360.0 - 180.0
    jump = np.abs(np.diff(lon)) > 180.0
    lon, lat = lon.astype(float).copy(), lat.astype(float).copy()
    lon[1:][jump] = np.nan
    return lon, lat


def _sky(result, path):
    d = result.data
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    fig, ax = new_figure(1, 1, width="page", aspect=0.5)
    tracks = d["main"]["tracks"]
    if tracks is not None:
        for i, tr in enumerate(tracks[:60]):
            lon, lat, _ = frame.to_galactic_lb(frame.corotating(tr, ct))
            x, y = _wrap_lines(lon, lat)
            ax.plot(x, y, color=color(0), lw=0.4, alpha=0.35, label="star draws" if i == 0 else None)
    for j, name in enumerate(d["adraws"].names[:7]):
        rows = d["adraws"].rows(j)[:15]
        for k, r in enumerate(rows):
            lon, lat, _ = frame.to_galactic_lb(frame.corotating(assoc.pos[r], ct))
            x, y = _wrap_lines(lon, lat)
            ax.plot(x, y, color=color(j + 1), lw=0.6, alpha=0.6, label=name if k == 0 else None)
    ax.set_xlabel("Galactic longitude l (deg, wrapped to -180..180)")
    ax.set_ylabel("Galactic latitude b (deg)")
    ax.set_title(f"Past tracks over {result.settings['max_age_yr'] / 1e6:g} Myr (co-rotating frame)")
    ax.invert_xaxis()
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return save_figure(fig, path)


def _dmin_tau(result, s, path):
    d = result.data
    j = d["index"][s["name"]]
    dm = d["main"]["dmin"][j].astype(float)
    tau = d["main"]["tau"][j].astype(float)
    mask = d["masks"][s["name"]]
    fig, ax = new_figure()
    ax.scatter(tau[~mask], np.maximum(dm[~mask], 1e-3), s=2, color=color(0), alpha=0.3, label="draws", rasterized=True)
    ax.scatter(tau[mask], np.maximum(dm[mask], 1e-3), s=3, color=color(3), label="encounters")
    ax.axhline(s["radius_pc"] * result.settings["encounter_radius_factor"], color="k", ls="--", lw=0.8,
               label="radius criterion")
    ax.axvline(s["age_myr"] + result.settings["age_tolerance_yr"] / 1e6, color="0.4", ls=":", lw=0.8,
               label="age + tolerance")
    ax.set_yscale("log")
    ax.set_xlabel("time of closest approach tau (Myr ago)")
    ax.set_ylabel("closest approach d_min (pc)")
    ax.set_title(s["name"])
    ax.legend(loc="lower right")
    return save_figure(fig, path)


def _tau_hist(result, s, path):
    d = result.data
    j = d["index"][s["name"]]
    tau = d["main"]["tau"][j].astype(float)
    mask = d["masks"][s["name"]]
    fig, ax = new_figure()
    valid = np.isfinite(tau)
    if valid.any():
        bins = np.linspace(0, result.settings["max_age_yr"] / 1e6, 41)
        ax.hist(tau[valid], bins=bins, color=color(0), alpha=0.35, label="all draws")
        if mask.any():
            ax.hist(tau[mask], bins=bins, color=color(3), label="encounters")
    ax.set_xlabel("time of closest approach tau (Myr ago)")
    ax.set_ylabel("number of draws")
    ax.set_title(f"{s['name']}: {s['n_encounters']} encounters")
    ax.legend(loc="upper right")
    return save_figure(fig, path)


def _birth_xyz(result, s, path):
    d = result.data
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    j = d["index"][s["name"]]
    t_b = (s["age_yr"]["median"] or s["tau_all_yr"]["median"] or 0.0) / 1e6  # Myr
    k = int(np.argmin(np.abs(ct + t_b)))
    fig, axes = new_figure(2, 1, width="page", aspect=0.42)
    tracks = d["main"]["tracks"]
    rows = d["adraws"].rows(j)
    apos = _helio_galactic_pc(frame, frame.corotating(assoc.pos[rows, k], ct[k]))
    spos = (_helio_galactic_pc(frame, frame.corotating(tracks[:, k], ct[k])) if tracks is not None
            else np.empty((0, 3)))
    for ax, (a, b, la, lb) in zip(axes, ((0, 1, "X (pc, to Galactic centre)", "Y (pc, rotation)"),
                                         (0, 2, "X (pc, to Galactic centre)", "Z (pc, to north Galactic pole)"))):
        ax.scatter(spos[:, a], spos[:, b], s=3, color=color(0), alpha=0.5, label="star draws")
        ax.scatter(apos[:, a], apos[:, b], s=3, color=color(1), alpha=0.5, label=f"{s['name']} draws")
        c = apos.mean(axis=0)
        r = s["radius_pc"] * result.settings["encounter_radius_factor"]
        phi = np.linspace(0, 2 * np.pi, 100)
        ax.plot(c[a] + r * np.cos(phi), c[b] + r * np.sin(phi), color="k", lw=0.8, label="radius criterion")
        ax.set_xlabel(la)
        ax.set_ylabel(lb)
        ax.set_aspect("equal", adjustable="datalim")
    axes[0].legend(loc="best")
    fig.suptitle(f"Positions {ct[k] * -1:.2f} Myr ago (co-rotating frame, Sun at origin today)")
    return save_figure(fig, path)


def write_products(result, out_dir):
    """Write ``trace_encounters.ecsv``, ``trace_associations.ecsv`` and four PNG figures.

    Returns
    -------
    list of Path
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    paths = [_write_table(encounter_table(result), out / "trace_encounters.ecsv"),
             _write_table(association_table(result), out / "trace_associations.ecsv")]
    best = result.best()
    with style_context():
        paths.append(Path(_sky(result, out / "trace_sky.png")))
        if best is not None:
            paths.append(Path(_dmin_tau(result, best, out / "trace_dmin_tau.png")))
            paths.append(Path(_tau_hist(result, best, out / "trace_tau_hist.png")))
            paths.append(Path(_birth_xyz(result, best, out / "trace_birth_xyz.png")))
    return paths
