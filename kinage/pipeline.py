"""Run the stages a scenario asks for, passing results from stage to stage.

scenario -> timing (forecast, or fit when a TOA table is given) -> astrometric
solution -> trace (Monte Carlo draws, orbits, encounters) -> ages -> report.

Results travel between stages as objects; ``results.json`` is rewritten
(atomically) after every stage, so a failure in a late stage keeps the earlier
stages' numbers on disk and names the stage that failed.
"""

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .display.protocol import ResultDisplay
from .astrometry import solution_for_trace
from .errors import ConvergenceError, InputError, StageError
from .io.results import provenance, write_json

__all__ = ["plan_stages", "preflight", "run_pipeline", "RunResult", "DEFAULT_SEED", "stage_seed", "solution_for_trace",
           "kinematic_age_input"]

DEFAULT_SEED = 1
_STAGE_OFFSET = {"simulate": 11, "trace": 0, "ages": 3}


def stage_seed(seed, stage):
    """A per-stage seed derived from the run seed (stages get independent streams)."""
    if stage == "trace":
        return int(seed)
    return int(np.random.SeedSequence([int(seed), _STAGE_OFFSET[stage]]).generate_state(1)[0])


def plan_stages(scenario):
    """The stages the scenario's tables ask for, in order.

    ``[campaign]`` with a plan (``start``/``baseline``/``visits_per_year`` or
    ``dates``) -> ``forecast``; ``[campaign]`` naming a ``toas`` table ->
    ``fit`` (both when both are given: the fit's errors can then be read
    against the forecast's); ``[trace]`` -> ``trace``; ``[ages]`` -> ``ages``.
    """
    stages = []
    c = scenario.campaign
    if c is not None:
        has_plan = c.get("dates") is not None or all(c.get(k) is not None for k in ("start", "baseline", "visits_per_year"))
        if has_plan or c.get("toas") is None:
            stages.append("forecast")
        if c.get("toas") is not None:
            stages.append("fit")
    if scenario.trace is not None:
        stages.append("trace")
    if scenario.ages is not None:
        stages.append("ages")
    return stages


def preflight(scenario, samples=None):
    """Read and validate every table and the star's numbers the planned stages need, before any stage runs.

    Also checks the resources the run would need against the limits of
    :mod:`kinage.io.limits` (memory for draws x time steps, work), with
    ``samples`` overriding ``[trace] samples``.

    Returns
    -------
    dict
        ``toas`` (astropy Table) and ``associations`` (AssociationTable) when the
        scenario names them.

    Raises
    ------
    InputError
        Naming the file, row and column of the first problem.
    """
    loaded = {}
    stages = plan_stages(scenario)
    c = scenario.campaign
    if c is not None and c.get("toa_error") is None and c.get("pulsed_fraction") is not None:
        from .timing.photons import profile_from_campaign

        profile_from_campaign(c)  # a bad pulse shape or template is an input error, found before any stage
    if "fit" in stages:
        from .timing import read_toas

        loaded["toas"] = read_toas(scenario.campaign.toas)
        from .timing.toas import check_fit_table

        # too few TOAs, all on one day: input problems, found before any stage (the fit repeats the check
        # with its exact parameter count: 5 astrometric + phase + spin terms, + DM with several frequencies)
        check_fit_table(loaded["toas"], str(scenario.campaign.toas), 6 + int(scenario.campaign.get("spin_terms", 2)))
        from .timing.reference import resolve_reference

        # the TOA reference (scenario keys against the table's metadata): an input problem, found before any stage
        resolve_reference(scenario.campaign, loaded["toas"].meta, str(scenario.campaign.toas),
                          base_dir=scenario.path.parent if scenario.path is not None else None,
                          table_dir=Path(scenario.campaign.toas).parent)
        from .timing.toas import check_errors_against_period
        from .timing.inputs import spin_from_star

        # the fit's own checks of the star against the table: a spin period, TOA errors well below it
        freq, _, _ = spin_from_star(scenario.star, required=True, where="fitting TOAs")
        check_errors_against_period(loaded["toas"], 1.0 / freq, str(scenario.campaign.toas))
    if "trace" in stages or "ages" in stages:
        from .kinematics import check_star_distance

        # the star's distance inputs (parallax of any sign, distance estimate, their errors, the prior's range)
        # through the same posterior the trace and the Shklovskii term use: an input problem, found here
        check_star_distance(scenario, trace="trace" in stages, fitted="fit" in stages)
    if c is not None and c.get("birthplace_forecast"):
        from .campaign import check_birthplace_inputs

        check_birthplace_inputs(scenario, where="[campaign] birthplace_forecast")
    elif c is not None and str(c.get("schedule") or "").lower() == "birthplace":
        raise InputError("[campaign] schedule", "'birthplace' is chosen by the birthplace forecast: set [campaign] "
                         "birthplace_forecast = true")
    if "trace" in stages:
        from .associations import read_associations

        loaded["associations"] = read_associations(scenario.trace.associations,
                                                   columns=scenario.trace.get("association_columns"))
    from .io.limits import check_resources

    check_resources(scenario, samples=samples, n_associations=len(loaded.get("associations") or ()) or None)
    return loaded


