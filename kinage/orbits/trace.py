"""Front door of the tracing stage: draws -> orbits -> closest approaches -> statistics.

>>> from kinage.orbits import trace                       # doctest: +SKIP
>>> result = trace(scenario, samples=2000)                # doctest: +SKIP
>>> result.to_dict()["favoured"]                          # doctest: +SKIP

Star, control and association draws are integrated by galpy on the same
coarse output grid (``[trace] time_steps``, tolerance
``integration_tolerance``); star draws go in chunks of at most
``[trace] chunk_size`` draws (further capped so one chunk's arrays stay below
~256 MB), in parallel threads (:mod:`.chunks`), and closest approaches are
found by the fused search of :mod:`.hermite`.  Control draws are run only as
far as the chance rates' wanted precision needs (:mod:`.control`).  Star
draw i is paired with draw (i mod m) of every association.  All random
numbers come from independent streams spawned from one seed, so neither the
chunk size nor the number of cores changes the numbers.
"""

import warnings

import numpy as np

from ..associations import draw_associations, read_associations
from ..astrometry import AstrometricSolution
from ..errors import InputError
from ..kinematics import distance_prior as make_distance_prior
from ..kinematics import draw_star, rotated_proper_motions, scenario_distance_posterior
from ..kinematics import velocity_prior as make_velocity_prior
from ..params.registry import galaxy_pair
from ..progress import progress_bar
from .chunks import chunk_rows, integrate_associations, run_draws
from .control import (cached_kernel_sums, control_draws_needed, largest_probability_error,
                      probability_control_cap, probability_results, usable_draws)
from .frames import solar_frame
from .integrate import integration_cores, time_grid
from .result import TraceResult
from .probability import CONTROL_HITS, DEFAULT_FIELD_PRIOR, add_sums, check_field_prior, check_neighbourhood_share
from .statistics import rank_associations, summarise_association, verdict

__all__ = ["trace", "CHUNK_BYTES", "DEFAULT_PRECISION", "MAX_SAMPLES_FACTOR"]

#: cap on the bytes of one chunk's orbit arrays (galpy's and the Cartesian copy searched)
CHUNK_BYTES = 256e6
#: documented default of ``[trace] probability_precision``
DEFAULT_PRECISION = 0.03
#: ``[trace] max_samples`` defaults to this many times ``samples``
MAX_SAMPLES_FACTOR = 4


def _settings(scenario, samples, potential, max_samples=None):
    tr = scenario.trace
    if tr is None:
        raise InputError("[trace]", "missing table: tracing needs [trace] with at least 'associations'")
    if tr.get("associations") is None:
        raise InputError("[trace] associations", "a table of candidate associations is required (not given)")
    n = int(samples if samples is not None else tr.get("samples"))
    if n < 1:
        raise InputError("samples", f"must be a positive integer (got {n})")
    pot_name = potential if potential is not None else tr.get("potential")
    given_max = max_samples if max_samples is not None else tr.get("max_samples")
    if given_max is not None and int(given_max) < n:
        raise InputError("[trace] max_samples", f"must not be below the samples asked for ({int(given_max):,} < {n:,})")
    return {
        "n": n,
        "max_samples": int(given_max) if given_max is not None else MAX_SAMPLES_FACTOR * n,
        "precision": float(tr.get("probability_precision", DEFAULT_PRECISION)),
        "m": int(tr.get("association_samples")),
        "max_age": tr.value("max_age", "Myr"),
        "time_steps": int(tr.get("time_steps")),
        **_galaxy(pot_name, tr.get("solar_parameters")),
        "velocity_prior": make_velocity_prior(tr.get("velocity_prior")),
        "distance_prior": make_distance_prior(tr.get("distance_prior"), tr.value("distance_prior_scale", "pc")),
        "factor": float(tr.get("encounter_radius_factor")),
        "tolerance": tr.value("age_tolerance", "Myr"),
        "control_runs": int(tr.get("control_runs")),
        "control_relative_error": float(tr.get("control_relative_error")),
        "control_absolute_error": float(tr.get("control_absolute_error")),
        "integration_tolerance": float(tr.get("integration_tolerance")),
        "chunk_size": int(tr.get("chunk_size")),
        "field_prior": check_field_prior(tr.get("field_prior", DEFAULT_FIELD_PRIOR)),
        "neighbourhood_share": check_neighbourhood_share(tr.get("neighbourhood_share")),
        "neighbourhood_scale": tr.value("neighbourhood_scale", "pc"),
    }


