"""Read the tables astronomers already have, and map their columns onto kinage's names.

A table may be ECSV (units in the header), CSV (plain numbers), FITS (binary or
ASCII table extension, units from ``TUNIT``) or VOTable (units from the
``unit`` attribute).  The format is chosen by content (FITS and VOTable files
announce themselves in their first bytes, ECSV in its first line) and, failing
that, by extension; anything else is read as CSV.

A column map says which file column holds which kinage column::

    {"pm_ra_cosdec": "pmRAcosDE", "distance": {"column": "Dist", "unit": "kpc"}}

Units come from the file's own metadata and are converted by the caller; a map
may give a unit where the file has none.  The file is read once, from the bytes
whose SHA-256 is returned with the table, so the hash a result records is the
hash of what was used.
"""

import difflib
import hashlib
import io
from pathlib import Path

import astropy.units as u

from ..errors import InputError

__all__ = ["FORMATS", "ColumnSpec", "read_table", "sniff_format", "parse_column_map", "apply_column_map",
           "nearest_columns", "missing_column_problem"]

#: formats kinage reads: name -> astropy reader
FORMATS = {"ecsv": "ascii.ecsv", "csv": "ascii.csv", "fits": "fits", "votable": "votable"}
_EXTENSIONS = {".ecsv": "ecsv", ".csv": "csv", ".txt": "csv", ".fits": "fits", ".fit": "fits", ".fts": "fits",
               ".vot": "votable", ".votable": "votable", ".xml": "votable"}


def sniff_format(data, name=""):
    """The format of a table from its first bytes, else from the file name's extension.

    Parameters
    ----------
    data : bytes
        The file's content (its start suffices).
    name : str
        File name, for the extension.

    Returns
    -------
    str
        One of the keys of :data:`FORMATS`.
    """
    head = bytes(data[:2880])
    if head.startswith(b"SIMPLE  ="):
        return "fits"
    text = head.lstrip(b"\xef\xbb\xbf").lstrip()
    if text.startswith(b"<?xml") or text[:200].upper().find(b"<VOTABLE") >= 0:
        return "votable"
    if text.startswith(b"# %ECSV"):
        return "ecsv"
    suffix = Path(name).suffix.lower()
    if suffix == ".gz":
        suffix = Path(Path(name).stem).suffix.lower()
    return _EXTENSIONS.get(suffix, "csv")


def read_table(path, where, *, max_rows=None, what="rows"):
    """Read a table file once; return it with the SHA-256 of the bytes read.

    Parameters
    ----------
    path : str or Path
    where : str
        Key or option that named the file, for messages.
    max_rows : int, optional
        Most rows accepted; a text table is refused while it is read (before parsing), a FITS or VOTable
        file after parsing.
    what : str
        Word for the rows in messages.

    Returns
    -------
    table : astropy.table.Table
    sha256 : str
        Of exactly the bytes parsed (also recorded for the run's provenance, :mod:`kinage.io.readonce`).
    fmt : str
        The format used (a key of :data:`FORMATS`).

    Raises
    ------
    InputError
        File missing or not readable as its format, or too many rows (one line naming the file).
    """
    from astropy.table import Table

    from .readonce import parse_problem, read_input, recorded_sha256

    path = Path(path)
    if path.is_dir():
        raise InputError(where, f"expected a file, found a folder: {path}")
    if not path.exists():
        raise InputError(where, f"file not found: {path}")
    with open(path, "rb") as fh:
        head = fh.read(2880)
    fmt = sniff_format(head, path.name)
    data = read_input(path, where, max_rows=max_rows if fmt in ("ecsv", "csv") else None, what=what)
    try:
        if fmt in ("fits", "votable"):
            import warnings

            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # unit and standard-conformance chatter of the readers
                table = Table.read(io.BytesIO(data), format=FORMATS[fmt])
        else:
            text = data.decode("utf-8-sig")
            if "\n" not in text:
                text += "\n"  # astropy reads a string with a newline as table content, not as a file name
            table = Table.read(text, format=FORMATS[fmt])
    except UnicodeDecodeError:
        raise InputError(where, f"{path.name} is not a text table (ECSV/CSV) nor FITS or VOTable") from None
    except Exception as exc:  # noqa: BLE001 - any reader failure is an input problem
        raise InputError(where, f"could not read {path.name} as {fmt.upper()} ({parse_problem(exc)})") from None
    if max_rows is not None and len(table) > max_rows:
        raise InputError(where, f"{len(table):,} rows, above the limit of {max_rows:,} {what}")
    return table, recorded_sha256(path) or hashlib.sha256(data).hexdigest(), fmt


def _short(exc):
    text = " ".join(str(exc).split())
    return text if len(text) <= 160 else text[:160] + "..."


class ColumnSpec:
    """Where one kinage column comes from: a file column and, optionally, the unit it is in."""

    __slots__ = ("column", "unit")

    def __init__(self, column, unit=None):
        self.column = column
        self.unit = unit

    def __repr__(self):
        return f"ColumnSpec({self.column!r}, unit={self.unit!r})"

    def __eq__(self, other):
        return isinstance(other, ColumnSpec) and (self.column, self.unit) == (other.column, other.unit)

    def to_dict(self):
        return {"column": self.column} if self.unit is None else {"column": self.column, "unit": self.unit}


