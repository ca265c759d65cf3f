"""Figures of the ages stage: the age ladder and the cooling curves.

Each function draws into a caller's Axes (``ax``) or a new kinage-style
figure and returns the matplotlib Figure; given a ``path`` it saves the PNG
there instead and returns the path (how :meth:`AgesResult.write_products`
uses them).  matplotlib is imported only when a figure is drawn.
"""

import numpy as np

from ..display.style import FAVOURED_COLOR, PALETTE, STAR_COLOR, figure_for, save_figure, style_context

__all__ = ["plot_age_ladder", "plot_cooling_curves", "age_axis_unit"]

_EV_PER_K = 8.617333262e-5  # Boltzmann constant in eV/K (CODATA 2018)
_ENV_STYLE = {"iron": "-", "accreted": "--", "gpe83": ":"}
_KINDS = {"kinematic": STAR_COLOR, "characteristic": PALETTE[1], "max.": PALETTE[1], "spin-down": PALETTE[1],
          "cooling": FAVOURED_COLOR}


def age_axis_unit(values_yr):
    """(scale, unit) for an age axis: kyr below 1 Myr, Myr above (median of the values)."""
    v = np.asarray([x for x in values_yr if x is not None and np.isfinite(x) and x > 0], float)
    if v.size == 0 or np.median(v) < 1e6:
        return 1e3, "kyr"
    return 1e6, "Myr"


def _plain_log_ticks(axis):
    """Log axis labelled in plain numbers (:func:`kinage.report.style.plain_log_ticks`)."""
    from ..display.style import plain_log_ticks

    plain_log_ticks(axis)


def _pretty(label):
    """Ladder labels in print notation: P/(2Ṗ), M☉."""
    return (label.replace("P/2Pdot", "P/(2Ṗ)").replace("P/(2 Pdot)", "P/(2Ṗ)").replace("Msun", "M☉")
            .replace("(n=", "(n = "))


def _temperature_text(t, e):
    """'kT∞ = 77 ± 5 eV, T∞ = (8.9 ± 0.6) × 10⁵ K' from values in K (the error may be None)."""
    from ..display.numbers import fmt_power, value_error

    if e:
        return f"kT∞ = {value_error(t * _EV_PER_K, e * _EV_PER_K, 'eV')}, T∞ = {value_error(t, e, 'K')}"
    return f"kT∞ = {fmt_power(t * _EV_PER_K, 3)} eV, T∞ = {fmt_power(t, 3)} K"


def _finish(fig, path):
    if path is None:
        return fig
    return save_figure(fig, path)


def plot_age_ladder(rows, path=None, title=None, ax=None):
    """Each age with its 68 % interval on one logarithmic axis.

    Parameters
    ----------
    rows : list of (label, interval-dict)
        Interval dicts with ``median``, ``lo68``, ``hi68`` (yr); rows with no
        median are listed as 'not available'.
    path : str or Path, optional
        PNG to write (then the path is returned).
    ax : matplotlib Axes, optional

    Returns
    -------
    Figure, or Path when ``path`` is given
    """
    with style_context():
        fig, ax = figure_for(ax, width="column", aspect=0.22 + 0.075 * max(len(rows), 1))
        ys = np.arange(len(rows))[::-1]
        finite = [v for _, iv in rows if iv for v in (iv.get("lo68"), iv.get("hi68"), iv.get("median"))
                  if v is not None]
        finite += [2.5 * iv["lo68"] for _, iv in rows if iv and iv.get("unbounded_above") and iv.get("lo68")]
        scale, unit = age_axis_unit([iv.get("median") for _, iv in rows if iv])
        for (label, iv), y in zip(rows, ys):
            if not iv or (iv.get("median") is None and not (iv.get("unbounded_above") and iv.get("lo68"))):
                continue
            med = iv["median"]
            lo = iv.get("lo68") if iv.get("lo68") is not None else med
            hi = iv.get("hi68") if iv.get("hi68") is not None else (med if med is not None else lo)
            c = next((col for key, col in _KINDS.items() if label.startswith(key)), "0.3")
            if iv.get("unbounded_above"):
                # open above (Pdot consistent with zero): the 68% lower end with an arrow towards older ages
                ax.errorbar([lo / scale], [y], xerr=[[0.0], [lo / scale * 1.5]], xlolims=True, fmt="none", color=c,
                            capsize=3)
                if med is not None and np.isfinite(med):
                    ax.plot([med / scale], [y], "o", color=c, ms=4)
                continue
            ax.errorbar([med / scale], [y], xerr=[[(med - lo) / scale], [(hi - med) / scale]], fmt="o", color=c,
                        capsize=3, ms=4)
        ax.set_yticks(ys)
        ax.set_yticklabels([_pretty(lab) if (iv and (iv.get("median") is not None or iv.get("unbounded_above")))
                            else f"{_pretty(lab)} (n/a)" for lab, iv in rows])
        ax.set_xscale("log")
        if finite:
            ax.set_xlim(min(finite) / scale / 3.0, max(finite) / scale * 3.0)
            _plain_log_ticks(ax.xaxis)
        else:
            ax.text(0.5, 0.5, "no ages available", transform=ax.transAxes, ha="center", va="center")
        ax.set_ylim(-0.7, len(rows) - 0.3)
        ax.set_xlabel(f"age ({unit})")
        ax.grid(True, axis="x", which="both", alpha=0.25)
        if title:
            ax.set_title(title)
        return _finish(fig, path)


