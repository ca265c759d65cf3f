"""Files written by the tracing stage: encounter tables (ECSV) and figures (PNG).

The figures themselves are drawn by :mod:`kinage.orbits.trace_figures`.
"""

from pathlib import Path

import numpy as np

from ..io.results import atomic_path

__all__ = ["encounter_table", "association_table", "write_products", "FIGURES"]


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
    if any(s.get("probability") is not None for s in rows):
        t["probability"] = [np.nan if s.get("probability") is None else s["probability"] for s in rows]
        t["probability_error"] = [np.nan if s.get("probability_error") is None else s["probability_error"]
                                  for s in rows]
        for key in ("neighbourhood_probability", "neighbourhood_probability_error"):
            t[key] = [np.nan if s.get(key) is None else s[key] for s in rows]
    for key, unit, scale in (("age_yr", u.yr, 1.0), ("dmin_pc", u.pc, 1.0)):
        base = key.rsplit("_", 1)[0]
        for q in ("median", "lo68", "hi68"):
            t[f"{base}_{q}"] = [np.nan if s[key][q] is None else s[key][q] * scale for s in rows] * unit
    return t


def _write_table(t, path):
    with atomic_path(path) as tmp:
        t.write(tmp, format="ascii.ecsv", overwrite=True)
    return Path(path)


FIGURES = ("trace_sky", "trace_dmin_tau", "trace_dmin_control", "trace_plane_crossing", "trace_tau_hist",
           "trace_birth_xyz")


def write_products(result, out_dir):
    """Write ``trace_encounters.ecsv``, ``trace_associations.ecsv`` and the PNG figures (:data:`FIGURES`).

    Returns
    -------
    list of Path
    """
    from ..display.style import save_figure, style_context
    from . import trace_figures as tf

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    paths = [_write_table(encounter_table(result), out / "trace_encounters.ecsv"),
             _write_table(association_table(result), out / "trace_associations.ecsv")]
    best = result.best()
    with style_context():
        paths.append(Path(save_figure(tf.plot_sky(result), out / "trace_sky.png")))
        if best is not None:
            paths.append(Path(save_figure(tf.plot_dmin_tau(result), out / "trace_dmin_tau.png")))
            paths.append(Path(save_figure(tf.plot_dmin_control(result), out / "trace_dmin_control.png")))
        paths.append(Path(save_figure(tf.plot_plane_crossing(result), out / "trace_plane_crossing.png")))
        if best is not None:
            paths.append(Path(save_figure(tf.plot_tau_hist(result), out / "trace_tau_hist.png")))
            paths.append(Path(save_figure(tf.plot_birth_xyz(result), out / "trace_birth_xyz.png")))
    return paths