def parse_column_map(raw, known, where):
    """Validate a column map (kinage name -> file column or ``{column, unit}``).

    Parameters
    ----------
    raw : dict or None
    known : sequence of str
        kinage column names the map may name.
    where : str
        The key that holds the map, e.g. ``"[trace.association_columns]"``.

    Returns
    -------
    dict of str -> ColumnSpec

    Raises
    ------
    InputError
        An unknown kinage name, a value that is neither a string nor a
        ``{column, unit}`` table, a unit astropy does not know, or two kinage
        names mapped to one file column.
    """
    if raw is None:
        return {}
    if isinstance(raw, dict) and all(isinstance(v, ColumnSpec) for v in raw.values()):
        return dict(raw)
    if not isinstance(raw, dict):
        raise InputError(where, f"expected a table of kinage name = \"file column\" (got {type(raw).__name__})")
    out, used = {}, {}
    for name, val in raw.items():
        if name not in known:
            close = difflib.get_close_matches(str(name), list(known), n=1, cutoff=0.6)
            hint = f" (did you mean '{close[0]}'?)" if close else ""
            raise InputError(f"{where} {name}", f"not a kinage column{hint}; the map names kinage columns "
                             f"({', '.join(known)}) on the left and file columns on the right")
        unit = None
        if isinstance(val, str):
            col = val
        elif isinstance(val, dict):
            extra = sorted(set(val) - {"column", "unit"})
            if extra or "column" not in val or not isinstance(val["column"], str):
                raise InputError(f"{where} {name}", "expected \"file column\" or {column = \"...\", unit = \"...\"}"
                                 + (f" (unknown key(s) {', '.join(extra)})" if extra else ""))
            col = val["column"]
            unit = val.get("unit")
            if unit is not None:
                if not isinstance(unit, str):
                    raise InputError(f"{where} {name}", f"unit must be a string such as \"kpc\" (got {unit!r})")
                try:
                    u.Unit(unit)
                except ValueError:
                    raise InputError(f"{where} {name}", f"unknown unit {unit!r}") from None
        else:
            raise InputError(f"{where} {name}", f"expected \"file column\" or {{column = ..., unit = ...}} "
                             f"(got {type(val).__name__})")
        if not col.strip():
            raise InputError(f"{where} {name}", "the file column name is empty")
        if col in used:
            raise InputError(f"{where} {name}", f"file column '{col}' is already mapped to '{used[col]}'; "
                             "each file column feeds one kinage column")
        used[col] = name
        out[name] = ColumnSpec(col, unit)
    return out


def nearest_columns(name, colnames, n=1):
    """The file columns nearest to ``name`` (case-insensitive), best first."""
    lower = {str(c).lower(): str(c) for c in colnames}
    hits = difflib.get_close_matches(str(name).lower(), list(lower), n=n, cutoff=0.5)
    return [lower[h] for h in hits]


def missing_column_problem(name, colnames, synonyms=(), map_key=None):
    """One line for a kinage column the table lacks: what the file has and the nearest match.

    Parameters
    ----------
    name : str
        The kinage column.
    colnames : sequence of str
        The file's columns.
    synonyms : sequence of str
        Catalogue spellings of the same quantity (case-insensitive), tried before
        the nearest-match search.
    map_key : str, optional
        The scenario table in which a map would go, for the hint.
    """
    lower = {str(c).lower(): str(c) for c in colnames}
    guess = next((lower[s.lower()] for s in synonyms if s.lower() in lower), None)
    if guess is None:
        near = nearest_columns(name, colnames)
        guess = near[0] if near else None
    from .readonce import shown_columns

    text = f"missing column '{name}'; the file has columns {shown_columns(colnames, limit=30)}"
    if guess is not None:
        text += f"; nearest: '{guess}'"
        if map_key:
            text += f" (map it with {map_key} {name} = \"{guess}\")"
    return text


def apply_column_map(table, mapping, where, map_key):
    """A copy of ``table`` with mapped columns renamed to kinage names and map units attached.

    Parameters
    ----------
    table : astropy.table.Table
    mapping : dict of str -> ColumnSpec
    where : str
        The table's name for messages.
    map_key : str
        The scenario table that holds the map, for messages.

    Returns
    -------
    astropy.table.Table
        Unmapped columns are kept under their own names, except a column whose
        name a mapped column takes over (it is dropped).

    Raises
    ------
    InputError
        A mapped file column that is not in the file (naming the nearest), or a
        map unit that contradicts the file's own unit.
    """
    from astropy.table import Table

    if not mapping:
        return table
    out = Table(table, copy=False)
    for name, spec in mapping.items():
        if spec.column not in out.colnames:
            near = nearest_columns(spec.column, table.colnames)
            hint = f"; nearest: '{near[0]}'" if near else ""
            raise InputError(f"{map_key} {name}", f"column '{spec.column}' is not in {where} (its columns: "
                             + ", ".join(f"'{c}'" for c in table.colnames[:30]) + f"){hint}")
    targets = set(mapping)
    sources = {spec.column for spec in mapping.values()}
    keep = [c for c in out.colnames if c in sources or c not in targets]
    renamed = out[keep]
    for name, spec in mapping.items():
        col = renamed[spec.column]
        file_unit = getattr(col, "unit", None)
        if spec.unit is not None:
            if file_unit is not None and u.Unit(file_unit) != u.Unit(spec.unit):
                raise InputError(f"{map_key} {name}", f"the file gives column '{spec.column}' in {file_unit}, the "
                                 f"map says {spec.unit}; remove the unit from the map (the file's is used)")
            if file_unit is None:
                col.unit = u.Unit(spec.unit)
    renamed.rename_columns([spec.column for spec in mapping.values()], list(mapping))
    return renamed
