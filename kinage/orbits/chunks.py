"""Star(-like) draws integrated and searched chunk by chunk, chunks in parallel threads.

Each chunk is integrated by galpy's C code on the coarse output grid and then
searched for closest approaches to every association (:mod:`.hermite`).  Both
steps release the GIL for most of their time (galpy runs in C through ctypes,
numpy's large array operations release it), so with ``cores`` > 1 the chunks
run in a pool of that many threads, each letting galpy use one OpenMP thread.
Results go to preallocated arrays by draw index, so the numbers do not depend
on the number of cores, the chunk size or the order in which chunks finish.

Memory: one chunk holds galpy's orbit array (n x nt x 6 doubles) and the
Cartesian copy used by the search (about as much again), per thread.
"""

import warnings
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from .hermite import AssociationGrid, StarChunk, closest_on_grid
from .integrate import integrate_orbits, integration_cores
from .plane import plane_crossing_age

__all__ = ["integrate_associations", "run_draws", "chunk_rows", "N_TRACKS", "BIRTH_RADII", "REFINE_RADII", "REFINE_MIN_PC"]

N_TRACKS = 100  # star draws kept for figures
BIRTH_RADII = 5.0  # star positions at closest approach kept below this many association radii
#: closest approaches below max(REFINE_RADII x radius, REFINE_MIN_PC) get the float64 Hermite refinement
REFINE_RADII = 5.0
REFINE_MIN_PC = 200.0
_BYTES_PER_VALUE = 8 * 6 * 2  # galpy array + Cartesian copy, per draw and grid point


