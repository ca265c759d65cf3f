"""What each command-line verb does (argument parsing lives in :mod:`kinage.cli`)."""

import json
import sys
import time
from pathlib import Path

from .errors import InputError
from .io.results import provenance, write_json
from .io.scenario import load_scenario

__all__ = [
    "cmd_forecast", "cmd_simulate", "cmd_fit", "cmd_trace", "cmd_ages", "cmd_run", "cmd_demo",
    "cmd_batch", "cmd_keys", "cmd_parameter_sets", "demo_folder",
]


def _say(args, text):
    if not getattr(args, "quiet", False):
        print(text)


def _require_table(scenario, table, verb):
    if getattr(scenario, table) is None:
        raise InputError(f"[{table}]", f"'kinage {verb}' needs a [{table}] table in the scenario")


def _finish(args, result, scenario, verb, seed=None, extra_files=()):
    """Shared tail of the single-stage verbs: products, JSON, summary."""
    if getattr(args, "out", None):
        from .io.rundir import output_lock, staged_files

        # one writer at a time per folder (the lock), and an interrupted write leaves --out as it was
        inputs = list(scenario.input_files()) + [Path(f) for f in extra_files if f is not None]
        with output_lock(args.out), staged_files(args.out, verb=verb, inputs=inputs) as work:
            files = result.write_products(work)
        _say(args, f"wrote {len(files)} files to {args.out}")
    if getattr(args, "json", None):
        prov = provenance(scenario=scenario, seed=seed, parameter_sets=getattr(result, "parameter_sets", []),
                          input_files=extra_files, command=verb)
        write_json(args.json, result.to_dict(), prov)
        _say(args, f"wrote {args.json}")
    if not getattr(args, "out", None) and not getattr(args, "json", None):
        _say(args, "(no --out or --json given: nothing was written; the summary below is the whole output)")
    _say(args, result.summary())
    return 0


def _outputs_not_inputs(args, scenario, extra=(), skip=()):
    """``--json`` / ``--output`` must not be any input file (the scenario's tables included, links resolved)."""
    from .io.options import check_outputs_not_inputs

    inputs = {}
    if scenario is not None:
        for sec, key in (("campaign", "toas"), ("trace", "associations"), ("campaign", "pulse_shape")):
            section = getattr(scenario, sec)
            value = section.get(key) if section is not None else None
            if isinstance(value, Path) and f"{sec}.{key}" not in skip:
                inputs[f"[{sec}] {key}"] = value
        if scenario.path is not None:
            inputs["the scenario"] = scenario.path
    for name, f in extra:
        if f is not None:
            inputs[name] = f
    check_outputs_not_inputs(args, inputs)


def _progress(args):
    return not getattr(args, "quiet", False)


def cmd_forecast(args):
    scenario = load_scenario(args.scenario)
    _outputs_not_inputs(args, scenario)
    _require_table(scenario, "campaign", "forecast")
    from .timing import forecast

    birthplace = getattr(args, "birthplace", False)
    seed = args.seed
    if birthplace:  # every input checked before any work or output
        from .campaign import check_birthplace_inputs, check_outcomes
        from .io.limits import check_resources
        from .pipeline import scenario_seed

        check_birthplace_inputs(scenario)
        if getattr(args, "outcomes", None) is not None:
            check_outcomes(args.outcomes, "--outcomes")
        if getattr(args, "samples", None) is not None and args.samples < 1:
            raise InputError("--samples", f"must be a positive whole number (got {args.samples})")
        check_resources(scenario, samples=getattr(args, "samples", None))
        seed = scenario_seed(scenario, args.seed)
    elif getattr(args, "outcomes", None) is not None or getattr(args, "samples", None) is not None:
        raise InputError("--outcomes" if getattr(args, "outcomes", None) is not None else "--samples",
                         "only used with --birthplace")
    if birthplace:
        from .campaign import forecast_with_birthplace

        result = forecast_with_birthplace(scenario, outcomes=getattr(args, "outcomes", None), rng=seed,
                                          samples=getattr(args, "samples", None), progress=_progress(args),
                                          schedules=getattr(args, "compare_schedules", False))
    else:
        result = forecast(scenario, progress=_progress(args))
    if getattr(args, "compare_schedules", False) and result.schedules is None:
        raise InputError("--compare-schedules", "needs a plan from [campaign] start, baseline and visits_per_year "
                         "(this one has explicit dates or a TOA table)")
    status = _finish(args, result, scenario, "forecast", seed=seed)
    if getattr(args, "compare_schedules", False):
        print(_schedule_table(result))
    return status


