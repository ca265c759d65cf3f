"""Read a table of stars for a batch run and turn each row into a scenario.

One row per star.  Columns are named like the ``[star]`` keys of a scenario
(``name``, ``ra``, ``dec``, ``parallax``, ``parallax_error``,
``pm_ra_cosdec``, ``pm_dec``, ``spin_period``, ``spin_period_derivative``,
``temperature``, ...).  ECSV columns carry their units; CSV columns are in the
default units of the scenario keys (``kinage keys star``).  The template
scenario supplies the ``[campaign]``, ``[trace]`` and ``[ages]`` tables and any
``[star]`` value the row leaves out.

The table may be ECSV, CSV, FITS or VOTable (:mod:`kinage.io.tables`).  A
catalogue's own column names are mapped in the template's
``[batch.star_columns]`` table (``parallax = "Plx"``, or ``distance = {column =
"Dist", unit = "kpc"}`` for a column without a unit); a mapped column needs a
unit from the file or the map; columns that are neither mapped nor named like
``[star]`` keys are then left alone (without a map they are refused, to catch
misspelt names).

Missing values (the rule for NaN): an empty cell, a masked value and a NaN
(``nan`` in CSV, NaN in ECSV) all mean "not given" for that star, exactly as
if the column were absent for that row: the template's ``[star]`` value is
used when it has one, otherwise the key is absent.  A star that then lacks a
value its stages need (e.g. ``parallax`` for tracing) fails alone with a
reason naming the key; the other stars run.  Infinite cells are not missing
values: they are rejected for that star like any out-of-range value.  Names
are required, unique and at most 200 characters long.
"""

import hashlib
import json
import math
import re
import tomllib
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..io.schema import SCHEMA
from ..io.scenario import file_sha256, scenario_from_dict

__all__ = ["read_star_rows", "load_template", "star_scenario", "star_input_hash", "template_file_hashes", "safe_name",
           "star_seed", "star_columns"]

#: where a batch template maps a star table's columns
STAR_MAP_KEY = "[batch.star_columns]"

_STAR_COLUMNS = set(SCHEMA["star"]) | {f"{k}_error" for k, v in SCHEMA["star"].items() if v.error}


def safe_name(name):
    """A file-system-safe folder name for a star."""
    s = re.sub(r"[^A-Za-z0-9._+-]+", "_", str(name)).strip("._")
    return s or "star"


def _shown(names):
    from ..io.readonce import shown_columns

    return shown_columns(names)


def read_star_rows(path, columns=None):
    """Read the star table into a list of ``{key: value}`` dicts (raw scenario values).

    Quantities with units become strings such as ``"3.2 mas"`` so the scenario
    reader converts and validates them like any scenario value.

    Parameters
    ----------
    path : str or Path
        ECSV, CSV, FITS or VOTable file.
    columns : dict, optional
        Column map ``[star] key -> file column`` or ``-> {column, unit}``
        (the template's ``[batch.star_columns]``).

    Raises
    ------
    InputError
        Unreadable table, no ``name`` column, unknown columns, duplicate names,
        a mapped column that is missing or has no unit.
    """
    from ..io.star_table import STAR_KEYS
    from ..io.tables import apply_column_map, parse_column_map, read_table

    path = Path(path)
    if not path.is_file():
        raise InputError("stars table", f"file not found: {path}")
    tab, _, _ = read_table(path, f"stars table {path.name}")
    mapping = parse_column_map(columns, STAR_KEYS, STAR_MAP_KEY)
    tab = apply_column_map(tab, mapping, f"stars table {path.name}", STAR_MAP_KEY)
    for key, spec in mapping.items():
        kind = SCHEMA["star"].get(key[:-6] if key.endswith("_error") and key not in SCHEMA["star"] else key).kind
        if kind in ("quantity", "angle") and tab[key].unit is None:
            raise InputError(f"{STAR_MAP_KEY} {key}", f"file column '{spec.column}' has no unit in {path.name}; "
                             f"give one in the map, e.g. {key} = {{column = \"{spec.column}\", unit = \"...\"}}")
    if "name" not in tab.colnames:
        raise InputError(f"stars table {path.name}", "needs a 'name' column")
    unknown = [c for c in tab.colnames if c not in _STAR_COLUMNS]
    if mapping:  # a catalogue export: the map names what is used, its other columns are left alone
        tab = tab[[c for c in tab.colnames if c in _STAR_COLUMNS]]
        unknown = []
    if unknown:
        raise InputError(f"stars table {path.name}",
                         f"unknown columns ({_shown(unknown)}); columns are named like [star] keys (see 'kinage "
                         "keys star')")
    if len(tab) == 0:
        raise InputError(f"stars table {path.name}", "the table has no rows (one row per star)")
    _check_column_units(tab, path.name)
    rows, seen = [], {}
    for i, rec in enumerate(tab):
        row = {}
        for col in tab.colnames:
            val = rec[col]
            if np.ma.is_masked(val):
                continue
            unit = tab[col].unit
            if isinstance(val, (np.floating, float)) and math.isnan(float(val)):
                continue  # NaN means "not given" (see the module docstring)
            if isinstance(val, np.generic):
                val = val.item()
            if unit is not None and isinstance(val, (int, float)):
                val = f"{val!r} {unit.to_string()}"
            row[col] = val
        name = str(row.get("name", "")).strip()
        if not name:
            raise InputError(f"stars table {path.name} row {i + 1}, column 'name'", "empty name")
        if len(name) > 200:
            raise InputError(f"stars table {path.name} row {i + 1}, column 'name'",
                             f"names are at most 200 characters long (got {len(name)} characters)")
        if name in seen:
            raise InputError(f"stars table {path.name} row {i + 1}, column 'name'",
                             f"duplicate name '{name}' (also row {seen[name] + 1})")
        seen[name] = i
        row["name"] = name
        rows.append(row)
    return rows


