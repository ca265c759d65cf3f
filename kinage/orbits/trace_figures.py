"""Figures of the tracing stage, each drawn into a caller's Axes or a new figure.

Tracks are drawn in the frame co-rotating with the local standard of rest and
seen from the Sun's present position (:meth:`SolarFrame.corotating`), so a
star at rest on the Sun's circular orbit would stay put.  Every function
takes ``ax=None`` (draw into a new kinage-style figure) and returns the
matplotlib Figure; matplotlib is imported only when one is drawn.

Colours: the star is always blue; the favoured association vermilion; the
other associations above 1% probability (or, without probabilities, the next
best by encounter fraction) the remaining Okabe & Ito colours; the rest grey.
"""

import numpy as np

from ..report.style import FAVOURED_COLOR, OTHER_COLOR, PALETTE, STAR_COLOR, figure_for, new_figure
from .common_origin import separation_pdf
from .frames import _ICRS_TO_GALACTIC

__all__ = ["plot_sky", "plot_dmin_tau", "plot_dmin_control", "plot_tau_hist", "plot_plane_crossing",
           "plot_birth_xyz", "legend_associations", "sky_offsets", "sky_window_myr"]

_OTHER_COLOURS = (PALETTE[1], PALETTE[2], PALETTE[4], PALETTE[5], PALETTE[7], PALETTE[6])
_MIN_PROBABILITY = 0.01


def _rank_value(s):
    p = s.get("probability")
    return p if p is not None else s.get("encounter_fraction", 0.0)


def legend_associations(result, limit=6):
    """Associations shown in colour: favoured first, then every one above 1% probability, best first.

    Without probabilities the top ``limit`` by encounter fraction with any
    encounter.  Returns a list of (summary dict, colour).
    """
    assocs = sorted(result.associations, key=lambda s: -_rank_value(s))
    has_p = any(s.get("probability") is not None for s in assocs)
    if has_p:
        chosen = [s for s in assocs if (s.get("probability") or 0.0) > _MIN_PROBABILITY]
    else:
        chosen = [s for s in assocs if s.get("n_encounters", 0) > 0][:limit]
    fav = result.favoured
    chosen.sort(key=lambda s: (s["name"] != fav, -_rank_value(s)))
    out, k = [], 0
    for s in chosen:
        if s["name"] == fav:
            out.append((s, FAVOURED_COLOR))
        else:
            out.append((s, _OTHER_COLOURS[k % len(_OTHER_COLOURS)]))
            k += 1
    return out


def _label(s, fav):
    p = s.get("probability")
    txt = s["name"] + (f" ({100 * p:.0f}%)" if p is not None and p >= 0.095 else
                       f" ({100 * p:.1f}%)" if p is not None else "")
    return txt + (", favoured" if s["name"] == fav else "")


def sky_offsets(lon, lat, lon0, lat0):
    """Azimuthal equidistant projection about (lon0, lat0), degrees; x grows with longitude."""
    l, b = np.radians(lon), np.radians(lat)
    l0, b0 = np.radians(lon0), np.radians(lat0)
    cosc = np.clip(np.sin(b0) * np.sin(b) + np.cos(b0) * np.cos(b) * np.cos(l - l0), -1, 1)
    c = np.arccos(cosc)
    k = np.where(c > 1e-12, c / np.sin(np.where(c > 1e-12, c, 1.0)), 1.0)
    x = k * np.cos(b) * np.sin(l - l0)
    y = k * (np.cos(b0) * np.sin(b) - np.sin(b0) * np.cos(b) * np.cos(l - l0))
    return np.degrees(x), np.degrees(y)


def _lb(frame, pos, t):
    lon, lat, _ = frame.to_galactic_lb(frame.corotating(pos, t))
    return lon, lat