def _schedule_table(result):
    """The three schedules' errors as a small text table."""
    def num(x):
        return "n/a" if x is None else (f"{x:.2g}" if abs(x) < 1e3 else f"{x:.2e}")

    lines = [f"{'schedule':<10} {'parallax error (mas)':>21} {'pm error along motion (mas/yr)':>31} "
             f"{'pm significance':>16}"]
    for name, row in result.schedules.items():
        mark = " *" if name == result.plan.schedule else ""
        if "error" in row:
            lines.append(f"{name + mark:<10} not available: {row['error']}")
            continue
        lines.append(f"{name + mark:<10} {num(row['parallax_error_mas']):>21} "
                     f"{num(row['pm_error_along_motion_masyr']):>31} {num(row['pm_significance']):>16}")
    lines.append(f"(* this scenario's schedule; {result.plan.n_visits} visits each, same TOA errors)")
    bp = getattr(result, "birthplace", None)
    if bp is not None and bp.schedules:
        lines.append("")
        lines.append(f"{'schedule':<10} {'chance of settling the birthplace':>34} {'expected information (bits)':>28}")
        for name, row in bp.schedules.items():
            mark = " *" if name == result.plan.schedule else ""
            lines.append(f"{name + mark:<10} {row['decisive_probability']:>34.2f} {row['information_bits']:>28.2f}")
        lines.append(f"({bp.schedules[next(iter(bp.schedules))]['n_outcomes']} simulated outcomes each; settling = "
                     "one hypothesis at probability >= 0.9)")
    return "\n".join(lines)


def cmd_simulate(args):
    # the scenario may name the TOA table this command is about to write
    scenario = load_scenario(args.scenario, allow_missing=("campaign.toas",))
    _outputs_not_inputs(args, scenario, skip=("campaign.toas",))  # simulate writes [campaign] toas
    _require_table(scenario, "campaign", "simulate")
    from .pipeline import scenario_seed
    from .timing import simulate_toas

    seed = scenario_seed(scenario, args.seed)
    output = args.output
    if output is None and args.out is not None:
        output = Path(args.out) / "toas.ecsv"
    if output is None:
        raise InputError("--output", "say where to write the TOA table (--output TOAS or --out DIR)")
    if args.output is None:  # toas.ecsv in --out: not an input either
        import argparse

        _outputs_not_inputs(argparse.Namespace(output=output), scenario, skip=("campaign.toas",))
    result = simulate_toas(scenario, rng=seed)
    result.write(output)
    _say(args, f"wrote {len(result.table)} TOAs to {output}")
    if args.json:
        write_json(args.json, result.to_dict(), provenance(scenario=scenario, seed=seed, command="simulate"))
        _say(args, f"wrote {args.json}")
    return 0


def cmd_fit(args):
    if args.scenario is None:  # `kinage fit star.toml`: the scenario's own [campaign] toas
        if args.toas.suffix.lower() != ".toml":
            raise InputError("--scenario", "required with a TOA table: the scenario with the star's starting "
                             "values (or give the scenario alone, with [campaign] toas naming the table)")
        args.scenario = args.toas
        scenario = load_scenario(args.scenario)
        toas = scenario.campaign.get("toas") if scenario.campaign is not None else None
        if toas is None:
            raise InputError("[campaign] toas", f"'kinage fit {args.scenario}' needs the TOA table named here "
                             "(or give it: kinage fit TOAS --scenario SCENARIO)")
        args.toas = Path(toas)
    scenario = load_scenario(args.scenario)
    _outputs_not_inputs(args, scenario, extra=[("the TOA table", args.toas)])
    from .errors import ConvergenceError
    from .timing import fit_toas

    try:
        result = fit_toas(Path(args.toas), scenario)  # the path names the file in error messages
    except ConvergenceError as exc:
        if exc.last_result is None:
            raise
        # the last iterate is still written (converged: false, with the likely cause); exit status 1
        _finish(args, exc.last_result, scenario, "fit", seed=args.seed, extra_files=[args.toas])
        print(f"kinage fit: not converged: {exc}", file=sys.stderr)
        return 1
    return _finish(args, result, scenario, "fit", seed=args.seed, extra_files=[args.toas])


