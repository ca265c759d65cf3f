"""Figures of the timing stage: forecast against baseline, the visit plan, fit residuals.

Every function draws on new axes (``ax=None``) or on the axes given and
returns the matplotlib Figure; saving is the caller's job
(``ForecastResult.write_products`` uses :func:`kinage.report.style.save_figure`).
matplotlib is imported only when a figure is drawn.
"""

import numpy as np

__all__ = ["forecast_figure", "plan_figure", "residual_figure"]

_YEAR_D = 365.25


def _axes(ax, n, **kw):
    """(figure, list of n axes): new ones when ax is None, else the axes given (one Axes fills the first slot)."""
    from ..display.style import new_figure

    if ax is None:
        fig, axes = new_figure(1, n, **kw)
        return fig, list(np.atleast_1d(axes))
    axes = list(np.atleast_1d(ax))
    return axes[0].figure, axes + [None] * (n - len(axes))


def forecast_figure(result, ax=None):
    """Proper-motion error, parallax error and significance against baseline.

    Three panels sharing the baseline axis: the proper-motion error along the
    motion (mas/yr, log), the parallax error (mas, log) and the proper-motion
    significance mu / sigma_mu (log, with the target).  Proper motion and
    parallax never share an axis (different units); the parallax panel draws
    the expected parallax (from the distance) that its error must fall below.

    Parameters
    ----------
    result : ForecastResult
    ax : Axes or sequence of up to 3 Axes, optional
        Where to draw (a single Axes gets the proper-motion panel only).

    Returns
    -------
    matplotlib.figure.Figure
    """
    from ..display.style import color, plain_log_ticks, style_context

    sw = result.sweep
    b = np.asarray(sw["baseline_yr"], float)
    with style_context():
        fig, (a_pm, a_plx, a_sig) = _axes(ax, 3, aspect=1.45, sharex=True)
        a_pm.plot(b, sw["pm_error_masyr"], color=color(0), label="along the expected motion")
        a_pm.set_yscale("log")
        a_pm.set_ylabel("proper-motion\nerror (mas/yr)")
        a_pm.axvline(result.plan.span_yr, color="0.5", lw=0.8, ls=":", label="this plan")
        a_pm.legend(loc="upper right")
        plain_log_ticks(a_pm.yaxis)
        if a_plx is not None:
            a_plx.plot(b, sw["parallax_error_mas"], color=color(1), label="parallax error")
            a_plx.set_yscale("log")
            a_plx.set_ylabel("parallax\nerror (mas)")
            a_plx.axvline(result.plan.span_yr, color="0.5", lw=0.8, ls=":")
            dist = getattr(getattr(result, "motion", None), "distance_pc", None)
            if dist:  # the error must fall below the parallax itself for a measurement
                a_plx.axhline(1000.0 / dist, color=color(3), lw=0.8, ls="--",
                              label=f"expected parallax ({1000.0 / dist:.2g} mas)")
            a_plx.legend(loc="upper right")
            plain_log_ticks(a_plx.yaxis)
        if a_sig is not None:
            _significance_panel(a_sig, result, b)
        last = a_sig or a_plx or a_pm
        last.set_xlabel("baseline (yr), same start and cadence")
    return fig


def _significance_panel(ax, result, b):
    from ..display.style import color

    s = np.asarray(result.sweep["pm_significance"], float)
    good = np.isfinite(s) & (s > 0)
    if np.any(good):
        ax.plot(b[good], s[good], color=color(2), label="expected proper motion")
        ax.axhline(result.target_significance, color=color(3), lw=0.8, ls="--",
                   label=f"target {result.target_significance:g}σ")
        if result.baseline_needed_yr is not None:
            ax.axvline(result.baseline_needed_yr, color=color(3), lw=0.8, ls=":",
                       label=f"needed: {result.baseline_needed_yr:.1f} yr")
        ax.set_yscale("log")
        ax.set_ylim(top=max(2 * result.target_significance, 1.5 * np.max(s[good])))
        ax.legend(loc="lower right")
    else:
        ax.text(0.5, 0.5, "expected proper motion unknown\n(no distance)", ha="center", va="center",
                transform=ax.transAxes)
    ax.axvline(result.plan.span_yr, color="0.5", lw=0.8, ls=":")
    ax.set_ylabel("significance\n" + r"$\mu/\sigma_\mu$")
    if np.any(good):
        from ..display.style import plain_log_ticks

        plain_log_ticks(ax.yaxis)


