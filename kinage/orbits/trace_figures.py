"""Figures of the tracing stage, each drawn into a caller's Axes or a new figure (the sky map: :mod:`.sky_figure`).

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

from ..display.style import FAVOURED_COLOR, PALETTE, STAR_COLOR, figure_for, new_figure
from .common_origin import separation_pdf
from .frames import _ICRS_TO_GALACTIC
from .sky_figure import legend_associations, plot_sky, sky_offsets, sky_window_myr  # noqa: F401  (re-exported)

__all__ = ["plot_sky", "plot_dmin_tau", "plot_dmin_control", "plot_tau_hist", "plot_plane_crossing",
           "plot_birth_xyz", "legend_associations", "sky_offsets", "sky_window_myr"]


def _assoc_arrays(result, s):
    d = result.data
    j = d["index"][s["name"]]
    return (d["main"]["dmin"][j].astype(float), d["main"]["tau"][j].astype(float), d["masks"][s["name"]], j)


def _title(result, s):
    """Two lines: the name, then 'birth probability 58 ± 4%, favoured' (or '..., none favoured')."""
    p = s.get("probability")
    second = []
    if p is not None:
        err = s.get("probability_error")
        from .._rounding import percent_text

        second.append(f"birth probability {percent_text(p, err)}")  # as the report's tables print it
    if s["name"] == result.favoured:
        second.append("favoured")
    elif result.favoured is None and result.associations and s["name"] == result.associations[0]["name"]:
        second.append("most probable, none favoured")
    return s["name"] + ("\n" + ", ".join(second) if second else "")


def plot_dmin_tau(result, name=None, ax=None):
    """Closest approach d_min against its time tau for every draw, within the integration window."""
    from ..display.style import plain_log_ticks

    s = _pick(result, name)
    dm, tau, mask, _ = _assoc_arrays(result, s)
    fig, ax = figure_for(ax)
    max_myr = result.settings["max_age_yr"] / 1e6
    ax.scatter(tau[~mask], np.maximum(dm[~mask], 1e-2), s=2, color=STAR_COLOR, alpha=0.25, label="star draws",
               rasterized=True)
    ax.scatter(tau[mask], np.maximum(dm[mask], 1e-2), s=3, color=FAVOURED_COLOR,
               label=f"encounters ({int(mask.sum())} of {mask.size})")
    ax.axhline(s["radius_pc"] * result.settings["encounter_radius_factor"], color="k", ls="--", lw=0.8,
               label="radius criterion")
    lim = s["age_myr"] + result.settings["age_tolerance_yr"] / 1e6
    if lim < max_myr:
        ax.axvline(lim, color="0.4", ls=":", lw=0.8, label="association age + tolerance")
    ax.set_xlim(0, max_myr)
    ax.set_yscale("log")
    plain_log_ticks(ax.yaxis)
    ax.set_xlabel(r"time of closest approach $\tau$ (Myr ago)")
    ax.set_ylabel(r"closest approach $d_\mathrm{min}$ (pc)")
    leg = ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=6, ncols=2, title=_title(result, s),
                    title_fontsize=6.5, alignment="left")  # above the axes: the draws fill every corner
    leg.get_title().set_multialignment("left")
    return fig


def plot_dmin_control(result, name=None, ax=None):
    """d_min of the star draws against the control draws, with the common-origin curve.

    The curve is Hoogerwerf, de Bruijne & de Zeeuw 2001 (A&A 365, 49),
    Appendix A, eq. A4 with the maximum-likelihood sigma of the draws; the
    histograms are fractions of all draws per pc, so the area beyond the
    plotted range is what is missing from them.  The range reaches 20 times
    the radius criterion at most when there are encounters (they are the
    signal), else the 90th percentile of the star draws.  Without encounters
    the common-origin curve is not drawn: a sigma fitted to draws that never
    come near is no test of a common origin.
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
    p90 = np.percentile(dm, 90) if dm.size else 1.0
    top = max(min(p90, 20 * radius) if s.get("n_encounters") else p90, 4 * radius)
    bins = np.linspace(0, top, 41)
    w = np.diff(bins)[0]
    ax.hist(dm, bins=bins, density=False, weights=np.full(dm.size, 1.0 / max(dm.size, 1) / w), color=STAR_COLOR,
            alpha=0.45, label="star draws")
    if cd is not None and cd.size:
        ax.hist(cd, bins=bins, weights=np.full(cd.size, 1.0 / cd.size / w), histtype="step", color="k", lw=1.0,
                label="control draws (direction randomised)")
    sig = (s.get("common_origin") or {}).get("sigma_pc")
    if sig and s.get("n_encounters"):
        from ..display.numbers import fmt_power

        x = np.linspace(0, top, 300)
        ax.plot(x, separation_pdf(x, sig), color=FAVOURED_COLOR, lw=1.3,
                label=f"common origin, σ = {fmt_power(sig)} pc (Hoogerwerf et al. 2001, eq. A4)")
    ax.axvline(radius, color="0.3", ls="--", lw=0.8, label="radius criterion")
    beyond = float(np.mean(dm > top)) if dm.size else 0.0
    if beyond > 0.005:
        ax.plot([], [], ls="none", label=f"({100 * beyond:.0f}% of the star draws lie beyond {top:.0f} pc)")
    ax.set_xlim(0, top)
    ax.set_xlabel(rf"closest approach to {s['name']}, $d_\mathrm{{min}}$ (pc)")
    ax.set_ylabel("fraction of draws per pc")
    leg = ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=6, title=_title(result, s),
                    title_fontsize=6.5, alignment="left")
    leg.get_title().set_multialignment("left")
    return fig


