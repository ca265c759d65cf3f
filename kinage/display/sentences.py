"""Numbers in sentences: a value with its 68 % interval, rounded to the interval's precision by the Particle Data
Group rule (``kinage._rounding``, at most three significant figures), and ages in yr, kyr, Myr or Gyr by size.
Used by the stages' summaries and verdicts; tables use :mod:`.numbers`.
"""

import math

import numpy as np

from .._rounding import pdg_decimals

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


def _digits(x, d):
    if d <= 0:
        q = 10.0 ** (-d)
        return f"{round(x / q) * q:,.0f}"
    return f"{x:.{d}f}"


def format_interval(value, lo=None, hi=None, unit="", *, unbounded_above=False, max_sig=3, inner=False, bare=False):
    """A value with its 68 % interval, rounded to the interval's precision.

    Parameters
    ----------
    value : float or None
        Central value (in the unit of ``unit``).
    lo, hi : float or None
        68 % interval ends (same unit); ``None`` for an exact value.
    unit : str
    unbounded_above : bool
        The interval has no upper end (then ``hi`` is ignored).
    max_sig : int
        At most this many significant figures of the value.
    inner : bool
        ``'0.195 s, 68%: 0.167-0.216 s'`` (inside parentheses) instead of
        ``'0.195 s (68%: 0.167-0.216 s)'``.
    bare : bool
        The rounded value alone (``'0.195 s'``).

    Returns
    -------
    str
        E.g. ``'8,900 yr (68%: 7,200-11,200 yr)'``, ``'103 Myr (68%: above 41 Myr)'``, ``'12.0 kyr'``.
    """
    if value is None or not np.isfinite(value):
        return "n/a"
    u = f" {unit}" if unit else ""
    hi = None if unbounded_above else hi
    exp = int(math.floor(math.log10(abs(value)))) if value else 0
    d = max_sig - 1 - exp
    widths = [w for w in ((value - lo) if lo is not None else None, (hi - value) if hi is not None else None)
              if w is not None and np.isfinite(w) and w > 0]
    if widths:
        d = min(d, pdg_decimals(min(widths)))
    v = _digits(value, d)
    if bare:
        return v + u
    lo_t = _digits(lo, d) if lo is not None and np.isfinite(lo) else None
    hi_t = _digits(hi, d) if hi is not None and np.isfinite(hi) else None
    if unbounded_above and lo_t is not None:
        rng = f"above {lo_t}{u}"
    elif lo_t is not None and hi_t is not None and not lo_t == v == hi_t:
        # a range through or below zero reads 'from -250 to 290', never '-250-290'
        rng = f"{lo_t} to {hi_t}{u}" if lo_t.startswith("-") or hi_t.startswith("-") else f"{lo_t}-{hi_t}{u}"
    else:
        return v + u
    return f"{v}{u}, 68%: {rng}" if inner else f"{v}{u} (68%: {rng})"


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
