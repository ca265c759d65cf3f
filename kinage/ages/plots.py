"""Figures of the ages stage: the age ladder and the cooling curves."""

import numpy as np

from ..report.style import color, new_figure, save_figure, style_context

__all__ = ["plot_age_ladder", "plot_cooling_curves"]

_ENV_STYLE = {"iron": "-", "accreted": "--", "gpe83": ":"}


def plot_age_ladder(rows, path, title=None):
    """Each age with its 68 % interval on one logarithmic axis.

    Parameters
    ----------
    rows : list of (label, interval-dict)
        Interval dicts with ``median``, ``lo68``, ``hi68`` (yr); rows with no
        median are listed as 'not available'.
    path : str or Path
        PNG to write.

    Returns
    -------
    Path
    """
    with style_context():
        fig, ax = new_figure(width="column", aspect=0.22 + 0.075 * max(len(rows), 1))
        ys = np.arange(len(rows))[::-1]
        finite = []
        for i, ((label, iv), y) in enumerate(zip(rows, ys)):
            if not iv or iv.get("median") is None:
                continue
            med = iv["median"]
            lo = iv.get("lo68") if iv.get("lo68") is not None else med
            hi = iv.get("hi68") if iv.get("hi68") is not None else med
            finite += [lo, hi, med]
            c = color(3) if label.startswith("cooling") else color(i if i < 3 else i + 1)
            ax.errorbar([med], [y], xerr=[[med - lo], [hi - med]], fmt="o", color=c, capsize=3, ms=4)
        ax.set_yticks(ys)
        ax.set_yticklabels([lab if (iv and iv.get("median") is not None) else f"{lab} (n/a)" for lab, iv in rows])
        ax.set_xscale("log")
        if finite:
            lo, hi = min(finite), max(finite)
            ax.set_xlim(lo / 3.0, hi * 3.0)
        else:
            ax.text(0.5, 0.5, "no ages available", transform=ax.transAxes, ha="center", va="center")
        ax.set_ylim(-0.7, len(rows) - 0.3)
        ax.set_xlabel("age (yr)")
        ax.grid(True, axis="x", which="both", alpha=0.25)
        if title:
            ax.set_title(title)
        return save_figure(fig, path)


def plot_cooling_curves(curves, path, *, temperature=None, kinematic=None, title=None):
    """Cooling curves T_inf(t) with the star's temperature and kinematic age marked.

    Parameters
    ----------
    curves : list of CoolingCurve
    path : str or Path
    temperature : tuple (value_K, error_K or None), optional
        The star's redshifted temperature: a horizontal band.
    kinematic : dict, optional
        Interval (yr) of the kinematic age: a vertical band and line.

    Returns
    -------
    Path
    """
    with style_context():
        fig, ax = new_figure(width="column", aspect=1.0)
        masses = sorted({c.mass_msun for c in curves})
        for c in curves:
            ci = masses.index(c.mass_msun)
            ax.plot(c.t_yr, c.T_inf_K, ls=_ENV_STYLE.get(c.envelope, "-"), color=color(ci), label=c.label)
        if temperature is not None and temperature[0] is not None:
            t, e = temperature
            if e:
                ax.axhspan(t - e, t + e, color="0.5", alpha=0.3, lw=0)
            ax.axhline(t, color="0.3", lw=0.8, label="star's temperature")
        if kinematic and kinematic.get("median") is not None:
            if kinematic.get("lo68") is not None:
                ax.axvspan(kinematic["lo68"], kinematic["hi68"], color=color(4), alpha=0.2, lw=0)
            ax.axvline(kinematic["median"], color=color(4), lw=0.9, label="kinematic age")
        ax.set_xscale("log")
        ax.set_yscale("log")
        ax.set_xlabel("age (yr)")
        ax.set_ylabel(r"redshifted temperature $T_\infty$ (K)")
        fig.legend(loc="outside lower center", fontsize=6, ncol=2)
        if title:
            ax.set_title(title)
        return save_figure(fig, path)