def kinematic_age_input(scenario, trace_result=None):
    """Kinematic-age samples (yr) and a label for the ages stage.

    The favoured association's encounter times from a trace, else the scenario's
    ``[ages] kinematic_age``, else, when no association is favoured, the times
    since the Galactic-plane crossing (label ``"plane-crossing"``) when at least
    half of the draws crossed the mid-plane, else ``(None, None)``.
    """
    if trace_result is not None:
        samples = np.asarray(trace_result.kinematic_age_samples(), float)
        if samples.size:
            return samples, f"trace: encounters with association {trace_result.favoured}"
    if scenario.ages is not None and scenario.ages.get("kinematic_age") is not None:
        return None, "scenario: [ages] kinematic_age"
    if (trace_result is not None and hasattr(trace_result, "plane_crossing_age_samples")
            and getattr(trace_result, "favoured", None) is None):  # only when no association is favoured
        samples = np.asarray(trace_result.plane_crossing_age_samples(), float)
        samples = samples[np.isfinite(samples)]
        # only when most draws crossed: otherwise the trace itself calls it no age estimate for the star
        if samples.size and samples.size >= 0.5 * max(getattr(trace_result, "n_samples", 0) or 0, 1):
            return samples, "plane-crossing"  # no association favoured: named so in every verdict
    return None, None


def _run_numbers(r):
    out = [("star", r.scenario.star.get("name")), ("stages", ", ".join(r.stages) or "none"),
           ("output", str(r.out_dir))]
    if r.failed:
        out.append(("failed", "; ".join(f"{k}: {v}" for k, v in r.failed.items())[:200]))
    return out


