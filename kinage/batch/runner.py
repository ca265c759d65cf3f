"""Run many stars as independent tasks on dask: locally or on a cluster.

Each star is one task that runs the whole pipeline into a temporary folder and
renames it into place when done, so a star's result is either complete or
absent.  Rerunning skips stars whose result exists with the same input hash;
``force`` redoes them.  A failing star is recorded with its reason and does not
stop the batch.  The same code path serves a local cluster (default) and a
remote scheduler.
"""

import contextlib
import json
import time
import logging
import os
import shutil
import signal
import sys
import uuid
from pathlib import Path

from ..errors import InputError
from ..io.results import atomic_write, to_jsonable
from .stars import (load_template, read_star_rows, safe_name, star_columns, star_input_hash, star_scenario,
                    star_seed, template_file_hashes)

__all__ = ["run_batch", "run_one_star", "plan_batch", "BatchPlan"]

RESULT_FILE = "star.json"
#: what the folder's batch was run with (inputs' hashes and settings), compared on a rerun
INPUTS_FILE = "batch-inputs.json"
#: the summary files, replaced as a set when a batch with other inputs or settings reuses the folder
SUMMARY_FILES = ("summary.ecsv", "population.png", "batch.json")

# Test hook: "N SIGNAME" (e.g. "1 SIGTERM") makes the batch send that signal once N stars have finished, so the
# interruption path is exercised at a known point instead of after a timed wait.  When the batch leads its own
# process group (started in a new session) the signal goes to the whole group, workers included, as a Ctrl-C
# in a terminal or a job scheduler's kill would; otherwise only to the batch process.
SIGNAL_AFTER_ENV = "KINAGE_BATCH_SIGNAL_AFTER"


class BatchPlan:
    """Which stars to run and which to skip.

    Attributes
    ----------
    todo : list of dict
        Task arguments of the stars to run.
    done : list of dict
        Records of stars whose results exist and match their input hash.
    """

    def __init__(self, todo, done, out_dir, seed, settings=None, expected=None):
        self.todo, self.done, self.out_dir, self.seed = todo, done, Path(out_dir), seed
        #: the inputs' hashes and the settings of this batch (recorded in :data:`INPUTS_FILE`)
        self.settings = settings or {}
        #: star name -> input hash of every star of this batch (the summary lists exactly these)
        self.expected = expected or {}


def _folder_names(rows):
    names = {}
    taken = {}
    for row in rows:
        base = safe_name(row["name"])
        if base in taken and taken[base] != row["name"]:
            import hashlib

            base = f"{base}-{hashlib.sha256(row['name'].encode()).hexdigest()[:6]}"
        taken[base] = row["name"]
        names[row["name"]] = base
    return names


def plan_batch(stars_path, template_path, out_dir, *, seed=None, samples=None, force=False):
    """Read the inputs and decide which stars need running.

    Parameters
    ----------
    stars_path, template_path : path
    out_dir : path
    seed : int, optional
        Batch seed (default: the template's ``[trace] seed``, else 1).
    samples : int, optional
        Override of ``[trace] samples`` for every star.
    force : bool
        Redo stars whose results exist.
    """
    from ..io.readonce import recorded_sha256

    # every input read once, here; the tasks get the content, not the paths
    template_raw, base_dir = load_template(template_path)
    rows = read_star_rows(stars_path, columns=star_columns(template_raw))
    associations = check_template(template_raw, base_dir, template_path, samples=samples)
    files = template_file_hashes(template_raw, base_dir)
    if seed is None:
        seed = (template_raw.get("trace") or {}).get("seed", 1)
        if isinstance(seed, bool) or not isinstance(seed, int) or seed < 0:
            raise InputError(f"template {Path(template_path).name}: [trace] seed",
                             f"expected a whole number >= 0 (got {seed!r})")
    out_dir = Path(out_dir)
    stars_dir = out_dir / "stars"  # created by prepare_folders, once the inputs and the cluster are known good
    folders = _folder_names(rows)
    todo, done, expected = [], [], {}
    for row in rows:
        s = star_seed(seed, row["name"])
        h = star_input_hash(row, template_raw, base_dir, s, samples, files=files)
        expected[row["name"]] = h
        final = stars_dir / folders[row["name"]]
        rec = _read_record(final / RESULT_FILE)
        if not force and rec is not None and rec.get("input_hash") == h and rec.get("status") == "ok":
            done.append(rec)
            continue
        todo.append({"row": row, "template_raw": template_raw, "base_dir": str(base_dir), "seed": s,
                     "samples": samples, "final_dir": str(final), "input_hash": h, "associations": associations})
    from .._version import __version__

    settings = {"stars_table": {"path": str(stars_path), "sha256": recorded_sha256(stars_path), "rows": len(rows)},
                "template": {"path": str(template_path), "sha256": recorded_sha256(template_path)},
                "template_files": files, "seed": seed, "samples": samples, "kinage_version": __version__}
    return BatchPlan(todo, done, out_dir, seed, settings, expected)


