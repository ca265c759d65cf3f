"""Read and validate a table of candidate birth associations.

Columns (ECSV with units in the header, or CSV in the default units below):

=========================  ======  ==========================================
column                     unit    meaning
=========================  ======  ==========================================
name                       --      unique name
ra, dec                    deg     ICRS centre
distance                   pc      distance of the centre
pm_ra_cosdec, pm_dec       mas/yr  mean proper motion
radial_velocity            km/s    mean heliocentric radial velocity
radius                     pc      size used for the encounter criterion
age                        Myr     age of the association
<col>_error                as col  1-sigma errors of distance, pm_ra_cosdec,
                                   pm_dec, radial_velocity, ra, dec (deg),
                                   radius and age; optional, a missing column
                                   means 0
=========================  ======  ==========================================

Files may be ECSV, CSV, FITS or VOTable (:mod:`kinage.io.tables`), with the
authors' own column names when a column map says which is which
(``[trace.association_columns]``, or ``columns=`` in Python).  Units come from
the file (ECSV header, FITS ``TUNIT``, VOTable ``unit``) or from the map and
are converted to the units above; a mapped column with neither is refused.
A radius given as an angle (arcmin, deg, ...) is converted to parsecs with the
association's distance, and the distance error is propagated into
``radius_error`` (added in quadrature to an angular radius error, if given).

Every problem names the file, the row (1-based, data rows) and the column.
"""

from dataclasses import dataclass
from pathlib import Path

import astropy.units as u
import numpy as np

from ..errors import InputError

__all__ = ["COLUMNS", "REQUIRED", "OPTIONAL", "SYNONYMS", "Association", "AssociationTable", "read_associations",
           "associations_from_table"]

#: where a column map for association tables goes in a scenario
MAP_KEY = "[trace.association_columns]"

#: default unit of every numeric column
COLUMNS = {
    "ra": "deg", "dec": "deg", "distance": "pc", "pm_ra_cosdec": "mas/yr", "pm_dec": "mas/yr",
    "radial_velocity": "km/s", "radius": "pc", "age": "Myr",
    "distance_error": "pc", "pm_ra_cosdec_error": "mas/yr", "pm_dec_error": "mas/yr",
    "radial_velocity_error": "km/s", "ra_error": "deg", "dec_error": "deg", "age_error": "Myr",
    "radius_error": "pc",
}
REQUIRED = ("name", "ra", "dec", "distance", "pm_ra_cosdec", "pm_dec", "radial_velocity", "radius", "age")
OPTIONAL = ("distance_error", "pm_ra_cosdec_error", "pm_dec_error", "radial_velocity_error", "ra_error", "dec_error",
            "age_error", "radius_error")
_BASE_SYNONYMS = {
    "name": ("Name", "Assoc", "Association", "Cluster", "ID", "Group"),
    "ra": ("RAdeg", "RA_ICRS", "RAJ2000", "RA", "_RA", "ra_deg", "RA_deg"),
    "dec": ("DEdeg", "DE_ICRS", "DEJ2000", "DE", "Dec", "_DE", "dec_deg", "DEC_deg"),
    "distance": ("Dist", "dist", "D", "d", "distance_pc", "Dist_pc", "Distance"),
    "pm_ra_cosdec": ("pm_ra", "pmRAcosDE", "pmracosdec", "pmRA_cosDE", "pmRAc"),
    "pm_dec": ("pmDE", "pm_de", "pmDE_ICRS"),
    "radial_velocity": ("RV", "rv", "HRV", "Vr", "vrad", "RVel"),
    "radius": ("Rad", "r", "R", "size", "Size", "r50", "R50", "radius_pc"),
    "age": ("Age", "age_myr", "Age_Myr", "t"),
}
#: catalogue spellings of each column, offered as the nearest match when a column is missing
SYNONYMS = dict(_BASE_SYNONYMS)
for _col, _names in _BASE_SYNONYMS.items():
    if _col != "name":
        SYNONYMS[f"{_col}_error"] = tuple(f"e_{n}" for n in _names) + tuple(f"{n}_error" for n in _names) \
            + tuple(f"{n}_err" for n in _names)
