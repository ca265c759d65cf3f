"""Printed numbers: a value with its error, intervals, ages and durations in the unit their size calls for.

Rules (the usual ones of a results table): a value with an error is rounded to the error's precision, the error
by the Particle Data Group rule (``kinage._rounding``); ages and times choose yr/kyr/Myr (ns/µs/ms/s) from their
size.  Used by the stages' key numbers and figures and by the report; knows no stage.
"""

import math

from .._rounding import pdg_decimals

__all__ = ["fmt", "fmt_interval", "value_error", "fmt_age", "fmt_age_interval", "fmt_duration_s", "round_to_error",
           "fmt_power", "fit_constrained"]

_MAS_PER_ARCSEC = 1000.0


def _sig_round(x, sig=2):
    if x == 0 or not math.isfinite(x):
        return x
    return round(x, sig - 1 - int(math.floor(math.log10(abs(x)))))


_decimals_for = pdg_decimals  # one rounding rule for every printed number (kinage._rounding)


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def _power_of_ten(exp):
    return "10" + str(int(exp)).translate(_SUPERSCRIPT)


def fmt_power(x, digits=2):
    """``x`` with ``digits`` significant figures as ``'2.8 × 10¹¹'`` (plain between 0.001 and 10^5).

    The printed form of scientific notation (the ``e+11`` of code is not for readers).
    """
    if x is None or not math.isfinite(x):
        return "n/a"
    if x == 0:
        return "0"
    if 1e-3 <= abs(x) < 1e5:
        return _g(_sig_round(x, digits), digits) if abs(x) < 10 ** digits else f"{_sig_round(x, digits):.0f}"
    exp = int(math.floor(math.log10(abs(x))))
    mant = _sig_round(x / 10.0**exp, digits)
    if abs(mant) >= 10:  # 9.96 -> 10.0: carry into the exponent
        mant, exp = mant / 10.0, exp + 1
    return f"{mant:.{max(digits - 1, 0)}f} × {_power_of_ten(exp)}"


def _e_to_power(v, e, tail):
    """'1.23e+06', '0.40e+06' -> '(1.23 ± 0.40) × 10⁶'."""
    (mv, ev), (me, _) = v.split("e"), e.split("e")
    return f"({mv} ± {me}) × {_power_of_ten(int(ev))}{tail}"


def round_to_error(value, error, sig=None):
    """(value text, error text) rounded to the error's precision (Particle Data Group rule by default)."""
    if error is None or not math.isfinite(error) or error <= 0:
        return fmt(value), None
    d = _decimals_for(error, sig)
    if abs(value) >= 1e5 or error >= 1e5 or (abs(value) < 1e-3 and error < 1e-3 and value != 0):
        exp = int(math.floor(math.log10(max(abs(value), error))))
        scale = 10.0**exp
        dd = max(_decimals_for(error / scale, sig), 0)
        return f"{value / scale:.{dd}f}e{exp:+d}", f"{error / scale:.{dd}f}e{exp:+d}"
    if d <= 0:
        q = 10.0 ** (-d)
        return f"{round(value / q) * q:.0f}", f"{round(error / q) * q:.0f}"
    return f"{value:.{d}f}", f"{error:.{d}f}"


