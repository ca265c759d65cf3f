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


def residual_figure(result, path):
    """Residuals against time with the fitted astrometric signature; saves a PNG.

    Top: residuals with the fitted astrometric delay added back (points) and
    that delay on a fine grid (line).  Bottom: post-fit residuals.

    Parameters
    ----------
    result : FitResult
    path : str or Path
    """
    mjd = result.mjd
    res_us = result.residuals_s * 1e6
    err_us = result.errors_s * 1e6
    sig_us = result.signature_s * 1e6
    with style_context():
        fig, (ax1, ax2) = new_figure(1, 2, aspect=1.0, sharex=True)
        if result.signature_grid is not None:
            gm, gs = result.signature_grid
            ax1.plot(gm, gs * 1e6, color=color(0), lw=1.0, label="fitted astrometric delay")
        ax1.errorbar(mjd, res_us + sig_us, yerr=err_us, fmt="o", ms=2.5, color=color(1), elinewidth=0.7,
                     label="residual + astrometric delay")
        ax1.set_ylabel("delay (us)")
        ax1.legend(loc="best")
        ax2.errorbar(mjd, res_us, yerr=err_us, fmt="o", ms=2.5, color=color(2), elinewidth=0.7)
        ax2.axhline(0, color="0.3", lw=0.6)
        ax2.set_ylabel("post-fit residual (us)")
        ax2.set_xlabel("MJD (TDB)")
    return save_figure(fig, path)