_POSITIVE = ("distance", "radius", "age")
#: physical ranges of a row: column -> (low, high, low open, high open, reason)
_RANGES = {
    "ra": (0.0, 360.0, False, True, "right ascension is an angle in [0, 360) deg"),
    "dec": (-90.0, 90.0, False, False, "declination is an angle in [-90, 90] deg"),
    "distance": (1.0, 1e5, False, False, "a Galactic association lies between 1 pc and 100 kpc"),
    # the lower ends catch a unit slip (a radius of 18 km, an age of 11 yr), not a physical limit
    "age": (0.01, 13_800.0, False, False, "no association is younger than ~10 kyr or older than the Galaxy "
            "(13.8 Gyr)"),
    "radius": (0.01, 1e4, False, False, "an association is larger than 0.01 pc (2000 au) and smaller than 10 kpc"),
    "pm_ra_cosdec": (-1e5, 1e5, False, False, "no star moves 100 arcsec/yr across the sky"),
    "pm_dec": (-1e5, 1e5, False, False, "no star moves 100 arcsec/yr across the sky"),
    "radial_velocity": (-5000.0, 5000.0, False, False, "no association moves faster than ~1000 km/s"),
    # an error beyond the whole range of its value says nothing (often a unit mistake)
    "ra_error": (0.0, 360.0, False, False, "an error beyond the whole circle"),
    "dec_error": (0.0, 180.0, False, False, "an error beyond the whole range of declination"),
    "distance_error": (0.0, 1e5, False, False, "an error beyond the range of Galactic distances"),
    "pm_ra_cosdec_error": (0.0, 1e5, False, False, "an error beyond 100 arcsec/yr"),
    "pm_dec_error": (0.0, 1e5, False, False, "an error beyond 100 arcsec/yr"),
    "radial_velocity_error": (0.0, 5000.0, False, False, "an error beyond 5000 km/s"),
    "age_error": (0.0, 13_800.0, False, False, "an error beyond the age of the Galaxy (13.8 Gyr)"),
    "radius_error": (0.0, 1e4, False, False, "an error beyond 10 kpc"),
}
_MAX_NAME = 200
_MAX_ROWS = 100_000


def _range_problem(col, x):
    if col not in _RANGES:
        return None
    lo, hi, lo_open, hi_open, why = _RANGES[col]
    if x < lo or x > hi or (lo_open and x == lo) or (hi_open and x == hi):
        span = f"{'(' if lo_open else '['}{lo:g}, {hi:g}{')' if hi_open else ']'} {COLUMNS[col]}"
        return f"must be in {span}: {why} (got {x:g} {COLUMNS[col]})"
    return None


def _shown(v):
    if hasattr(v, "item") and getattr(v, "ndim", None) == 0:
        v = v.item()
    text = repr(v)
    return text if len(text) <= 60 else text[:60] + "..."


@dataclass(frozen=True)
class Association:
    """One candidate birth association (plain floats in the default units of :data:`COLUMNS`)."""

    name: str
    ra: float
    dec: float
    distance: float
    pm_ra_cosdec: float
    pm_dec: float
    radial_velocity: float
    distance_error: float
    pm_ra_cosdec_error: float
    pm_dec_error: float
    radial_velocity_error: float
    radius: float
    age: float
    ra_error: float = 0.0
    dec_error: float = 0.0
    age_error: float = 0.0
    radius_error: float = 0.0


@dataclass(frozen=True)
class AssociationTable:
    """The validated associations, in table order.

    Attributes
    ----------
    associations : tuple of Association
    source : str
        File name (or 'table').
    sha256 : str
        SHA-256 of the file's bytes as read ('' for a table given in memory).
    """

    associations: tuple
    source: str = "table"
    sha256: str = ""

    def __len__(self):
        return len(self.associations)

    def __iter__(self):
        return iter(self.associations)

    def __getitem__(self, i):
        return self.associations[i]

    @property
    def names(self):
        return [a.name for a in self.associations]

    def column(self, name):
        """Values of one numeric column, ndarray in its default unit."""
        return np.array([getattr(a, name) for a in self.associations], float)

    def table(self):
        """The associations as an astropy QTable with units (default units of :data:`COLUMNS`)."""
        from astropy.table import QTable

        t = QTable()
        t["name"] = self.names
        for col, unit in COLUMNS.items():
            t[col] = self.column(col) * u.Unit(unit)
        t.meta["name"] = self.source
        return t

    def to_dict(self):
        """JSON-ready form: the source and one dict per association (default units)."""
        from dataclasses import asdict

        return {"source": self.source, "associations": [asdict(a) for a in self.associations]}


