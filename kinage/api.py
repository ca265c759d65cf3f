"""Python front doors: the few functions a notebook needs, each also ``kinage.<name>`` (the scenario ones are
defined in :mod:`kinage.api_scenario`).

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

from .api_scenario import (_associations, _table_input, as_scenario, load_scenario, scenario_from_dict,
                           star_from_skycoord, star_from_table)
from .errors import InputError
from .warnings import AgesWarning, FitWarning, ForecastWarning, KinageWarning, TraceWarning, emit

__all__ = ["load_scenario", "scenario_from_dict", "star_from_skycoord", "star_from_table", "as_scenario", "forecast",
           "simulate", "fit", "trace", "compare_ages", "run"]

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


def forecast(scenario, *, progress=False, birthplace=False, outcomes=None, rng=None, **kwargs):
    """Forecast what a timing campaign measures (:func:`kinage.timing.forecast`).

    Parameters
    ----------
    scenario : Scenario, path or dict
        Needs ``[star]`` ra, dec (and spin for photon TOA errors) and ``[campaign]``.
    progress : bool
        Show a progress bar (a widget in Jupyter).
    birthplace : bool
        Also forecast the birthplace probabilities after the campaign
        (:func:`kinage.campaign.birthplace_forecast`; needs ``[trace]`` associations); the result's
        ``birthplace`` attribute and ``to_dict()["birthplace"]``.
    outcomes : int, optional
        Simulated campaign outcomes (default ``[campaign] outcomes``, 200).
    rng : numpy.random.Generator | int | None
        Seed of the birthplace forecast (default ``[trace] seed``, else 1).
    **kwargs
        Passed on (e.g. ``method``).

    Returns
    -------
    ForecastResult
    """
    from .timing import forecast as _forecast

    scn = as_scenario(scenario)
    if not birthplace:
        return _stage(_forecast, ForecastWarning, scn, progress=progress, **kwargs)
    from .campaign import check_birthplace_inputs, check_outcomes, forecast_with_birthplace

    check_birthplace_inputs(scn, where="birthplace=True")
    if outcomes is not None:
        check_outcomes(outcomes, "outcomes")
    if rng is not None:
        _check_rng(rng)
    return _stage(forecast_with_birthplace, ForecastWarning, scn, outcomes=outcomes, rng=rng, progress=progress,
                  **kwargs)


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


def fit(scenario, toas=None, **kwargs):
    """Fit arrival times (:func:`kinage.timing.fit_toas`).

    Parameters
    ----------
    scenario : Scenario, path or dict
        ``[star]`` starting values and spin; ``[campaign]`` noise and priors.
        ``fit(scenario)`` alone fits the scenario's ``[campaign] toas``.
    toas : str, Path or astropy Table, optional
        A TOA file (ECSV / CSV) or a table with columns ``mjd`` and ``error``.

    Returns
    -------
    FitResult

    Notes
    -----
    The scenario comes first, as in the other front doors.  The order of
    kinage 0.2, ``fit(toas, scenario)``, is recognised by type (a TOA table or
    a non-TOML path first, a scenario second) and still works for this release
    with a :class:`DeprecationWarning`.
    """
    from .timing import fit_toas

    if toas is not None and not _looks_like_scenario(scenario) and _looks_like_scenario(toas):
        import warnings

        warnings.warn("kinage.fit(toas, scenario) is deprecated: call kinage.fit(scenario, toas), scenario first "
                      "like the other front doors; the old order will stop working in the next release",
                      DeprecationWarning, stacklevel=2)
        scenario, toas = toas, scenario
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


def _with_associations(scn, associations, columns=None):
    """The scenario with its [trace] table holding an in-memory AssociationTable."""
    if columns is None and scn.trace is not None:
        columns = scn.trace.get("association_columns")
    if associations is None:
        if scn.trace is None or scn.trace.get("associations") is None:
            raise InputError("[trace] associations", "no association table: give associations=<path, Table or "
                             "QTable> or [trace] associations")
        return scn, _associations(scn.trace.get("associations"), columns)
    table = _associations(associations, columns)
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
          association_columns=None, **kwargs):
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
    association_columns : dict, optional
        Column map for the association table, kinage name -> file column or
        ``{"column": ..., "unit": ...}``; default ``[trace.association_columns]``.

    Returns
    -------
    TraceResult
    """
    from .orbits import trace as _trace
    from .pipeline import solution_for_trace

    from .io.limits import check_resources, check_samples

    samples = check_samples(samples)
    if association_columns is not None:
        from .associations.table import OPTIONAL, REQUIRED
        from .io.tables import parse_column_map

        association_columns = parse_column_map(association_columns, REQUIRED + OPTIONAL, "association_columns")
    scn, table = _with_associations(as_scenario(scenario), associations, association_columns)
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
        (else its plane-crossing times), and its distance and proper-motion draws the Shklovskii term;
        either name.
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
    if trace_result is not None and kwargs.get("star_draws") is None:
        kwargs["star_draws"] = trace_result.data.get("draws")  # the trace's distance and proper motions
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
