"""A star's ``[star]`` table from one row of a catalogue.

Catalogue rows (a Gaia-like query result, a VLBI paper's table, a pulsar list)
name their columns their own way and carry units in their metadata.  A column
map says which column holds which ``[star]`` key; correlation coefficients
come from columns named under ``"correlations"``::

    star_from_table(row, columns={"ra": "RAdeg", "dec": "DEdeg", "parallax": "Plx",
                                  "parallax_error": "e_Plx",
                                  "pm_ra_cosdec": {"column": "pmRAcosDE", "unit": "mas/yr"},
                                  "correlations": {"parallax_pm_ra_cosdec": "Plx_pmRAcosDE_corr"}})

Columns named like ``[star]`` keys need no map.  A mapped column needs a unit,
from the table or from the map (a bare number is ambiguous); an unmapped one
without a unit is taken in the key's default unit, as in a scenario file.
"""

import math

import astropy.units as u
import numpy as np

from ..errors import InputError
from .correlations import ASTROMETRIC, pair_key
from .schema import SCHEMA
from .tables import ColumnSpec, nearest_columns, parse_column_map

__all__ = ["star_from_table", "STAR_KEYS"]

#: the [star] keys a row may fill (values and their _error siblings)
STAR_KEYS = tuple(SCHEMA["star"]) + tuple(f"{k}_error" for k, v in SCHEMA["star"].items() if v.error)
_UNITLESS_KINDS = ("str", "float", "int", "bool")


def _row_mapping(row):
    """``(colnames, getter, unit_of)`` for an astropy Row, a one-row Table or a dict."""
    from astropy.table import Row, Table

    if isinstance(row, Table):
        if len(row) != 1:
            raise InputError("row", f"expected one row (got a table of {len(row)} rows; pass table[i])")
        row = row[0]
    if isinstance(row, Row):
        tab = row.table
        return list(tab.colnames), (lambda c: row[c]), (lambda c: getattr(tab[c], "unit", None))
    if isinstance(row, dict):
        return list(row), (lambda c: row[c]), (lambda c: getattr(row[c], "unit", None))
    raise InputError("row", f"expected an astropy Table row, a one-row Table or a dict (got {type(row).__name__})")


def _plain(v):
    if np.ma.is_masked(v):
        return None
    if isinstance(v, u.Quantity):
        return v
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and math.isnan(v):
        return None
    return v


def _key_unit(key):
    base = key[: -len("_error")] if key.endswith("_error") and key not in SCHEMA["star"] else key
    spec = SCHEMA["star"][base]
    if spec.kind == "angle":
        return "mas" if base != key else "deg"
    return spec.unit or None