def cmd_trace(args):
    scenario = load_scenario(args.scenario)
    _outputs_not_inputs(args, scenario)
    _require_table(scenario, "trace", "trace")
    from .orbits import trace
    from .pipeline import scenario_seed, solution_for_trace, stage_seed

    if args.samples is not None and args.samples < 1:
        raise InputError("--samples", f"must be a positive whole number (got {args.samples})")
    from .io.limits import check_resources

    from .associations import read_associations

    table = read_associations(scenario.trace.associations,  # read once: sizes the check and feeds the trace
                              columns=scenario.trace.get("association_columns"))
    check_resources(scenario, samples=args.samples, n_associations=len(table))
    seed = scenario_seed(scenario, args.seed)
    result = trace(scenario, solution=solution_for_trace(scenario), rng=stage_seed(seed, "trace"),
                   samples=args.samples, potential=args.potential, progress=_progress(args), associations=table)
    return _finish(args, result, scenario, "trace", seed=seed)


def cmd_ages(args):
    scenario = load_scenario(args.scenario)
    _outputs_not_inputs(args, scenario, extra=[("--trace-json", getattr(args, "trace_json", None))])
    import numpy as np

    from .ages import compare_ages
    from .pipeline import kinematic_age_input, scenario_seed, stage_seed

    seed = scenario_seed(scenario, args.seed)
    samples, label = kinematic_age_input(scenario)
    extra = []
    if args.trace_json:
        samples, label = _ages_from_trace_json(args.trace_json)
        extra.append(args.trace_json)
    result = compare_ages(scenario, kinematic_age_samples=None if samples is None else np.asarray(samples),
                          kinematic_age_source=label, rng=stage_seed(seed, "ages"))
    return _finish(args, result, scenario, "ages", seed=seed, extra_files=extra)