@dataclass(repr=False)
class RunResult(ResultDisplay):
    """What ``run_pipeline`` produced.

    Attributes
    ----------
    stages : dict
        Stage name -> result object (stage-result protocol).
    failed : dict
        Stage name -> message for stages that failed.
    files : list of Path
        Everything written.
    """

    KEY_NUMBERS = _run_numbers

    scenario: object
    out_dir: Path
    seed: int
    planned: list
    stages: dict = field(default_factory=dict)
    failed: dict = field(default_factory=dict)
    files: list = field(default_factory=list)

    def parameter_sets(self):
        out = []
        for r in self.stages.values():
            out.extend(getattr(r, "parameter_sets", []) or [])
        return out

    def to_dict(self):
        d = {
            "title": self.scenario.title or self.scenario.star.get("name"),
            "star": self.scenario.star.get("name"),
            "stages_planned": list(self.planned),
            "stages_completed": list(self.stages),
            "failed_stage": next(iter(self.failed), None),
            "failures": dict(self.failed),
            "summary": {name: r.summary() for name, r in self.stages.items()},
        }
        for name, r in self.stages.items():
            d[name] = r.to_dict()
        d["summary"]["verdicts"] = self.verdicts(d)
        return d

    def verdicts(self, dicts=None):
        """The three verdict lines: ``{"motion", "birthplace", "ages"}`` -> one sentence each."""
        from .report.verdicts import run_verdicts

        if dicts is None:
            dicts = {name: r.to_dict() for name, r in self.stages.items()}
        return run_verdicts({n: dicts[n] for n in self.stages}, self.planned, self.failed)

    def summary(self):
        """The answers in words: per question its verdict line, then the stages' paragraphs."""
        from .report.document import QUESTIONS

        lines = self.verdicts()
        out = []
        for (question, stages, _), text in zip(QUESTIONS, lines.values()):
            paras = [self.stages[s].summary() for s in stages if s in self.stages]
            out.append("\n".join([question, text] + paras))
        return "\n\n".join(out)

    def write_json(self, path):
        prov = provenance(scenario=self.scenario, seed=self.seed, parameter_sets=self.parameter_sets(),
                          command="run")
        return write_json(path, self.to_dict(), prov)


def run_stage(name, scenario, done, *, seed, samples=None, progress=False, inputs=None):
    """Run one stage given the results of earlier ones (``done``: name -> result).

    ``inputs`` holds tables already read by :func:`preflight`.
    """
    inputs = inputs or {}
    if name == "forecast":
        from .timing import forecast

        if scenario.campaign.get("birthplace_forecast"):
            from .campaign import forecast_with_birthplace

            return forecast_with_birthplace(scenario, rng=stage_seed(seed, "trace"), samples=samples,
                                            progress=progress, associations=inputs.get("associations"))
        return forecast(scenario, progress=progress)
    if name == "fit":
        from .timing import fit_toas

        return fit_toas(inputs.get("toas", scenario.campaign.toas), scenario)
    if name == "trace":
        from .orbits import trace

        bp = getattr(done.get("forecast"), "birthplace", None)
        if bp is not None and done.get("fit") is None and getattr(bp, "trace_result", None) is not None:
            return bp.trace_result  # the birthplace forecast traced the same astrometry with the same seed

        sol = solution_for_trace(scenario, done.get("fit"))
        return trace(scenario, solution=sol, rng=stage_seed(seed, "trace"), samples=samples, progress=progress,
                     associations=inputs.get("associations"))
    if name == "ages":
        from .ages import compare_ages

        samples_k, label = kinematic_age_input(scenario, done.get("trace"))
        tr = done.get("trace")
        # one star for every stage: the trace's own draws (distance posterior and proper motions), or, without
        # a trace, the same astrometric solution it would have used
        star_draws = tr.data.get("draws") if tr is not None else None
        positioned = scenario.star.get("ra") is not None and scenario.star.get("dec") is not None
        sol = solution_for_trace(scenario, done.get("fit")) if star_draws is None and positioned else None
        return compare_ages(scenario, kinematic_age_samples=samples_k, kinematic_age_source=label,
                            rng=stage_seed(seed, "ages"), star_draws=star_draws, solution=sol)
    raise ValueError(f"unknown stage {name!r}")


def scenario_seed(scenario, seed=None):
    """The run seed: the command line's, else ``[trace] seed``, else :data:`DEFAULT_SEED`."""
    if seed is not None:
        return int(seed)
    if scenario.trace is not None and scenario.trace.get("seed") is not None:
        return int(scenario.trace.seed)
    return DEFAULT_SEED


