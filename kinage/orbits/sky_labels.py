"""Place a name beside its marker on the sky map without covering the tracks it annotates.

Each label tries a few positions around its marker (right/left, above/below,
centred above/below); the one whose text box stays farthest from the drawn
track points wins; every position at least :data:`CLEAR_PT` clear of them counts as
good as any other, so the first such in order (right and below first) is taken,
and a position whose box leaves the map is taken only when nothing else fits.  Text size is
estimated from the font size (about 0.55 em per character: common practice,
no source), enough to keep a label off a track without drawing it twice.
"""

import numpy as np

__all__ = ["label_position", "CLEAR_PT"]

#: distance from every track point (points) at which a label counts as clear of the tracks
CLEAR_PT = 8.0

#: (dx, dy) offset in points, horizontal and vertical alignment
_CANDIDATES = ((4, -4, "left", "top"), (4, 4, "left", "bottom"), (-4, -4, "right", "top"),
               (-4, 4, "right", "bottom"), (0, 7, "center", "bottom"), (0, -7, "center", "top"))


def _box(dx, dy, ha, va, width, height):
    """Sample points of a text box in points relative to the anchor."""
    x0 = dx if ha == "left" else dx - width if ha == "right" else dx - width / 2
    y0 = dy if va == "bottom" else dy - height
    xs, ys = np.meshgrid(np.linspace(x0, x0 + width, 7), np.linspace(y0, y0 + height, 3))
    return xs.ravel(), ys.ravel()


def label_position(ax, x0, y0, text, fontsize, points, xlim, ylim):
    """The offset (points) and alignment that keep ``text`` at (x0, y0) farthest from ``points``.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        Its size on the figure converts points to data units.
    x0, y0 : float
        The marker, data units.
    text : str
    fontsize : float, points
    points : (ndarray, ndarray)
        x and y of the drawn track points, data units.
    xlim, ylim : (float, float)
        The limits the map will have (the x axis may run right to left).

    Returns
    -------
    dict
        ``xytext``, ``ha``, ``va`` for :meth:`~matplotlib.axes.Axes.annotate` (offset points).
    """
    pos = ax.get_position()
    w_pt = max(pos.width * ax.figure.get_figwidth() * 72.0, 1.0)
    h_pt = max(pos.height * ax.figure.get_figheight() * 72.0, 1.0)
    sx, sy = (xlim[1] - xlim[0]) / w_pt, (ylim[1] - ylim[0]) / h_pt  # data units per point (sx < 0: reversed)
    px, py = (np.asarray(a, float).ravel() for a in points)
    ok = np.isfinite(px) & np.isfinite(py)
    tx, ty = (px[ok] - x0) / sx, (py[ok] - y0) / sy  # track points in points from the anchor
    width, height = 0.55 * fontsize * len(text), fontsize
    left, right = sorted(((xlim[0] - x0) / sx, (xlim[1] - x0) / sx))
    bottom, top = sorted(((ylim[0] - y0) / sy, (ylim[1] - y0) / sy))
    best, best_score = _CANDIDATES[0], -np.inf
    for cand in _CANDIDATES:
        bx, by = _box(*cand, width, height)
        inside = (bx.min() >= left) and (bx.max() <= right) and (by.min() >= bottom) and (by.max() <= top)
        score = (np.min(np.hypot(bx[:, None] - tx[None, :], by[:, None] - ty[None, :])) if tx.size else np.inf)
        score = min(score, CLEAR_PT) - (0.0 if inside else 1e6)  # clear of the tracks is enough: keep the order
        if score > best_score + 1e-9:
            best, best_score = cand, score
    dx, dy, ha, va = best
    return {"xytext": (dx, dy), "ha": ha, "va": va}
