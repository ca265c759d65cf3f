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
from .stars import load_template, read_star_rows, safe_name, star_input_hash, star_scenario, star_seed

__all__ = ["run_batch", "run_one_star", "plan_batch", "BatchPlan"]

RESULT_FILE = "star.json"


class BatchPlan:
    """Which stars to run and which to skip.

    Attributes
    ----------
    todo : list of dict
        Task arguments of the stars to run.
    done : list of dict
        Records of stars whose results exist and match their input hash.
    """

    def __init__(self, todo, done, out_dir, seed):
        self.todo, self.done, self.out_dir, self.seed = todo, done, Path(out_dir), seed


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
    rows = read_star_rows(stars_path)
    template_raw, base_dir = load_template(template_path)
    if seed is None:
        seed = int((template_raw.get("trace") or {}).get("seed", 1))
    out_dir = Path(out_dir)
    stars_dir = out_dir / "stars"
    stars_dir.mkdir(parents=True, exist_ok=True)
    for stale in stars_dir.glob(".tmp-*"):  # left by an interrupted run
        shutil.rmtree(stale, ignore_errors=True)
    for stale in stars_dir.glob(".old-*"):
        shutil.rmtree(stale, ignore_errors=True)
    folders = _folder_names(rows)
    todo, done = [], []
    for row in rows:
        s = star_seed(seed, row["name"])
        h = star_input_hash(row, template_raw, base_dir, s, samples)
        final = stars_dir / folders[row["name"]]
        rec = _read_record(final / RESULT_FILE)
        if not force and rec is not None and rec.get("input_hash") == h and rec.get("status") == "ok":
            done.append(rec)
            continue
        todo.append({"row": row, "template_raw": template_raw, "base_dir": str(base_dir), "seed": s,
                     "samples": samples, "final_dir": str(final), "input_hash": h})
    return BatchPlan(todo, done, out_dir, seed)


def _read_record(path):
    try:
        return json.loads(Path(path).read_text())
    except (OSError, ValueError):
        return None


def run_one_star(row, template_raw, base_dir, seed, samples, final_dir, input_hash):
    """One task: run the pipeline for one star and move its folder into place.

    Returns a small record (name, status, reason, headline numbers); never
    raises for a problem of the star itself.
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
            run = run_pipeline(scenario, tmp, seed=seed, samples=samples, report=False, products=False)
        results = to_jsonable(run.to_dict())
        record.update(status="failed" if run.failed else "ok",
                      reason="; ".join(f"{k}: {v}" for k, v in run.failed.items()) or None, results=results)
    except InputError as exc:
        record.update(status="failed", reason=f"input: {exc}", results=None)
    except Exception as exc:  # noqa: BLE001 - one bad star must not sink the batch
        record.update(status="failed", reason=f"{type(exc).__name__}: {exc}", results=None)
    atomic_write(tmp / RESULT_FILE, json.dumps(to_jsonable(record), indent=1) + "\n")
    old = None
    if final.exists():
        old = final.parent / f".old-{final.name}-{uuid.uuid4().hex[:8]}"
        os.replace(final, old)
    os.replace(tmp, final)
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
        client = Client(scheduler, timeout="20s")
        cluster = None
    else:
        if workers < 1:
            raise InputError("--workers", f"must be at least 1 (got {workers})")
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None,
                               silence_logs=logging.ERROR)
        client = Client(cluster)
    try:
        yield client
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def _sigterm_as_interrupt(*_):
    raise KeyboardInterrupt


def run_batch(args):
    """The ``kinage batch`` verb; returns the exit status (number of failed stars, at most 125)."""
    from dask.distributed import as_completed

    from .summary import write_summary

    plan = plan_batch(args.stars, args.scenario, args.out or Path("kinage-batch"), seed=args.seed,
                      samples=args.samples, force=args.force)
    say = (lambda s: None) if args.quiet else print
    say(f"{len(plan.done) + len(plan.todo)} stars: {len(plan.done)} already done, {len(plan.todo)} to run")
    previous = signal.signal(signal.SIGTERM, _sigterm_as_interrupt)
    records = list(plan.done)
    timing = {"n_run": len(plan.todo), "workers": None if args.scheduler else args.workers}
    t_start = time.perf_counter()
    try:
        if plan.todo:
            with _client(args.scheduler, args.workers) as client:
                t_submit = time.perf_counter()
                futures = [client.submit(run_one_star, **task, pure=False) for task in plan.todo]
                for n, fut in enumerate(as_completed(futures), 1):
                    rec = fut.result()
                    records.append(rec)
                    say(f"[{n}/{len(futures)}] {rec['name']}: {rec['status']}"
                        + (f" ({rec['reason']})" if rec.get("reason") else ""))
                # from submission to the last result: includes the workers' first imports
                timing["tasks_s"] = time.perf_counter() - t_submit
    finally:
        signal.signal(signal.SIGTERM, previous)
    timing["cluster_and_tasks_s"] = time.perf_counter() - t_start
    files = write_summary(plan.out_dir, seed=plan.seed, timing=timing)
    failed = [r for r in records if r.get("status") != "ok"]
    say(f"done: {len(records) - len(failed)} ok, {len(failed)} failed; summary in {files[0]}")
    for r in failed:
        print(f"kinage batch: star {r['name']!r} failed: {r.get('reason')}", file=sys.stderr)
    return min(len(failed), 125)