def prepare_folders(out_dir):
    """Create ``out_dir/stars`` and remove what an interrupted run left there."""
    stars_dir = Path(out_dir) / "stars"
    stars_dir.mkdir(parents=True, exist_ok=True)
    for stale in stars_dir.glob(".tmp-*"):  # left by an interrupted run
        shutil.rmtree(stale, ignore_errors=True)
    for stale in stars_dir.glob(".old-*"):
        shutil.rmtree(stale, ignore_errors=True)
    return stars_dir


#: a complete, invented [star] used to validate a template's other tables on their own
_PROBE_STAR = {"name": "template check", "ra": 10.0, "dec": 10.0, "parallax": 1.0, "parallax_error": 0.1,
               "pm_ra_cosdec": 10.0, "pm_ra_cosdec_error": 1.0, "pm_dec": 10.0, "pm_dec_error": 1.0,
               "spin_period": 1.0, "spin_period_derivative": 1e-14, "temperature": 1e6}


def check_template(template_raw, base_dir, template_path, samples=None):
    """Validate the template's own keys and tables before any star runs (a bad template fails every star).

    The template's ``[campaign]``, ``[trace]`` and ``[ages]`` tables are checked
    with a complete probe star, its association table is read, and the resource
    caps are checked with ``samples``.  Star-row problems are left to each star,
    which fails alone.  Returns the association table (None without one): every
    star uses this content, so a file changed during the batch changes nothing.
    """
    from ..errors import ScenarioError
    from ..io.limits import check_resources
    from ..io.scenario import scenario_from_dict

    name = Path(template_path).name
    raw = {k: (dict(v) if isinstance(v, dict) else v) for k, v in template_raw.items() if k != "batch"}
    star = dict(raw.get("star") or {})
    star_check = {k: v for k, v in star.items() if k not in _PROBE_STAR or k == "name"}
    try:  # the template's own [star] values, with the probe filling what rows give
        scenario_from_dict({**raw, "star": {**_PROBE_STAR, **star_check}}, base_dir=base_dir)
        scenario = scenario_from_dict({**raw, "star": dict(_PROBE_STAR)}, base_dir=base_dir)
    except ScenarioError as exc:
        probe = [p for p in exc.problems if not str(p.where).startswith("[star]")] or exc.problems
        raise ScenarioError(probe, source=f"template {name}") from None
    table = None
    if scenario.trace is not None and scenario.trace.get("associations") is not None:
        from ..associations import read_associations

        table = read_associations(scenario.trace.associations,  # read once for the whole batch
                                  columns=scenario.trace.get("association_columns"))
    check_resources(scenario, samples=samples, n_associations=len(table) if table is not None else None)
    return table


def _read_record(path):
    try:
        return json.loads(Path(path).read_text())
    except (OSError, ValueError):
        return None


