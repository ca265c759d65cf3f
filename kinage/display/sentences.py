"""Numbers in sentences: a value with its 68 % interval, rounded to the interval's precision by the Particle Data
Group rule (``kinage._rounding``, at most three significant figures), and ages in yr, kyr, Myr or Gyr by size.
Used by the stages' summaries and verdicts; tables use :mod:`.numbers`.
"""

import math

import numpy as np

from .._rounding import format_interval

__all__ = ["format_age", "format_interval", "format_age_interval"]


def format_age(yr, digits=3):
    """An age in yr as short text with ``digits`` significant figures: '840 yr', '8.92 kyr', '1.3 Myr'."""
    if yr is None or not np.isfinite(yr):
        return "n/a"
    scale, unit = _age_unit(yr)
    return f"{float(f'{yr / scale:.{digits}g}'):g} {unit}"


def _age_unit(yr):
    """(scale, unit) of :func:`format_age` for an age in yr: yr below 1,000 yr, then kyr, Myr, Gyr."""
    for scale, unit in ((1e9, "Gyr"), (1e6, "Myr"), (1e3, "kyr")):
        if yr >= scale:
            return scale, unit
    return 1.0, "yr"


def format_age_interval(iv, value=None, *, inner=False, bare=False):
    """An age interval dict (yr) as text in yr/kyr/Myr/Gyr, see :func:`format_interval`.

    ``value`` replaces the interval's median as the quoted value (e.g. a
    nominal P/(2 Pdot)); an exact age (no interval) gets three significant
    figures; ``bare`` gives the rounded value alone, without the interval.
    """
    iv = iv or {}
    v = iv.get("median") if value is None else value
    if v is None or not np.isfinite(v) or v <= 0:
        return "n/a"
    scale, unit = _age_unit(v)
    sc = lambda x: None if x is None else x / scale  # noqa: E731
    return format_interval(v / scale, sc(iv.get("lo68")), sc(iv.get("hi68")), unit,
                           unbounded_above=bool(iv.get("unbounded_above")), inner=inner, bare=bare)
