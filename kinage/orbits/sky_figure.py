"""The tracing stage's sky map: the star's and the associations' past tracks on the sky, drawn into a caller's
Axes or a new figure.

Tracks are drawn in the frame co-rotating with the local standard of rest and seen from the Sun's present
position (:meth:`SolarFrame.corotating`), so a star at rest on the Sun's circular orbit would stay put.
matplotlib is imported only when the map is drawn.

Colours: the star is always blue; the favoured association vermilion; the other associations above 1%
probability (or, without probabilities, the next best by encounter fraction) the remaining Okabe & Ito
colours; the rest grey.
"""

import numpy as np

from ..display.style import FAVOURED_COLOR, OTHER_COLOR, PALETTE, STAR_COLOR, figure_for

__all__ = ["plot_sky", "legend_associations", "sky_offsets", "sky_window_myr"]

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
    from .._rounding import percent_text

    p = s.get("probability")
    txt = s["name"] + (f" ({percent_text(p, s.get('probability_error'))})" if p is not None else "")
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


def _graticule(ax, lon0, lat0, half, label_plane=True):
    """Lines of constant l and b, labelled inside the frame; returns whether the Galactic plane is in view."""
    step = 1 if half < 4 else 2 if half < 8 else 5 if half < 20 else 10 if half < 45 else 30
    span = min(180.0, 2.5 * half / max(np.cos(np.radians(min(abs(lat0) + half, 85))), 0.05))
    lons = np.arange(np.floor((lon0 - span) / step) * step, lon0 + span + step, step)
    lats = np.arange(max(-90, np.floor((lat0 - 2 * half) / step) * step), min(90, lat0 + 2 * half) + step, step)
    lats = lats[np.abs(lats) < 90]  # the poles are points, not lines
    fine_b = np.linspace(max(-89.9, lat0 - 2 * half), min(89.9, lat0 + 2 * half), 200)
    fine_l = np.linspace(lon0 - span, lon0 + span, 400)
    for lo in lons:
        x, y = sky_offsets(np.full_like(fine_b, lo), fine_b, lon0, lat0)
        ax.plot(x, y, color="0.85", lw=0.5, zorder=0)
    plane_visible = False
    for la in lats:
        x, y = sky_offsets(fine_l, np.full_like(fine_l, la), lon0, lat0)
        inside = np.flatnonzero((np.abs(x) < half) & (np.abs(y) < half))
        plane = la == 0 and inside.size > 0
        plane_visible = plane_visible or plane
        ax.plot(x, y, color="0.55" if la == 0 else "0.85", lw=0.9 if la == 0 else 0.5, zorder=0,
                ls="--" if la == 0 else "-", label="Galactic plane b = 0" if plane and label_plane else None)
        if inside.size and la % (2 * step) == 0:
            i = inside[0]
            ax.text(x[i], y[i], f"b={la:g}°", fontsize=5, color="0.45", va="bottom", ha="right", clip_on=True)
    used = []  # label positions taken: meridians meet near the poles, where labels would pile up
    for lo in lons[:: 2]:
        x, y = sky_offsets(np.full_like(fine_b, lo), fine_b, lon0, lat0)
        inside = np.flatnonzero((np.abs(x) < 0.95 * half) & (np.abs(y) < 0.95 * half))
        if inside.size:
            i = inside[0]
            if all(np.hypot(x[i] - u, y[i] - v) > 0.12 * half for u, v in used):
                used.append((x[i], y[i]))
                ax.text(x[i], y[i], f"l={lo % 360:g}°", fontsize=5, color="0.45", va="bottom", ha="left",
                        clip_on=True)
    return plane_visible


#: beyond this half-width (deg) the map is drawn in plain Galactic coordinates (an all-sky view)
_WIDE_DEG = 60.0


def _wrap(lon, lon0):
    """Longitude offset from lon0 in (-180, 180] deg, with NaN where a track wraps around."""
    x = (np.asarray(lon, float) - lon0 + 180.0) % 360.0 - 180.0
    if x.size > 1:
        jump = np.flatnonzero(np.abs(np.diff(x)) > 180.0)
        if jump.size:
            x = np.insert(x, jump + 1, np.nan)
            return x, jump + 1
    return x, None


def _project(lon, lat, lon0, lat0, wide):
    if not wide:
        return sky_offsets(lon, lat, lon0, lat0)
    x, cut = _wrap(lon, lon0)
    y = np.asarray(lat, float)
    if cut is not None:
        y = np.insert(y, cut, np.nan)
    return x, y


