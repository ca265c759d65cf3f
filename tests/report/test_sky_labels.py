"""Names on the sky map sit beside their markers without covering the tracks they annotate."""

import matplotlib

matplotlib.use("Agg")  # tests only; kinage itself never selects a backend

import numpy as np  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

from kinage.orbits.sky_labels import label_position  # noqa: E402


def _text_box(ax, x0, y0, text, place):
    ann = ax.annotate(text, (x0, y0), textcoords="offset points", fontsize=6, **place)
    ax.figure.canvas.draw()
    return ann.get_window_extent()


def test_label_leaves_the_track_it_annotates():
    # a track running from the marker to the lower right (where the old fixed offset put every label): the
    # name must go elsewhere; labels off the data they annotate are common cartographic practice (no source)
    fig = Figure(figsize=(5, 5), dpi=100)
    ax = fig.add_subplot()
    xlim, ylim = (10.0, -10.0), (-10.0, 10.0)  # longitude grows to the left, as on the sky map
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    t = np.linspace(0.0, 8.0, 400)
    track = (-t, -0.6 * t)  # from (0, 0) to the lower right on screen
    ax.plot(*track)
    place = label_position(ax, 0.0, 0.0, "Brant Group", 6.0, track, xlim, ylim)
    box = _text_box(ax, 0.0, 0.0, "Brant Group", place)
    pts = ax.transData.transform(np.column_stack(track))
    inside = (pts[:, 0] >= box.x0) & (pts[:, 0] <= box.x1) & (pts[:, 1] >= box.y0) & (pts[:, 1] <= box.y1)
    assert not inside.any(), place
    # with nothing nearby the usual place (right of and below the marker) is kept
    assert label_position(ax, 5.0, 5.0, "Brant Group", 6.0, track, xlim, ylim)["xytext"] == (4, -4)
