"""Python front doors: the few functions a notebook needs, each also ``kinage.<name>``.

Every front door takes a :class:`~kinage.io.scenario.Scenario`, a path of a
scenario file or a mapping of tables (as :func:`scenario_from_dict` takes),
returns the stage's result object (``to_dict()``, ``summary()``,
``plot(kind=None, ax=None)``, ``write_products(out_dir)``) and raises each
warning the result records as a :class:`~kinage.warnings.KinageWarning`
subclass (and logs it on ``logging.getLogger("kinage")``).

Examples
--------
>>> import astropy.units as u
>>> from astropy.coordinates import SkyCoord
>>> import kinage
>>> coord = SkyCoord(ra=148.31 * u.deg, dec=-23.72 * u.deg, distance=510 * u.pc,
...                  pm_ra_cosdec=21.0 * u.mas / u.yr, pm_dec=-9.5 * u.mas / u.yr)
>>> star = kinage.star_from_skycoord(coord, name="Invented-1", spin_period=0.6271 * u.s,
...                                  spin_period_derivative=2.1e-15, distance_error=40 * u.pc)
>>> star["distance"], star["pm_dec"]
(<Quantity 510. pc>, <Quantity -9.5 mas / yr>)
>>> scenario = kinage.scenario_from_dict({"star": star, "ages": {"braking_index": 3}})
>>> scenario.star.spin_period
<Quantity 0.6271 s>
"""

import threading
from pathlib import Path

from .errors import InputError
from .warnings import AgesWarning, FitWarning, ForecastWarning, KinageWarning, TraceWarning, emit

__all__ = ["load_scenario", "scenario_from_dict", "star_from_skycoord", "as_scenario", "forecast", "simulate",
           "fit", "trace", "compare_ages", "run"]

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


def _associations(obj):
    """An AssociationTable from a path, Table, QTable or AssociationTable."""
    from .associations.table import AssociationTable, read_associations

    if isinstance(obj, AssociationTable):
        return obj
    return read_associations(_table_input(obj, "[trace] associations", "a file path, an astropy Table or QTable"))


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
                    assoc = _associations(value)
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


# ------------------------------------------------------------------ stages
def _recorded(result):
    msgs = getattr(result, "warnings", None)
    if msgs is None and isinstance(getattr(result, "data", None), dict):
        msgs = result.data.get("warnings")  # a trace keeps them with its data
    return [str(m) for m in msgs or []]


def _warn(result, category, raised=(), stacklevel=5):
    """Raise (and log) the warnings ``result`` records that the stage did not already raise.

    ``stacklevel`` 5 points at the user's call of a front door that calls :func:`_stage` (emit, _warn,
    _stage, the front door, the caller); 4 when the front door calls this directly.
    """
    raised = [r.lower() for r in raised]
    emit([m for m in _recorded(result) if not any(m.rstrip(".").lower() in r for r in raised)], category,
         stacklevel=stacklevel)
    return result


def _check_rng(rng):
    """``rng`` as the stages take it, or an InputError naming it (before any work)."""
    import numpy as np

    if rng is None or isinstance(rng, (np.random.Generator, np.random.SeedSequence, np.random.BitGenerator)):
        return rng
    if isinstance(rng, (int, np.integer)) and not isinstance(rng, bool) and rng >= 0:
        return rng
    raise InputError("rng", f"expected a non-negative integer seed, a numpy.random.Generator or None (got {rng!r})")


def _stage(func, category, *args, **kwargs):
    """Run a stage; warnings kinage's own modules raise come out as ``category`` (a KinageWarning)."""
    if "rng" in kwargs:
        _check_rng(kwargs["rng"])
    result, raised = _catching(func, category, *args, **kwargs)
    return _warn(result, category, raised)


#: held while a front door records warnings (see :func:`_catching`); re-entrant for nested front doors
_WARNINGS_LOCK = threading.RLock()


def _catching(func, category, *args, stacklevel=5, **kwargs):
    """``func(*args, **kwargs)`` and the texts of the warnings it raised (re-raised as described in :func:`_stage`).

    kinage's own warnings are raised again at the user's line (``stacklevel`` as in :func:`_warn`), as
    ``category`` unless they are KinageWarnings already; other packages' warnings pass on unchanged.
    """
    import warnings

    root = str(Path(__file__).resolve().parent)
    # catch_warnings swaps the process-wide warnings.showwarning and filters: two threads inside it at once
    # restore each other's copies in the wrong order and leave the user's warnings hidden; one at a time
    with _WARNINGS_LOCK, warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = func(*args, **kwargs)
    raised = []
    for w in caught:
        text = str(w.message)
        if str(w.filename).startswith(root):
            emit([text], w.category if issubclass(w.category, KinageWarning) else category, stacklevel=stacklevel)
        else:  # someone else's warning (numpy, astropy, ...): pass it on unchanged
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno, source=w.source)
        raised.append(text)
    return result, raised