def _angular_radius_deg(frame, pos_kpc, radius_pc):
    d_pc = float(np.linalg.norm(frame.to_heliocentric_icrs(pos_kpc))) * 1000.0
    return float(np.degrees(np.arctan2(radius_pc, max(d_pc, 1e-9))))


def _sky_data(result, n_tracks, n_assoc_tracks):
    """Everything the sky map draws, in (l, b) degrees: star tracks, associations (coloured and grey)."""
    d = result.data
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    t_show = sky_window_myr(result)
    keep = np.flatnonzero(ct >= -t_show - 1e-9)
    tracks = d["main"]["tracks"]
    if tracks is None or not len(tracks):
        return None
    tracks = tracks[:, keep]
    ct = ct[keep]
    lon_now, lat_now = _lb(frame, tracks[:, 0], ct[0])
    shown = legend_associations(result)
    shown_names = {s["name"] for s, _ in shown}
    assocs = {}
    for j, name in enumerate(d["adraws"].names):
        rows = d["adraws"].rows(j)
        centre = assoc.pos[rows][:, keep].mean(axis=0)  # mean of the draws: the association's own track
        n = n_assoc_tracks if name in shown_names else 3
        assocs[name] = {"centre": _lb(frame, centre, ct), "pos0": centre[0],
                        "tracks": [_lb(frame, assoc.pos[r][keep], ct) for r in rows[:n]]}
    return {"t_show": t_show, "lon0": float(np.median(lon_now)), "lat0": float(np.median(lat_now)),
            "star": [_lb(frame, tr, ct) for tr in tracks[:n_tracks]], "shown": shown, "assocs": assocs,
            "frame": frame}


def _median_track(xy):
    """Median over tracks, time by time, of projected (x, y) tracks of equal length."""
    x = np.nanmedian(np.stack([a for a, _ in xy]), axis=0)
    y = np.nanmedian(np.stack([b for _, b in xy]), axis=0)
    return x, y


def _sky_half(sd, names, percentile=99):
    """Half-width (deg) that holds ``percentile``% of the star's track points and of the named associations'."""
    lon0, lat0 = sd["lon0"], sd["lat0"]
    ext = [sky_offsets(lo, la, lon0, lat0) for lo, la in sd["star"]]
    ext += [sky_offsets(lo, la, lon0, lat0) for n in names for lo, la in sd["assocs"][n]["tracks"]]
    x = np.concatenate([a for a, _ in ext])
    y = np.concatenate([b for _, b in ext])
    ok = np.isfinite(x) & np.isfinite(y)
    return 1.15 * max(np.percentile(np.abs(x[ok]), percentile), np.percentile(np.abs(y[ok]), percentile), 1e-3)