def star_from_table(row, columns=None, **values):
    """The ``[star]`` table from one catalogue row, with its correlations.

    Parameters
    ----------
    row : astropy.table.Row, one-row Table or QTable, or dict
        The star's catalogue entry.  Masked and NaN cells count as absent.
    columns : dict, optional
        ``[star]`` key -> column name, or -> ``{"column": ..., "unit": ...}``
        for a column without a unit in the table; ``"correlations"`` ->
        ``{pair: column}`` with pairs such as ``parallax_pm_ra_cosdec``.
        Columns already named like ``[star]`` keys are taken without a map.
    **values
        Further ``[star]`` keys (``name``, ``spin_period``, ...); they win over
        the row.

    Returns
    -------
    dict
        Validated ``[star]`` mapping (Quantities; ``correlations`` as a
        dict), ready for :func:`kinage.scenario_from_dict` as ``{"star": ...}``.

    Raises
    ------
    InputError
        A mapped column that is not in the row (naming the nearest), a mapped
        column without a unit, a unit of the wrong dimension, correlations
        outside [-1, 1] or not positive definite.

    Examples
    --------
    >>> from astropy.table import Table
    >>> t = Table({"Name": ["Invented-7"], "RAdeg": [83.1], "DEdeg": [-12.4], "Plx": [1.9], "e_Plx": [0.2],
    ...            "pmRAcosDE": [31.0], "e_pmRA": [0.4], "pmDE": [-8.0], "e_pmDE": [0.5], "Plx_pmRA": [0.25]})
    >>> for c in ("Plx", "e_Plx"): t[c].unit = "mas"
    >>> for c in ("pmRAcosDE", "e_pmRA", "pmDE", "e_pmDE"): t[c].unit = "mas / yr"
    >>> for c in ("RAdeg", "DEdeg"): t[c].unit = "deg"
    >>> star = star_from_table(t[0], columns={"name": "Name", "ra": "RAdeg", "dec": "DEdeg", "parallax": "Plx",
    ...                        "parallax_error": "e_Plx", "pm_ra_cosdec": "pmRAcosDE", "pm_ra_cosdec_error": "e_pmRA",
    ...                        "pm_dec": "pmDE", "pm_dec_error": "e_pmDE",
    ...                        "correlations": {"parallax_pm_ra_cosdec": "Plx_pmRA"}})
    >>> star["parallax"], star["correlations"]
    (<Quantity 1.9 mas>, {'pm_ra_cosdec_parallax': 0.25})
    """
    from .scenario import scenario_from_dict

    colnames, get, unit_of = _row_mapping(row)
    columns = dict(columns or {})
    corr_map = columns.pop("correlations", None) or {}
    if not isinstance(corr_map, dict):
        raise InputError("columns correlations", "expected {pair: column}, e.g. {'parallax_pm_ra_cosdec': 'corr'}")
    mapping = parse_column_map(columns, STAR_KEYS, "columns")
    for key in STAR_KEYS:  # columns named like [star] keys need no map
        if key not in mapping and key in colnames and key not in {s.column for s in mapping.values()}:
            mapping[key] = ColumnSpec(key, None)
    star, mapped = {}, set(parse_column_map(columns, STAR_KEYS, "columns"))
    for key, spec in mapping.items():
        if spec.column not in colnames:
            near = nearest_columns(spec.column, colnames)
            raise InputError(f"columns {key}", f"column '{spec.column}' is not in the row (its columns: "
                             + ", ".join(f"'{c}'" for c in colnames[:30]) + ")"
                             + (f"; nearest: '{near[0]}'" if near else ""))
        v = _plain(get(spec.column))
        if v is None:
            continue
        base = key[: -len("_error")] if key.endswith("_error") and key not in SCHEMA["star"] else key
        kind = SCHEMA["star"][base].kind
        if kind in _UNITLESS_KINDS or kind in ("time",):
            star[key] = v.value if isinstance(v, u.Quantity) and v.unit == u.dimensionless_unscaled else v
            continue
        unit = v.unit if isinstance(v, u.Quantity) else unit_of(spec.column)
        if unit is not None and spec.unit is not None and u.Unit(unit) != u.Unit(spec.unit):
            raise InputError(f"columns {key}", f"the table gives column '{spec.column}' in {unit}, the map says "
                             f"{spec.unit}; remove the unit from the map (the table's is used)")
        unit = unit if unit is not None else spec.unit
        if unit is None and key in mapped:
            raise InputError(f"columns {key}", f"column '{spec.column}' has no unit; give one in the map, e.g. "
                             f"{{'column': '{spec.column}', 'unit': '{_key_unit(key)}'}}")
        num = v.value if isinstance(v, u.Quantity) else v
        if isinstance(num, str):
            star[key] = num if unit is None else f"{num} {u.Unit(unit).to_string()}"
            continue
        q = u.Quantity(float(num), unit if unit is not None else _key_unit(key))
        target = _key_unit(key)
        if target is not None:
            try:
                q = q.to(target, equivalencies=u.temperature_energy())
            except u.UnitConversionError:
                raise InputError(f"columns {key}", f"column '{spec.column}' is in {q.unit}, which does not "
                                 f"convert to {target}") from None
        star[key] = q
    corr = {}
    for pair, col in corr_map.items():
        where = f"columns correlations {pair}"
        parts = [(a, pair[len(a) + 1:]) for a in ASTROMETRIC if pair.startswith(a + "_")
                 and pair[len(a) + 1:] in ASTROMETRIC]
        if not parts:
            raise InputError(where, "expected two of " + ", ".join(ASTROMETRIC) + " joined by '_'")
        if not isinstance(col, str) or col not in colnames:
            near = nearest_columns(str(col), colnames)
            raise InputError(where, f"column '{col}' is not in the row" + (f"; nearest: '{near[0]}'" if near else ""))
        v = _plain(get(col))
        if v is None:
            continue
        corr[pair_key(*parts[0])] = float(v.value if isinstance(v, u.Quantity) else v)
    if corr:
        star["correlations"] = corr
    star.update(values)
    scenario_from_dict({"star": star}, source="star_from_table")  # validate now, naming the key
    return star
