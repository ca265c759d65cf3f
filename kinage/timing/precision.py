"""Extended-precision ("double-double") arithmetic for times and pulse phases.

A pulse phase of ~1e11 cycles held in one float64 is rounded to ~1e-5 cycles
(tens of ns for a millisecond pulsar); a time of 1e9 s to ~0.1 us.  Here a
number is the unevaluated sum ``hi + lo`` of two float64 arrays with
``|lo| <= ulp(hi)/2``, which carries ~32 significant digits with plain numpy
operations on any platform (no reliance on ``numpy.longdouble``, which is
only 64-bit on some machines).

The error-free transformations are Knuth's TwoSum and Dekker's TwoProduct
with Veltkamp splitting (Dekker 1971, Numer. Math. 18, 224; Knuth, TAOCP
vol. 2, 4.2.2); they are exact in IEEE-754 round-to-nearest arithmetic,
which numpy's element-wise ufuncs use (no fused multiply-add contraction
across separate ufunc calls).
"""

import numpy as np

__all__ = ["two_sum", "two_prod", "dd_add", "dd_add_float", "dd_mul_float", "dd_from_days", "split_phase"]

_SPLITTER = 134217729.0  # 2^27 + 1


def two_sum(a, b):
    """s, e with s = fl(a + b) and a + b = s + e exactly."""
    s = a + b
    bb = s - a
    e = (a - (s - bb)) + (b - bb)
    return s, e


def _quick_two_sum(a, b):
    s = a + b
    return s, b - (s - a)


def _split(a):
    c = _SPLITTER * a
    hi = c - (c - a)
    return hi, a - hi


def two_prod(a, b):
    """p, e with p = fl(a b) and a b = p + e exactly (|a b| < ~1e300)."""
    p = a * b
    ah, al = _split(a)
    bh, bl = _split(b)
    e = ((ah * bh - p) + ah * bl + al * bh) + al * bl
    return p, e


def dd_add(ahi, alo, bhi, blo):
    """(ahi + alo) + (bhi + blo) as a normalised double-double."""
    s, e = two_sum(ahi, bhi)
    e = e + (alo + blo)
    return _quick_two_sum(s, e)


def dd_add_float(ahi, alo, b):
    """(ahi + alo) + b for a float64 b."""
    s, e = two_sum(ahi, b)
    return _quick_two_sum(s, e + alo)


def dd_mul_float(ahi, alo, b):
    """(ahi + alo) * b for a float64 b."""
    p, e = two_prod(ahi, b)
    return _quick_two_sum(p, e + alo * b)


def dd_from_days(d1, d2, seconds_per_day=86400.0):
    """Seconds (hi, lo) from a two-part day count d1 + d2 (d1 a whole or half number of days)."""
    hi, lo = two_prod(np.asarray(d1, float), seconds_per_day)
    phi, plo = two_prod(np.asarray(d2, float), seconds_per_day)
    return dd_add(hi, lo, phi, plo)


def split_phase(hi, lo):
    """Nearest whole pulse number and the fractional phase of hi + lo, both float64.

    The pulse number is exact (whole numbers below 2^53 are exact in float64);
    the fraction keeps the double-double precision, in [-0.5, 0.5].
    """
    n = np.round(hi)
    frac = (hi - n) + lo  # hi - n is exact (Sterbenz) when |hi - n| <= 0.5
    adjust = np.round(frac)
    return n + adjust, frac - adjust