def _draw_sky(ax, sd, result, half, wide, legend_labels=True):
    """Draw the map into ``ax``; returns the number of candidates outside it."""
    lon0, lat0 = sd["lon0"], sd["lat0"]
    lab = (lambda t: t) if legend_labels else (lambda t: None)

    def proj(lb):
        return _project(lb[0], lb[1], lon0, lat0, wide)

    if wide:
        xlim, ylim = (180.0, -180.0), (-90.0, 90.0)
    else:
        xlim, ylim = (half, -half), (-half, half)

    def in_view(x, y):
        return min(xlim) < x < max(xlim) and min(ylim) < y < max(ylim)

    ax.grid(False)  # the graticule is the grid
    for i, lb in enumerate(sd["star"]):
        x, y = proj(lb)
        ax.plot(x, y, color=STAR_COLOR, lw=0.4, alpha=0.25, label=lab("star: Monte Carlo tracks") if i == 0 else None)
    if wide:
        # longitude offsets about the star without wrap breaks, so every track has the same length
        mx, my = _median_track([((np.asarray(lo) - lon0 + 180.0) % 360.0 - 180.0, np.asarray(la))
                                for lo, la in sd["star"]])
        mx, my = _project(mx + lon0, my, lon0, lat0, True)
    else:
        mx, my = _median_track([proj(lb) for lb in sd["star"]])
    ax.plot(mx, my, color=STAR_COLOR, lw=1.6, label=lab("star: median of the tracks"))
    # the drawn track points that names must not cover (star draws and the coloured associations' draws)
    from .sky_labels import label_position

    drawn = [proj(lb) for lb in sd["star"]] + [(mx, my)]
    drawn += [proj(lb) for s_, _ in sd["shown"] for lb in sd["assocs"][s_["name"]]["tracks"]]
    drawn = (np.concatenate([np.ravel(a) for a, _ in drawn]), np.concatenate([np.ravel(b) for _, b in drawn]))
    _time_arrows(ax, mx, my, STAR_COLOR)
    ax.plot([0], [lat0 if wide else 0], marker="*", ms=11 if legend_labels else 8, color=STAR_COLOR, mec="k",
            mew=0.5, ls="none", zorder=6, label=lab(f"{result.star_name} today"))
    shown = sd["shown"]
    shown_names = [s_["name"] for s_, _ in shown]
    n_out, first_grey = 0, True
    for name, e in sd["assocs"].items():
        if name in shown_names:
            continue
        for lb in e["tracks"]:
            x, y = proj(lb)
            ax.plot(x, y, color=OTHER_COLOR, lw=0.5, alpha=0.6)
        x, y = proj(e["centre"])
        if in_view(x[0], y[0]):
            ax.plot([x[0]], [y[0]], marker="o", ms=3.5, mfc="white", mec=OTHER_COLOR, mew=0.8, ls="none", zorder=3,
                    label=lab("other candidates (≤ 1% probability), today") if first_grey else None)
            ax.annotate(name, (x[0], y[0]), textcoords="offset points", fontsize=5.5, color="0.4",
                        annotation_clip=True, **label_position(ax, x[0], y[0], name, 5.5, drawn, xlim, ylim))
            first_grey = False
        else:
            n_out += 1
    for s_, col in reversed(shown):  # the favoured one drawn last, on top
        e = sd["assocs"][s_["name"]]
        fav = s_["name"] == result.favoured
        for k, lb in enumerate(e["tracks"]):
            x, y = proj(lb)
            ax.plot(x, y, color=col, lw=1.1 if fav else 0.7, alpha=0.8 if fav else 0.6,
                    label=lab(_label(s_, result.favoured)) if k == 0 else None, zorder=3 if fav else 2)
        x, y = proj(e["centre"])
        _time_arrows(ax, x, y, col)
        ax.plot([x[0]], [y[0]], marker="o", ms=6 if fav else 4.5, color=col, mec="k", mew=0.5, zorder=5)
        rad = _angular_radius_deg(sd["frame"], e["pos0"], s_["radius_pc"])
        phi = np.linspace(0, 2 * np.pi, 120)
        stretch = 1.0 / max(np.cos(np.radians(y[0])), 0.05) if wide else 1.0
        ax.plot(x[0] + rad * stretch * np.cos(phi), y[0] + rad * np.sin(phi), color=col, lw=0.7, ls="--", zorder=4)
        if in_view(x[0], y[0]):
            ax.annotate(s_["name"], (x[0], y[0]), textcoords="offset points", fontsize=6, color=col,
                        fontweight="bold" if fav else None, annotation_clip=True,
                        **label_position(ax, x[0], y[0], s_["name"], 6.0, drawn, xlim, ylim))
        else:
            n_out += 1
    if shown and legend_labels:
        ax.plot([], [], color="0.3", lw=0.7, ls="--", label="association radius, today")
    if wide:
        ax.axhline(0.0, color="0.55", lw=0.9, ls="--", zorder=0, label=lab("Galactic plane b = 0"))
        ticks = np.sort((np.arange(0, 360, 60) - lon0 + 180.0) % 360.0 - 180.0)  # at round longitudes
        ax.set_xticks(ticks)
        ax.set_xticklabels([f"{(lon0 + t) % 360:.0f}°" for t in ticks])
        ax.set_yticks(np.arange(-90, 91, 30))
        ax.set_yticklabels([f"{t:+.0f}°" if t else "0°" for t in np.arange(-90, 91, 30)])
        ax.grid(True, lw=0.4, alpha=0.4)
    else:
        _graticule(ax, lon0, lat0, half, label_plane=legend_labels)
    ax.set_xlim(*xlim)  # longitude grows to the left, as on the sky
    ax.set_ylim(*ylim)
    ax.set_aspect("equal")
    return n_out


