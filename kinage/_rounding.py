"""How printed numbers are rounded: one rule for every table, sentence, figure and terminal line.

A value with an error is rounded to the error's precision, the error by the
Particle Data Group rule (:func:`pdg_decimals`); a value with a 68 % interval
to the narrower half-width's precision, at most three significant figures
(:func:`format_interval`).  Tables, sentences, figure labels and the terminal
all go through these functions, so one quantity prints one way everywhere.
An interval keeps its sign: a bound that is not zero never prints as "0".
"""

import math

__all__ = ["pdg_decimals", "round_to_error", "value_error", "format_interval", "digits_text", "percent_text"]


def pdg_decimals(err, sig=None):
    """Decimals that show an error ``err`` rounded by the Particle Data Group rule (may be negative).

    The three leading digits of the error decide: 100-354 keep two significant
    figures, 355-949 one, 950-999 round up to 1000 and keep two (Particle Data
    Group, Review of Particle Physics, Introduction: rounding).  ``sig`` forces
    a number of significant figures instead.

    Parameters
    ----------
    err : float, > 0
    sig : int, optional

    Returns
    -------
    int
        E.g. 2 for 0.017 (-> '0.017'), 0 for 4.8 (-> '5'), -1 for 270 (-> '270').
    """
    exp = int(math.floor(math.log10(abs(err))))
    if sig is not None:
        return sig - 1 - exp
    lead = int(abs(err) / 10.0 ** (exp - 2))
    if lead < 355:
        return 1 - exp
    return -exp  # 355-949: one figure; 950-999 round up to 1000, i.e. two figures of the next decade


def _fmt(x, digits=3):
    if x is None or not math.isfinite(x):
        return "n/a"
    if x == 0:
        return "0"
    return f"{x:.{digits}g}"


def round_to_error(value, error, sig=None):
    """(value text, error text) rounded to the error's precision (Particle Data Group rule by default).

    Without a usable error the value alone with three significant figures and ``None``.
    """
    if error is None or not math.isfinite(error) or error <= 0:
        return _fmt(value), None
    d = pdg_decimals(error, sig)
    if abs(value) >= 1e5 or error >= 1e5 or (abs(value) < 1e-3 and error < 1e-3 and value != 0):
        exp = int(math.floor(math.log10(max(abs(value), error))))
        scale = 10.0**exp
        dd = max(pdg_decimals(error / scale, sig), 0)
        return f"{value / scale:.{dd}f}e{exp:+d}", f"{error / scale:.{dd}f}e{exp:+d}"
    if d <= 0:
        q = 10.0 ** (-d)
        return digits_text(value, d).replace(",", ""), f"{round(error / q) * q:.0f}"
    return digits_text(value, d), f"{error:.{d}f}"


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def value_error(value, error, unit="", sig=None):
    """``'12.3 ± 0.4 mas/yr'``; without an error the value alone with 3 significant figures."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "n/a"
    v, e = round_to_error(float(value), None if error is None else float(error), sig)
    tail = f" {unit}" if unit else ""
    if e is not None and "e" in v and "e" in e:
        (mv, ev), (me, _) = v.split("e"), e.split("e")
        return f"({mv} ± {me}) × 10{str(int(ev)).translate(_SUPERSCRIPT)}{tail}"
    return f"{v} ± {e}{tail}" if e is not None else f"{v}{tail}"


def digits_text(x, d):
    """``x`` rounded to ``d`` decimals (negative: tens, hundreds...), thousands separated, never '-0'."""
    if d <= 0:
        q = 10.0 ** (-d)
        txt = f"{math.copysign(math.floor(abs(x) / q + 0.5), x) * q:,.0f}"  # halves away from zero: 45 -> 50
    else:
        txt = f"{x:.{d}f}"
    return txt[1:] if txt.startswith("-") and float(txt.replace(",", "")) == 0 else txt


def _bound_text(x, d):
    """An interval end at ``d`` decimals; an end that is not zero keeps two significant figures and its sign."""
    txt = digits_text(x, d)
    if x != 0 and float(txt.replace(",", "")) == 0:
        txt = digits_text(x, pdg_decimals(abs(x), sig=2))
    return txt


def format_interval(value, lo=None, hi=None, unit="", *, unbounded_above=False, max_sig=3, inner=False, bare=False):
    """A value with its 68 % interval, rounded to the interval's precision.

    The value and both ends get the decimals of the narrower half-width by
    the Particle Data Group rule, never fewer than two and at most ``max_sig``
    significant figures of the value.  An end that would round to zero without being zero keeps two
    significant figures and its sign, and a range through zero reads
    "from -3.5 to 100", never "0-100".

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
        E.g. ``'8,900 yr (68%: 7,200-11,200 yr)'``, ``'103 Myr (68%: above 41 Myr)'``, ``'12.0 kyr'``,
        ``'50 km/s (68%: -3.5 to 100 km/s)'``.
    """
    if value is None or not math.isfinite(value):
        return "n/a"
    u = f" {unit}" if unit else ""
    hi = None if unbounded_above else hi
    exp = int(math.floor(math.log10(abs(value)))) if value else 0
    d = max_sig - 1 - exp
    widths = [w for w in ((value - lo) if lo is not None else None, (hi - value) if hi is not None else None)
              if w is not None and math.isfinite(w) and w > 0]
    if widths:
        d_err = pdg_decimals(min(widths))
        if abs(value) > min(widths):  # never fewer than two significant figures of the value
            d_err = max(d_err, 1 - exp)
        d = min(d, d_err)
    v = digits_text(value, d)
    if bare:
        return v + u
    lo_t = _bound_text(lo, d) if lo is not None and math.isfinite(lo) else None
    hi_t = _bound_text(hi, d) if hi is not None and math.isfinite(hi) else None
    if unbounded_above and lo_t is not None:
        rng = f"above {lo_t}{u}"
    elif lo_t is not None and hi_t is not None and not lo_t == v == hi_t:
        # a range through or below zero reads 'from -250 to 290', never '-250-290'
        rng = f"{lo_t} to {hi_t}{u}" if lo_t.startswith("-") or hi_t.startswith("-") else f"{lo_t}-{hi_t}{u}"
    else:
        return v + u
    return f"{v}{u}, 68%: {rng}" if inner else f"{v}{u} (68%: {rng})"


def percent_text(x, err=None):
    """A fraction as a percentage rounded to its error: '67.2 ± 2.7%', '< 0.1%', '> 99.9%', '6.2%'.

    The same text in tables, figure labels and sentences.  Without an error two significant figures (below
    10%) or whole percent; an error below what a percentage shows gives the value alone to 0.1%.
    """
    if x is None:
        return "n/a"
    p = 100.0 * x
    if p < 0.1:
        return "< 0.1%" if p > 0 else "0%"
    if p > 99.9:
        return "> 99.9%" if p < 100 or err else "100%"
    if err and 100.0 * err < 0.05:
        return f"{p:.1f}%"
    if err:
        return value_error(p, 100.0 * err, "%").replace(" %", "%")
    return f"{p:.2g}%" if p < 10 else f"{p:.0f}%"