def plot_cooling_curves(curves, path=None, *, temperature=None, kinematic=None, kinematic_name="kinematic age",
                        title=None, ax=None,
                        temperature_label=None):
    """Cooling curves T_inf(t) with the star as a point at its kinematic age.

    Parameters
    ----------
    curves : list of CoolingCurve
    path : str or Path, optional
        PNG to write (then the path is returned).
    temperature : tuple (value_K, error_K or None), optional
        The star's redshifted temperature: a horizontal band (68%) and, with
        a kinematic age, the y error bar of the star's point.
    kinematic : dict, optional
        Interval (yr) of the kinematic age: the star's point is drawn at its
        median with the 68% interval as x error bar.
    temperature_label : str, optional
        The temperature as the scenario gave it (e.g. '74 ± 3 eV') for the legend.
    ax : matplotlib Axes, optional

    Returns
    -------
    Figure, or Path when ``path`` is given
    """
    with style_context():
        fig, ax = figure_for(ax, width="column", aspect=1.0)
        masses = sorted({c.mass_msun for c in curves})
        mass_colours = (PALETTE[2], PALETTE[1], PALETTE[4], PALETTE[5])
        scale, unit = 1e3, "kyr"
        for c in curves:
            ci = masses.index(c.mass_msun)
            ax.plot(c.t_yr / scale, c.T_inf_K, ls=_ENV_STYLE.get(c.envelope, "-"),
                    color=mass_colours[ci % len(mass_colours)], label=c.label.replace("Msun", "M☉"))
        have_t = temperature is not None and temperature[0] is not None
        have_k = bool(kinematic) and kinematic.get("median") is not None
        n_curves = len(ax.get_legend_handles_labels()[0])
        if have_t:
            t, e = temperature
            if temperature_label is None:
                temperature_label = _temperature_text(t, e)
            if e:
                ax.axhspan(t - e, t + e, color="0.5", alpha=0.2, lw=0,
                           label=f"star's temperature, {temperature_label} (68%)")
            elif not have_k:
                ax.axhline(t, color="0.3", lw=0.8, label=f"star's temperature, {temperature_label}")
        if have_k:
            k = kinematic
            xm = k["median"] / scale
            xerr = None
            if k.get("lo68") is not None and k.get("hi68") is not None:
                xerr = [[xm - k["lo68"] / scale], [k["hi68"] / scale - xm]]
            if have_t:
                t, e = temperature
                ax.errorbar([xm], [t], xerr=xerr, yerr=[[e], [e]] if e else None, fmt="o", ms=5, color=STAR_COLOR,
                            mec="k", mew=0.5, capsize=3, zorder=5, label=f"star at its {kinematic_name} (68%)")
            else:
                ax.axvline(xm, color=STAR_COLOR, lw=0.9, label=kinematic_name)
        ax.set_xscale("log")
        ax.set_yscale("log")
        _plain_log_ticks(ax.xaxis)
        ax.set_xlabel(f"age ({unit})")
        ax.set_ylabel(r"redshifted surface temperature $T_\infty$ (K)")
        handles, labels = ax.get_legend_handles_labels()
        # the curves inside the axes, lower left (young and cold: no curve runs there); the star below the axes
        ax.legend(handles[:n_curves], labels[:n_curves], loc="lower left", fontsize=5.5, ncol=2,
                  title="envelope, mass", title_fontsize=5.5)
        if len(handles) > n_curves:
            fig.legend(handles[n_curves:], labels[n_curves:], loc="outside lower center", fontsize=6, ncol=1)
        if title:
            ax.set_title(title, fontsize=7.5)
        return _finish(fig, path)