def run_one_star(row, template_raw, base_dir, seed, samples, final_dir, input_hash, associations=None):
    """One task: run the pipeline for one star and move its folder into place.

    Returns a small record (name, status, reason, headline numbers); never
    raises for a problem of the star itself.  ``associations``: the table the
    batch read once (used instead of reading the template's file again).
    """
    import warnings

    from ..orbits.integrate import set_integration_cores
    from ..pipeline import run_pipeline

    set_integration_cores(1)  # one task per worker process: do not oversubscribe the cores

    final = Path(final_dir)
    tmp = final.parent / f".tmp-{final.name}-{uuid.uuid4().hex[:8]}"
    tmp.mkdir(parents=True)
    record = {"name": row["name"], "seed": seed, "input_hash": input_hash, "samples": samples}
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            scenario = star_scenario(row, template_raw, base_dir)
            if associations is not None and scenario.trace is not None:  # the table the batch read, not the file
                scenario = scenario.replace(trace=scenario.trace.replace(associations=associations))
            run = run_pipeline(scenario, tmp, seed=seed, samples=samples, report=False, products=False,
                               isolate=False)  # tmp is this task's own fresh folder
        results = to_jsonable(run.to_dict())
        record.update(status="failed" if run.failed else "ok",
                      reason="; ".join(f"{k}: {v}" for k, v in run.failed.items()) or None, results=results)
    except InputError as exc:
        record.update(status="failed", reason=f"input: {exc}", results=None)
    except Exception as exc:  # noqa: BLE001 - one bad star must not sink the batch
        from ..io.faults import is_disk_fault

        if is_disk_fault(exc):  # not the star's fault, and every further star would fail alike: stop the batch
            shutil.rmtree(tmp, ignore_errors=True)
            return {"name": row["name"], "status": "failed", "reason": f"{exc.strerror}: {final.parent}",
                    "seed": seed, "input_hash": input_hash, "disk_errno": exc.errno}
        record.update(status="failed", reason=f"{type(exc).__name__}: {exc}", results=None)
    old = None
    try:
        atomic_write(tmp / RESULT_FILE, json.dumps(to_jsonable(record), indent=1) + "\n")
        if final.exists():
            old = final.parent / f".old-{final.name}-{uuid.uuid4().hex[:8]}"
            os.replace(final, old)
        os.replace(tmp, final)
    except BaseException as exc:  # a full disk, say: no temporary folder is left behind, the old result stays
        shutil.rmtree(tmp, ignore_errors=True)
        if old is not None and not final.exists():
            os.replace(old, final)
        from ..io.faults import is_disk_fault

        if is_disk_fault(exc):  # reported to the batch, which stops with one line
            return {"name": row["name"], "status": "failed", "reason": f"{exc.strerror}: {final.parent}",
                    "seed": seed, "input_hash": input_hash, "disk_errno": exc.errno}
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
    return {k: record[k] for k in ("name", "status", "reason", "seed", "input_hash")}


@contextlib.contextmanager
def _client(scheduler=None, workers=2):
    """A dask distributed client: a remote scheduler, or a local process cluster."""
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:  # pragma: no cover
        raise InputError("batch", "needs dask[distributed]: pip install 'kinage[batch]'") from None
    for name in ("distributed", "distributed.worker", "distributed.nanny", "distributed.scheduler",
                 "distributed.core", "distributed.http.proxy"):
        logging.getLogger(name).setLevel(logging.ERROR)
    if scheduler:
        client = _connect(Client, scheduler)
        cluster = None
    else:
        from ..io.options import max_workers

        if not 1 <= workers <= max_workers():
            raise InputError("--workers", f"must be from 1 to {max_workers()} (got {workers})")
        # no dashboard; the scheduler's small HTTP server (status routes, no authentication) listens on this
        # machine only, on a free port, never on every interface at :8787
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                               dashboard_address=None, silence_logs=logging.ERROR,
                               scheduler_kwargs={"dashboard": False, "dashboard_address": "127.0.0.1:0"})
        client = Client(cluster)
    try:
        yield client
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


#: seconds to wait for a scheduler to answer
CONNECT_TIMEOUT_S = 5.0