def read_associations(path, columns=None):
    """Read an association table (ECSV, CSV, FITS or VOTable), or validate one already in memory.

    Parameters
    ----------
    path : str or Path, or astropy Table / QTable, or AssociationTable
        A file name; a Table or QTable (columns with units are converted, plain
        columns are taken in the default units); an AssociationTable is
        returned as it is.
    columns : dict, optional
        Column map, kinage name -> file column, or -> ``{"column": ..., "unit":
        ...}`` for a file column without a unit (``[trace.association_columns]``
        in a scenario).

    Returns
    -------
    AssociationTable

    Raises
    ------
    InputError
        Naming the file, row and column of the first problem found.
    """
    from astropy.table import Table

    from ..io.tables import read_table

    if isinstance(path, AssociationTable):
        return path
    if isinstance(path, Table):
        return associations_from_table(path, source=str(path.meta.get("name", "table")), columns=columns)
    if not isinstance(path, (str, Path)):
        raise InputError("[trace] associations", f"expected a file path, an astropy Table or QTable, or an "
                                                 f"AssociationTable (got {type(path).__name__})")
    path = Path(path)
    if not path.is_file():
        raise InputError("[trace] associations", f"file not found: {path}")
    # read once (text rows counted while reading: a huge file is refused before parsing); its hash is recorded
    table, sha, _ = read_table(path, str(path.name), max_rows=_MAX_ROWS, what="associations")
    result = associations_from_table(table, source=path.name, columns=columns)
    return AssociationTable(result.associations, result.source, sha)


def _misspelt_columns(colnames):
    """(column, known name) for the first unknown column that is a near miss of a known one, else None.

    Other unknown columns (notes, Galactic coordinates, ...) are allowed and ignored; a near miss such as
    'distance_err' or 'radiuss' would otherwise be ignored silently.
    """
    import difflib

    known = list(REQUIRED) + list(OPTIONAL)
    for name in colnames:
        if name in known:
            continue
        close = difflib.get_close_matches(str(name), known, n=1, cutoff=0.8)
        if close and close[0] not in colnames:  # a near miss of a column the table lacks
            return str(name), close[0]
    return None


def _cell(table, col, i):
    v = table[col][i]
    if np.ma.is_masked(v):
        return np.nan
    if isinstance(v, u.Quantity):  # QTable cell: the column's unit is applied through its factor
        return v.value
    return v