def plot_tau_hist(result, name=None, ax=None):
    """Times of closest approach: all draws and encounters."""
    s = _pick(result, name)
    _, tau, mask, _ = _assoc_arrays(result, s)
    fig, ax = figure_for(ax)
    valid = np.isfinite(tau)
    bins = np.linspace(0, result.settings["max_age_yr"] / 1e6, 41)
    if valid.any():
        ax.hist(tau[valid], bins=bins, color=STAR_COLOR, alpha=0.35, label="all star draws")
        if mask.any():
            ax.hist(tau[mask], bins=bins, color=FAVOURED_COLOR, label=f"encounters ({s['n_encounters']})")
    ax.set_xlim(bins[0], bins[-1])
    ax.set_xlabel(r"time of closest approach $\tau$ (Myr ago)")
    ax.set_ylabel("number of draws")
    ax.set_title(_title(result, s), fontsize=7)
    ax.legend(loc="upper right")
    return fig


def _share_text(n, total):
    """'86% of draws' or, below 1% and above 99%, the counts themselves ('1 of 1500 draws')."""
    f = n / total if total else 0.0
    if 0 < f < 0.01 or 0.99 < f < 1:
        return f"{n} of {total} draws"
    return f"{100 * f:.0f}% of draws"


def plot_plane_crossing(result, ax=None):
    """Distribution of the time since the star last crossed the Galactic mid-plane (not a kinematic age)."""
    fig, ax = figure_for(ax)
    x = np.asarray(result.plane_crossing_myr, float)
    ok = np.isfinite(x)
    max_myr = result.settings["max_age_yr"] / 1e6
    bins = np.linspace(0, max_myr, 41)
    if ok.any():
        ax.hist(x[ok], bins=bins, color=PALETTE[2], alpha=0.7,
                label=f"{_share_text(int(ok.sum()), ok.size)} crossed z = 0 within {max_myr:g} Myr")
    best = result.best() if result.favoured else None
    if best is not None and best["age_yr"].get("median") is not None:
        a = best["age_yr"]
        ax.axvspan(a["lo68"] / 1e6, a["hi68"] / 1e6, color=FAVOURED_COLOR, alpha=0.2, lw=0,
                   label=f"kinematic age from {best['name']} (68%)")
    ax.set_xlim(0, max_myr)
    ax.set_xlabel("time since the last Galactic mid-plane crossing (Myr ago)")
    ax.set_ylabel("number of draws")
    from matplotlib.ticker import MaxNLocator

    ax.yaxis.set_major_locator(MaxNLocator(integer=True))  # counts are whole
    if ok.any() and ok.mean() < 0.5:
        ax.text(0.5, 0.6, f"most draws did not cross the plane within {max_myr:g} Myr:\nno age estimate",
                ha="center", va="center", transform=ax.transAxes, fontsize=6.5, color="0.3")
    if not ok.any():
        ax.text(0.5, 0.5, f"no draw crossed z = 0 within {max_myr:g} Myr", ha="center", va="center",
                transform=ax.transAxes)
    if ax.get_legend_handles_labels()[0]:
        ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.01), fontsize=6)
    return fig


def _helio_galactic_pc(frame, pos_kpc):
    return (frame.to_heliocentric_icrs(pos_kpc) @ _ICRS_TO_GALACTIC.T) * 1000.0


def _at_time(pos, times, t_myr):
    """Positions at ``t_myr`` (<= 0) interpolated linearly between the grid's output times, (..., 3).

    Between output times 0.1-0.5 Myr apart a Galactic orbit departs from a straight chord by
    L^2 / (8 R) ~ 0.1 pc (L ~ 100 pc travelled, R ~ 8 kpc), far below association radii.
    """
    order = np.argsort(times)
    t = np.asarray(times, float)[order]
    k = int(np.clip(np.searchsorted(t, t_myr), 1, t.size - 1))
    w = (t_myr - t[k - 1]) / (t[k] - t[k - 1])
    a, b = pos[..., order[k - 1], :], pos[..., order[k], :]
    return a + w * (b - a)