def _galaxy(pot_name, solar_name):
    """Potential and Sun of one Galaxy (the potential's own Sun unless named); warns on a mismatch."""
    pot, solar, mismatch = galaxy_pair(pot_name, solar_name)
    if mismatch:
        warnings.warn(f"[trace] {mismatch}", UserWarning, stacklevel=4)
    return {"potential": pot, "solar": solar, "warnings": [mismatch[0].upper() + mismatch[1:] + "."] if mismatch else []}


def _rng_and_seed(scenario, rng):
    if rng is None:
        seed = scenario.trace.get("seed")
        seed = 1 if seed is None else int(seed)
        return np.random.default_rng(seed), seed
    if isinstance(rng, (int, np.integer)):
        return np.random.default_rng(int(rng)), int(rng)
    return np.random.default_rng(rng), None


def trace(scenario, *, solution=None, rng=None, samples=None, potential=None, progress=False,
          method="dop853_c", associations=None, max_samples=None):
    """Trace a neutron star back to candidate birth associations.

    Parameters
    ----------
    scenario : Scenario
        With ``[star]`` and ``[trace]`` tables.
    solution : AstrometricSolution, optional
        Position, proper motion and parallax with covariance (e.g. from
        timing); default ``AstrometricSolution.from_star(scenario.star)``.
    rng : numpy.random.Generator | int | None
        Default: ``[trace] seed`` (1 when absent).
    samples : int, optional
        Overrides ``[trace] samples``.
    max_samples : int, optional
        Overrides ``[trace] max_samples`` (most star draws the probabilities' precision may ask for;
        ``samples`` turns the added batches off).
    potential : str, optional
        Overrides ``[trace] potential`` ('none' = straight lines).
    progress : bool
        Show a progress bar.
    method : str
        galpy C integrator.
    associations : AssociationTable, optional
        Instead of reading ``[trace] associations``.

    Returns
    -------
    TraceResult
    """
    cfg = _settings(scenario, samples, potential, max_samples)
    gen, seed = _rng_and_seed(scenario, rng)
    star_rng, assoc_rng, control_rng = gen.spawn(3)
    frame = solar_frame(cfg["solar"].name)
    table = associations
    if table is None:
        table = read_associations(scenario.trace.get("associations"), columns=scenario.trace.get("association_columns"))
    if solution is None:
        solution = AstrometricSolution.from_star(scenario.star)
    star = scenario.star
    posterior = scenario_distance_posterior(scenario, solution, prior=cfg["distance_prior"])
    cfg["parallax_origin"] = _parallax_origin(scenario, solution)
    cfg["warnings"] = cfg["warnings"] + [w[0].upper() + w[1:] + "." for w in posterior.warnings]
    draw_kw = dict(velocity_prior=cfg["velocity_prior"], posterior=posterior,
                   radial_velocity=star.value("radial_velocity", "km/s"),
                   radial_velocity_error=star.value("radial_velocity_error", "km/s"))
    draws = draw_star(solution, cfg["n"], star_rng, frame=frame, **draw_kw)
    adraws = draw_associations(table, cfg["m"], assoc_rng)
    times = time_grid(cfg["max_age"], cfg["time_steps"])
    cols = np.arange(len(times))
    cores = integration_cores()
    rows_cap = chunk_rows(cfg["n"], len(times), cfg["chunk_size"], CHUNK_BYTES, cores)
    run = {"times": times, "pset": cfg["potential"], "tolerance": cfg["integration_tolerance"], "method": method,
           "rows_cap": rows_cap, "cores": cores}
    apos, avel = adraws.galactocentric(frame)
    assoc, afailed = integrate_associations(apos, avel, times, cfg["potential"], tolerance=run["tolerance"],
                                            method=method, rows_cap=rows_cap)
    with progress_bar(cfg["n"], desc="tracing", enabled=progress) as bar:
        pos, vel = draws.galactocentric(frame)
        main = run_draws(pos, vel, assoc=assoc, adraws=adraws, bar=bar, keep_plane=True, keep_tracks=True, **run)
    ctrl = None
    state = {"draws": draws}

    def control_states(start, stop):  # made round by round from one stream: only the draws used
        # beyond the star draws (for the probabilities' chance rates) the star draws are reused in order,
        # each with a new random direction
        d = state["draws"]
        part = rotated_proper_motions(d.take(np.arange(start, stop) % d.n), control_rng, frame=frame,
                                      velocity_prior=cfg["velocity_prior"])
        return part.galactocentric(frame)

    precision = {"samples_used": cfg["n"], "probability_precision": cfg["precision"], "max_samples": cfg["max_samples"],
                 "largest_probability_error": None, "precision_reached": True, "batches": 1}
    hits = CONTROL_HITS
    while cfg["control_runs"] > 0:
        # control draws (star draws with turned proper motions), made and integrated only as far as the
        # chance rates' precision needs ([trace] control_relative_error, control_absolute_error)
        ctrl = control_draws_needed(control_states, run, assoc, adraws, afailed, cfg, draws.n, progress=progress,
                                    main=main, n_max_probability=probability_control_cap(draws.n), initial=ctrl,
                                    hits=hits)
        worst = largest_probability_error(probability_results(ctrl, main, adraws, afailed, cfg)[0])
        precision["largest_probability_error"] = worst
        precision["precision_reached"] = bool(worst <= cfg["precision"])
        if precision["precision_reached"] or draws.n >= cfg["max_samples"]:
            break
        # errors fall as 1/sqrt(draws): add what the largest one asks for (at least half the first batch)
        # and as 1/sqrt(chance passages): the control draws are asked for more passages in proportion
        want = int(np.ceil(draws.n * (1.1 * (worst / cfg["precision"]) ** 2 - 1.0)))
        hits = min(hits * 1.1 * (worst / cfg["precision"]) ** 2, 100.0 * CONTROL_HITS)
        add = int(min(cfg["max_samples"] - draws.n, max(want, cfg["n"] // 2, 1)))
        (batch_rng,) = star_rng.spawn(1)
        more = draw_star(solution, add, batch_rng, frame=frame, **draw_kw)
        with progress_bar(add, desc="more draws", enabled=progress) as bar:
            mpos, mvel = more.galactocentric(frame)
            extra = run_draws(mpos, mvel, assoc=assoc, adraws=adraws, bar=bar, keep_plane=True, offset=draws.n, **run)
        main = _merge_main(main, extra)
        draws = state["draws"] = _concat_draws(draws, more)
        precision["batches"] += 1
    precision["samples_used"] = draws.n
    n_control = 0 if ctrl is None else ctrl["dmin"].shape[1]
    summaries = _summaries(cfg, adraws, afailed, draws, main, ctrl, cores=cores)
    ranked, favoured, field = rank_associations(summaries, field_prior=cfg["field_prior"],
                                                neighbourhood_share=cfg["neighbourhood_share"],
                                                neighbourhood_scale_pc=cfg["neighbourhood_scale"])
    failed = [{"index": int(i), "kind": "star", "reason": r} for i, r in sorted(main["failed"].items())]
    if ctrl is not None:
        failed += [{"index": int(i), "kind": "control", "reason": r} for i, r in sorted(ctrl["failed"].items())]
    failed += [{"index": int(i), "kind": "association", "association": adraws.names[i // adraws.m], "reason": r}
               for i, r in sorted(afailed.items())]
    if failed:
        warnings.warn(f"{len(failed)} orbit(s) could not be integrated and were left out "
                      f"(first: draw {failed[0]['index']}, {failed[0]['reason']})", RuntimeWarning, stacklevel=2)
    result = TraceResult.build(
        scenario=scenario, cfg=cfg, seed=seed, frame=frame, draws=draws, adraws=adraws, ranked=ranked,
        favoured=favoured, verdict=verdict(ranked, favoured, control_available=ctrl is not None, field=field),
        field=field,
        failed=failed, main=main, assoc=assoc, times=times, cols=cols, n_control=n_control, solution=solution,
        precision=precision)
    # for figures, and for re-weighting the draws (kinage.campaign): edges, failures and the integration set-up
    result.data["control"] = None if ctrl is None else {"dmin": ctrl["dmin"], "tau": ctrl["tau"],
                                                        "edge": ctrl["edge"], "failed": ctrl["failed"]}
    result.data.update(association_failed=afailed, cfg=cfg, run=run)
    return result


def _parallax_origin(scenario, solution):
    """'timing fit', '[star]' or 'timing fit and [star]': where the solution's parallax comes from."""
    timing = "timing" in str(solution.source)
    typed = scenario.star.get("parallax") is not None
    return "timing fit and [star]" if timing and typed else ("timing fit" if timing else "[star]")


def _merge_main(a, b):
    """Star-draw results of two batches as one (``b``'s draws follow ``a``'s; indices are global)."""
    out = {k: np.concatenate([a[k], b[k]], axis=-1) for k in ("dmin", "tau", "edge", "plane")}
    out["failed"] = {**a["failed"], **b["failed"]}
    if "_kernel_sums" in a:
        out["_kernel_sums"] = a["_kernel_sums"]  # sums of a's draws, which lead the merged ones
    out["tracks"] = a["tracks"]
    out["birth"] = {}
    for j in sorted(set(a["birth"]) | set(b["birth"])):
        parts = [r["birth"][j] for r in (a, b) if j in r["birth"]]
        out["birth"][j] = (np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts]))
    return out


def _concat_draws(a, b):
    """Two sets of star draws as one (array fields joined, the rest from ``a``)."""
    import dataclasses

    return type(a)(**{f.name: (np.concatenate([getattr(a, f.name), getattr(b, f.name)])
                               if isinstance(getattr(a, f.name), np.ndarray) else getattr(a, f.name))
                      for f in dataclasses.fields(a)})


def _summaries(cfg, adraws, afailed, draws, main, ctrl, cores=1):
    """Per-association statistics; with several cores the associations are summarised in parallel threads
    (numpy's sorting and quantiles release the GIL), in order, so the result does not depend on ``cores``."""
    def one(j):
        name = adraws.names[j]
        valid = usable_draws(main, adraws, afailed, j)
        control = None
        if ctrl is not None:
            control = (ctrl["dmin"][j].astype(float), ctrl["tau"][j].astype(float), ctrl["edge"][j],
                       usable_draws(ctrl, adraws, afailed, j))
        sums = None
        if ctrl is not None:  # the sums the control rounds kept (only draws not yet summed are added)
            args = (adraws.radius_pc[j], adraws.age_myr[j], cfg["tolerance"], cfg["neighbourhood_scale"])
            sums = add_sums(cached_kernel_sums(main, j, adraws, afailed, args, "main"),
                            cached_kernel_sums(ctrl, j, adraws, afailed, args, "control"))
        s = summarise_association(name, adraws.radius_pc[j], adraws.age_myr[j], main["dmin"][j].astype(float),
                                  main["tau"][j].astype(float), main["edge"][j], valid, draws.radial_velocity,
                                  factor=cfg["factor"], tolerance_myr=cfg["tolerance"], control=control,
                                  control_runs=cfg["control_runs"], distance_pc=draws.distance_pc,
                                  neighbourhood_scale_pc=cfg["neighbourhood_scale"], sums=sums)
        s["_index"] = j
        return s

    if cores > 1 and adraws.n_assoc > 1:
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(max_workers=cores) as pool:
            return list(pool.map(one, range(adraws.n_assoc)))
    return [one(j) for j in range(adraws.n_assoc)]
