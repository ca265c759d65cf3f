"""Read and validate a scenario file (TOML).

A scenario has up to four tables, ``[star]``, ``[campaign]``, ``[trace]`` and
``[ages]``; their keys are defined in :mod:`kinage.io.schema`.  All problems
found are collected and raised together as one :class:`~kinage.errors.ScenarioError`,
one line per problem, each naming the table and key.

Examples
--------
>>> from kinage.io.scenario import scenario_from_dict
>>> s = scenario_from_dict({"star": {"ra": 10.0, "dec": -5.0, "parallax": "4.2 mas",
...                                  "parallax_error": 0.3}})
>>> s.star.parallax
<Quantity 4.2 mas>
>>> s.star.value("parallax_error", "uas")
300.0
"""

import hashlib
import math
import os
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import astropy.units as u

from ..errors import InputError, ScenarioError
from .quantities import format_quantity, parse_quantity, parse_time, shown
from .checks import MAX_VISITS, check_bounds as _check_bounds, physical_checks as _physical_checks
from .checks import reference_checks as _reference_checks
from .checks import short as _short, suggest as _suggest
from .distance_keys import FRACTION_KEYS as _FRACTION_KEYS, fraction as _fraction, resolve_distance as _resolve_distance
from .schema import SCHEMA, TOP_LEVEL_KEYS, Key



class Section:
    """A validated scenario table: attribute access to parsed values.

    Every key of the table's schema is an attribute: the parsed value
    (Quantity, Time, str, ...) or its default, or ``None`` when absent.
    ``<key>_error`` attributes exist for keys that allow an error.
    """

    __slots__ = ("_table", "_values", "_given")

    def __init__(self, table, values, given):
        object.__setattr__(self, "_table", table)
        object.__setattr__(self, "_values", dict(values))
        object.__setattr__(self, "_given", frozenset(given))

    def __getattr__(self, name):
        try:
            return self._values[name]
        except KeyError:
            raise AttributeError(f"[{self._table}] has no key '{name}'") from None

    def __setattr__(self, name, value):
        raise AttributeError("scenario sections are read-only; use .replace(...)")

    def __repr__(self):
        shown = ", ".join(f"{k}={self._values[k]!r}" for k in sorted(self._given))
        return f"Section[{self._table}]({shown})"

    @property
    def table(self):
        """Name of the table (``'star'``, ``'campaign'``, ...)."""
        return self._table

    def given(self, name):
        """Whether ``name`` was written in the file (not just defaulted)."""
        return name in self._given

    def get(self, name, default=None):
        """Parsed value of ``name`` or ``default`` when it is ``None``."""
        v = self._values.get(name)
        return default if v is None else v

    def value(self, name, unit=None, default=None):
        """Plain float of ``name`` in ``unit`` (``default`` when absent)."""
        v = self._values.get(name)
        if v is None:
            return default
        if isinstance(v, u.Quantity):
            return float(v.to_value(unit, equivalencies=u.temperature_energy())) if unit else float(v.value)
        return v

    def replace(self, **changes):
        """A copy with some values replaced (values must already be parsed)."""
        vals = dict(self._values)
        vals.update(changes)
        return Section(self._table, vals, set(self._given) | set(changes))

    def to_dict(self):
        """Given values as JSON-friendly data (quantities as strings with units)."""
        out = {}
        for k in sorted(self._given):
            out[k] = _jsonable(self._values[k])
        return out


def _jsonable(v):
    from astropy.time import Time

    if isinstance(v, u.Quantity):
        return format_quantity(v) if v.isscalar else [format_quantity(x) for x in v]
    if isinstance(v, Time):
        return v.isot if v.isscalar else list(v.isot)
    if isinstance(v, Path):
        return str(v)
    if isinstance(v, (list, tuple)):
        return [_jsonable(x) for x in v]
    return v


@dataclass(frozen=True, repr=False)
class Scenario:
    """A validated scenario.

    Attributes
    ----------
    star : Section
    campaign, trace, ages : Section or None
        ``None`` when the table is absent; its stage does not run.
    title : str
    path : Path or None
        The file read (``None`` when built from a dict).
    sha256 : str or None
        SHA-256 of the file's bytes.
    """

    star: Section
    campaign: Section | None = None
    trace: Section | None = None
    ages: Section | None = None
    title: str = ""
    path: Path | None = None
    sha256: str | None = None
    raw: dict = field(default_factory=dict, repr=False, compare=False)

    def __repr__(self):
        from .._results import scenario_repr

        return scenario_repr(self)

    def _repr_html_(self):
        from .._results import scenario_html

        return scenario_html(self)

    def input_files(self):
        """Every file the scenario names (scenario itself first), as Paths."""
        files = [self.path] if self.path else []
        for sec, key in (("campaign", "toas"), ("trace", "associations"), ("campaign", "pulse_shape")):
            s = getattr(self, sec)
            if s is not None and isinstance(s.get(key), Path):
                files.append(s.get(key))
        return files

    def input_tables(self):
        """Tables given in memory rather than as files (e.g. an association QTable from a notebook).

        Returns
        -------
        dict
            ``"[table] key"`` -> the object (it has ``to_dict()``), for provenance.
        """
        out = {}
        for sec, key in (("trace", "associations"),):
            s = getattr(self, sec)
            value = s.get(key) if s is not None else None
            if value is not None and not isinstance(value, (str, Path)) and hasattr(value, "to_dict"):
                out[f"[{sec}] {key}"] = value
        return out

    def replace(self, **changes):
        """A copy with some sections replaced."""
        from dataclasses import replace

        return replace(self, **changes)