def _encounter_offsets(result, s, j, rows):
    """Offsets (pc, heliocentric Galactic axes) of each encounter draw from its paired association draw at its
    own closest approach; their lengths are the draws' d_min.  Empty without encounters."""
    d = result.data
    birth = d["main"].get("birth", {}).get(j)
    if birth is None:
        return np.empty((0, 3))
    idx, pos = birth
    enc = np.asarray(d["masks"][s["name"]], bool)[idx]
    if not enc.any():
        return np.empty((0, 3))
    idx, pos = idx[enc], pos[enc]
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    tau = np.asarray(d["main"]["tau"][j], float)[idx]  # Myr ago
    paired = rows[idx % d["adraws"].m]  # star draw i meets association draw i mod m
    apos = np.array([_at_time(assoc.pos[r], ct, -t) for r, t in zip(paired, tau)])
    return (_helio_galactic_pc(frame, frame.corotating(pos, -tau))
            - _helio_galactic_pc(frame, frame.corotating(apos, -tau)))


def plot_birth_xyz(result, name=None, fig=None):
    """Positions of star and association draws at the birth time, Galactic X-Y and X-Z.

    The time is the association's median encounter time (the kinematic age), or the median
    closest-approach time when no draw met it; positions are interpolated to that time.  The
    encounter draws are added as crosses, each at its own closest approach relative to its paired
    association draw (placed about the association's centre): they fall inside the radius.  The view
    centres on the association, out to several times its radius and its draws' spread: star draws
    far away (a poorly known distance puts some kiloparsecs off) are counted, not drawn.
    """
    s = _pick(result, name)
    d = result.data
    frame, assoc, ct = d["frame"], d["assoc"], d["assoc"].times
    j = d["index"][s["name"]]
    enc = s["age_yr"]["median"]
    t_b = (enc or s["tau_all_yr"]["median"] or 0.0) / 1e6  # Myr
    if fig is None:
        fig, axes = new_figure(2, 1, width="page", aspect=0.42)
    else:
        axes = fig.subplots(1, 2)
    tracks = d["main"]["tracks"]
    rows = d["adraws"].rows(j)
    apos = _helio_galactic_pc(frame, frame.corotating(_at_time(assoc.pos[rows], ct, -t_b), -t_b))
    spos = (_helio_galactic_pc(frame, frame.corotating(_at_time(tracks, ct, -t_b), -t_b)) if tracks is not None
            else np.empty((0, 3)))
    col = FAVOURED_COLOR if s["name"] == result.favoured else PALETTE[1]
    r = s["radius_pc"] * result.settings["encounter_radius_factor"]
    c = apos.mean(axis=0)
    enc_off = _encounter_offsets(result, s, j, rows)
    spread = np.percentile(np.abs(apos - c), 98, axis=0) if len(apos) else np.zeros(3)
    for ax, (a, b, la, lb) in zip(axes, ((0, 1, "X (pc, towards the Galactic centre)", "Y (pc, rotation)"),
                                         (0, 2, "X (pc, towards the Galactic centre)", "Z (pc, north)"))):
        half = max(6.0 * r, 1.3 * max(spread[a], spread[b]))
        inside = (np.abs(spos[:, a] - c[a]) < half) & (np.abs(spos[:, b] - c[b]) < half)
        n_out = int(np.sum(~inside))
        ax.scatter(spos[inside, a], spos[inside, b], s=3, color=STAR_COLOR, alpha=0.4, rasterized=True,
                   label="star draws" + (f" ({n_out} of {len(spos)} outside the view)" if n_out else ""))
        ax.scatter(apos[:, a], apos[:, b], s=3, color=col, alpha=0.6, label=f"{s['name']} draws")
        if len(enc_off):
            ax.scatter(c[a] + enc_off[:, a], c[b] + enc_off[:, b], s=7, marker="x", lw=0.6, color="k", zorder=4,
                       label=f"encounters ({len(enc_off)}), each at its own closest approach")
        phi = np.linspace(0, 2 * np.pi, 100)
        ax.plot(c[a] + r * np.cos(phi), c[b] + r * np.sin(phi), color="k", lw=0.8, label="radius criterion")
        ax.set_xlim(c[a] - half, c[a] + half)
        ax.set_ylim(c[b] - half, c[b] + half)
        ax.set_aspect("equal", adjustable="box")
        ax.set_xlabel(la)
        ax.set_ylabel(lb)
        ax.legend(loc="best", fontsize=5.5)
    if enc:
        when = f"the kinematic age from {s['name']}" + ("" if s["name"] == result.favoured else " (not favoured)")
    else:
        when = f"the median closest approach to {s['name']} (no encounter: not a birth time)"
    from ..display.sentences import format_age_interval

    shown = format_age_interval(s["age_yr"] if enc else s["tau_all_yr"], bare=True)  # as the tables round it
    fig.suptitle(f"Positions {shown} ago, {when}; co-rotating frame, Sun at the origin today", fontsize=7.5)
    return fig


def _pick(result, name):
    if name is None:
        s = result.best()
        if s is None:
            raise ValueError("the trace has no associations to plot")
        return s
    return next(a for a in result.associations if a["name"] == name)