def _shade_excluded(ax, x, excluded, **kw):
    """Shade runs of True in ``excluded`` over the x grid."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], excluded.astype(int), [0]])))
    for lo, hi in zip(edges[::2], edges[1::2]):
        ax.axvspan(x[lo] - 0.5, x[hi - 1] + 0.5, **kw)


def plan_figure(result, ax=None):
    """The visits on the year with the Sun-excluded window and the astrometric signatures.

    Top: one year from the campaign start, the parallax delay per mas and
    the position delay per mas along the expected motion (both with their
    mean removed, which the pulse phase absorbs), the Sun-excluded days shaded,
    each visit marked at its day of the year (folded).  Bottom: the whole
    campaign, the proper-motion delay per mas/yr along the motion (position
    signature times time from the epoch) with the visits on it.

    Parameters
    ----------
    result : ForecastResult
    ax : Axes or sequence of up to 2 Axes, optional

    Returns
    -------
    matplotlib.figure.Figure
    """
    from ..display.style import color, style_context
    from .plan import candidate_rows, sun_separation

    sol, plan = result.solution, result.plan
    import astropy.units as u

    ra, dec = float(u.Quantity(sol.ra).to_value(u.deg)), float(u.Quantity(sol.dec).to_value(u.deg))
    direction = result.motion.direction
    along = "along the expected motion"
    if direction is None:
        direction, along = np.array([1.0, 0.0]), "along ra*cos dec (direction unknown)"
    start = float(np.floor(plan.mjd[0]))
    year = start + np.arange(0.0, 366.0)
    rows = candidate_rows(ra, dec, year, 1) * 1e6            # us per mas
    plx = rows[:, 4] - rows[:, 4].mean()
    pos = rows[:, :2] @ direction
    pos = pos - pos.mean()
    sep = sun_separation(year, ra, dec) if plan.sun_avoidance_deg > 0 else np.full(year.size, 180.0)
    day = year - start
    v_day = np.mod(plan.mjd - start, _YEAR_D)
    with style_context():
        fig, (a1, a2) = _axes(ax, 2, width="page", aspect=0.62)
        _shade_excluded(a1, day, sep < plan.sun_avoidance_deg, color="0.85", lw=0,
                        label=f"Sun closer than {plan.sun_avoidance_deg:g} deg")
        a1.plot(day, plx, color=color(1), label="parallax (per mas)")
        a1.plot(day, pos, color=color(0), ls="--", label=f"position (per mas) {along}")
        a1.plot(v_day, np.interp(v_day, day, plx), "o", ms=4, color=color(3), mec="k", mew=0.3, zorder=3,
                label=f"visits ({plan.schedule} schedule), all years folded")
        a1.set_xlim(0, _YEAR_D)
        a1.set_xlabel(f"days after {plan.times[0].isot[:10]} (folded on the year)")
        a1.set_ylabel("delay signature (µs)")
        a1.legend(loc="lower left", bbox_to_anchor=(0, 1.0), ncols=2, fontsize=6.5, borderaxespad=0.2)
        if a2 is not None:
            _campaign_panel(a2, result, ra, dec, direction, along)
    return fig


def _campaign_panel(ax, result, ra, dec, direction, along):
    from ..display.style import color
    from .plan import candidate_rows

    plan = result.plan
    epoch = float(result.solution.epoch.tdb.mjd)
    full = np.arange(np.floor(plan.mjd[0]), np.ceil(plan.mjd[-1]) + 1, 2.0)
    rows = candidate_rows(ra, dec, full, 1) * 1e6
    years = (full - epoch) / _YEAR_D
    sig = (rows[:, :2] @ direction) * years
    vr = candidate_rows(ra, dec, plan.mjd, 1) * 1e6 if plan.n_visits > 1 else rows[:1]
    v_sig = (vr[:, :2] @ direction) * (plan.mjd - epoch) / _YEAR_D
    t0 = plan.mjd[0]
    ax.plot((full - t0) / _YEAR_D, sig, color=color(0), lw=0.8, label=f"proper motion (per mas/yr) {along}")
    ax.plot((plan.mjd - t0) / _YEAR_D, v_sig, "o", ms=3, color=color(3), label="visits")
    ax.set_xlabel(f"years after {plan.times[0].isot[:10]}")
    ax.set_ylabel("delay signature (µs)")
    ax.legend(loc="lower left", bbox_to_anchor=(0, 1.0), ncols=2, fontsize=6.5, borderaxespad=0.2)


def _time_unit(values_s):
    """A readable unit (name, scale from seconds) for delays of this size."""
    peak = np.nanmax(np.abs(values_s)) if np.size(values_s) else 0.0
    for name, scale in (("s", 1.0), ("ms", 1e3), ("µs", 1e6)):
        if peak * scale >= 1.0:
            return name, scale
    return "µs", 1e6


def residual_figure(result, path=None, ax=None):
    """Residuals against time with the fitted astrometric signature.

    Top: residuals with the fitted astrometric delay added back (points) and
    that delay on a fine grid (line), both relative to the delay's mean (a
    constant delay is absorbed by the phase offset).  Bottom: post-fit residuals.

    Parameters
    ----------
    result : FitResult
    path : str or Path, optional
        Save the figure there (atomic PNG) and return the path (kept for callers that save here).
    ax : Axes or sequence of up to 2 Axes, optional

    Returns
    -------
    matplotlib.figure.Figure, or the path when ``path`` is given
    """
    from ..display.style import color, save_figure, style_context

    mjd = result.mjd
    sig = result.signature_s
    offset = float(np.mean(sig)) if np.size(sig) else 0.0
    grid = None
    if result.signature_grid is not None:
        grid = (result.signature_grid[0], result.signature_grid[1] - offset)
    top_unit, top = _time_unit(np.concatenate([sig - offset, grid[1] if grid else []]))
    res_unit, rs = _time_unit(np.concatenate([result.residuals_s, result.errors_s]))
    from .forecast_words import constrained

    sd = result.solution.sigma_dict()
    measured = constrained(sd, max(sd["pm_ra_cosdec_masyr"], sd["pm_dec_masyr"]))
    measured = measured["proper_motion"] or measured["parallax"]
    with style_context():
        fig, (ax1, ax2) = _axes(ax, 2, aspect=1.0, sharex=True)
        if grid is not None and measured:
            ax1.plot(grid[0], grid[1] * top, color=color(0), lw=1.0, label="fitted astrometric delay")
        ax1.errorbar(mjd, (result.residuals_s + sig - offset) * top, yerr=result.errors_s * top, fmt="o", ms=2.5,
                     color=color(1), elinewidth=0.7,
                     label="residual + fitted delay")
        if not measured:
            # errors beyond what any neutron star could show (see forecast_words): the fitted delay is whatever
            # the noise allows, so it is not drawn as a curve, and the panel says why
            # (above the panel, clear of the points it qualifies)
            ax1.text(1.0, 1.02, "astrometry not constrained (errors > 1 arcsec/yr):\nno fitted delay curve drawn",
                     transform=ax1.transAxes, ha="right", va="bottom", fontsize=6.5, color="0.25")
        ax1.set_ylabel(f"astrometric delay − mean ({top_unit})")
        ax1.legend(loc="lower left", bbox_to_anchor=(0, 1.0), ncols=2, fontsize=6.5, borderaxespad=0.2)
        if ax2 is not None:
            ax2.errorbar(mjd, result.residuals_s * rs, yerr=result.errors_s * rs, fmt="o", ms=2.5, color=color(2),
                         elinewidth=0.7)
            ax2.axhline(0, color="0.3", lw=0.6)
            ax2.set_ylabel(f"post-fit residual ({res_unit})")
        (ax2 or ax1).set_xlabel("MJD (TDB)")
    if path is not None:
        return save_figure(fig, path)
    return fig
