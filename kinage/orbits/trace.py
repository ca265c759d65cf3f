"""Front door of the tracing stage: draws -> orbits -> closest approaches -> statistics.

>>> from kinage.orbits import trace                       # doctest: +SKIP
>>> result = trace(scenario, samples=2000)                # doctest: +SKIP
>>> result.to_dict()["favoured"]                          # doctest: +SKIP

Star draws are integrated in chunks of at most ``[trace] chunk_size`` draws
(further capped so one chunk's orbit array stays below ~256 MB); association
draws are integrated once and kept on a coarse grid.  Star draw i is paired
with draw (i mod m) of every association.  All random numbers come from
independent streams spawned from one seed, so the chunk size does not change
the numbers.
"""

import warnings

import numpy as np

from ..associations import draw_associations, read_associations
from ..astrometry import AstrometricSolution
from ..errors import InputError
from ..kinematics import distance_prior as make_distance_prior
from ..kinematics import draw_star, rotated_proper_motions, velocity_prior as make_velocity_prior
from ..params import get
from ..progress import progress_bar
from .closest import CoarseStar, CoarseTracks, closest_approach, coarse_columns
from .frames import solar_frame
from .integrate import integrate_orbits, time_grid
from .plane import plane_crossing_age
from .result import TraceResult
from .statistics import rank_associations, summarise_association, verdict

__all__ = ["trace", "CHUNK_BYTES"]

#: cap on the bytes of one chunk's galpy orbit array
CHUNK_BYTES = 256e6
_N_TRACKS = 100  # star and association draws kept for figures


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
        "potential": get("potential", pot_name, where="[trace] potential"),
        "solar": get("solar_parameters", tr.get("solar_parameters"), where="[trace] solar_parameters"),
        "velocity_prior": make_velocity_prior(tr.get("velocity_prior")),
        "distance_prior": make_distance_prior(tr.get("distance_prior"), tr.value("distance_prior_scale", "pc")),
        "factor": float(tr.get("encounter_radius_factor")),
        "tolerance": tr.value("age_tolerance", "Myr"),
        "control_runs": int(tr.get("control_runs")),
        "chunk_size": int(tr.get("chunk_size")),
    }


def _rng_and_seed(scenario, rng):
    if rng is None:
        seed = scenario.trace.get("seed")
        seed = 1 if seed is None else int(seed)
        return np.random.default_rng(seed), seed
    if isinstance(rng, (int, np.integer)):
        return np.random.default_rng(int(rng)), int(rng)
    return np.random.default_rng(rng), None


def _integrate_tracks(pos, vel, times, pset, cols, rows_cap, method):
    parts, failed = [], {}
    for a in range(0, len(pos), rows_cap):
        b = min(a + rows_cap, len(pos))
        bundle = integrate_orbits(pos[a:b], vel[a:b], times, pset, method=method)
        failed.update({a + i: r for i, r in bundle.failed.items()})
        parts.append(CoarseTracks.from_bundle(bundle, cols))
    return CoarseTracks.concatenate(parts), failed