def _ages_from_trace_json(path):
    """Kinematic-age samples from a trace JSON (its favoured association's encounter ages)."""
    import numpy as np

    try:
        data = json.loads(Path(path).read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise InputError("--trace-json", f"cannot read a JSON trace result from {path} ({exc})") from None
    if not isinstance(data, dict):
        raise InputError("--trace-json", f"{path} holds a JSON {type(data).__name__}, not the object (with "
                                         "'associations' and 'favoured') that 'kinage trace --json' writes")
    if "associations" not in data and isinstance(data.get("trace"), dict):
        data = data["trace"]  # a 'kinage run' JSON holds the trace result under 'trace'
    assocs = data.get("associations") or []
    fav = data.get("favoured")
    if not isinstance(assocs, list):
        raise InputError("--trace-json", f"{path}: 'associations' is not a list")
    best = next((a for a in assocs if isinstance(a, dict) and a.get("name") == fav), None)
    if best is None:
        raise InputError("--trace-json", f"{path} names no favoured association, so it gives no kinematic age")
    age = best.get("age_yr") if isinstance(best.get("age_yr"), dict) else {}
    try:
        med, lo, hi = (float(age[k]) for k in ("median", "lo68", "hi68"))
    except (KeyError, TypeError, ValueError):
        raise InputError("--trace-json", f"{path}: association {fav} has no age (median, lo68, hi68)") from None
    if not (np.isfinite([med, lo, hi]).all() and 0 < lo <= med <= hi <= 1.38e10):
        raise InputError("--trace-json", f"{path}: association {fav} has an implausible age interval "
                                         f"(median {med:g}, 68% {lo:g}-{hi:g} yr)")
    # the JSON keeps the 68% interval, not the samples: rebuild a two-sided normal from it
    rng = np.random.default_rng(0)
    z = rng.normal(size=4000)
    return np.where(z < 0, med + z * (med - lo), med + z * (hi - med)), f"trace JSON: association {fav}"


def cmd_run(args):
    scenario = load_scenario(args.scenario)
    _outputs_not_inputs(args, scenario)
    out = args.out or Path(args.scenario).with_suffix("").name + "-results"
    return _run_and_report(args, scenario, Path(out))


def _run_and_report(args, scenario, out):
    from .pipeline import run_pipeline

    t0 = time.perf_counter()
    run = run_pipeline(scenario, out, seed=args.seed, samples=getattr(args, "samples", None),
                       progress=_progress(args), log=lambda line: _say(args, line), force=getattr(args, "force", False))
    if getattr(args, "json", None):
        run.write_json(args.json)
    from .report.document import QUESTIONS

    # the three answers at a glance, as results.json (summary.verdicts) and the report print them
    for (question, _, _), line in zip(QUESTIONS, run.verdicts().values()):
        _say(args, f"{question} {line}")
    _say(args, f"finished in {time.perf_counter() - t0:.1f} s; report: {Path(out) / 'report.html'}")
    if run.failed:
        stage, msg = next(iter(run.failed.items()))
        print(f"kinage: stage '{stage}' failed: {msg}; earlier stages' results are in {out}", file=sys.stderr)
        return 1
    return 0


def demo_folder():
    """The bundled demo data folder (see :func:`kinage.demo.demo_folder`)."""
    from .demo import demo_folder as _folder

    return _folder()


def cmd_demo(args):
    """``kinage demo``: list the invented cases, or copy one to ``--out`` and run it end to end."""
    from .demo import copy_case, get_case, list_lines

    if getattr(args, "list", False):
        if getattr(args, "case", None) is not None:
            get_case(args.case)  # a misspelt --case is named even with --list
        for line in list_lines():
            print(line)
        return 0
    case = get_case(getattr(args, "case", None))
    out = Path(args.out or "kinage-demo")
    copy_case(case, out)
    _say(args, f"copied the invented demo case '{case.name}' to {out}/")
    if case.kind == "batch":
        return _demo_batch(args, case, out)
    scenario = load_scenario(out / "scenario.toml")
    return _run_and_report(args, scenario, out / "results")


def _demo_batch(args, case, out):
    import argparse

    from .batch import run_batch
    from .report.population import write_population_report

    t0 = time.perf_counter()
    bargs = argparse.Namespace(stars=out / case.files[0], scenario=out / case.files[1], out=out / "results",
                               seed=args.seed, samples=getattr(args, "samples", None), force=False,
                               quiet=getattr(args, "quiet", False), scheduler=None, workers=2)
    status = run_batch(bargs)
    import shlex

    given = [f"--{k} {getattr(args, k)}" for k in ("seed", "samples") if getattr(args, k, None) is not None]
    line = " ".join([f"kinage demo --case {case.name}", f"--out {shlex.quote(str(out))}"] + given)
    report = write_population_report(out / "results", command=line)
    _say(args, f"finished in {time.perf_counter() - t0:.1f} s; report: {report}")
    return status


def cmd_batch(args):
    from .batch import run_batch

    return run_batch(args)


def cmd_keys(args):
    from .io.schema import SCHEMA, range_text

    for table, keys in SCHEMA.items():
        if args.table and table != args.table:
            continue
        print(f"[{table}]")
        for k in keys.values():
            unit = f" [{k.unit}]" if k.unit else ""
            default = "" if k.default is None else f" (default {k.default})"
            err = " (+ _error)" if k.error else ""
            limits = range_text(k)
            print(f"  {k.name}{unit}{err}{default}: {k.doc}" + (f" [{limits}]" if limits else ""))
        print()
    return 0


def cmd_parameter_sets(args):
    from .params import KINDS, available, get

    kinds = [args.kind] if args.kind else list(KINDS)
    for kind in kinds:
        if kind not in KINDS:
            raise InputError("kind", f"expected one of {', '.join(KINDS)} (got {kind!r})")
        print(f"{kind}:")
        for name in available(kind):
            p = get(kind, name)
            print(f"  {p.name}: {p.description}")
            for ref in p.references:
                print(f"      - {ref}")
        print()
    return 0