def file_sha256(path):
    """SHA-256 hex digest of a file's bytes."""
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def load_scenario(path, *, allow_missing=()):
    """Read and validate a scenario TOML file.

    Parameters
    ----------
    path : str or Path
    allow_missing : iterable of str
        ``"table.key"`` names of file keys whose file need not exist yet
        (``kinage simulate`` writes ``campaign.toas``).

    Returns
    -------
    Scenario

    Raises
    ------
    ScenarioError
        Listing every problem, each naming its table and key.
    """
    from .paths import check_input_file

    try:
        path = check_input_file(path, "scenario", what="scenario file")
        data = path.read_bytes()
    except InputError as exc:
        raise ScenarioError([exc]) from None
    except OSError as exc:
        raise ScenarioError([InputError("scenario", f"cannot read {path} ({exc.strerror or exc})")]) from None
    try:
        raw = tomllib.loads(data.decode("utf-8-sig"))  # a byte-order mark (as some editors write) is dropped
    except UnicodeDecodeError:
        raise ScenarioError([InputError("scenario", "file is not UTF-8 text")], source=str(path)) from None
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError([InputError("scenario", f"not valid TOML ({exc})")], source=str(path)) from None
    scn = scenario_from_dict(raw, base_dir=path.parent, source=str(path), allow_missing=allow_missing)
    return scn.replace(path=path, sha256=hashlib.sha256(data).hexdigest())


def scenario_from_dict(raw, base_dir=".", source=None, *, allow_missing=()):
    """Validate a scenario given as a dict of tables (as TOML would give).

    Parameters
    ----------
    raw : dict
        ``{"star": {...}, "campaign": {...}, ...}``.
    base_dir : str or Path
        Folder against which relative paths resolve.
    source : str, optional
        Name used in error messages.
    allow_missing : iterable of str
        ``"table.key"`` names of file keys whose file need not exist yet.

    Returns
    -------
    Scenario
    """
    problems = []
    base_dir = Path(base_dir)
    if not isinstance(raw, dict):
        raise ScenarioError([InputError("scenario", "expected tables [star], [campaign], [trace], [ages]")], source)
    sections = {}
    for key, val in raw.items():
        if key in TOP_LEVEL_KEYS:
            if not isinstance(val, str):
                problems.append(InputError(key, f"expected a string (got {shown(val)})"))
            elif len(val) > _MAX_TEXT:
                problems.append(InputError(key, f"longer than {_MAX_TEXT} characters (got {len(val)})"))
            continue
        if key not in SCHEMA:
            if isinstance(val, dict):
                problems.append(InputError(f"[{_short(key)}]", "unknown table" + _suggest(key, list(SCHEMA))
                                           + "; expected one of [star], [campaign], [trace], [ages]"))
            else:
                problems.append(InputError(_short(key), "unknown top-level key" + _suggest(key, TOP_LEVEL_KEYS)
                                           + "; only 'title' and 'description' may stand above the tables "
                                             "[star], [campaign], [trace], [ages]"))
            continue
        if not isinstance(val, dict):
            problems.append(InputError(f"[{key}]", f"expected a table of keys (got {type(val).__name__})"))
            continue
        sections[key] = _parse_section(key, val, base_dir, problems, frozenset(allow_missing))
    if "star" not in raw:
        problems.append(InputError("[star]", "missing table: every scenario describes one star"))
    if not problems:
        _resolve_distance(sections, problems)
    if not problems:
        _cross_checks(sections, problems)
    if not problems:
        _physical_checks(sections, problems)
    if not problems:
        _reference_checks(sections, problems, base_dir)
    if problems:
        raise ScenarioError(problems, source=source)
    return Scenario(
        star=sections["star"],
        campaign=sections.get("campaign"),
        trace=sections.get("trace"),
        ages=sections.get("ages"),
        title=str(raw.get("title", "")),
        raw=raw,
    )


_MAX_TEXT = 10_000  # title / description
_MAX_NAME = 200  # a string value without its own max_length


