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
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import astropy.units as u

from ..errors import InputError, ScenarioError
from .readonce import file_sha256  # noqa: F401 (re-exported: kinage.io.scenario.file_sha256)
from .quantities import format_quantity, shown
from .checks import physical_checks as _physical_checks
from .checks import reference_checks as _reference_checks
from .checks import short as _short, suggest as _suggest
from .distance_keys import FRACTION_KEYS as _FRACTION_KEYS, fraction as _fraction, resolve_distance as _resolve_distance
from .schema import SCHEMA, TOP_LEVEL_KEYS, Key
from .values import _default, _parse_value


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
        from .scenario_display import scenario_repr

        return scenario_repr(self)

    def _repr_html_(self):
        from .scenario_display import scenario_html

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
        _correlation_checks(sections["star"], problems)
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


def _correlation_checks(star, problems):
    """``[star.correlations]`` must join measured parameters and form a positive-definite matrix."""
    from .correlations import correlation_problem, pair_key

    corr = dict(star.get("correlations") or {})
    if star.given("pm_correlation"):
        if pair_key("pm_ra_cosdec", "pm_dec") in corr:
            problems.append(InputError("[star] pm_correlation", "also given as [star.correlations] "
                                       "pm_ra_cosdec_pm_dec; give it once"))
            return
        if star.get("pm_correlation"):
            corr[pair_key("pm_ra_cosdec", "pm_dec")] = float(star.get("pm_correlation"))
    if not star.given("correlations") or not corr:
        return
    measured = []
    for p in ("ra", "dec", "pm_ra_cosdec", "pm_dec", "parallax"):
        err = star.get(f"{p}_error")
        if star.get(p) is not None and err is not None and float(getattr(err, "value", err)) > 0:
            measured.append(p)
    problem = correlation_problem(corr, measured)
    if problem:
        problems.append(InputError("[star.correlations]", problem))


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