def _connect(Client, address):
    """A client of the scheduler at ``address``, or a one-line InputError within ~CONNECT_TIMEOUT_S seconds."""
    import socket

    from ..io.options import check_scheduler_address

    address = check_scheduler_address(address)
    scheme, _, rest = address.partition("://")
    if scheme in ("tcp", "tls", "ws", "wss"):
        host, _, port = rest.rpartition(":")
        try:  # a plain TCP probe first: fails fast for a closed port or an unknown host
            socket.create_connection((host.strip("[]"), int(port)), timeout=CONNECT_TIMEOUT_S).close()
        except OSError as exc:
            raise InputError("--scheduler", f"cannot reach {address} ({exc.strerror or type(exc).__name__}); "
                                            "is a dask scheduler running there?") from None
    try:
        return Client(address, timeout=f"{CONNECT_TIMEOUT_S:g}s")
    except (OSError, TimeoutError, MemoryError, ValueError, TypeError, RuntimeError) as exc:
        kind = type(exc).__name__
        raise InputError("--scheduler", f"no dask scheduler answered at {address} within {CONNECT_TIMEOUT_S:g} s "
                                        f"({kind}); check the address and that it is a dask scheduler") from None


def _signal_after_hook():
    """``(n_finished, signal)`` from the ``KINAGE_BATCH_SIGNAL_AFTER`` test hook, or None when unset."""
    value = os.environ.get(SIGNAL_AFTER_ENV, "").split()
    if len(value) != 2 or not value[0].isdigit() or value[1] not in ("SIGINT", "SIGTERM"):
        return None
    return int(value[0]), getattr(signal, value[1])


def _send_hook_signal(sig):
    if os.getpgid(0) == os.getpid():
        os.killpg(os.getpid(), sig)
    else:
        signal.raise_signal(sig)


def _sigterm_as_interrupt(*_):
    from ..interrupts import Terminated

    raise Terminated()


def _mark_complete(plan, files):
    """Record the batch as complete and the summary files as kinage's in the folder's manifest."""
    from ..io.ownership import manifest_entries, read_manifest, write_manifest

    path = plan.out_dir / INPUTS_FILE
    atomic_write(path, json.dumps(to_jsonable({"settings": plan.settings, "stars": plan.expected,
                                               "complete": True}), indent=1) + "\n")
    write_manifest(plan.out_dir, {**read_manifest(plan.out_dir),
                                  **manifest_entries(plan.out_dir, "batch", [path, *files])})


def run_batch(args):
    """The ``kinage batch`` verb; returns the exit status (number of failed stars, at most 125)."""
    from dask.distributed import as_completed

    from .summary import write_summary

    from ..io.options import check_arguments
    from ..io.rundir import output_lock

    args.verb = getattr(args, "verb", "batch")
    check_arguments(args)  # workers, scheduler address, paths: before anything is created
    out = args.out or Path("kinage-batch")
    # every input read and checked before anything is created; then one batch at a time per folder
    plan = plan_batch(args.stars, args.scenario, out, seed=args.seed, samples=args.samples, force=args.force)
    with output_lock(out):
        return _run_batch_locked(args, plan, as_completed, write_summary)


def _changes(old, new):
    """Words for what differs between two batches' recorded inputs and settings (empty when nothing does)."""
    out = []
    if old.get("stars_table", {}).get("sha256") != new.get("stars_table", {}).get("sha256"):
        o, n = old.get("stars_table", {}).get("rows"), new.get("stars_table", {}).get("rows")
        out.append("the star table" + (f" ({o} -> {n} stars)" if o != n else ""))
    if old.get("template", {}).get("sha256") != new.get("template", {}).get("sha256"):
        out.append("the template")
    if old.get("template_files") != new.get("template_files"):
        out.append("the files the template names")
    for key in ("seed", "samples", "kinage_version"):
        if old.get(key) != new.get(key):
            out.append(f"{key} ({old.get(key)} -> {new.get(key)})")
    return out