def _graticule(ax, lon0, lat0, half):
    step = 1 if half < 4 else 2 if half < 8 else 5 if half < 20 else 10 if half < 45 else 30
    span = min(180.0, 2.5 * half / max(np.cos(np.radians(min(abs(lat0) + half, 85))), 0.05))
    lons = np.arange(np.floor((lon0 - span) / step) * step, lon0 + span + step, step)
    lats = np.arange(max(-90, np.floor((lat0 - 2 * half) / step) * step), min(90, lat0 + 2 * half) + step, step)
    fine_b = np.linspace(max(-90, lat0 - 2 * half), min(90, lat0 + 2 * half), 200)
    fine_l = np.linspace(lon0 - span, lon0 + span, 400)
    for lo in lons:
        x, y = sky_offsets(np.full_like(fine_b, lo), fine_b, lon0, lat0)
        ax.plot(x, y, color="0.85", lw=0.5, zorder=0)
    for la in lats:
        x, y = sky_offsets(fine_l, np.full_like(fine_l, la), lon0, lat0)
        ax.plot(x, y, color="0.55" if la == 0 else "0.85", lw=0.9 if la == 0 else 0.5, zorder=0,
                ls="--" if la == 0 else "-", label="Galactic plane b = 0" if la == 0 else None)
        inside = np.flatnonzero((np.abs(x) < half) & (np.abs(y) < half))
        if inside.size and la % (2 * step) == 0:
            i = inside[0]
            ax.text(x[i], y[i], f"b={la:g}°", fontsize=5, color="0.45", va="bottom", ha="right", clip_on=True)
    for lo in lons[:: 2]:
        x, y = sky_offsets(np.full_like(fine_b, lo), fine_b, lon0, lat0)
        inside = np.flatnonzero((np.abs(x) < half) & (np.abs(y) < half))
        if inside.size:
            i = inside[0]
            ax.text(x[i], y[i], f"l={lo % 360:g}°", fontsize=5, color="0.45", va="bottom", ha="left", clip_on=True)


def plot_sky(result, ax=None, n_tracks=60, n_assoc_tracks=12):
    """Past tracks of star and association draws on the sky (Galactic, azimuthal equidistant about the star).

    Returns
    -------
    matplotlib.figure.Figure
    """
    d = result.data
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    t_show = sky_window_myr(result)
    keep = np.flatnonzero(ct >= -t_show - 1e-9)
    fig, ax = figure_for(ax, width="page", aspect=0.62)
    tracks = d["main"]["tracks"]
    if tracks is not None:
        tracks = tracks[:, keep]
    ct = ct[keep]
    lon_now, lat_now = (_lb(frame, tracks[:, 0], ct[0]) if tracks is not None and len(tracks) else (None, None))
    if lon_now is None:
        ax.text(0.5, 0.5, "no tracks kept", transform=ax.transAxes, ha="center")
        return fig
    lon0, lat0 = float(np.median(lon_now)), float(np.median(lat_now))
    # centre on the star's present position: unwrap longitudes about it
    xs, ys = [], []
    for i, tr in enumerate(tracks[:n_tracks]):
        x, y = sky_offsets(*_lb(frame, tr, ct), lon0, lat0)
        ax.plot(x, y, color=STAR_COLOR, lw=0.4, alpha=0.25, label="star: Monte Carlo tracks" if i == 0 else None)
        xs.append(x)
        ys.append(y)
    med = np.median(np.stack([tr for tr in tracks[:n_tracks]]), axis=0)
    mx, my = sky_offsets(*_lb(frame, med, ct), lon0, lat0)
    ax.plot(mx, my, color=STAR_COLOR, lw=1.6, label="star: median track")
    _time_arrows(ax, mx, my, STAR_COLOR)
    ax.plot([0], [0], marker="*", ms=11, color=STAR_COLOR, mec="k", mew=0.5, ls="none", zorder=5,
            label=f"{result.star_name} today")
    shown = legend_associations(result)
    shown_names = {s["name"] for s, _ in shown}
    other_label = True
    for j, name in enumerate(d["adraws"].names):
        if name in shown_names:
            continue
        rows = d["adraws"].rows(j)[:3]
        for r in rows:
            x, y = sky_offsets(*_lb(frame, assoc.pos[r][keep], ct), lon0, lat0)
            ax.plot(x, y, color=OTHER_COLOR, lw=0.4, alpha=0.5,
                    label="other associations (< 1% probability)" if other_label else None)
            other_label = False
    for s, col in reversed(shown):
        j = d["index"][s["name"]] if s["name"] in d["index"] else d["adraws"].names.index(s["name"])
        fav = s["name"] == result.favoured
        for k, r in enumerate(d["adraws"].rows(j)[:n_assoc_tracks]):
            x, y = sky_offsets(*_lb(frame, assoc.pos[r][keep], ct), lon0, lat0)
            ax.plot(x, y, color=col, lw=1.1 if fav else 0.7, alpha=0.8 if fav else 0.6,
                    label=_label(s, result.favoured) if k == 0 else None, zorder=3 if fav else 2)
            xs.append(x)
            ys.append(y)
            if k == 0:
                ax.plot([x[0]], [y[0]], marker="o", ms=6 if fav else 4.5, color=col, mec="k", mew=0.5, zorder=4)
                _time_arrows(ax, x, y, col)
    x_all, y_all = np.concatenate(xs), np.concatenate(ys)
    ok = np.isfinite(x_all) & np.isfinite(y_all)
    half = 1.15 * max(np.percentile(np.abs(x_all[ok]), 99), np.percentile(np.abs(y_all[ok]), 99), 1.0)
    _graticule(ax, lon0, lat0, half)
    ax.set_xlim(half, -half)  # longitude grows to the left, as on the sky
    ax.set_ylim(-half, half)
    ax.set_aspect("equal")
    ax.set_xlabel(f"offset along Galactic longitude (deg; l increases to the left) from l = {lon0:.1f}°")
    ax.set_ylabel(f"offset along Galactic latitude (deg) from b = {lat0:+.1f}°")
    ax.set_title(f"Past tracks over the last {t_show:.2g} Myr (co-rotating frame)\n"
                 "star and circles: positions today; arrows point into the past", fontsize=7.5)
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=6)
    return fig


