"""Figures that join stages: the proper-motion error ellipses of timing, imaging and their combination.

Each function draws into a caller's Axes (``ax``) or a new kinage-style
figure and returns the Figure; matplotlib is imported only when one is drawn.
"""

from pathlib import Path

import numpy as np

from ..display.style import FAVOURED_COLOR, PALETTE, STAR_COLOR, figure_for, save_figure, style_context

__all__ = ["plot_pm_ellipses", "pm_ellipse_inputs", "write_astrometry_figure"]

_UNCONSTRAINED_MASYR = 1000.0  # 1 arcsec/yr: faster than any known neutron star (common practice, no source)
_STYLE = {"timing": (STAR_COLOR, "-"), "imaging": (PALETTE[1], "--"), "combined": (FAVOURED_COLOR, "-")}


def _pm_block(sol):
    v = np.asarray(sol.values, float)[2:4]
    c = np.asarray(sol.covariance, float)[2:4, 2:4]
    return v, c


def pm_ellipse_inputs(scenario, fit=None, forecast=None):
    """(label, centre (2,), covariance (2, 2)) of timing, imaging and combined proper motions, mas/yr.

    Timing: the fit's timing-only solution, else the forecast (centred on the
    imaging values, or zero).  Imaging: ``[star]`` proper motion with errors.
    Combined: what the trace uses (:func:`kinage.astrometry.solution_for_trace`).
    """
    from ..astrometry import AstrometricSolution

    out = []
    imaging = None
    try:
        typed = AstrometricSolution.from_star(scenario.star)
        v, c = _pm_block(typed)
        if np.all(np.isfinite(v)) and np.all(np.diag(c) > 0):
            imaging = (v, c)
    except Exception:  # noqa: BLE001 - no position: no imaging block
        typed = None
    if fit is not None:
        v, c = _pm_block(fit.timing_solution)
        out.append(("timing", v, c))
    elif forecast is not None:
        _, c = _pm_block(forecast.solution)
        centre = imaging[0] if imaging is not None else np.zeros(2)
        out.append(("timing (forecast)", centre, c))
    if imaging is not None:
        out.append(("imaging", *imaging))
    if fit is not None and imaging is not None:
        from ..astrometry import solution_for_trace

        v, c = _pm_block(solution_for_trace(scenario, fit))
        out.append(("combined", v, c))
    return out


def _ellipse(centre, cov, n=200, k=1.0):
    w, vec = np.linalg.eigh(cov)
    w = np.sqrt(np.maximum(w, 0.0))
    phi = np.linspace(0, 2 * np.pi, n)
    pts = vec @ (k * np.vstack([w[0] * np.cos(phi), w[1] * np.sin(phi)]))
    return centre[0] + pts[0], centre[1] + pts[1]


def _legend_text(lab, v, s, centre="the imaging value"):
    """Legend entry: values rounded to their errors; a forecast states its errors only (its centre is borrowed)."""
    from .numbers import fmt_power, value_error

    if np.max(s) >= _UNCONSTRAINED_MASYR:
        return f"{lab}: not constrained (errors {fmt_power(np.max(s))} mas/yr, beyond the axes)"
    if lab.endswith("(forecast)"):
        return (f"{lab}: errors {fmt_power(s[0])} (ra*cos dec) and {fmt_power(s[1])} (dec) mas/yr, "
                f"drawn about {centre}")
    return (f"{lab}: {value_error(v[0], s[0])} (ra*cos dec), {value_error(v[1], s[1])} (dec) mas/yr")


def _draw(ax, shown, ref, legend):
    half = 3.0 * max(np.sqrt(np.max(np.diag(c))) for _, _, c in ref)
    cx = np.mean([v[0] for _, v, _ in ref])
    cy = np.mean([v[1] for _, v, _ in ref])
    half = max(half, 1.2 * max(max(abs(v[0] - cx), abs(v[1] - cy)) for _, v, _ in ref) + half / 3)
    for lab, v, c in shown:
        col, ls = _STYLE.get(lab.split(" ")[0], ("0.3", "-"))
        s = np.sqrt(np.diag(c))
        text = _legend_text(lab, v, s, "the imaging value" if any(k == "imaging" for k, _, _ in shown) else "zero")
        x, y = _ellipse(v, c)
        lw = {"timing": 2.6, "combined": 1.0}.get(lab.split(" ")[0], 1.4)  # combined drawn thin over a wide timing
        ax.plot(x, y, color=col, ls=ls, lw=lw, label=text if legend else None)
        x2, y2 = _ellipse(v, c, k=2.0)
        ax.plot(x2, y2, color=col, ls=":", lw=0.7)
        ax.plot([v[0]], [v[1]], marker="+", color=col, ms=6)
    ax.set_xlim(cx - half, cx + half)
    ax.set_ylim(cy - half, cy + half)
    ax.set_aspect("equal")
    ax.set_xlabel(r"proper motion $\mu_{\alpha*} = \mu_\alpha \cos\delta$ (mas/yr)")
    ax.set_ylabel(r"proper motion $\mu_\delta$ (mas/yr)")
    ax.ticklabel_format(useOffset=False)


def plot_pm_ellipses(items, ax=None):
    """1-sigma (and 2-sigma dotted) proper-motion error ellipses, mas/yr.

    When one ellipse is more than 20 times smaller than the largest shown, a
    second panel zooms onto it (with ``ax`` given, only the wide view is drawn).

    Parameters
    ----------
    items : list of (label, centre, covariance)
        From :func:`pm_ellipse_inputs`.

    Returns
    -------
    matplotlib.figure.Figure
    """
    shown = [(lab, np.asarray(v, float), np.asarray(c, float)) for lab, v, c in items
             if np.all(np.isfinite(c)) and np.all(np.isfinite(v))]
    good = [it for it in shown if np.sqrt(np.max(np.diag(it[2]))) < _UNCONSTRAINED_MASYR]
    ref = good or shown
    sizes = [np.sqrt(np.max(np.diag(c))) for _, _, c in ref]
    zoom = ax is None and len(sizes) > 1 and max(sizes) > 20 * min(sizes)
    if zoom:
        from ..display.style import new_figure

        fig, (ax, ax2) = new_figure(2, 1, width="page", aspect=0.45)
    else:
        fig, ax = figure_for(ax, width="column", aspect=0.9)
    if not ref:
        ax.text(0.5, 0.5, "no proper-motion errors to show", ha="center", transform=ax.transAxes)
        return fig
    _draw(ax, shown, ref, legend=True)
    ax.set_title("1σ (solid, dashed) and 2σ (dotted) error ellipses", fontsize=7)
    if zoom:
        small = [it for it in ref if np.sqrt(np.max(np.diag(it[2]))) <= 20 * min(sizes)]
        _draw(ax2, shown, small, legend=False)
        ax2.set_title("zoom onto the smallest ellipses", fontsize=7)
    fig.legend(loc="outside lower center", fontsize=5.5, ncol=1)
    return fig


def write_astrometry_figure(run, out_dir):
    """Write ``astrometry/astrometry_pm_ellipses.png`` for a pipeline run (None when nothing to show)."""
    fit, fc = run.stages.get("fit"), run.stages.get("forecast")
    if fit is None and fc is None:
        return None
    items = pm_ellipse_inputs(run.scenario, fit=fit, forecast=fc)
    if not items:
        return None
    folder = Path(out_dir) / "astrometry"
    folder.mkdir(parents=True, exist_ok=True)
    with style_context():
        return Path(save_figure(plot_pm_ellipses(items), folder / "astrometry_pm_ellipses.png"))