def _check_column_units(tab, name):
    """A column unit that cannot convert to its [star] key's unit fails every star: a table problem."""
    import astropy.units as u

    for col in tab.colnames:
        unit = tab[col].unit
        base = col[: -len("_error")] if col.endswith("_error") and col not in SCHEMA["star"] else col
        key = SCHEMA["star"].get(base)
        if unit is None or key is None or key.kind not in ("quantity", "angle"):
            continue
        default = u.Unit("mas" if key.kind == "angle" and col != base else key.unit or "deg")
        try:
            (1.0 * unit).to(default, equivalencies=u.temperature_energy())
        except u.UnitConversionError:
            raise InputError(f"stars table {name} column '{col}'",
                             f"unit {unit.to_string()} does not convert to {default.to_string()} (the unit of "
                             f"[star] {col}; see 'kinage keys star')") from None


def star_columns(template_raw):
    """The star-table column map of a template (``[batch.star_columns]``), or None.

    Raises
    ------
    InputError
        A ``[batch]`` table with other keys, or a map that is not a table.
    """
    batch = template_raw.get("batch")
    if batch is None:
        return None
    if not isinstance(batch, dict):
        raise InputError("[batch]", "expected a table holding star_columns")
    unknown = sorted(set(batch) - {"star_columns"})
    if unknown:
        raise InputError(f"[batch] {unknown[0]}", "unknown key; [batch] holds only star_columns")
    return batch.get("star_columns")


def load_template(path):
    """Read a template scenario as raw TOML data; returns ``(raw, folder)``."""
    path = Path(path)
    if not path.is_file():
        raise InputError("--scenario", f"template file not found: {path}")
    from ..io.readonce import read_input

    data = read_input(path, f"template {path.name}")  # read once; the hash of these bytes is recorded
    try:
        raw = tomllib.loads(data.decode("utf-8-sig"))  # a byte-order mark is dropped
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"template {path.name}", f"not valid TOML ({exc})") from None
    return raw, path.parent.resolve()


def star_scenario(row, template_raw, base_dir):
    """Validated scenario for one star: the template with ``[star]`` updated from the row."""
    raw = {k: (dict(v) if isinstance(v, dict) else v) for k, v in template_raw.items() if k != "batch"}
    star = dict(raw.get("star", {}))
    star.update(row)
    raw["star"] = star
    raw["title"] = f"{row['name']} (batch)"
    return scenario_from_dict(raw, base_dir=base_dir, source=f"star {row['name']!r}")


def star_seed(batch_seed, name):
    """Seed of one star: from the batch seed and the star's name only.

    Independent of row order, scheduling and worker count.
    """
    digest = hashlib.sha256(str(name).encode("utf-8")).digest()
    words = [int.from_bytes(digest[i:i + 4], "little") for i in range(0, 16, 4)]
    return int(np.random.SeedSequence([int(batch_seed), *words]).generate_state(1)[0])


def template_file_hashes(template_raw, base_dir):
    """``{value: SHA-256}`` of the files a template names (the bytes already read when there were, else read now)."""
    from ..io.readonce import recorded_sha256

    files = {}
    for table in template_raw.values():
        if isinstance(table, dict):
            for v in table.values():
                if isinstance(v, str) and (Path(base_dir) / v).is_file():
                    files[v] = recorded_sha256(Path(base_dir) / v) or file_sha256(Path(base_dir) / v)
    return files


def star_input_hash(row, template_raw, base_dir, seed, samples, files=None):
    """SHA-256 over everything a star's result depends on.

    The row, the template, the files the template names (by content: ``files``
    from :func:`template_file_hashes`, computed here when not given), the
    seed, the sample override and the kinage version.
    """
    from .._version import __version__

    if files is None:
        files = template_file_hashes(template_raw, base_dir)
    blob = json.dumps({"row": row, "template": template_raw, "files": files, "seed": seed, "samples": samples,
                       "version": __version__}, sort_keys=True, default=str)
    return hashlib.sha256(blob.encode("utf-8")).hexdigest()
