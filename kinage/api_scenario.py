"""Python front doors for scenarios: load one, make one from a mapping of tables or from a SkyCoord.

Re-exported by :mod:`kinage.api` and as ``kinage.<name>``.
"""

from pathlib import Path

from .errors import InputError

__all__ = ["load_scenario", "scenario_from_dict", "star_from_skycoord", "star_from_table", "as_scenario"]

_PLACEHOLDER = "<in-memory association table>"


# ------------------------------------------------------------------ scenarios
def load_scenario(path, **kwargs):
    """Read and validate a scenario TOML file (see :func:`kinage.io.scenario.load_scenario`).

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    Scenario
    """
    from .io.scenario import load_scenario as _load

    return _load(path, **kwargs)


def _plain(value, key, where=""):
    """A Python value the scenario reader understands, from numpy / astropy objects."""
    import astropy.units as u
    import numpy as np
    from astropy.time import Time

    if isinstance(value, Path):
        return str(value)
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.floating):
        return float(value)
    if isinstance(value, Time):
        return [t for t in value] if not value.isscalar else value
    if key is None:
        return value
    if isinstance(value, tuple) and key.kind in ("names", "floats", "times", "pulse_shape"):
        value = list(value)  # a Python tuple is a list here (the TOML reader gives lists)
    if key.kind == "floats" and isinstance(value, list) and any(isinstance(v, u.Quantity) for v in value):
        try:  # [1.3 * u.solMass, 1.5 * u.solMass]
            value = u.Quantity(value)
        except (TypeError, ValueError, u.UnitsError):
            raise InputError(where or key.name, f"expected a list of numbers or one Quantity array "
                             f"(got {value!r})") from None
    if isinstance(value, u.Quantity):
        if key.kind == "floats":  # e.g. [ages] masses (solar masses)
            unit = u.solMass if key.name == "masses" else u.dimensionless_unscaled
            try:
                return [float(x) for x in np.atleast_1d(value.to_value(unit))]
            except u.UnitConversionError:
                shown = unit.to_string() or "dimensionless units"
                raise InputError(where or key.name, f"expected numbers in {shown} (got a quantity in "
                                 f"{value.unit.to_string() or 'dimensionless units'})") from None
        if key.kind == "float" and value.isscalar:
            unit = u.Unit("1 / yr") if key.name == "visits_per_year" else u.dimensionless_unscaled
            try:
                return float(value.to_value(unit))
            except u.UnitConversionError:
                raise InputError(where or key.name, f"expected a number in {unit.to_string() or 'dimensionless units'}"
                                 f" (got {value})") from None
        if key.kind == "int" and value.isscalar and value.unit == u.dimensionless_unscaled:
            return int(value.value)
    if isinstance(value, np.ndarray) and not isinstance(value, u.Quantity):
        return value.tolist()
    return value


def _is_table(obj):
    from astropy.table import Table

    from .associations.table import AssociationTable

    return isinstance(obj, (Table, AssociationTable))


def _table_input(obj, where, what):
    """``obj`` when it is a path or an astropy Table, else an InputError naming ``where``."""
    from astropy.table import Table

    if isinstance(obj, (str, Path, Table)):
        return obj
    raise InputError(where, f"expected {what} (got {type(obj).__name__})")


def _associations(obj, columns=None):
    """An AssociationTable from a path, Table, QTable or AssociationTable (with an optional column map)."""
    from .associations.table import AssociationTable, read_associations

    if isinstance(obj, AssociationTable):
        return obj
    return read_associations(_table_input(obj, "[trace] associations", "a file path, an astropy Table or QTable"),
                             columns=columns)


def scenario_from_dict(mapping, base_dir=".", source=None, **kwargs):
    """Validate a scenario given as a mapping of tables.

    Parameters
    ----------
    mapping : dict
        ``{"star": {...}, "campaign": {...}, "trace": {...}, "ages": {...}}``
        (and optionally ``"title"``).  Values may be numbers in the documented
        unit (``kinage keys``), strings with units (``"4.2 mas"``), astropy
        ``Quantity``, ``Angle`` or ``Time`` objects, numpy scalars or Paths.
        ``trace.associations`` may be a path, an astropy ``Table`` or
        ``QTable``, or an :class:`~kinage.associations.AssociationTable`: an
        in-memory table needs no file.  ``trace.associations`` may also be left
        out and given to :func:`trace` instead.
    base_dir : str or Path
        Folder against which relative paths resolve.
    source : str, optional
        Name used in error messages.

    Returns
    -------
    Scenario

    Raises
    ------
    ScenarioError
        Listing every problem, each naming its table and key.
    """
    from .io.scenario import scenario_from_dict as _from_dict
    from .io.schema import SCHEMA

    if not isinstance(mapping, dict):
        return _from_dict(mapping, base_dir=base_dir, source=source, **kwargs)
    raw, assoc = {}, None
    for table, content in mapping.items():
        if isinstance(content, dict) and table in SCHEMA:
            keys = SCHEMA[table]
            raw[table] = {}
            for name, value in content.items():
                if table == "trace" and name == "associations" and _is_table(value):
                    assoc = _associations(value, content.get("association_columns"))
                    raw[table][name] = _PLACEHOLDER
                    continue
                base = name[:-len("_error")] if name.endswith("_error") and name not in keys else name
                raw[table][name] = _plain(value, keys.get(base), f"[{table}] {name}")
        else:
            raw[table] = content
    allow = set(kwargs.pop("allow_missing", ()))
    deferred = "trace" in raw and isinstance(raw["trace"], dict) and "associations" not in raw["trace"]
    if deferred:  # the table may come with kinage.trace(..., associations=...)
        raw["trace"]["associations"] = _PLACEHOLDER
    if assoc is not None or deferred:
        allow.add("trace.associations")
    scn = _from_dict(raw, base_dir=base_dir, source=source, allow_missing=tuple(allow), **kwargs)
    if assoc is not None or deferred:
        scn = scn.replace(trace=scn.trace.replace(associations=assoc))
        if deferred:
            raw["trace"].pop("associations", None)
    return scn


