"""Shared figure style: sizes for paper columns and a colour-blind-safe palette.

All kinage figures are drawn inside ``with style_context():``, made with
:func:`new_figure` and saved with
:func:`save_figure` (atomic write, PNG at 200 dpi).  The palette is the
Okabe & Ito (2008) set, distinguishable for the common forms of colour-vision
deficiency.
"""

import matplotlib

matplotlib.use("Agg")  # no display on the machines kinage runs on

import matplotlib.pyplot as plt  # noqa: E402

from ..io.results import atomic_path  # noqa: E402

__all__ = ["PALETTE", "COLUMN_WIDTH", "PAGE_WIDTH", "new_figure", "save_figure", "color", "style_context"]

#: Okabe & Ito (2008) colour-blind-safe palette
PALETTE = ("#0072B2", "#E69F00", "#009E73", "#D55E00", "#CC79A7", "#56B4E9", "#F0E442", "#000000")
COLUMN_WIDTH = 3.5  # inches: one column of a two-column journal
PAGE_WIDTH = 7.1  # inches: full page width

_RC = {
    "font.size": 8,
    "axes.labelsize": 8,
    "axes.titlesize": 8.5,
    "legend.fontsize": 7,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "axes.prop_cycle": matplotlib.cycler(color=PALETTE),
    "axes.grid": True,
    "grid.alpha": 0.25,
    "grid.linewidth": 0.5,
    "lines.linewidth": 1.2,
    "savefig.dpi": 200,
    "figure.dpi": 100,
    "legend.frameon": False,
}


def style_context():
    """Context manager applying kinage's rc settings; wrap all plotting in it."""
    return plt.rc_context(_RC)


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
    w = {"column": COLUMN_WIDTH, "page": PAGE_WIDTH}.get(width, width)
    with plt.rc_context(_RC):
        fig, axes = plt.subplots(nrows, ncols, figsize=(w, w * aspect), layout="constrained", **kwargs)
    return fig, axes


def save_figure(fig, path):
    """Save ``fig`` as PNG at ``path`` atomically and close it; returns the path."""
    with plt.rc_context(_RC), atomic_path(path) as tmp:
        fig.savefig(tmp, format="png")
    plt.close(fig)
    return path