def sky_window_myr(result):
    """How far back the sky map draws tracks, Myr: 1.3 times the favoured (or best) association's upper 68%
    encounter time, at least 0.3 Myr, at most the integration window."""
    max_myr = result.settings["max_age_yr"] / 1e6
    best = result.best()
    hi = None
    if best is not None:
        for key in ("age_yr", "tau_all_yr"):
            iv = best.get(key) or {}
            if iv.get("hi68") is not None:
                hi = iv["hi68"] / 1e6
                break
    if hi is None:
        return max_myr
    return float(min(max_myr, max(0.3, 1.3 * hi)))


def _time_arrows(ax, x, y, col):
    ok = np.flatnonzero(np.isfinite(x) & np.isfinite(y))
    if ok.size < 4:
        return
    for frac in (0.25, 0.6):
        i = ok[int(frac * (ok.size - 1))]
        j = ok[min(int(frac * (ok.size - 1)) + max(ok.size // 40, 1), ok.size - 1)]
        if (x[j], y[j]) != (x[i], y[i]):
            ax.annotate("", xy=(x[j], y[j]), xytext=(x[i], y[i]),
                        arrowprops=dict(arrowstyle="-|>", color=col, lw=0.8, mutation_scale=9), zorder=4)


def _assoc_arrays(result, s):
    d = result.data
    j = d["index"][s["name"]]
    return (d["main"]["dmin"][j].astype(float), d["main"]["tau"][j].astype(float), d["masks"][s["name"]], j)


def plot_dmin_tau(result, name=None, ax=None):
    """Closest approach d_min against its time tau for every draw, within the integration window."""
    s = _pick(result, name)
    dm, tau, mask, _ = _assoc_arrays(result, s)
    fig, ax = figure_for(ax)
    max_myr = result.settings["max_age_yr"] / 1e6
    ax.scatter(tau[~mask], np.maximum(dm[~mask], 1e-2), s=2, color=STAR_COLOR, alpha=0.25, label="draws",
               rasterized=True)
    ax.scatter(tau[mask], np.maximum(dm[mask], 1e-2), s=3, color=FAVOURED_COLOR, label="encounters")
    ax.axhline(s["radius_pc"] * result.settings["encounter_radius_factor"], color="k", ls="--", lw=0.8,
               label="radius criterion")
    lim = s["age_myr"] + result.settings["age_tolerance_yr"] / 1e6
    if lim < max_myr:
        ax.axvline(lim, color="0.4", ls=":", lw=0.8, label="association age + tolerance")
    ax.set_xlim(0, max_myr)
    ax.set_yscale("log")
    ax.set_xlabel("time of closest approach tau (Myr ago)")
    ax.set_ylabel("closest approach d_min (pc)")
    ax.set_title(s["name"])
    ax.legend(loc="lower right")
    return fig


def plot_dmin_control(result, name=None, ax=None):
    """d_min of the star draws against the control draws, with the common-origin curve.

    The curve is Hoogerwerf, de Bruijne & de Zeeuw 2001 (A&A 365, 49),
    Appendix A, eq. A4 with the maximum-likelihood sigma of the draws,
    scaled to the fraction of draws below the plotted range.
    """
    s = _pick(result, name)
    dm, _, _, j = _assoc_arrays(result, s)
    fig, ax = figure_for(ax)
    dm = dm[np.isfinite(dm)]
    ctrl = result.data.get("control")
    cd = None
    if ctrl is not None and ctrl.get("dmin") is not None:
        cd = np.asarray(ctrl["dmin"][j], float)
        cd = cd[np.isfinite(cd)]
    radius = s["radius_pc"] * result.settings["encounter_radius_factor"]
    top = max(np.percentile(dm, 90) if dm.size else 1.0, 4 * radius)
    bins = np.linspace(0, top, 41)
    w = np.diff(bins)[0]
    ax.hist(dm, bins=bins, density=False, weights=np.full(dm.size, 1.0 / max(dm.size, 1) / w), color=STAR_COLOR,
            alpha=0.45, label="star draws")
    if cd is not None and cd.size:
        ax.hist(cd, bins=bins, weights=np.full(cd.size, 1.0 / cd.size / w), histtype="step", color="k", lw=1.0,
                label="control draws (direction randomised)")
    sig = (s.get("common_origin") or {}).get("sigma_pc")
    if sig:
        x = np.linspace(0, top, 300)
        ax.plot(x, separation_pdf(x, sig), color=FAVOURED_COLOR, lw=1.3,
                label=f"common origin (Hoogerwerf et al. 2001, A4; sigma {sig:.2g} pc)")
    ax.axvline(radius, color="0.3", ls="--", lw=0.8, label="radius criterion")
    ax.set_xlim(0, top)
    ax.set_xlabel(f"closest approach to {s['name']} d_min (pc)")
    ax.set_ylabel("fraction of draws per pc")
    ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=6)
    return fig


def plot_tau_hist(result, name=None, ax=None):
    """Times of closest approach: all draws and encounters."""
    s = _pick(result, name)
    _, tau, mask, _ = _assoc_arrays(result, s)
    fig, ax = figure_for(ax)
    valid = np.isfinite(tau)
    bins = np.linspace(0, result.settings["max_age_yr"] / 1e6, 41)
    if valid.any():
        ax.hist(tau[valid], bins=bins, color=STAR_COLOR, alpha=0.35, label="all draws")
        if mask.any():
            ax.hist(tau[mask], bins=bins, color=FAVOURED_COLOR, label="encounters")
    ax.set_xlim(bins[0], bins[-1])
    ax.set_xlabel("time of closest approach tau (Myr ago)")
    ax.set_ylabel("number of draws")
    ax.set_title(f"{s['name']}: {s['n_encounters']} encounters")
    ax.legend(loc="upper right")
    return fig


def plot_plane_crossing(result, ax=None):
    """Distribution of the time since the star last crossed the Galactic mid-plane (not a kinematic age)."""
    fig, ax = figure_for(ax)
    x = np.asarray(result.plane_crossing_myr, float)
    ok = np.isfinite(x)
    max_myr = result.settings["max_age_yr"] / 1e6
    bins = np.linspace(0, max_myr, 41)
    if ok.any():
        ax.hist(x[ok], bins=bins, color=PALETTE[2], alpha=0.7,
                label=f"{100 * ok.mean():.0f}% of draws crossed z = 0 within {max_myr:g} Myr")
    best = result.best() if result.favoured else None
    if best is not None and best["age_yr"].get("median") is not None:
        a = best["age_yr"]
        ax.axvspan(a["lo68"] / 1e6, a["hi68"] / 1e6, color=FAVOURED_COLOR, alpha=0.2, lw=0,
                   label=f"kinematic age from {best['name']} (68%)")
    ax.set_xlim(0, max_myr)
    ax.set_xlabel("time since the last Galactic mid-plane crossing (Myr ago)")
    ax.set_ylabel("number of draws")
    if not ok.any():
        ax.text(0.5, 0.5, f"no draw crossed z = 0 within {max_myr:g} Myr", ha="center", va="center",
                transform=ax.transAxes)
    if ax.get_legend_handles_labels()[0]:
        ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=6)
    return fig


def _helio_galactic_pc(frame, pos_kpc):
    return (frame.to_heliocentric_icrs(pos_kpc) @ _ICRS_TO_GALACTIC.T) * 1000.0


def plot_birth_xyz(result, name=None, fig=None):
    """Positions of star and association draws at the birth time, Galactic X-Y and X-Z."""
    s = _pick(result, name)
    d = result.data
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    j = d["index"][s["name"]]
    t_b = (s["age_yr"]["median"] or s["tau_all_yr"]["median"] or 0.0) / 1e6  # Myr
    k = int(np.argmin(np.abs(ct + t_b)))
    if fig is None:
        fig, axes = new_figure(2, 1, width="page", aspect=0.42)
    else:
        axes = fig.subplots(1, 2)
    tracks = d["main"]["tracks"]
    rows = d["adraws"].rows(j)
    apos = _helio_galactic_pc(frame, frame.corotating(assoc.pos[rows, k], ct[k]))
    spos = (_helio_galactic_pc(frame, frame.corotating(tracks[:, k], ct[k])) if tracks is not None
            else np.empty((0, 3)))
    col = FAVOURED_COLOR if s["name"] == result.favoured else PALETTE[1]
    for ax, (a, b, la, lb) in zip(axes, ((0, 1, "X (pc, towards the Galactic centre)", "Y (pc, rotation)"),
                                         (0, 2, "X (pc, towards the Galactic centre)", "Z (pc, north)"))):
        ax.scatter(spos[:, a], spos[:, b], s=3, color=STAR_COLOR, alpha=0.4, label="star draws", rasterized=True)
        ax.scatter(apos[:, a], apos[:, b], s=3, color=col, alpha=0.6, label=f"{s['name']} draws")
        c = apos.mean(axis=0)
        r = s["radius_pc"] * result.settings["encounter_radius_factor"]
        phi = np.linspace(0, 2 * np.pi, 100)
        ax.plot(c[a] + r * np.cos(phi), c[b] + r * np.sin(phi), color="k", lw=0.8, label="radius criterion")
        ax.set_xlabel(la)
        ax.set_ylabel(lb)
        ax.set_aspect("equal", adjustable="datalim")
    axes[0].legend(loc="best")
    fig.suptitle(f"Positions {-ct[k]:.2f} Myr ago (co-rotating frame, Sun at the origin today)")
    return fig


def _pick(result, name):
    if name is None:
        s = result.best()
        if s is None:
            raise ValueError("the trace has no associations to plot")
        return s
    return next(a for a in result.associations if a["name"] == name)