def as_scenario(scenario):
    """A Scenario from a Scenario, a scenario file path or a mapping of tables."""
    from .io.scenario import Scenario

    if isinstance(scenario, Scenario):
        return scenario
    if isinstance(scenario, (str, Path)):
        return load_scenario(scenario)
    if isinstance(scenario, dict):
        return scenario_from_dict(scenario)
    raise InputError("scenario", f"expected a Scenario, a scenario file path or a dict of tables "
                     f"(got {type(scenario).__name__})")


def star_from_skycoord(coord, **values):
    """The ``[star]`` table from an astropy ``SkyCoord``.

    Parameters
    ----------
    coord : astropy.coordinates.SkyCoord
        Scalar, any frame (converted to ICRS).  Its distance (if it has one)
        becomes ``distance``, its proper motions ``pm_ra_cosdec`` / ``pm_dec``,
        its radial velocity ``radial_velocity`` and its ``obstime`` ``epoch``.
    **values
        Further ``[star]`` keys: errors (``distance_error``, ``pm_dec_error``,
        ...), ``parallax`` when the SkyCoord has no distance, ``name``, spin
        (``spin_period``, ``spin_period_derivative``), ``temperature``, ...
        Values given here win over the SkyCoord's.  With ``parallax_error``
        (and no ``parallax``) the SkyCoord's distance is taken as a parallax
        (1 / distance, e.g. from ``Distance(parallax=...)``).

    Returns
    -------
    dict
        Validated ``[star]`` mapping with Quantities, ready for
        :func:`scenario_from_dict` as ``{"star": ...}``.

    Raises
    ------
    InputError
        When ``coord`` is not a scalar SkyCoord, or a value is invalid.
    """
    import astropy.units as u
    from astropy.coordinates import (RadialDifferential, SkyCoord, UnitSphericalCosLatDifferential,
                                     UnitSphericalDifferential, UnitSphericalRepresentation)

    if not isinstance(coord, SkyCoord):
        raise InputError("coord", f"expected an astropy SkyCoord (got {type(coord).__name__})")
    if not coord.isscalar:
        raise InputError("coord", f"expected one position (got a SkyCoord of shape {coord.shape})")
    icrs = coord.icrs

    def q(x, unit):  # plain Quantities (not Longitude / Distance) in the scenario's default units
        return u.Quantity(x, unit, subok=False)

    star = {"ra": q(icrs.ra, u.deg), "dec": q(icrs.dec, u.deg)}
    data = coord.data
    if not isinstance(data, UnitSphericalRepresentation) and icrs.distance.unit.physical_type == "length":
        star["distance"] = q(icrs.distance, u.pc)
    # What the SkyCoord holds is judged from its own differential: after a frame change astropy may carry the
    # velocity as a Cartesian differential (e.g. Galactic with a radial velocity), which still has both parts.
    diff = data.differentials.get("s")
    if diff is not None:
        if not isinstance(diff, RadialDifferential):
            star["pm_ra_cosdec"] = q(icrs.pm_ra_cosdec, u.mas / u.yr)
            star["pm_dec"] = q(icrs.pm_dec, u.mas / u.yr)
        if not isinstance(diff, (UnitSphericalDifferential, UnitSphericalCosLatDifferential)):
            star["radial_velocity"] = q(icrs.radial_velocity, u.km / u.s)
    if coord.obstime is not None:
        star["epoch"] = coord.obstime
    if "parallax" in values and "distance" in star and "distance" not in values:
        star.pop("distance")  # an explicit parallax replaces the SkyCoord's distance
    elif "parallax_error" in values and "parallax" not in values and "distance" in star:
        # a parallax error with the SkyCoord's distance: the distance is a parallax (Distance(parallax=...))
        star["parallax"] = q(star.pop("distance").to(u.mas, equivalencies=u.parallax()), u.mas)
    star.update(values)
    scenario_from_dict({"star": star}, source="star_from_skycoord")  # validate now, naming the key
    return star


def star_from_table(row, columns=None, **values):
    """The ``[star]`` table from one catalogue row (:func:`kinage.io.star_table.star_from_table`)."""
    from .io.star_table import star_from_table as _from_table

    return _from_table(row, columns, **values)
