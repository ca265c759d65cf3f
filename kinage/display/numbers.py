"""Printed numbers: a value with its error, intervals, ages and durations in the unit their size calls for.

Rules (the usual ones of a results table): a value with an error is rounded to the error's precision, the error
by the Particle Data Group rule (``kinage._rounding``); ages and times choose yr/kyr/Myr (ns/µs/ms/s) from their
size.  Used by the stages' key numbers and figures and by the report; knows no stage.
"""

import math

from .._rounding import format_interval, pdg_decimals, round_to_error, value_error  # noqa: F401 (re-exported)

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
    """``median unit (68%: lo-hi unit)`` from an interval dictionary, by the one rule of
    :func:`kinage._rounding.format_interval` (the sentences use the same)."""
    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    return format_interval(d["median"], d.get("lo68"), d.get("hi68"), unit)


def fmt_age_interval(d):
    """An age interval (yr) in one unit chosen from the median: ``'1.30 Myr (68%: 1.10-1.50 Myr)'``."""
    from .sentences import format_age_interval

    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    return format_age_interval(d)


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
    return f"{r:,.0f}" if abs(r) < 1e5 else fmt_power(r)  # "2,900", as the sentences write it
