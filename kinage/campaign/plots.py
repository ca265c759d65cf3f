"""The birthplace forecast's figure: today's probabilities and their distribution after the campaign.

matplotlib is imported only when a figure is drawn; nothing here saves (``write_products`` does).
"""

import numpy as np

__all__ = ["birthplace_figure", "forecast_birthplace_figure"]


def birthplace_figure(bf, ax=None):
    """Two panels: each hypothesis's probability today and after the campaign; the chance of settling vs length.

    Left: for every hypothesis (candidate associations and the field) today's probability (diamond) and the
    distribution over the simulated outcomes after the campaign (violin; bar from the 5% to the 95% quantile,
    dot at the median), with the 0.9 line that counts as settled.  Right: the share of outcomes that settle
    the birthplace against campaign length (same cadence and TOA errors), the scenario's length marked.

    Parameters
    ----------
    bf : BirthplaceForecast
    ax : Axes or sequence of 2 Axes, optional

    Returns
    -------
    matplotlib.figure.Figure
    """
    from ..display.style import color, new_figure, style_context
    from .preposterior import DECISIVE

    with style_context():
        if ax is None:
            fig, axes = new_figure(2, 1, width="page", aspect=0.42, gridspec_kw={"width_ratios": [1.6, 1.0]})
        else:
            axes = list(np.atleast_1d(ax)) + [None]
            fig = axes[0].figure
        a_p, a_len = axes[0], axes[1]
        labels = list(bf.names) + ["field"]
        probs = bf.outcomes.probabilities
        x = np.arange(len(labels))
        parts = a_p.violinplot([probs[:, k] for k in x], positions=x, widths=0.7, showextrema=False)
        for body in parts["bodies"]:
            body.set_facecolor(color(0))
            body.set_alpha(0.35)
        q05, q50, q95 = np.quantile(probs, [0.05, 0.5, 0.95], axis=0)
        a_p.vlines(x, q05, q95, color=color(0), lw=2, label="after: 5%-95% of outcomes")
        a_p.plot(x, q50, "o", color=color(0), ms=4, label="after: median")
        a_p.plot(x, bf.p_now, "D", color=color(3), ms=6, label="today")
        a_p.axhline(DECISIVE, color="0.5", lw=0.8, ls=":", label=f"settled ({DECISIVE:g})")
        a_p.set_xticks(x, labels, rotation=20 if len(labels) > 3 else 0, ha="right" if len(labels) > 3 else "center")
        a_p.set_ylim(0, 1.32)  # room for the legend above the probabilities
        a_p.set_yticks(np.linspace(0, 1, 6))
        a_p.set_ylabel("probability of birth there")
        a_p.set_title(f"{bf.n_outcomes} simulated outcomes of the campaign", fontsize="medium")
        a_p.legend(loc="upper center", fontsize="small", ncols=2)
        if a_len is not None:
            rows = [s for s in bf.sweep if s["decisive_probability"] is not None]
            if rows:
                a_len.plot([s["length_yr"] for s in rows], [s["decisive_probability"] for s in rows], "o-",
                           color=color(2), label="same cadence")
            a_len.plot([bf.baseline_yr], [bf.decisive_probability], "D", color=color(3), ms=6, label="this plan")
            a_len.set_xlabel("years of timing")
            a_len.set_ylabel("chance of settling the birthplace")
            a_len.set_ylim(-0.02, 1.02)
            a_len.legend(loc="upper left", fontsize="small")
    return fig


def forecast_birthplace_figure(result, ax=None):
    """:func:`birthplace_figure` of a forecast made with the birthplace forecast (``ForecastResult.plot``)."""
    return birthplace_figure(result.birthplace, ax=ax)
