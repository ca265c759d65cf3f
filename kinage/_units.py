"""Units at the edge of public functions that take physical values.

Functions inside kinage compute on plain floats in documented units (s, yr,
K, km, ...).  :func:`quantity_edge` lets such a function also accept astropy
Quantities: a Quantity argument is converted once to the documented unit (a
wrong dimension raises :class:`UnitInputError`, which is both a
:class:`~kinage.errors.InputError` and an ``astropy.units.UnitConversionError``),
plain numbers keep the documented unit, and when any argument was a Quantity
the result carries the documented output unit.  Calls with plain numbers
only take a fast path with no unit handling at all, so hot loops pay nothing.

Examples
--------
>>> import astropy.units as u
>>> from kinage.ages import characteristic_age
>>> round(float(characteristic_age(4.08, 3.1e-14)) / 1e6, 3)   # plain numbers: s in, yr out
2.085
>>> characteristic_age(4080 * u.ms, 3.1e-14).to(u.Myr).round(3)
<Quantity 2.085 Myr>
"""

import functools
import inspect

import astropy.units as u
import numpy as np

from .errors import InputError

__all__ = ["UnitInputError", "quantity_edge", "to_plain"]


class UnitInputError(InputError, u.UnitConversionError):
    """A Quantity of the wrong dimension given to a public function."""


def _unit(spec):
    return u.dimensionless_unscaled if spec in ("", None) else u.Unit(spec)


def _kind(unit):
    pt = str(unit.physical_type)
    return "a dimensionless number" if pt == "dimensionless" else f"a quantity of {pt} (e.g. in {unit.to_string()})"


def to_plain(value, unit, name="value"):
    """``value`` as plain float(s) in ``unit``.

    Parameters
    ----------
    value : float, ndarray, Quantity, or a list of Quantities (plain numbers in it are taken in ``unit``)
    unit : str or astropy.units.Unit
        The documented unit ('' for dimensionless); temperatures also accept
        energies (kT).
    name : str
        Argument name for the error message.

    Returns
    -------
    float or ndarray
        Unchanged when ``value`` has no unit.

    Raises
    ------
    UnitInputError
        When the Quantity's dimension does not match ``unit``.
    """
    if isinstance(value, (list, tuple)) and any(isinstance(v, u.Quantity) for v in value):
        # element by element: Quantities converted, plain numbers already in ``unit``
        return np.array([to_plain(v, unit, f"{name}[{i}]") for i, v in enumerate(value)], dtype=float)
    if not isinstance(value, u.Quantity):
        return value
    target = _unit(unit)
    equiv = u.temperature_energy() if target.physical_type == "temperature" else []
    try:
        out = value.to_value(target, equivalencies=equiv)
    except u.UnitConversionError:
        shown = value.unit.to_string() or "dimensionless"
        raise UnitInputError(name, f"expected {_kind(target)}, got a quantity in {shown}") from None
    return float(out) if np.ndim(out) == 0 else out


def _has_quantity(args, kwargs):
    for v in args:
        if isinstance(v, u.Quantity) or (isinstance(v, (list, tuple)) and any(isinstance(x, u.Quantity) for x in v)):
            return True
    for v in kwargs.values():
        if isinstance(v, u.Quantity) or (isinstance(v, (list, tuple)) and any(isinstance(x, u.Quantity) for x in v)):
            return True
    return False


def quantity_edge(returns=None, **units):
    """Decorate a plain-float function so that it accepts Quantities.

    Parameters
    ----------
    returns : str or None
        Unit of the result ('' dimensionless); ``None`` leaves the result as
        it is (e.g. a result object).
    **units : str
        Documented unit of each physical argument, by name.
    """

    def deco(func):
        sig = inspect.signature(func)
        out_unit = None if returns is None else _unit(returns)

        @functools.wraps(func)
        def wrapper(*args, **kwargs):
            if not _has_quantity(args, kwargs):
                return func(*args, **kwargs)
            bound = sig.bind(*args, **kwargs)
            converted = False
            for name, val in list(bound.arguments.items()):
                if name in units and val is not None:
                    plain = to_plain(val, units[name], name)
                    converted |= plain is not val
                    bound.arguments[name] = plain
            result = func(*bound.args, **bound.kwargs)
            if converted and out_unit is not None and not isinstance(result, u.Quantity):
                return u.Quantity(result, out_unit)
            return result

        wrapper.__kinage_units__ = dict(units)
        wrapper.__kinage_returns__ = returns
        return wrapper

    return deco