def value_error(value, error, unit="", sig=None):
    """``'12.3 ± 0.4 mas/yr'``; without an error the value alone with 3 significant figures."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "n/a"
    v, e = round_to_error(float(value), None if error is None else float(error), sig)
    tail = f" {unit}" if unit else ""
    if e is not None and "e" in v and "e" in e:
        return _e_to_power(v, e, tail)
    return f"{v} ± {e}{tail}" if e is not None else f"{v}{tail}"


def fmt(x, digits=3):
    """A number with ``digits`` significant figures; None as 'n/a'."""
    if x is None:
        return "n/a"
    if isinstance(x, bool):
        return "yes" if x else "no"
    if isinstance(x, int):
        return str(x)
    if isinstance(x, float):
        if not math.isfinite(x):
            return "n/a"
        if x == 0:
            return "0"
        if 99.5 <= abs(x) < 1e5:
            return f"{x:.0f}"
        if 1e-3 <= abs(x) < 99.5:
            return f"{x:.{digits}g}"
        return fmt_power(x, digits)
    return str(x)


def _age_unit(yr):
    a = abs(yr)
    if a >= 1e9:
        return 1e9, "Gyr"
    if a >= 1e6:
        return 1e6, "Myr"
    if a >= 1e3:
        return 1e3, "kyr"
    return 1.0, "yr"


def fmt_age(yr, digits=3):
    """An age in yr as text in yr, kyr, Myr or Gyr."""
    if yr is None or not math.isfinite(yr):
        return "n/a"
    s, unit = _age_unit(yr)
    return f"{_g(yr / s, digits)} {unit}"


def _g(x, digits):
    if x == 0:
        return "0"
    if abs(x) >= 10 ** digits:
        return f"{x:.0f}"
    return f"{x:.{digits}g}"


def fmt_interval(d, unit=""):
    """``median (68%: lo–hi)`` from an interval dictionary, rounded to the interval's width."""
    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    med, lo, hi = d["median"], d.get("lo68"), d.get("hi68")
    tail = f" {unit}" if unit else ""
    if lo is None or hi is None:
        return fmt(med) + tail
    width = min(abs(med - lo), abs(hi - med)) or max(abs(med - lo), abs(hi - med))
    if not width:
        return fmt(med) + tail
    # one decimal place for the median and both bounds: the narrower half-width's, by the Particle Data Group
    # rule, but never fewer than two significant figures of the median
    d_ = _decimals_for(width)
    if abs(med) > width:
        d_ = max(d_, 1 - int(math.floor(math.log10(abs(med)))))
    dash = " to " if min(lo, hi) < 0 else "–"  # '-3–2' would read as a range from -3 to -2
    if abs(med) >= 1e5 or abs(hi) >= 1e5:
        return f"{fmt(_sig_round(med, 3))} (68%: {fmt(_sig_round(lo, 2))}{dash}{fmt(_sig_round(hi, 2))}){tail}"
    return f"{_fixed(med, d_)} (68%: {_fixed(lo, d_)}{dash}{_fixed(hi, d_)}){tail}"


def _fixed(x, decimals):
    """``x`` rounded to ``decimals`` places (negative: to tens, hundreds...), without a '-0'."""
    if decimals <= 0:
        q = 10.0 ** (-decimals)
        txt = f"{round(x / q) * q:.0f}"
    else:
        txt = f"{x:.{decimals}f}"
    return txt[1:] if txt.startswith("-") and float(txt) == 0 else txt


def fmt_age_interval(d):
    """An age interval (yr) in one unit chosen from the median: ``'1.30 Myr (68%: 1.1–1.5 Myr)'``."""
    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    s, unit = _age_unit(d["median"])
    scaled = {k: (None if d.get(k) is None else d[k] / s) for k in ("median", "lo68", "hi68")}
    return fmt_interval(scaled, unit)


def fmt_duration_s(sec, error=None):
    """A time in seconds in the unit its size (or its error's) calls for: ns, µs, ms or s."""
    if sec is None or not math.isfinite(sec):
        return "n/a"
    size = abs(error) if error else abs(sec)
    for scale, unit in ((1e-6, "ns"), (1e-3, "µs"), (1.0, "ms")):
        if size < scale:
            f = 1e-9 if unit == "ns" else 1e-6 if unit == "µs" else 1e-3
            break
    else:
        f, unit = 1.0, "s"
    if error:
        return value_error(sec / f, error / f, unit)
    return f"{_g(sec / f, 3)} {unit}"


def fit_constrained(data):
    """Whether a fit's errors mean anything: proper-motion errors below 1 arcsec/yr (faster than any known
    neutron star), parallax error below 1 arcsec, position error below 1 arcsec (common practice, no source)."""
    s = data.get("sigma") or {}
    pm = max(s.get("pm_ra_cosdec_masyr", math.inf), s.get("pm_dec_masyr", math.inf))
    return {"proper_motion": pm < _MAS_PER_ARCSEC, "parallax": s.get("parallax_mas", math.inf) < _MAS_PER_ARCSEC,
            "position": max(s.get("ra_mas", math.inf), s.get("dec_mas", math.inf)) < _MAS_PER_ARCSEC}


def _g2(x):
    """Two significant figures (a forecast error is itself an estimate), plain below 1e4."""
    if x is None or not math.isfinite(x):
        return "n/a"
    r = _sig_round(float(x), 2)
    if abs(r) < 1:
        return f"{r:.2g}"
    if abs(r) < 100:
        return f"{r:.3g}"
    return f"{r:.0f}" if abs(r) < 1e5 else f"{r:.1e}"