def run_pipeline(scenario, out_dir, *, seed=None, samples=None, progress=False, report=True, products=True,
                 log=None, isolate=True, force=False):
    """Run every stage the scenario asks for and write results, figures and a report.

    Parameters
    ----------
    scenario : Scenario
    out_dir : str or Path
        Created if needed.
    seed : int, optional
        Overrides ``[trace] seed``.
    samples : int, optional
        Overrides ``[trace] samples``.
    progress : bool
        Show progress bars.
    report : bool
        Write ``report.html`` and ``report.md``.
    products : bool
        Write each stage's tables and figures (``results.json`` is always written).
    log : callable, optional
        Called with one line of text per stage.
    isolate : bool
        Lock ``out_dir`` against a second run and write into a fresh staging
        folder that replaces ``out_dir`` as a whole only when the run
        completes (a failed stage completes the run; results.json names it).
        An interrupted run leaves the previous ``out_dir`` untouched.
        ``False`` writes straight into ``out_dir`` (batch tasks, which stage
        each star themselves).  Only files an earlier run wrote are replaced
        (the folder's manifest, :mod:`kinage.io.ownership`); a folder holding
        anything else (a user's files, another verb's results, the run's own
        inputs) is refused with an InputError naming them, unless ``force``.
    force : bool
        Write the results beside what kinage did not write in ``out_dir``,
        keeping it (inputs are never deleted).

    Returns
    -------
    RunResult
        ``failed`` names a stage that raised; the stages before it are complete
        and on disk.
    """
    log = log or (lambda line: None)
    from .io.limits import check_samples
    from .io.paths import expand_path

    samples = check_samples(samples)
    out_dir = expand_path(out_dir, "out_dir")  # a path (not a number or None), ~ expanded
    inputs = preflight(scenario, samples=samples)  # a bad table stops the run here, before any stage or output
    if not isolate:
        out_dir.mkdir(parents=True, exist_ok=True)
        return _run_into(scenario, out_dir, inputs, seed=seed, samples=samples, progress=progress, report=report,
                         products=products, log=log)
    from .io.faults import check_free_space, run_output_bytes
    from .io.rundir import check_replaceable, output_lock, staged_folder

    trace_draws = (samples or scenario.trace.get("samples") or 2000) if scenario.trace is not None else 0
    check_free_space(out_dir, run_output_bytes(len(plan_stages(scenario)), trace_draws,
                                               len(inputs.get("associations") or ())))  # before any stage runs

    own_inputs = scenario.input_files()
    check_replaceable(out_dir, inputs=own_inputs, force=force)
    with output_lock(out_dir), staged_folder(out_dir, inputs=own_inputs, force=force) as work:
        run = _run_into(scenario, work, inputs, seed=seed, samples=samples, progress=progress, report=report,
                        products=products, log=log)
    final = Path(out_dir).absolute()
    run.files = [final / Path(f).relative_to(work) if Path(f).is_relative_to(work) else f for f in run.files]
    run.out_dir = final
    return run


def _run_into(scenario, out_dir, inputs, *, seed, samples, progress, report, products, log):
    """The stages, writing into ``out_dir`` (see :func:`run_pipeline`)."""
    seed = scenario_seed(scenario, seed)
    run = RunResult(scenario, out_dir, seed, plan_stages(scenario))
    json_path = out_dir / "results.json"
    for name in run.planned:
        log(f"stage {name} ...")
        try:
            result = run_stage(name, scenario, run.stages, seed=seed, samples=samples, progress=progress,
                               inputs=inputs)
        except (InputError, ConvergenceError, StageError, Exception) as exc:  # noqa: BLE001
            run.failed[name] = f"{type(exc).__name__}: {exc}"
            log(f"stage {name} failed: {exc}")
            run.files.append(run.write_json(json_path))
            break
        run.stages[name] = result
        if products:
            run.files.extend(result.write_products(out_dir / name))
        run.files.append(run.write_json(json_path))
        log(f"stage {name} done: {result.summary()}")
    if not run.planned:
        run.files.append(run.write_json(json_path))
    if report:
        from .report.document import write_reports

        run.files.extend(write_reports(run, out_dir))
    return run