def forecast(scenario, *, progress=False, **kwargs):
    """Forecast what a timing campaign measures (:func:`kinage.timing.forecast`).

    Parameters
    ----------
    scenario : Scenario, path or dict
        Needs ``[star]`` ra, dec (and spin for photon TOA errors) and ``[campaign]``.
    progress : bool
        Show a progress bar (a widget in Jupyter).
    **kwargs
        Passed on (e.g. ``method``).

    Returns
    -------
    ForecastResult
    """
    from .timing import forecast as _forecast

    return _stage(_forecast, ForecastWarning, as_scenario(scenario), progress=progress, **kwargs)


def simulate(scenario, *, rng=None, **kwargs):
    """Simulate arrival times for the scenario's campaign (:func:`kinage.timing.simulate_toas`).

    Returns
    -------
    SimulationResult
        Its ``table`` is a TOA table :func:`fit` accepts.
    """
    from .timing import simulate_toas

    return _stage(simulate_toas, FitWarning, as_scenario(scenario), rng=rng, **kwargs)


def _looks_like_scenario(obj):
    from .io.scenario import Scenario

    if isinstance(obj, (Scenario, dict)):
        return True
    return isinstance(obj, (str, Path)) and Path(obj).suffix.lower() == ".toml"


def fit(toas, scenario=None, **kwargs):
    """Fit arrival times (:func:`kinage.timing.fit_toas`).

    Parameters
    ----------
    toas : str, Path or astropy Table
        A TOA file (ECSV / CSV) or a table with columns ``mjd`` and ``error``.
    scenario : Scenario, path or dict
        ``[star]`` starting values and spin; ``[campaign]`` noise and priors.
        ``fit(scenario)`` alone fits the scenario's ``[campaign] toas``; the two
        arguments may also come in the other order.

    Returns
    -------
    FitResult
    """
    from .timing import fit_toas

    if scenario is None or (_looks_like_scenario(toas) and not _looks_like_scenario(scenario)):
        toas, scenario = scenario, toas
    camp = scenario.get("campaign") if isinstance(scenario, dict) else None
    if toas is not None and isinstance(camp, dict) and camp.get("toas") is None:
        # the TOAs come as an argument, so a [campaign] of noise and reference keys needs no plan or TOA errors
        held = str(toas) if isinstance(toas, (str, Path)) else "<in-memory TOA table>"
        scenario = {**scenario, "campaign": {**camp, "toas": held}}
        scn = scenario_from_dict(scenario, allow_missing=("campaign.toas",))
    else:
        scn = as_scenario(scenario)
    if toas is None:
        toas = scn.campaign.get("toas") if scn.campaign is not None else None
        if toas is None:
            raise InputError("toas", "give a TOA table (path or astropy Table) or [campaign] toas")
    toas = _table_input(toas, "toas", "a TOA file path or an astropy Table with columns mjd and error")
    return _stage(fit_toas, FitWarning, toas, scn, **kwargs)


def _with_associations(scn, associations):
    """The scenario with its [trace] table holding an in-memory AssociationTable."""
    if associations is None:
        if scn.trace is None or scn.trace.get("associations") is None:
            raise InputError("[trace] associations", "no association table: give associations=<path, Table or "
                             "QTable> or [trace] associations")
        return scn, _associations(scn.trace.get("associations"))
    table = _associations(associations)
    if scn.trace is None:
        raw = {k: v for k, v in (scn.raw or {}).items() if k != "trace"}
        raw.setdefault("star", {})
        raw["trace"] = {"associations": table}
        base = scn.path.parent if scn.path is not None else "."
        scn = scenario_from_dict(raw, base_dir=base).replace(path=scn.path, sha256=scn.sha256)
    else:
        scn = scn.replace(trace=scn.trace.replace(associations=table))
    return scn, table


def trace(scenario, associations=None, *, solution=None, rng=None, samples=None, potential=None, progress=False,
          **kwargs):
    """Trace the star back to candidate birth associations (:func:`kinage.orbits.trace`).

    Parameters
    ----------
    scenario : Scenario, path or dict
        ``[star]`` astrometry; ``[trace]`` settings (defaults when absent).
    associations : str, Path, astropy Table, QTable or AssociationTable, optional
        The candidate associations; default ``[trace] associations``.  No file
        is needed for a table.
    solution : AstrometricSolution or FitResult, optional
        Astrometry to trace (a fit result is combined with the ``[star]``
        values); default the ``[star]`` values.
    rng : numpy.random.Generator | int | None
        Default ``[trace] seed`` (1 when absent).
    samples : int, optional
        Overrides ``[trace] samples``.
    potential : str, optional
        Overrides ``[trace] potential``.
    progress : bool
        Show a progress bar (a widget in Jupyter).

    Returns
    -------
    TraceResult
    """
    from .orbits import trace as _trace
    from .pipeline import solution_for_trace

    from .io.limits import check_resources, check_samples

    samples = check_samples(samples)
    scn, table = _with_associations(as_scenario(scenario), associations)
    check_resources(scn, samples=samples, n_associations=len(table), samples_name="samples")  # before any work
    if solution is not None and not hasattr(solution, "covariance") and not hasattr(solution, "solution"):
        raise InputError("solution", f"expected an AstrometricSolution or the result of kinage.fit (got "
                                     f"{type(solution).__name__}); leave it out to use the [star] values")
    if solution is not None and hasattr(solution, "solution") and not hasattr(solution, "covariance"):
        solution = solution_for_trace(scn, solution)
    return _stage(_trace, TraceWarning, scn, solution=solution, rng=rng, samples=samples, potential=potential,
                  progress=progress, associations=table, **kwargs)


