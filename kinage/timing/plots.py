"""Figures of the timing stage: forecast against baseline, fit residuals."""

import numpy as np

from ..report.style import color, new_figure, save_figure, style_context

__all__ = ["forecast_figure", "residual_figure"]


def forecast_figure(result, path):
    """Proper-motion error and significance against baseline; saves a PNG.

    Parameters
    ----------
    result : ForecastResult
    path : str or Path

    Returns
    -------
    Path
    """
    sw = result.sweep
    with style_context():
        fig, (ax1, ax2) = new_figure(1, 2, aspect=1.1, sharex=True)
        b = sw["baseline_yr"]
        ax1.plot(b, sw["pm_error_masyr"], color=color(0), label="proper motion (along motion)")
        ax1.plot(b, sw["parallax_error_mas"], color=color(1), ls="--", label="parallax (mas)")
        ax1.set_yscale("log")
        ax1.set_ylabel("1-sigma error (mas/yr; mas)")
        ax1.axvline(result.plan.span_yr, color="0.5", lw=0.8, ls=":", label="this plan")
        ax1.legend(loc="best")
        if np.any(np.isfinite(sw["pm_significance"])):
            ax2.plot(b, sw["pm_significance"], color=color(2), label="expected proper motion")
            ax2.axhline(result.target_significance, color=color(3), lw=0.8, ls="--",
                        label=f"target {result.target_significance:g} sigma")
            if result.baseline_needed_yr is not None:
                ax2.axvline(result.baseline_needed_yr, color=color(3), lw=0.8, ls=":",
                            label=f"needed: {result.baseline_needed_yr:.1f} yr")
            ax2.legend(loc="upper left")
        else:
            ax2.text(0.5, 0.5, "expected proper motion unknown\n(no distance)", ha="center", va="center",
                     transform=ax2.transAxes)
        ax2.axvline(result.plan.span_yr, color="0.5", lw=0.8, ls=":")
        ax2.set_ylabel("significance mu / sigma_mu")
        ax2.set_xlabel("baseline (yr)")
    return save_figure(fig, path)


def _time_unit(values_s):
    """A readable unit (name, scale from seconds) for delays of this size."""
    peak = np.nanmax(np.abs(values_s)) if np.size(values_s) else 0.0
    for name, scale in (("s", 1.0), ("ms", 1e3), ("us", 1e6)):
        if peak * scale >= 1.0:
            return name, scale
    return "us", 1e6


def residual_figure(result, path):
    """Residuals against time with the fitted astrometric signature; saves a PNG.

    Top: residuals with the fitted astrometric delay added back (points) and
    that delay on a fine grid (line), both relative to the delay's mean (a
    constant delay is absorbed by the phase offset).  Bottom: post-fit residuals.

    Parameters
    ----------
    result : FitResult
    path : str or Path
    """
    mjd = result.mjd
    sig = result.signature_s
    offset = float(np.mean(sig)) if np.size(sig) else 0.0
    grid = None
    if result.signature_grid is not None:
        grid = (result.signature_grid[0], result.signature_grid[1] - offset)
    top_unit, top = _time_unit(np.concatenate([sig - offset, grid[1] if grid else []]))
    res_unit, rs = _time_unit(np.concatenate([result.residuals_s, result.errors_s]))
    with style_context():
        fig, (ax1, ax2) = new_figure(1, 2, aspect=1.0, sharex=True)
        if grid is not None:
            ax1.plot(grid[0], grid[1] * top, color=color(0), lw=1.0, label="fitted delay")
        ax1.errorbar(mjd, (result.residuals_s + sig - offset) * top, yerr=result.errors_s * top, fmt="o", ms=2.5,
                     color=color(1), elinewidth=0.7, label="residual + fitted delay")
        ax1.set_ylabel(f"delay - mean ({top_unit})")
        ax1.legend(loc="lower left", bbox_to_anchor=(0, 1.0), ncols=2, fontsize=6.5, borderaxespad=0.2)
        ax2.errorbar(mjd, result.residuals_s * rs, yerr=result.errors_s * rs, fmt="o", ms=2.5, color=color(2),
                     elinewidth=0.7)
        ax2.axhline(0, color="0.3", lw=0.6)
        ax2.set_ylabel(f"post-fit residual ({res_unit})")
        ax2.set_xlabel("MJD (TDB)")
    return save_figure(fig, path)