def _parse_section(table, raw, base_dir, problems, allow_missing=frozenset()):
    schema = SCHEMA[table]
    allowed = set(schema) | {f"{k.name}_error" for k in schema.values() if k.error}
    values = {}
    given = set()
    failed = set()
    for name, val in raw.items():
        if name not in allowed:
            problems.append(InputError(f"[{table}] {_short(name)}", "unknown key" + _suggest(name, sorted(allowed))))
            continue
        if name in _FRACTION_KEYS.get(table, ()) and isinstance(val, str) and val.strip().endswith("%"):
            try:
                parsed = _fraction(f"[{table}] {name}", val)
            except InputError as exc:
                problems.append(exc)
                parsed = None
        elif name.endswith("_error") and name not in schema:
            key = schema[name[: -len("_error")]]
            err_key = Key(name, "quantity" if key.kind in ("quantity", "angle") else "float",
                          "mas" if key.kind == "angle" else key.unit, positive=True, example=key.example)
            parsed = _parse_value(table, err_key, val, base_dir, problems)
        else:
            parsed = _parse_value(table, schema[name], val, base_dir, problems,
                                  must_exist=f"{table}.{name}" not in allow_missing)
        if parsed is not None:
            values[name] = parsed
            given.add(name)
        else:
            failed.add(name)
    for key in schema.values():
        values.setdefault(key.name, _default(key))
        if key.error:
            values.setdefault(f"{key.name}_error", None)
    for name in list(given):
        if name.endswith("_error") and name not in schema and name[: -len("_error")] not in given | failed:
            problems.append(InputError(f"[{table}] {name}", f"given without '{name[:-6]}'"))
    return Section(table, values, given)


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
    raise AssertionError(f"unknown key kind {kind}")


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


def _path(val, base_dir, where, must_exist=True):
    from .paths import check_input_file, check_output_file

    if not isinstance(val, str) or not val.strip():
        raise InputError(where, f"expected a file path (got {shown(val)})")
    if must_exist:
        return check_input_file(val.strip(), where, base_dir=base_dir)
    p = check_output_file(Path(base_dir) / Path(val.strip()) if not val.strip().startswith("~") else val.strip(),
                          where)
    return Path(os.path.abspath(p))


def _cross_checks(sections, problems):
    star = sections["star"]
    needs_position = any(t in sections for t in ("campaign", "trace"))
    if needs_position:
        for k in ("ra", "dec"):
            if star.get(k) is None:
                problems.append(InputError(f"[star] {k}", "required when [campaign] or [trace] is present"))
    if "trace" in sections:
        timed = "campaign" in sections and sections["campaign"].get("toas") is not None
        if star.get("parallax") is None and star.get("distance") is None and not timed:
            problems.append(InputError("[star] parallax", "give 'parallax' (with parallax_error) or 'distance' for tracing"))
        timed = "campaign" in sections and sections["campaign"].get("toas") is not None
        for k in ("pm_ra_cosdec", "pm_dec"):
            if star.get(k) is None and not timed:  # a TOA fit measures the proper motion the trace uses
                problems.append(InputError(f"[star] {k}", "required for tracing (the star's proper motion), "
                                                          "unless [campaign] toas gives a timing fit"))
        if sections["trace"].get("associations") is None:
            problems.append(InputError("[trace] associations", "required: path of the association table"))
    ages = sections.get("ages")
    shklovskii = (ages is not None and ages.get("shklovskii", True) and star.get("pm_ra_cosdec") is not None
                  and star.get("spin_period_derivative") is not None)
    if star.get("parallax") is not None and star.get("parallax_error") is None and ("trace" in sections or shklovskii):
        why = "tracing" if "trace" in sections else "the Shklovskii correction of the ages"
        problems.append(InputError("[star] parallax_error", f"required with 'parallax' for {why} (the distance "
                                   "posterior needs it; use distance if it is exact)"))
    if "campaign" in sections:
        c = sections["campaign"]
        if c.get("dates") is None and c.get("toas") is None:
            for k in ("start", "baseline", "visits_per_year"):
                if c.get(k) is None:
                    problems.append(InputError(f"[campaign] {k}", "required unless 'dates' or 'toas' is given"))
        if c.get("toa_error") is None and c.get("toas") is None:
            for k in ("exposure", "source_rate", "pulsed_fraction"):
                if c.get(k) is None:
                    problems.append(InputError(f"[campaign] {k}", "required unless 'toa_error' is given"))
            if star.get("spin_period") is None:
                problems.append(InputError("[star] spin_period", "required to compute TOA errors from photons"))
        pf = c.get("pulsed_fraction")
        if pf is not None and not pf > 0:
            problems.append(InputError("[campaign] pulsed_fraction", f"must be in (0, 1] (got {pf})"))
        if c.get("dates") is None and c.get("baseline") is not None and c.get("visits_per_year") is not None:
            interval = 1.0 / c.visits_per_year
            if c.baseline.to_value(u.yr) < interval:
                problems.append(InputError("[campaign] baseline",
                                           f"shorter than one visit interval ({format_quantity(c.baseline)} < {interval:.3g} yr)"))
