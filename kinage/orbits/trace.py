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
from ..kinematics import draw_star, rotated_proper_motions, velocity_prior as make_velocity_prior
from ..params.registry import galaxy_pair
from ..progress import progress_bar
from .chunks import chunk_rows, integrate_associations, run_draws
from .control import control_draws_needed, probability_control_cap, usable_draws
from .frames import solar_frame
from .integrate import integration_cores, time_grid
from .result import TraceResult
from .probability import DEFAULT_FIELD_PRIOR, check_field_prior, check_neighbourhood_share
from .statistics import rank_associations, summarise_association, verdict

__all__ = ["trace", "CHUNK_BYTES"]

#: cap on the bytes of one chunk's orbit arrays (galpy's and the Cartesian copy searched)
CHUNK_BYTES = 256e6


def _settings(scenario, samples, potential):
    tr = scenario.trace
    if tr is None:
        raise InputError("[trace]", "missing table: tracing needs [trace] with at least 'associations'")
    if tr.get("associations") is None:
        raise InputError("[trace] associations", "a table of candidate associations is required (not given)")
    n = int(samples if samples is not None else tr.get("samples"))
    if n < 1:
        raise InputError("samples", f"must be a positive integer (got {n})")
    pot_name = potential if potential is not None else tr.get("potential")
    return {
        "n": n,
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
          method="dop853_c", associations=None):
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
    cfg = _settings(scenario, samples, potential)
    gen, seed = _rng_and_seed(scenario, rng)
    star_rng, assoc_rng, control_rng = gen.spawn(3)
    frame = solar_frame(cfg["solar"].name)
    table = associations if associations is not None else read_associations(scenario.trace.get("associations"))
    if solution is None:
        solution = AstrometricSolution.from_star(scenario.star)
    star = scenario.star
    draws = draw_star(solution, cfg["n"], star_rng, frame=frame, velocity_prior=cfg["velocity_prior"],
                      distance_prior=cfg["distance_prior"], distance_pc=star.value("distance", "pc"),
                      distance_error_pc=star.value("distance_error", "pc"),
                      radial_velocity=star.value("radial_velocity", "km/s"),
                      radial_velocity_error=star.value("radial_velocity_error", "km/s"))
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
    n_max_control = cfg["n"] if cfg["control_runs"] > 0 else 0
    with progress_bar(cfg["n"], desc="tracing", enabled=progress) as bar:
        pos, vel = draws.galactocentric(frame)
        main = run_draws(pos, vel, assoc=assoc, adraws=adraws, bar=bar, keep_plane=True, keep_tracks=True, **run)
    ctrl = None
    n_control = 0
    if n_max_control:
        # control draws (star draws with turned proper motions), made and integrated only as far as the
        # chance rates' precision needs ([trace] control_relative_error, control_absolute_error)
        def control_states(start, stop):  # made round by round from one stream: only the draws used
            # beyond the star draws (for the probabilities' chance rates) the star draws are reused in order,
            # each with a new random direction
            part = rotated_proper_motions(draws.take(np.arange(start, stop) % draws.n), control_rng, frame=frame,
                                          velocity_prior=cfg["velocity_prior"])
            return part.galactocentric(frame)

        ctrl = control_draws_needed(control_states, run, assoc, adraws, afailed, cfg, n_max_control,
                                    progress=progress, main=main, n_max_probability=probability_control_cap(cfg["n"]))
        n_control = ctrl["dmin"].shape[1]
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
        failed=failed, main=main, assoc=assoc, times=times, cols=cols, n_control=n_control, solution=solution)
    # for figures, and for re-weighting the draws (kinage.campaign): edges, failures and the integration set-up
    result.data["control"] = None if ctrl is None else {"dmin": ctrl["dmin"], "tau": ctrl["tau"],
                                                        "edge": ctrl["edge"], "failed": ctrl["failed"]}
    result.data.update(association_failed=afailed, cfg=cfg, run=run)
    return result


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
        s = summarise_association(name, adraws.radius_pc[j], adraws.age_myr[j], main["dmin"][j].astype(float),
                                  main["tau"][j].astype(float), main["edge"][j], valid, draws.radial_velocity,
                                  factor=cfg["factor"], tolerance_myr=cfg["tolerance"], control=control,
                                  control_runs=cfg["control_runs"], distance_pc=draws.distance_pc,
                                  neighbourhood_scale_pc=cfg["neighbourhood_scale"])
        s["_index"] = j
        return s

    if cores > 1 and adraws.n_assoc > 1:
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(max_workers=cores) as pool:
            return list(pool.map(one, range(adraws.n_assoc)))
    return [one(j) for j in range(adraws.n_assoc)]
