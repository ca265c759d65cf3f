"""The ``[star]`` distance keys taken together: percentage and asymmetric errors, ``distance_from``.

A parallax and a distance given together are both kept (the distance posterior of
:mod:`kinage.kinematics.distance_posterior` combines them); ``distance_from``
keeps one.  A ``distance_error`` (or ``distance_error_low`` / ``_high``) may be a
percentage of the distance (``"20%"``), converted to pc here.
"""

import math

import astropy.units as u

from ..errors import InputError
from .quantities import shown

__all__ = ["FRACTION_KEYS", "fraction", "resolve_distance"]


#: error keys that may be written as a percentage of their value ("20%")
FRACTION_KEYS = {"star": ("distance_error", "distance_error_low", "distance_error_high")}


def fraction(where, val):
    """A positive percentage written as ``"20%"`` (kept as a Quantity in percent), else InputError."""
    text = val.strip()[:-1].strip()
    try:
        x = float(text)
    except ValueError:
        x = math.nan
    if not (math.isfinite(x) and x > 0):
        raise InputError(where, f"expected a positive error in pc or a percentage of the distance such as "
                                f"'20%' (got {shown(val)})")
    return x * u.percent


def resolve_distance(sections, problems):
    """The distance keys together: errors as fractions or asymmetric, and ``distance_from``.

    A parallax and a distance given together are combined (one posterior,
    :mod:`kinage.kinematics.distance_posterior`); ``distance_from`` keeps only
    one of them.  ``distance_error`` (and ``distance_error_low`` /
    ``distance_error_high``) may be a percentage of the distance; they are
    converted to pc here.
    """
    star = sections.get("star")
    if star is None:
        return
    vals = dict(star._values)
    given = set(star._given)
    low, high, sym = (star.given(k) for k in ("distance_error_low", "distance_error_high", "distance_error"))
    if (low or high) and not star.given("distance"):
        problems.append(InputError(f"[star] distance_error_{'low' if low else 'high'}", "given without 'distance'"))
        return
    if low != high:
        problems.append(InputError(f"[star] distance_error_{'high' if low else 'low'}",
                                   f"required with distance_error_{'low' if low else 'high'} (an asymmetric error "
                                   "needs both sides), or give one symmetric distance_error"))
        return
    if low and sym:
        problems.append(InputError("[star] distance_error", "given together with distance_error_low and "
                                   "distance_error_high; give either one symmetric error or the two sides"))
        return
    for key in ("distance_error", "distance_error_low", "distance_error_high"):
        v = vals.get(key)
        if isinstance(v, u.Quantity) and v.unit == u.percent:
            vals[key] = (v.to_value(u.dimensionless_unscaled) * star.distance).to(u.pc)
    choice = star.get("distance_from")
    if choice is not None:
        choice = choice.lower()
        timed = "campaign" in sections and sections["campaign"].get("toas") is not None
        if not star.given(choice) and not (choice == "parallax" and timed):
            other = "distance" if choice == "parallax" else "parallax"
            has = f"only '{other}' is given" if star.given(other) else "neither is given"
            problems.append(InputError("[star] distance_from",
                                       f"says to use '{choice}', but {has}; distance_from chooses between a "
                                       "parallax and a distance given together (remove it or give both)"))
            return
        drop = "distance" if choice == "parallax" else "parallax"
        for key in (drop, f"{drop}_error") + (("distance_error_low", "distance_error_high") if drop == "distance"
                                               else ()):
            vals[key] = None
            given.discard(key)
    sections["star"] = type(star)("star", vals, given)
