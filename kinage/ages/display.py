"""How an ages result shows itself: its key numbers, its table and its two figures (ladder, cooling curves)."""

import importlib

from ..display.protocol import _age, adapter as _adapter, draw

__all__ = []


@_adapter
def _adapt_ages_ladder(result, ax=None):
    plots = importlib.import_module("kinage.ages.plots")
    return draw(plots.plot_age_ladder, result.ladder_rows(), ax=ax, title=f"Ages of {result.star}")


@_adapter
def _adapt_ages_cooling(result, ax=None):
    from ..errors import InputError

    plots = importlib.import_module("kinage.ages.plots")
    c = result.cooling
    if c is None:
        raise InputError("plot kind", "no cooling age was computed (no temperature or luminosity)")
    temp = (c.observed, c.observed_error) if c.quantity == "temperature" else None
    return draw(plots.plot_cooling_curves, c.curves, ax=ax, temperature=temp,
                kinematic=result.kinematic.get("interval"),
                title=f"Cooling curves ({c.model}) and {result.star}")


def _ages_numbers(r):
    kin = (r.kinematic or {}).get("interval") or {}
    cool = r.cooling.pooled if r.cooling is not None else {}
    return [("star", r.star), ("kinematic age", _age(kin.get("median"))),
            ("characteristic age", _age(r.values.get("characteristic_age_yr"))),
            ("cooling age", _age(cool.get("median")))]


def _ages_table(r):
    import astropy.units as u
    import numpy as np

    rows = r.ladder_rows()
    cols = {"age": [lab for lab, _ in rows]}
    for k in ("median", "lo68", "hi68"):
        cols[k] = np.array([np.nan if (iv is None or iv.get(k) is None) else iv[k] for _, iv in rows]) * u.yr
    return cols