def chunk_rows(n, nt, chunk_size, max_bytes, cores):
    """Draws per chunk: at most ``chunk_size`` and ``max_bytes`` per chunk; with several cores, the same whole
    number (>= 2) of chunks per core, so that the threads finish together."""
    cap = max(1, min(int(chunk_size), int(max_bytes // (nt * _BYTES_PER_VALUE))))
    if cores > 1 and n > 1000:
        chunks = max(2 * cores, -(-n // cap))
        chunks = -(-chunks // cores) * cores  # a whole number of chunks per core
        cap = max(min(cap, 1000), -(-n // chunks))
    return cap


def integrate_associations(pos, vel, times, pset, *, tolerance, method, rows_cap):
    """Association draws on the output grid (:class:`AssociationGrid`) and {row: reason} of failures."""
    parts_p, parts_v, failed = [], [], {}
    for a in range(0, len(pos), rows_cap):
        b = min(a + rows_cap, len(pos))
        bundle = integrate_orbits(pos[a:b], vel[a:b], times, pset, method=method, tolerance=tolerance)
        failed.update({a + i: r for i, r in bundle.failed.items()})
        p, v = bundle.components()
        parts_p.append(np.moveaxis(p, 0, -1))
        parts_v.append(np.moveaxis(v, 0, -1))
    return AssociationGrid(np.concatenate(parts_p), np.concatenate(parts_v), times), failed


def _tracks(bundle):
    """Grid positions (kpc) of the chunk's first :data:`N_TRACKS` draws, shape (<= N_TRACKS, nt, 3)."""
    rows = np.arange(min(N_TRACKS, bundle.n))
    return bundle.state(rows[:, None], np.arange(len(bundle.times))[None, :])[0]


def _one_chunk(a, b, pos_all, vel_all, times, pset, assoc, adraws, tolerance, method, keep_plane, keep_tracks,
               offset, omp_threads):
    bundle = integrate_orbits(pos_all[a:b], vel_all[a:b], times, pset, method=method, tolerance=tolerance,
                              quiet=False, cores=omp_threads)
    na, m = adraws.n_assoc, adraws.m
    out = {"a": a, "b": b, "failed": {offset + a + i: r for i, r in bundle.failed.items()},
           "tracks": _tracks(bundle) if keep_tracks and a == 0 else None}
    star = StarChunk(bundle, offset + a, m, origin=assoc.origin)
    d = np.empty((na, b - a), np.float32)
    tau = np.empty((na, b - a), np.float32)
    edge = np.empty((na, b - a), bool)
    birth = {}
    for j in range(na):
        r = adraws.radius_pc[j]
        ca = closest_on_grid(star, assoc, j, refine_below_pc=max(REFINE_RADII * r, REFINE_MIN_PC),
                             want_position_below_pc=BIRTH_RADII * r)
        d[j], tau[j], edge[j] = ca["dmin_pc"], ca["tau_myr"], ca["edge"]
        if ca["near"].size:
            birth[j] = (offset + a + ca["near"], ca["pos_kpc"])
    out.update(dmin=d, tau=tau, edge=edge, birth=birth)
    if keep_plane:
        plane = plane_crossing_age(bundle)
        bad = np.fromiter(bundle.failed, int, len(bundle.failed))
        plane[bad] = np.nan
        out["plane"] = plane
    return out


def run_draws(pos_all, vel_all, times, pset, assoc, adraws, *, tolerance, method, rows_cap, bar=None,
              keep_plane=False, keep_tracks=False, cores=None, offset=0):
    """Integrate draws from their present states and find closest approaches to every association.

    Parameters
    ----------
    pos_all, vel_all : ndarray, shape (n, 3), kpc and km/s (Galactocentric)
    times : ndarray, Myr (output grid from 0 backwards)
    pset : ParameterSet (potential)
    assoc : AssociationGrid
    adraws : AssociationDraws
    tolerance : float
        galpy rtol = atol.
    method : str
    rows_cap : int
        Draws per chunk.
    bar : progress bar, optional
    keep_plane, keep_tracks : bool
        Plane-crossing ages of all draws; grid positions of the first draws (figures).
    cores : int, optional
        Threads (default :func:`~kinage.orbits.integrate.integration_cores`).
    offset : int
        Global index of the first draw: draw i pairs with association draw
        (offset + i) % m, and failures and births are keyed by global index.

    Returns
    -------
    dict
        ``dmin`` (n_assoc, n) pc, ``tau`` Myr, ``edge`` (float32/bool), ``failed`` {draw: reason},
        ``plane`` (n,) Myr or None, ``tracks`` (<= N_TRACKS, nt, 3) kpc or None,
        ``birth`` {association: (draw indices, positions kpc)}.
    """
    n, na = len(pos_all), adraws.n_assoc
    cores = integration_cores() if cores is None else max(1, int(cores))
    res = {"dmin": np.full((na, n), np.nan, np.float32), "tau": np.full((na, n), np.nan, np.float32),
           "edge": np.zeros((na, n), bool), "failed": {}, "plane": np.full(n, np.nan) if keep_plane else None,
           "tracks": None, "birth": {}}
    bounds = [(a, min(a + rows_cap, n)) for a in range(0, n, rows_cap)]
    births = []

    def collect(c):
        a, b = c["a"], c["b"]
        res["dmin"][:, a:b], res["tau"][:, a:b], res["edge"][:, a:b] = c["dmin"], c["tau"], c["edge"]
        res["failed"].update(c["failed"])
        if keep_plane:
            res["plane"][a:b] = c["plane"]
        if c["tracks"] is not None:
            res["tracks"] = c["tracks"]
        births.append((a, c["birth"]))
        if bar is not None:
            bar.update(b - a)

    args = (pos_all, vel_all, times, pset, assoc, adraws, tolerance, method, keep_plane, keep_tracks, int(offset))
    with warnings.catch_warnings():  # filters are process-wide: set once here, not in the threads
        warnings.simplefilter("ignore")
        if cores == 1 or len(bounds) == 1:
            for a, b in bounds:
                collect(_one_chunk(a, b, *args, omp_threads=cores))
        else:
            with ThreadPoolExecutor(max_workers=cores) as pool:
                futures = [pool.submit(_one_chunk, a, b, *args, omp_threads=1) for a, b in bounds]
                try:
                    for f in futures:  # in order, so births stay sorted by draw
                        collect(f.result())
                except BaseException:  # Ctrl-C (galpy raises it in a chunk): the queued chunks never start
                    for f in futures:
                        f.cancel()
                    raise
    for j in range(na):
        parts = [bd[j] for _, bd in sorted(births, key=lambda x: x[0]) if j in bd]
        if parts:
            res["birth"][j] = (np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts]))
    return res
