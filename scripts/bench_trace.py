"""Benchmark of the tracing stage; prints measured ratios side by side.

1. trace: N star draws x 30 associations over 10 Myr (no control runs), against
   galpy's bare integration of the same orbits (same grid, integrator, chunks);
2. a naive loop integrating one draw at a time (one galpy Orbit per draw,
   closest approach per association in numpy), timed on a subset and scaled;
3. peak memory (maxrss) of a run with 1,000,000 draws through chunking, in a
   subprocess.

Usage: python scripts/bench_trace.py [--quick]
"""

import argparse
import resource
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

from kinage import scenario_from_dict  # noqa: E402
from kinage._galpy import import_galpy
from kinage.orbits import trace
from kinage.orbits.integrate import _integrate_rows, _to_galpy, galpy_potential
from kinage.orbits.trace import CHUNK_BYTES
from kinage.params import get

STEPS = 401  # the default [trace] time_steps
HEADER = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
          "radial_velocity,radial_velocity_error,radius,age")


def _scenario(tmp, n, n_assoc, control_runs=0, steps=None):
    steps = STEPS if steps is None else steps
    rng = np.random.default_rng(0)
    rows = []
    for i in range(n_assoc):
        rows.append(f"Bench Group-{i},{rng.uniform(0, 360):.3f},{rng.uniform(-30, 30):.3f},{rng.uniform(200, 900):.1f},"
                    f"20,{rng.normal(0, 5):.2f},0.3,{rng.normal(0, 5):.2f},0.3,{rng.normal(0, 15):.1f},2,20,15")
    p = Path(tmp) / "bench_assoc.csv"
    p.write_text("\n".join([HEADER] + rows) + "\n")
    return scenario_from_dict({
        "star": {"ra": 120.0, "dec": -20.0, "parallax": 2.0, "parallax_error": 0.2, "pm_ra_cosdec": -40.0,
                 "pm_ra_cosdec_error": 1.0, "pm_dec": 25.0, "pm_dec_error": 1.0},
        "trace": {"associations": str(p), "samples": n, "association_samples": 200, "max_age": 10.0,
                  "time_steps": steps,
                  "control_runs": control_runs, "seed": 1}})


def _galpy_setup(result):
    """Frame, galpy potential, ro, vo, times (Myr) and times in galpy's natural units of a trace result."""
    import_galpy()
    from galpy.util import conversion

    pset = get("potential", result.settings["potential"])
    ro, vo = pset.values["ro_kpc"], pset.values["vo_kms"]
    times = result.data["times"]
    return (result.data["frame"], galpy_potential(pset), ro, vo, times,
            times / (1000.0 * conversion.time_in_Gyr(vo, ro)))


def bare_galpy(result, n):
    """galpy's integration alone of the same star + association orbits, same chunks."""
    frame, pot, ro, vo, times, t_nat = _galpy_setup(result)
    pos, vel = result.data["draws"].galactocentric(frame)
    apos, avel = result.data["adraws"].galactocentric(frame)
    cap = int(CHUNK_BYTES // (len(times) * 48))
    t0 = time.perf_counter()
    for p, v in ((apos, avel), (pos, vel)):
        vxvv = _to_galpy(p, v, ro, vo)
        for a in range(0, len(vxvv), cap):
            _integrate_rows(vxvv[a:a + cap], t_nat, pot, "dop853_c", ro, vo)
    return time.perf_counter() - t0


def naive_loop(result, n_sub):
    """One galpy Orbit per draw, then a numpy closest approach for every association; seconds per draw."""
    frame, pot, ro, vo, times, t_nat = _galpy_setup(result)
    from galpy.orbit import Orbit

    d = result.data["draws"]
    assoc = result.data["assoc"]
    cols_full = np.searchsorted(-times, -assoc.times)
    na, m = result.data["adraws"].n_assoc, result.data["adraws"].m
    t0 = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for i in range(n_sub):
            p, v = frame.to_galactocentric(d.ra_deg[i:i + 1], d.dec_deg[i:i + 1], d.distance_pc[i:i + 1],
                                           d.pm_ra_cosdec[i:i + 1], d.pm_dec[i:i + 1], d.radial_velocity[i:i + 1])
            o = Orbit(_to_galpy(p, v, ro, vo)[0], ro=ro, vo=vo)
            o.integrate(t_nat, pot, method="dop853_c", progressbar=False)
            arr = o.getOrbit()
            x = np.stack([-arr[:, 0] * np.cos(arr[:, 5]), arr[:, 0] * np.sin(arr[:, 5]), arr[:, 3]], -1) * ro
            for j in range(na):
                a = assoc.pos[j * m + i % m]
                dd = np.linalg.norm(x[cols_full] - a, axis=1)
                np.argmin(dd)
    return (time.perf_counter() - t0) / n_sub


def memory_child(n):
    with tempfile.TemporaryDirectory() as tmp:
        res = trace(_scenario(tmp, n, 30), progress=False)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(f"PEAK_MB {peak_mb:.0f} N {res.n_samples}")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes (a minute or two)")
    ap.add_argument("--memory-child", type=int, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.memory_child:
        memory_child(args.memory_child)
        return
    n = 10_000 if args.quick else 100_000
    n_mem = 100_000 if args.quick else 1_000_000
    rows = []
    for steps in (STEPS, 2001):
        with tempfile.TemporaryDirectory() as tmp:
            scn = _scenario(tmp, n, 30, steps=steps)
            res = trace(scn, samples=200)  # warm-up (imports, potential set-up)
            res = trace(scn)
            t_bare = bare_galpy(res, n)
            t0 = time.perf_counter()
            res = trace(scn)
            t_trace = time.perf_counter() - t0
        t_naive = naive_loop(res, 100 if args.quick else 300) * n
        rows.append((steps, t_trace, t_bare, t_naive))
    out = subprocess.run([sys.executable, __file__, "--memory-child", str(n_mem)], capture_output=True, text=True)
    peak = next((line.split()[1] for line in out.stdout.splitlines() if line.startswith("PEAK_MB")), "failed")
    print(f"tracing benchmark: {n} star draws x 30 associations (200 draws each), 10 Myr, "
          f"{res.settings['potential']}, dop853_c, no control runs; naive loop timed on a subset and scaled")
    print(f"{'grid steps':>10} {'trace (s)':>10} {'bare galpy (s)':>15} {'trace/bare':>11} {'naive (s)':>10} "
          f"{'naive/trace':>12}")
    for steps, t_trace, t_bare, t_naive in rows:
        print(f"{steps:10d} {t_trace:10.1f} {t_bare:15.1f} {t_trace / t_bare:11.2f} {t_naive:10.0f} "
              f"{t_naive / t_trace:12.1f}")
    print(f"peak memory for {n_mem} draws (default grid, chunked): {peak} MB")
    print("targets: trace/bare <= ~1.3, naive/trace >= 20, peak < 2048 MB for 1,000,000 draws")


if __name__ == "__main__":
    main()
