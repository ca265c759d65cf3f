"""Shared figure style: sizes for paper columns and a colour-blind-safe palette.

All kinage figures are drawn inside ``with style_context():``, made with
:func:`new_figure` (or drawn into a caller's Axes, :func:`figure_for`) and saved with
:func:`save_figure` (atomic write, PNG at 200 dpi).  matplotlib is imported only
when a figure is drawn, and its backend is never chosen here (without a display
matplotlib uses its non-interactive default).  The palette is the
Okabe & Ito (2008) set, distinguishable for the common forms of colour-vision
deficiency.
"""

from ..io.atomic import atomic_path

__all__ = ["PALETTE", "COLUMN_WIDTH", "PAGE_WIDTH", "new_figure", "save_figure", "color", "style_context",
           "figure_for", "plain_log_ticks", "STAR_COLOR", "FAVOURED_COLOR", "OTHER_COLOR"]

#: Okabe & Ito (2008) colour-blind-safe palette
PALETTE = ("#0072B2", "#E69F00", "#009E73", "#D55E00", "#CC79A7", "#56B4E9", "#F0E442", "#000000")
COLUMN_WIDTH = 3.5  # inches: one column of a two-column journal
PAGE_WIDTH = 7.1  # inches: full page width

#: the star is always blue, the favoured association vermilion; other associations take the remaining colours
STAR_COLOR = PALETTE[0]
FAVOURED_COLOR = PALETTE[3]
OTHER_COLOR = "0.6"

_RC = {
    "font.size": 8,
    "axes.labelsize": 8,
    "axes.titlesize": 8.5,
    "legend.fontsize": 7,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "axes.grid": True,
    "grid.alpha": 0.25,
    "grid.linewidth": 0.5,
    "lines.linewidth": 1.2,
    "savefig.dpi": 200,
    "figure.dpi": 100,
    "legend.frameon": False,
}


def _rc():
    from cycler import cycler

    return dict(_RC, **{"axes.prop_cycle": cycler(color=PALETTE)})


def style_context():
    """Context manager applying kinage's rc settings; wrap all plotting in it."""
    import matplotlib.pyplot as plt

    return plt.rc_context(_rc())


def color(i):
    """The i-th palette colour (cycles)."""
    return PALETTE[i % len(PALETTE)]


def new_figure(ncols=1, nrows=1, width="column", aspect=0.75, **kwargs):
    """A figure and axes in kinage style.

    Parameters
    ----------
    ncols, nrows : int
    width : {'column', 'page'} or float
        Figure width (inches when a number).
    aspect : float
        Height / width of the whole figure.

    Returns
    -------
    fig, axes
    """
    import matplotlib.pyplot as plt

    w = {"column": COLUMN_WIDTH, "page": PAGE_WIDTH}.get(width, width)
    with plt.rc_context(_rc()):
        fig, axes = plt.subplots(nrows, ncols, figsize=(w, w * aspect), layout="constrained", **kwargs)
    return fig, axes


def save_figure(fig, path):
    """Save ``fig`` as PNG at ``path`` atomically and close it; returns the path."""
    import matplotlib.pyplot as plt

    with plt.rc_context(_rc()), atomic_path(path) as tmp:
        fig.savefig(tmp, format="png")
    plt.close(fig)
    return path


def figure_for(ax=None, **kwargs):
    """``(fig, ax)``: the figure of a given Axes, or a new kinage-style figure (``new_figure(**kwargs)``)."""
    if ax is not None:
        return ax.figure, ax
    return new_figure(**kwargs)


def plain_log_ticks(axis):
    """Label a log axis in plain numbers (1, 2, 5 x 10^k over short ranges), without crowded minor labels.

    Readers take '400' faster than '4 x 10^2'; beyond 10^5 or below 10^-3 the labels
    keep the power of ten.
    """
    import numpy as np
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    lim = axis.axes.get_xlim() if axis.axis_name == "x" else axis.axes.get_ylim()  # applies pending autoscaling
    lo, hi = sorted(lim)
    decades = np.log10(max(hi, 1e-300) / max(lo, 1e-300))
    subs = (1.0, 2.0, 5.0) if decades < 3 else (1.0,)
    k = np.arange(np.floor(np.log10(max(lo, 1e-300))), np.ceil(np.log10(max(hi, 1e-300))) + 1)
    inside = [m * 10.0**e for e in k for m in subs if lo <= m * 10.0**e <= hi]
    if len(inside) < 2:  # a narrow range: label every integer multiple
        subs = tuple(float(m) for m in range(1, 10))
    axis.set_major_locator(LogLocator(base=10, subs=subs))

    def _label(v, _):
        if v <= 0:
            return ""
        if 1e-3 <= v < 1e5:
            return f"{v:g}"
        e = int(np.floor(np.log10(v) + 1e-9))
        m = v / 10.0**e
        return f"$10^{{{e}}}$" if abs(m - 1) < 1e-6 else f"${m:g}\\times10^{{{e}}}$"

    axis.set_major_formatter(FuncFormatter(_label))
    axis.set_minor_formatter(NullFormatter())