def compare_ages(scenario, trace_result=None, *, trace=None, kinematic_age=None, kinematic_age_samples=None,
                 rng=None, **kwargs):
    """Compare the kinematic, spin-down and cooling ages (:func:`kinage.ages.compare_ages`).

    Parameters
    ----------
    scenario : Scenario, path or dict
        ``[star]`` spin and temperature; ``[ages]`` settings (defaults when absent).
    trace_result, trace : TraceResult, optional
        Its favoured association's encounter times give the kinematic age
        (else its plane-crossing times); either name.
    kinematic_age, kinematic_age_samples : Quantity or ndarray (yr), optional
        Kinematic-age samples (a scalar is one exact value) instead (either name).
    rng : numpy.random.Generator | int | None

    Returns
    -------
    AgesResult
    """
    import numpy as np

    from ._units import to_plain
    from .ages import compare_ages as _compare
    from .pipeline import kinematic_age_input

    scn = as_scenario(scenario)
    trace_result = trace_result if trace_result is not None else trace
    if trace_result is not None and not hasattr(trace_result, "kinematic_age_samples"):
        raise InputError("trace", f"expected the TraceResult of kinage.trace (got {type(trace_result).__name__}); "
                         "or give kinematic_age=<Quantity>")
    name = "kinematic_age"
    if kinematic_age is None:
        kinematic_age, name = kinematic_age_samples, "kinematic_age_samples"
    if kinematic_age is not None:
        if isinstance(kinematic_age, str):  # "1.2 Myr", as in a scenario file
            from .io.quantities import parse_quantity

            kinematic_age = parse_quantity(kinematic_age, "yr", name)
        try:
            samples = np.atleast_1d(np.asarray(to_plain(kinematic_age, "yr", name), float))
        except InputError:
            raise
        except (TypeError, ValueError):
            raise InputError(name, f"expected a time Quantity (scalar or array), or numbers in yr "
                             f"(got {type(kinematic_age).__name__})") from None
        if samples.ndim > 1:  # a 2-D array would be flattened silently, mixing draws of different things
            raise InputError(name, f"expected a scalar or a 1-D array of ages (got an array of shape "
                                   f"{tuple(int(x) for x in samples.shape)})")
        if not np.any(np.isfinite(samples) & (samples > 0)):
            raise InputError(name, "expected at least one finite, positive age")
        label = kwargs.pop("kinematic_age_source", "given to kinage.compare_ages")
    else:
        samples, label = kinematic_age_input(scn, trace_result)
        label = kwargs.pop("kinematic_age_source", label)
    return _stage(_compare, AgesWarning, scn, kinematic_age_samples=samples, kinematic_age_source=label, rng=rng,
                  **kwargs)


def run(scenario, out_dir, *, seed=None, samples=None, progress=False, report=True, products=True, log=None,
        force=False):
    """Run every stage the scenario asks for and write results, figures and a report.

    Parameters
    ----------
    scenario : Scenario, path or dict
    out_dir : str or Path
        Created if needed; ``results.json``, one folder per stage, ``report.html``.
    seed : int, optional
        Overrides ``[trace] seed``.
    samples : int, optional
        Overrides ``[trace] samples``.
    progress : bool
    report, products : bool
        Write the report / each stage's tables and figures.
    log : callable, optional
        Called with one line per stage (default: the ``kinage`` logger).
    force : bool
        ``out_dir`` may hold files kinage did not write (notes, other results,
        the inputs): keep them and write the results beside them.  Without it
        such a folder is an InputError naming them.

    Returns
    -------
    RunResult
        ``stages`` maps stage names to results; a failed stage is named in
        ``failed`` and raised as a :class:`KinageWarning`.
    """
    from .io.paths import check_output_dir
    from .io.rundir import check_replaceable
    from .pipeline import run_pipeline
    from .warnings import logger

    scn = as_scenario(scenario)
    out_dir = check_output_dir(out_dir, "out_dir")  # a file in the way is an InputError naming out_dir, not an OSError
    check_replaceable(out_dir, "out_dir", inputs=scn.input_files(), force=force)
    result, raised = _catching(run_pipeline, KinageWarning, scn, out_dir, stacklevel=4, seed=seed, samples=samples,
                               progress=progress, report=report, products=products, log=log or logger.info,
                               force=force)
    for stage, res in result.stages.items():
        category = {"forecast": ForecastWarning, "fit": FitWarning, "trace": TraceWarning,
                    "ages": AgesWarning}.get(stage, KinageWarning)
        _warn(res, category, raised, stacklevel=4)
    emit([f"stage '{s}' failed: {m}" for s, m in result.failed.items()], KinageWarning)
    return result