def _emptiest_corner(sd, half, size=0.37):
    """Inset bounds (axes fraction) in the corner holding the fewest drawn points (association centres weigh most)."""
    lon0, lat0 = sd["lon0"], sd["lat0"]
    pts = [sky_offsets(lo, la, lon0, lat0) for lo, la in sd["star"][::5]]
    pts += [sky_offsets(e["centre"][0][:1], e["centre"][1][:1], lon0, lat0) for e in sd["assocs"].values()] * 20
    x = np.concatenate([a for a, _ in pts])
    y = np.concatenate([b for _, b in pts])
    # axes fraction: x runs from +half (left) to -half (right)
    fx, fy = (half - x) / (2 * half), (y + half) / (2 * half)
    corners = ([1 - size - 0.02, 0.03], [0.02, 0.03], [1 - size - 0.02, 1 - size - 0.07], [0.02, 1 - size - 0.07])
    counts = [np.sum((fx > cx) & (fx < cx + size) & (fy > cy) & (fy < cy + size)) for cx, cy in corners]
    cx, cy = corners[int(np.argmin(counts))]
    return [cx, cy, size, size]


def plot_sky(result, ax=None, n_tracks=60, n_assoc_tracks=12):
    """Past tracks of star and association draws on the sky (Galactic, azimuthal equidistant about the star).

    Every candidate association is marked at its present position and named; those in colour (the
    favoured one in vermilion, ranked first in the legend, then every one above 1% probability) also
    get their angular radius as a dashed circle.  When the tracks span more than 60 deg from the star
    the map switches to plain Galactic longitude and latitude (an all-sky view, l growing to the left);
    when the star's own tracks fill less than a fifth of the map, an inset zooms onto them.

    Returns
    -------
    matplotlib.figure.Figure
    """
    new = ax is None
    fig, ax = figure_for(ax, width="page", aspect=0.62)
    sd = _sky_data(result, n_tracks, n_assoc_tracks)
    if sd is None:
        ax.text(0.5, 0.5, "no tracks kept", transform=ax.transAxes, ha="center")
        return fig
    half = _sky_half(sd, [s_["name"] for s_, _ in sd["shown"]])
    wide = half > _WIDE_DEG
    n_out = _draw_sky(ax, sd, result, half, wide)
    if wide:
        if new:
            fig.set_size_inches(fig.get_figwidth(), fig.get_figwidth() * 0.45)
        ax.set_xlabel("Galactic longitude l (increasing to the left)")
        ax.set_ylabel("Galactic latitude b")
    else:
        ax.set_xlabel(f"offset along Galactic longitude (deg; l increases to the left) from l = {sd['lon0']:.1f}°")
        ax.set_ylabel(f"offset along Galactic latitude (deg) from b = {sd['lat0']:+.1f}°")
    # the bulk of the star's tracks (and the favoured association's): 90% of their points
    zoom_half = max(_sky_half(sd, [s_["name"] for s_, _ in sd["shown"][:1]] if result.favoured else [], 90), 0.05)
    if not wide and zoom_half < 0.25 * half:
        inset = ax.inset_axes(_emptiest_corner(sd, half), zorder=7)
        _draw_sky(inset, sd, result, zoom_half, False, legend_labels=False)
        inset.set_facecolor("white")
        inset.tick_params(labelbottom=False, labelleft=False, length=0)
        inset.set_title(f"zoom: ±{zoom_half:.2g}° about the star", fontsize=6, pad=2)
        for side in inset.spines.values():
            side.set_edgecolor("0.3")
        ax.indicate_inset_zoom(inset, edgecolor="0.4", lw=0.6)
    if n_out:
        ax.plot([], [], ls="none", label=f"{n_out} candidate{'s' if n_out > 1 else ''} outside the map")
    fav_txt = f"favoured: {result.favoured}" if result.favoured else "no association favoured"
    ax.set_title(f"Past tracks over the last {sd['t_show']:.2g} Myr (co-rotating frame); {fav_txt}\n"
                 "star and circles: positions today; arrows point into the past", fontsize=7.5)
    handles, labels = ax.get_legend_handles_labels()
    shown = sd["shown"]
    order = {_label(s_, result.favoured): i for i, (s_, _) in enumerate(shown)}  # favoured first, then by rank
    coloured_idx = [i for i, lab in enumerate(labels) if lab in order]
    others = [i for i, lab in enumerate(labels) if lab not in order]
    pos = coloured_idx[0] if coloured_idx else len(labels)
    idx = ([i for i in others if i < pos] + sorted(coloured_idx, key=lambda i: order[labels[i]])
           + [i for i in others if i > pos])
    ax.legend([handles[i] for i in idx], [labels[i] for i in idx], loc="upper left", bbox_to_anchor=(1.01, 1.0),
              fontsize=6)
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
