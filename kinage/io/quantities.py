"""Parse numbers-with-units from scenario files and tables.

A value is either a plain number, taken in the documented default unit, or a
string such as ``"4.2 mas"`` parsed with :mod:`astropy.units`.  Wrong
dimensions (``"4 km/s"`` for a parallax) are reported with the field name.
"""

import functools
import math

import astropy.units as u
from astropy.time import Time

from ..errors import InputError

__all__ = ["parse_quantity", "parse_time", "format_quantity", "shown"]

_MAX_TEXT = 200  # longest value string parsed (astropy's unit parser is slow on huge strings)


def shown(value, limit=60):
    """``repr`` of a value for messages: numpy scalars as plain Python, long values cut.

    >>> import numpy as np
    >>> shown(np.str_("abc")), shown(np.float64(0.5))
    ("'abc'", '0.5')
    """
    if hasattr(value, "item") and getattr(value, "ndim", None) == 0:
        value = value.item()
    if isinstance(value, (list, tuple)):
        text = "[" + ", ".join(shown(v, limit) for v in value[:5]) + (", ..." if len(value) > 5 else "") + "]"
    else:
        text = repr(value)
    return text if len(text) <= limit else f"{text[:limit]}... ({len(text)} characters)"


def format_quantity(q):
    """Short human form of a Quantity for messages, e.g. ``'-0.3 mas'``."""
    if isinstance(q, u.Quantity):
        return f"{q.value:.6g} {q.unit.to_string()}".strip()
    return repr(q)


def parse_quantity(value, unit, where, *, allow_array=False):
    """Turn a number or a unit string into a Quantity in ``unit``.

    Parameters
    ----------
    value : float, int, str or Quantity
        The raw value.  Numbers are taken in ``unit``; strings are parsed by
        astropy (``"240 pc"``, ``"3 Myr"``).
    unit : astropy.units.Unit or str
        The default unit; the result is converted to it.
    where : str
        Field name for error messages, e.g. ``"[star] distance"``.
    allow_array : bool
        Accept a list of values.

    Returns
    -------
    Quantity
        In ``unit``.

    Raises
    ------
    InputError
        If the value is not a number, cannot be parsed, is not finite, or has
        the wrong dimension.
    """
    unit = _unit(unit)

    class _Expected:  # the message text, built only when a message is
        def __format__(self, spec):
            return (f"a number in {unit.to_string() or 'dimensionless units'} or a string with a unit of "
                    f"{_physical(unit)}")

    expected = _Expected()
    if isinstance(value, bool):
        raise InputError(where, f"expected {expected} (got {value!r})")
    if isinstance(value, str) and len(value) > _MAX_TEXT:
        raise InputError(where, f"expected {expected} (got a string of {len(value)} characters)")
    if allow_array and isinstance(value, (list, tuple)):
        parts = [parse_quantity(v, unit, f"{where}[{i}]") for i, v in enumerate(value)]
        return u.Quantity(parts)
    if not allow_array and getattr(value, "shape", None) is not None and getattr(value, "size", 0) == 1 \
            and getattr(value, "ndim", 0) > 0 and not isinstance(value, str):
        value = value.reshape(())  # a one-element array ([1.9] mas) is the single value it holds
        value = value if isinstance(value, u.Quantity) else value[()]
    if hasattr(value, "dtype") and not isinstance(value, u.Quantity) and getattr(value, "ndim", 1) == 0 \
            and value.dtype.kind in "iuf":
        value = float(value)  # numpy scalars (float32, int64, ...)
    if isinstance(value, u.Quantity):
        q = value
    elif isinstance(value, (int, float)):
        q = float(value) * unit
    elif isinstance(value, str):
        text = value.strip()
        try:
            q = u.Quantity(text)
        except (TypeError, ValueError):
            raise InputError(where, f"expected {expected} (got {shown(value)}, which is not a number with a unit)") from None
        if q.unit == u.dimensionless_unscaled and unit != u.dimensionless_unscaled:
            # a bare number written as a string: take the default unit
            q = q.value * unit
    else:
        raise InputError(where, f"expected {expected} (got {type(value).__name__} {shown(value)})")
    if not q.isscalar and not allow_array:
        raise InputError(where, f"expected a single value (got {len(q)} values)")
    try:
        q = q.to(unit, equivalencies=_equivalencies(unit))
    except u.UnitConversionError:
        raise InputError(
            where, f"expected a quantity of {_physical(unit)} (got {format_quantity(q)})"
        ) from None
    vals = q.value if not q.isscalar else [q.value]
    if any(not math.isfinite(float(v)) for v in vals):
        raise InputError(where, f"must be finite (got {format_quantity(q)})")
    return q


@functools.lru_cache(maxsize=256)
def _cached_unit(text):
    return u.Unit(text)


def _unit(unit):
    """``astropy.units.Unit(unit)``, with unit strings parsed once (parsing dominates reading a scenario)."""
    return _cached_unit(unit) if isinstance(unit, str) else u.Unit(unit)


def _equivalencies(unit):
    # temperatures may be given in K or as energies (kT) in eV
    if unit.physical_type == "temperature":
        return u.temperature_energy()
    return []


def _physical(unit):
    pt = unit.physical_type
    return str(pt) if str(pt) != "unknown" else unit.to_string()


def parse_time(value, where, *, scale="tdb"):
    """Parse an epoch: a number (MJD), ``"MJD 60000.5"``, or an ISO date.

    Parameters
    ----------
    value : float, int or str
        MJD number, ISO date ``"2027-03-01"`` / ``"2027-03-01T12:00"``, or
        decimal year ``"J2027.5"``.
    where : str
        Field name for error messages.
    scale : str
        Time scale (default TDB).

    Returns
    -------
    astropy.time.Time
    """
    if isinstance(value, Time):
        return value
    if isinstance(value, bool):
        raise InputError(where, f"expected an MJD number or an ISO date like '2027-03-01' (got {shown(value)})")
    if isinstance(value, (int, float)):
        if not math.isfinite(value) or not (0 < value < 200000):
            raise InputError(where, f"expected an MJD between 0 and 200000 (got {value!r})")
        return Time(float(value), format="mjd", scale=scale)
    if hasattr(value, "isoformat"):  # TOML dates and datetimes
        value = value.isoformat()
    if isinstance(value, str) and len(value) <= _MAX_TEXT:
        text = value.strip()
        try:
            if text.upper().startswith("MJD"):
                return Time(float(text[3:]), format="mjd", scale=scale)
            if text.upper().startswith("J"):
                return Time(text, format="jyear_str", scale=scale)
            return Time(text, format="isot" if "T" in text else "iso", scale=scale)
        except (ValueError, TypeError):
            pass
    raise InputError(where, f"expected an MJD number or an ISO date like '2027-03-01' (got {shown(value)})")