def record_inputs(plan, say):
    """Compare this batch's inputs and settings with the folder's last batch; record this one's.

    When they differ the previous summary files are removed (a fresh summary is
    written at the end, listing only this batch's stars) and ``say`` tells so.
    """
    from ..io.ownership import manifest_entries, read_manifest, write_manifest

    path = plan.out_dir / INPUTS_FILE
    try:
        old = json.loads(path.read_text(encoding="utf-8")).get("settings") or {}
    except (OSError, ValueError, AttributeError):
        old = None
    if old is not None:
        changed = _changes(old, plan.settings)
        if changed:
            say(f"inputs or settings differ from this folder's earlier batch ({', '.join(changed)}): starting a "
                f"fresh summary of this table's {len(plan.expected)} stars (earlier results are reused only "
                "where a star's inputs are unchanged)")
            for name in SUMMARY_FILES:  # kinage's own summary of the other batch
                with contextlib.suppress(FileNotFoundError):
                    os.unlink(plan.out_dir / name)
    plan.out_dir.mkdir(parents=True, exist_ok=True)
    atomic_write(path, json.dumps(to_jsonable({"settings": plan.settings, "stars": plan.expected,
                                               "complete": False}), indent=1) + "\n")
    write_manifest(plan.out_dir, {**read_manifest(plan.out_dir), **manifest_entries(plan.out_dir, "batch", [path])})


def _run_batch_locked(args, plan, as_completed, write_summary):
    say = (lambda s: None) if args.quiet else print
    previous = signal.signal(signal.SIGTERM, _sigterm_as_interrupt)
    records = list(plan.done)
    timing = {"n_run": len(plan.todo), "workers": None if args.scheduler else args.workers}
    t_start = time.perf_counter()
    hook = _signal_after_hook()
    try:
        if not plan.todo:
            prepare_folders(plan.out_dir)
            record_inputs(plan, say)
            say(f"{len(plan.done)} stars: {len(plan.done)} already done, 0 to run")
        if plan.todo:
            with _client(args.scheduler, args.workers) as client:
                prepare_folders(plan.out_dir)  # only once the cluster answers
                record_inputs(plan, say)
                say(f"{len(plan.done) + len(plan.todo)} stars: {len(plan.done)} already done, "
                    f"{len(plan.todo)} to run")
                t_submit = time.perf_counter()
                shared = {}  # the association table goes to the workers once, not once per star
                if plan.todo[0].get("associations") is not None:
                    shared["associations"] = client.scatter(plan.todo[0]["associations"], broadcast=True)
                futures = [client.submit(run_one_star, **{**task, **shared}, pure=False) for task in plan.todo]
                for n, fut in enumerate(as_completed(futures), 1):
                    rec = fut.result()
                    if rec.get("disk_errno"):  # the disk is full (or read-only): every further star would fail
                        for f in futures:
                            f.cancel()
                        raise OSError(rec["disk_errno"], os.strerror(rec["disk_errno"]),
                                      str(plan.out_dir / "stars"))
                    records.append(rec)
                    say(f"[{n}/{len(futures)}] {rec['name']}: {rec['status']}"
                        + (f" ({rec['reason']})" if rec.get("reason") else ""))
                    if hook is not None and n == hook[0]:
                        _send_hook_signal(hook[1])
                # from submission to the last result: includes the workers' first imports
                timing["tasks_s"] = time.perf_counter() - t_submit
    finally:
        signal.signal(signal.SIGTERM, previous)
    timing["cluster_and_tasks_s"] = time.perf_counter() - t_start
    files = write_summary(plan.out_dir, seed=plan.seed, timing=timing,
                          figures=not getattr(args, "no_figures", False), expected=plan.expected)
    _mark_complete(plan, files)
    failed = [r for r in records if r.get("status") != "ok"]
    say(f"done: {len(records) - len(failed)} ok, {len(failed)} failed; summary in {files[0]}")
    for r in failed:
        print(f"kinage batch: star {r['name']!r} failed: {r.get('reason')}", file=sys.stderr)
    return min(len(failed), 125)
