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
                                   pm_dec, radial_velocity, ra, dec (deg) and
                                   age; optional, a missing column means 0
=========================  ======  ==========================================

Every problem names the file, the row (1-based, data rows) and the column.
"""

from dataclasses import dataclass
from pathlib import Path

import astropy.units as u
import numpy as np

from ..errors import InputError

__all__ = ["COLUMNS", "REQUIRED", "OPTIONAL", "Association", "AssociationTable", "read_associations",
           "associations_from_table"]

#: default unit of every numeric column
COLUMNS = {
    "ra": "deg", "dec": "deg", "distance": "pc", "pm_ra_cosdec": "mas/yr", "pm_dec": "mas/yr",
    "radial_velocity": "km/s", "radius": "pc", "age": "Myr",
    "distance_error": "pc", "pm_ra_cosdec_error": "mas/yr", "pm_dec_error": "mas/yr",
    "radial_velocity_error": "km/s", "ra_error": "deg", "dec_error": "deg", "age_error": "Myr",
}
REQUIRED = ("name", "ra", "dec", "distance", "pm_ra_cosdec", "pm_dec", "radial_velocity", "radius", "age")
OPTIONAL = ("distance_error", "pm_ra_cosdec_error", "pm_dec_error", "radial_velocity_error", "ra_error", "dec_error",
            "age_error")
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


@dataclass(frozen=True)
class AssociationTable:
    """The validated associations, in table order.

    Attributes
    ----------
    associations : tuple of Association
    source : str
        File name (or 'table').
    """

    associations: tuple
    source: str = "table"

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


def read_associations(path):
    """Read an association table (ECSV or CSV), or validate one already in memory.

    Parameters
    ----------
    path : str or Path, or astropy Table / QTable, or AssociationTable
        A file name; a Table or QTable (columns with units are converted, plain
        columns are taken in the default units); an AssociationTable is
        returned as it is.

    Returns
    -------
    AssociationTable

    Raises
    ------
    InputError
        Naming the file, row and column of the first problem found.
    """
    from astropy.table import Table

    if isinstance(path, AssociationTable):
        return path
    if isinstance(path, Table):
        return associations_from_table(path, source=str(path.meta.get("name", "table")))
    if not isinstance(path, (str, Path)):
        raise InputError("[trace] associations", f"expected a file path, an astropy Table or QTable, or an "
                                                 f"AssociationTable (got {type(path).__name__})")
    path = Path(path)
    if not path.is_file():
        raise InputError("[trace] associations", f"file not found: {path}")
    from ..io.readonce import read_input, table_source

    fmt = "ascii.ecsv" if path.suffix.lower() == ".ecsv" else "ascii.csv"
    # read once (rows counted while reading: a huge file is refused before parsing); its hash is recorded
    data = read_input(path, str(path.name), max_rows=_MAX_ROWS, what="associations")
    try:
        table = Table.read(table_source(data), format=fmt)
    except Exception as exc:  # noqa: BLE001 - any parse error becomes an input error
        from ..io.readonce import parse_problem

        kind = fmt.split(".")[1].upper()
        raise InputError(str(path.name), f"could not read as {kind} ({parse_problem(exc)})") from None
    return associations_from_table(table, source=path.name)


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


def associations_from_table(table, source="table"):
    """Validate an astropy Table or QTable (or anything ``Table(...)`` accepts) as associations.

    Columns with units (Table column units or QTable Quantity columns) are
    converted to the default units of :data:`COLUMNS`; plain columns are taken
    in those units.

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

    table = Table(table) if not isinstance(table, Table) else table
    typo = _misspelt_columns(table.colnames)
    if typo:
        raise InputError(f"{source} column '{typo[0]}'", f"unknown column (did you mean '{typo[1]}'?); other "
                         "columns are ignored, so rename it to be used")
    missing = [c for c in REQUIRED if c not in table.colnames]
    if missing:
        raise InputError(source, "missing column(s) " + ", ".join(f"'{c}'" for c in missing)
                         + "; required: " + ", ".join(REQUIRED))
    if len(table) == 0:
        raise InputError(source, "the association table has no rows")
    if len(table) > _MAX_ROWS:
        raise InputError(source, f"{len(table):,} rows, above the limit of {_MAX_ROWS:,} associations")
    factors = {}
    for col, unit in COLUMNS.items():
        if col not in table.colnames:
            continue
        cu = table[col].unit
        try:
            factors[col] = 1.0 if cu is None else float((1.0 * cu).to_value(unit))
        except u.UnitConversionError:
            raise InputError(f"{source} column '{col}'", f"unit must convert to {unit} (got {cu})") from None
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
        rows.append(Association(name=name, **vals))
    return AssociationTable(tuple(rows), source)
