"""One scenario value from what the user wrote: a quantity, angle, time, number, flag, name, path or list,
converted to the key's kind and checked against its bounds (:mod:`kinage.io.schema`)."""

import math
import os
from pathlib import Path

import astropy.units as u

from ..errors import InputError
from .checks import MAX_VISITS, check_bounds as _check_bounds
from .quantities import parse_quantity, parse_time, shown

__all__ = []

_MAX_NAME = 200  # a string value without its own max_length


def _default(key):
    if key.default is None:
        return None
    if key.kind == "quantity":
        return key.default * u.Unit(key.unit)
    if key.kind in ("names", "floats"):
        return tuple(key.default)
    return key.default


def _parse_value(table, key, val, base_dir, problems, must_exist=True):
    where = f"[{table}] {key.name}"
    try:
        out = _convert(key, val, base_dir, where, must_exist)
        _check_bounds(key, out, where, val)
        return out
    except InputError as exc:
        problems.append(exc)
        return None


def _convert(key, val, base_dir, where, must_exist=True):
    kind = key.kind
    if kind == "quantity":
        if key.example and _bare_number(val):
            raise InputError(where, f"a bare number ({shown(val)}) is ambiguous here: give a unit, e.g. "
                                    f"'{key.example}'")
        return parse_quantity(val, key.unit, where)
    if kind == "angle":
        if isinstance(val, str) and len(val) > 100:
            raise InputError(where, f"expected an angle in degrees or sexagesimal form (got {shown(val)})")
        if isinstance(val, str) and ":" in val or isinstance(val, str) and any(c in val for c in "hms°d'\""):
            unit = u.hourangle if key.name == "ra" and ("h" in val or ":" in val) else u.deg
            try:
                from astropy.coordinates import Angle  # only for sexagesimal text (slow import)

                return Angle(val, unit=unit).to(u.deg)
            except (ValueError, u.UnitsError):
                raise InputError(where, f"expected an angle in degrees or sexagesimal form (got {shown(val)})") from None
        return parse_quantity(val, "deg", where)
    if kind == "time":
        return parse_time(val, where)
    if kind == "times":
        if not isinstance(val, list) or not val:
            raise InputError(where, f"expected a list of dates (got {shown(val)})")
        if len(val) > MAX_VISITS:
            raise InputError(where, f"at most {MAX_VISITS:,} dates (got {len(val):,}): the limit on visits")
        from astropy.time import Time

        ts = [parse_time(v, f"{where}[{i}]") for i, v in enumerate(val)]
        return Time([t.tdb.mjd for t in ts], format="mjd", scale="tdb")
    if kind == "int":
        if isinstance(val, bool) or not isinstance(val, int):
            if isinstance(val, float) and val.is_integer():
                return int(val)
            raise InputError(where, f"expected a whole number (got {shown(val)})")
        return val
    if kind == "float":
        if isinstance(val, bool) or not isinstance(val, (int, float)):
            x = None
            if isinstance(val, str) and len(val) <= 100:
                try:
                    q = u.Quantity(val)
                    if q.unit == u.dimensionless_unscaled or q.unit == u.percent:
                        x = float(q.to_value(u.dimensionless_unscaled))
                except (TypeError, ValueError):
                    pass
            if x is None:
                raise InputError(where, f"expected a number (got {shown(val)})")
            val = x
        if not math.isfinite(val):
            raise InputError(where, f"must be a finite number (got {shown(val)})")
        return float(val)
    if kind == "bool":
        if not isinstance(val, bool):
            raise InputError(where, f"expected true or false (got {shown(val)})")
        return val
    if kind == "str":
        if not isinstance(val, str) or not val.strip():
            raise InputError(where, f"expected a non-empty string (got {shown(val)})")
        limit = key.max_length or _MAX_NAME
        if len(val) > limit:
            raise InputError(where, f"must be at most {limit} characters long (got {len(val)} characters)")
        return val.strip()
    if kind == "path":
        return _path(val, base_dir, where, must_exist)
    if kind == "names":
        if isinstance(val, str):
            val = [val]
        if not isinstance(val, list) or not all(isinstance(v, str) and v for v in val) or not val:
            raise InputError(where, f"expected a list of names (got {shown(val)})")
        if len(val) > (key.max_length or 100) or any(len(v) > _MAX_NAME for v in val):
            raise InputError(where, f"expected at most {key.max_length or 100} names of at most {_MAX_NAME} "
                                    f"characters (got {len(val)} names)")
        return tuple(val)
    if kind == "floats":
        if isinstance(val, (int, float)) and not isinstance(val, bool):
            val = [val]
        if not isinstance(val, list) or not val or not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in val):
            raise InputError(where, f"expected a list of numbers (got {shown(val)})")
        if len(val) > (key.max_length or 100):
            raise InputError(where, f"expected at most {key.max_length or 100} numbers (got {len(val)})")
        bad = [v for v in val if not math.isfinite(v)]
        if bad:
            raise InputError(where, f"every value must be a finite number (got {shown(bad[0])})")
        return tuple(float(v) for v in val)
    if kind == "pulse_shape":
        if isinstance(val, list):
            if not val or not all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
                                  and v >= 0 for v in val) or len(val) > 100:
                raise InputError(where, f"expected a list of non-negative harmonic amplitudes (finite, at most 100; "
                                        f"got {shown(val)})")
            if sum(val) <= 0:
                raise InputError(where, "harmonic amplitudes must not all be zero")
            return tuple(float(v) for v in val)
        if isinstance(val, str) and val.strip().lower() == "sinusoid":
            return "sinusoid"
        if isinstance(val, str):
            return _path(val, base_dir, where)
        raise InputError(where, f"expected 'sinusoid', a list of harmonic amplitudes or a template file (got {shown(val)})")
    if kind == "correlations":
        from .correlations import parse_correlations

        return parse_correlations(val, f"[{where.split(']')[0].lstrip('[')}.{key.name}]")
    if kind == "column_map":
        from .tables import parse_column_map

        mapping = parse_column_map(val, key.choices, f"[{where.split(']')[0].lstrip('[')}.{key.name}]")
        return {name: spec.to_dict() for name, spec in mapping.items()}
    raise AssertionError(f"unknown key kind {kind}")


def _path(val, base_dir, where, must_exist=True):
    from .paths import check_input_file, check_output_file

    if not isinstance(val, str) or not val.strip():
        raise InputError(where, f"expected a file path (got {shown(val)})")
    if must_exist:
        return check_input_file(val.strip(), where, base_dir=base_dir)
    p = check_output_file(Path(base_dir) / Path(val.strip()) if not val.strip().startswith("~") else val.strip(),
                          where)
    return Path(os.path.abspath(p))


def _bare_number(val):
    """A number without a unit (plain or as text), other than zero (which needs none)."""
    if isinstance(val, bool):
        return False
    if isinstance(val, str):
        try:
            val = float(val.strip())
        except ValueError:
            return False
    return isinstance(val, (int, float)) and val != 0