def associations_from_table(table, source="table", columns=None):
    """Validate an astropy Table or QTable (or anything ``Table(...)`` accepts) as associations.

    Columns with units (Table column units or QTable Quantity columns) are
    converted to the default units of :data:`COLUMNS`; plain columns are taken
    in those units, except columns named by a column map, which need a unit
    from the file or the map.  A radius with an angular unit is converted with
    the association's distance.

    Parameters
    ----------
    table : astropy.table.Table or QTable
    source : str
        Name for messages.
    columns : dict, optional
        Column map (see :func:`read_associations`).

    Examples
    --------
    >>> import astropy.units as u
    >>> from astropy.table import QTable
    >>> t = QTable({"name": ["Tesserin Nova 9"], "ra": [201.5] * u.deg, "dec": [-41.2] * u.deg,
    ...             "distance": [0.41] * u.kpc, "pm_ra_cosdec": [-3.1] * u.mas / u.yr,
    ...             "pm_dec": [-2.2] * u.mas / u.yr, "radial_velocity": [4.0] * u.km / u.s,
    ...             "radius": [18.0] * u.pc, "age": [6.5] * u.Myr})
    >>> associations_from_table(t)[0].distance
    410.0
    """
    from astropy.table import Table

    from ..io.tables import apply_column_map, missing_column_problem, parse_column_map

    table = Table(table) if not isinstance(table, Table) else table
    mapping = parse_column_map(columns, REQUIRED + OPTIONAL, MAP_KEY)
    table = apply_column_map(table, mapping, source, MAP_KEY)
    for name in mapping:
        if name != "name" and getattr(table[name], "unit", None) is None:
            raise InputError(f"{MAP_KEY} {name}", f"file column '{mapping[name].column}' has no unit in {source}; "
                             f"give one in the map, e.g. {name} = {{column = \"{mapping[name].column}\", "
                             f"unit = \"{COLUMNS[name]}\"}}")
    typo = _misspelt_columns(table.colnames)
    if typo:
        raise InputError(f"{source} column '{typo[0]}'", f"unknown column (did you mean '{typo[1]}'?); other "
                         "columns are ignored, so rename it to be used")
    missing = [c for c in REQUIRED if c not in table.colnames]
    if missing:
        raise InputError(source, missing_column_problem(missing[0], table.colnames, SYNONYMS.get(missing[0], ()),
                                                        MAP_KEY)
                         + (f" (also missing: {', '.join(missing[1:])})" if len(missing) > 1 else ""))
    if len(table) == 0:
        raise InputError(source, "the association table has no rows")
    if len(table) > _MAX_ROWS:
        raise InputError(source, f"{len(table):,} rows, above the limit of {_MAX_ROWS:,} associations")
    factors, angular = {}, {}
    for col, unit in COLUMNS.items():
        if col not in table.colnames:
            continue
        cu = table[col].unit
        if col in ("radius", "radius_error") and cu is not None and u.Unit(cu).physical_type == "angle":
            angular[col] = float((1.0 * cu).to_value(u.rad))  # converted with the distance, row by row
            factors[col] = 1.0
            continue
        try:
            factors[col] = 1.0 if cu is None else float((1.0 * cu).to_value(unit))
        except u.UnitConversionError:
            also = " or an angle" if col in ("radius", "radius_error") else ""
            raise InputError(f"{source} column '{col}'", f"unit must convert to {unit}{also} (got {cu})") from None
    rows, seen = [], {}
    for i in range(len(table)):
        where = f"{source} row {i + 1}"
        name = _cell(table, "name", i)
        name = "" if name is None or (isinstance(name, float) and np.isnan(name)) else str(name).strip()
        if not name:
            raise InputError(f"{where}, column 'name'", "every association needs a name (got an empty value)")
        if len(name) > _MAX_NAME:
            raise InputError(f"{where}, column 'name'", f"names are at most {_MAX_NAME} characters long "
                                                        f"(got {len(name)} characters)")
        if name in seen:
            raise InputError(f"{where}, column 'name'", f"duplicate name '{name}' (also in row {seen[name] + 1})")
        seen[name] = i
        vals = {}
        for col in COLUMNS:
            if col not in table.colnames:
                vals[col] = 0.0
                continue
            raw = _cell(table, col, i)
            try:
                x = float(raw) * factors[col]
            except (TypeError, ValueError):
                raise InputError(f"{where}, column '{col}'", f"association '{name}': expected a number in "
                                 f"{COLUMNS[col]} (got {_shown(raw)})") from None
            if col in angular and np.isfinite(x):
                x = _angle_to_pc(col, x * angular[col], vals, where, name)
            if not np.isfinite(x):
                raise InputError(f"{where}, column '{col}'", f"association '{name}': missing or non-finite value "
                                 f"(got {_shown(raw)}); expected a number in {COLUMNS[col]}")
            if col in _POSITIVE and x <= 0:
                raise InputError(f"{where}, column '{col}'", f"association '{name}': must be positive "
                                 f"(got {x:g} {COLUMNS[col]})")
            if col.endswith("_error") and x < 0:
                raise InputError(f"{where}, column '{col}'", f"association '{name}': must be >= 0 "
                                 f"(got {x:g} {COLUMNS[col]})")
            problem = _range_problem(col, x)
            if problem:
                raise InputError(f"{where}, column '{col}'", f"association '{name}': {problem}")
            vals[col] = x
        if "radius" in angular and vals["distance"] > 0:
            # d radius / radius = d distance / distance for a fixed angle; independent of the angle's own error
            from_distance = vals["radius"] * vals["distance_error"] / vals["distance"]
            vals["radius_error"] = float(np.hypot(vals["radius_error"], from_distance))
        rows.append(Association(name=name, **vals))
    return AssociationTable(tuple(rows), source)


def _angle_to_pc(col, theta_rad, vals, where, name):
    """An angular size (radians) as parsecs at the association's distance (small angles: d tan theta)."""
    if not 0.0 <= theta_rad < np.pi / 4:
        raise InputError(f"{where}, column '{col}'", f"association '{name}': an angular {col.replace('_', ' ')} "
                         f"must lie in [0, 45) deg (got {np.degrees(theta_rad):g} deg)")
    return float(vals["distance"] * np.tan(theta_rad))