def _run_draws(draws, frame, times, cols, pset, assoc, adraws, rows_cap, method, bar, keep_plane, keep_tracks):
    """Integrate star(-like) draws chunk by chunk and find closest approaches to every association."""
    n, na, m = draws.n, adraws.n_assoc, adraws.m
    d = np.full((na, n), np.nan, np.float32)
    tau = np.full((na, n), np.nan, np.float32)
    edge = np.zeros((na, n), bool)
    birth = {}
    plane = np.full(n, np.nan) if keep_plane else None
    tracks = None
    failed = {}
    pos_all, vel_all = draws.galactocentric(frame)
    for a in range(0, n, rows_cap):
        b = min(a + rows_cap, n)
        bundle = integrate_orbits(pos_all[a:b], vel_all[a:b], times, pset, method=method)
        bad = np.zeros(b - a, bool)
        for i, r in bundle.failed.items():
            failed[a + i] = r
            bad[i] = True
        coarse = bundle.positions(cols)
        if keep_tracks and tracks is None:
            tracks = coarse[:_N_TRACKS].copy()
        prep = CoarseStar(coarse, a, m)
        del coarse
        idx = np.arange(a, b)
        for j in range(na):
            pair = j * m + idx % m
            ca = closest_approach(bundle, None, assoc, pair, k_coarse=prep.argmin(assoc.pos32[j * m:(j + 1) * m]))
            d[j, a:b] = ca["dmin_pc"]
            tau[j, a:b] = ca["tau_myr"]
            edge[j, a:b] = ca["edge"]
            near = np.flatnonzero(ca["dmin_pc"] < 5 * adraws.radius_pc[j])
            if near.size:
                birth.setdefault(j, []).append((idx[near], ca["pos_kpc"][near]))
        if keep_plane:
            plane[a:b] = plane_crossing_age(bundle, cols)
            plane[a:b][bad] = np.nan
        bar.update(b - a)
    birth = {j: (np.concatenate([p[0] for p in v]), np.concatenate([p[1] for p in v])) for j, v in birth.items()}
    return {"dmin": d, "tau": tau, "edge": edge, "failed": failed, "plane": plane, "tracks": tracks, "birth": birth}


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
    n_control = cfg["n"] if cfg["control_runs"] > 0 else 0
    times = time_grid(cfg["max_age"], cfg["time_steps"])
    cols = coarse_columns(len(times))
    rows_cap = max(1, min(cfg["chunk_size"], int(CHUNK_BYTES // (len(times) * 48))))
    apos, avel = adraws.galactocentric(frame)
    assoc, afailed = _integrate_tracks(apos, avel, times, cfg["potential"], cols, rows_cap, method)
    with progress_bar(cfg["n"] + n_control, desc="tracing", enabled=progress) as bar:
        main = _run_draws(draws, frame, times, cols, cfg["potential"], assoc, adraws, rows_cap, method, bar,
                          keep_plane=True, keep_tracks=True)
        ctrl = None
        if n_control:
            cdraws = rotated_proper_motions(draws, control_rng, frame=frame, velocity_prior=cfg["velocity_prior"])
            ctrl = _run_draws(cdraws, frame, times, cols, cfg["potential"], assoc, adraws, rows_cap, method, bar,
                              keep_plane=False, keep_tracks=False)
    summaries = _summaries(cfg, adraws, afailed, draws, main, ctrl)
    ranked, favoured = rank_associations(summaries)
    failed = [{"index": int(i), "kind": "star", "reason": r} for i, r in sorted(main["failed"].items())]
    if ctrl is not None:
        failed += [{"index": int(i), "kind": "control", "reason": r} for i, r in sorted(ctrl["failed"].items())]
    failed += [{"index": int(i), "kind": "association", "association": adraws.names[i // adraws.m], "reason": r}
               for i, r in sorted(afailed.items())]
    if failed:
        warnings.warn(f"{len(failed)} orbit(s) could not be integrated and were left out "
                      f"(first: draw {failed[0]['index']}, {failed[0]['reason']})", RuntimeWarning, stacklevel=2)
    return TraceResult.build(
        scenario=scenario, cfg=cfg, seed=seed, frame=frame, draws=draws, adraws=adraws, ranked=ranked,
        favoured=favoured, verdict=verdict(ranked, favoured, control_available=ctrl is not None),
        failed=failed, main=main, assoc=assoc, times=times, cols=cols, n_control=n_control, solution=solution)


def _summaries(cfg, adraws, afailed, draws, main, ctrl):
    bad_star = np.zeros(draws.n, bool)
    bad_star[list(main["failed"])] = True
    out = []
    for j, name in enumerate(adraws.names):
        abad = np.zeros(adraws.m, bool)
        for i in afailed:
            if i // adraws.m == j:
                abad[i % adraws.m] = True
        valid = ~bad_star & ~abad[np.arange(draws.n) % adraws.m] & np.isfinite(main["dmin"][j])
        control = None
        if ctrl is not None:
            nc = ctrl["dmin"].shape[1]
            cbad = np.zeros(nc, bool)
            cbad[list(ctrl["failed"])] = True
            cvalid = ~cbad & ~abad[np.arange(nc) % adraws.m] & np.isfinite(ctrl["dmin"][j])
            control = (ctrl["dmin"][j].astype(float), ctrl["tau"][j].astype(float), ctrl["edge"][j], cvalid)
        s = summarise_association(name, adraws.radius_pc[j], adraws.age_myr[j], main["dmin"][j].astype(float),
                                  main["tau"][j].astype(float), main["edge"][j], valid, draws.radial_velocity,
                                  factor=cfg["factor"], tolerance_myr=cfg["tolerance"], control=control,
                                  control_runs=cfg["control_runs"])
        s["_index"] = j
        out.append(s)
    return out
