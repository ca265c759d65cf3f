"""Benchmark of the tracing stage; prints ratios measured side by side in one run.

Every timing is the wall time of a fresh subprocess, imports included, repeated
in turn and reduced to the minimum (the machine is shared, so minima of
interleaved runs are the fairest figures):

* ``kinage trace`` with the defaults (control runs included) of a scenario with
  N star draws x 30 associations (200 draws each), 10 Myr;
* a plain script: galpy integrating only the star's N draws at galpy's default
  accuracy (rtol = atol = 1e-12) on a 401-point grid (chunks of 20,000);
* the floor: galpy integrating the minimum orbits of that trace (star draws,
  the control draws it used, association draws) at the chosen
  ``integration_tolerance`` and ``time_steps``;
* ``kinage trace`` with 1, 2 and all cores (OMP_NUM_THREADS).

It also times, in process, one chunk's integration against the fused
search-and-refinement kernel (pure numpy), the share a compiled kernel could
at most remove.

Usage: python scripts/bench_trace.py [--sizes 20000 100000] [--repeats 3] [--memory N]
"""

import argparse
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout

HEADER = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
          "radial_velocity,radial_velocity_error,radius,age")
N_ASSOC, M_ASSOC, MAX_AGE = 30, 200, 10.0

_GALPY_SCRIPT = r'''
import sys, time
import numpy as np
import galpy.orbit, galpy.potential
from galpy.orbit import Orbit
from galpy.util import conversion
t0 = time.perf_counter()
vxvv = np.load(sys.argv[1])
steps, tol, chunk = int(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
ro, vo = 8.0, 220.0
t = np.linspace(0.0, -10.0, steps) / (1000.0 * conversion.time_in_Gyr(vo, ro))
kw = {} if tol <= 0 else {"rtol": tol, "atol": tol}
for a in range(0, len(vxvv), chunk):
    o = Orbit(vxvv[a:a + chunk], ro=ro, vo=vo)
    o.integrate(t, galpy.potential.MWPotential2014, method="dop853_c", progressbar=False, **kw)
print("integrated", len(vxvv), "orbits in", round(time.perf_counter() - t0, 2), "s")
'''


def _kinage_command():
    exe = shutil.which("kinage", path=str(Path(sys.executable).parent)) or shutil.which("kinage")
    return [exe] if exe else [sys.executable, "-m", "kinage"]


def write_case(folder, n):
    """Scenario and association table of the benchmark case in ``folder``; returns the scenario path."""
    rng = np.random.default_rng(0)
    rows = [f"Bench Group-{i},{rng.uniform(0, 360):.3f},{rng.uniform(-30, 30):.3f},{rng.uniform(200, 900):.1f},"
            f"20,{rng.normal(0, 5):.2f},0.3,{rng.normal(0, 5):.2f},0.3,{rng.normal(0, 15):.1f},2,20,15"
            for i in range(N_ASSOC)]
    folder = Path(folder)
    (folder / "bench_assoc.csv").write_text("\n".join([HEADER] + rows) + "\n")
    path = folder / "bench.toml"
    path.write_text(f"""[star]
name = "Bench star"
ra = 120.0
dec = -20.0
parallax = 2.0
parallax_error = 0.2
pm_ra_cosdec = -40.0
pm_ra_cosdec_error = 1.0
pm_dec = 25.0
pm_dec_error = 1.0

[trace]
associations = "bench_assoc.csv"
samples = {n}
association_samples = {M_ASSOC}
max_age = {MAX_AGE}
potential = "MWPotential2014"
seed = 1
""")
    return path


def initial_conditions(scenario_path, folder):
    """galpy initial conditions of the star draws, of the minimum orbit set, and the trace settings.

    Runs the trace once in this process (not timed) for the number of control
    draws it uses; control draws are the star draws with turned proper motions.
    """
    from kinage.io.scenario import load_scenario
    from kinage.kinematics import rotated_proper_motions
    from kinage.orbits import trace
    from kinage.orbits.integrate import _to_galpy
    from kinage.pipeline import stage_seed

    scn = load_scenario(scenario_path)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = trace(scn, rng=stage_seed(1, "trace"))
    frame, draws, adraws = res.data["frame"], res.data["draws"], res.data["adraws"]
    n_control = int(res.settings["control_draws"])
    cdraws = rotated_proper_motions(draws, np.random.default_rng(5), frame=frame, velocity_prior=_prior(res))
    star = _to_galpy(*draws.galactocentric(frame), 8.0, 220.0)
    ctrl = _to_galpy(*cdraws.galactocentric(frame), 8.0, 220.0)[:n_control]
    assoc = _to_galpy(*adraws.galactocentric(frame), 8.0, 220.0)
    np.save(Path(folder) / "star.npy", star)
    np.save(Path(folder) / "minimum.npy", np.concatenate([star, ctrl, assoc]))
    return res.settings, n_control


def _prior(res):
    from kinage.kinematics import velocity_prior

    return velocity_prior(res.settings["velocity_prior"])


def _wall(cmd, env=None, cwd=None):
    t0 = time.perf_counter()
    out = subprocess.run(cmd, capture_output=True, text=True, env=env, cwd=cwd)
    dt = time.perf_counter() - t0
    if out.returncode != 0:
        raise RuntimeError(f"{' '.join(map(str, cmd))} failed:\n{out.stderr[-2000:]}")
    return dt


def _env(cores):
    env = dict(os.environ)
    env.pop("OMP_NUM_THREADS", None)
    if cores is not None:
        env["OMP_NUM_THREADS"] = str(cores)
    return env


def kernel_share(scenario_path):
    """In-process seconds of one chunk's galpy integration and of the fused search over all associations."""
    from kinage.io.scenario import load_scenario
    from kinage.orbits import trace
    from kinage.orbits.chunks import BIRTH_RADII, REFINE_MIN_PC, REFINE_RADII, integrate_associations
    from kinage.orbits.hermite import StarChunk, closest_on_grid
    from kinage.orbits.integrate import integrate_orbits, set_thread_integrator_cores
    from kinage.params import get

    scn = load_scenario(scenario_path)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = trace(scn, samples=20_000)
    st = res.settings
    pset = get("potential", st["potential"])
    times, frame = res.data["times"], res.data["frame"]
    adraws = res.data["adraws"]
    assoc, _ = integrate_associations(*adraws.galactocentric(frame), times, pset, tolerance=st["integration_tolerance"],
                                      method="dop853_c", rows_cap=10**6)
    pos, vel = res.data["draws"].galactocentric(frame)
    set_thread_integrator_cores(1)
    t0 = time.perf_counter()
    bundle = integrate_orbits(pos, vel, times, pset, tolerance=st["integration_tolerance"])
    t1 = time.perf_counter()
    star = StarChunk(bundle, 0, adraws.m, origin=assoc.origin)
    for j in range(adraws.n_assoc):
        r = adraws.radius_pc[j]
        closest_on_grid(star, assoc, j, refine_below_pc=max(REFINE_RADII * r, REFINE_MIN_PC),
                        want_position_below_pc=BIRTH_RADII * r)
    t2 = time.perf_counter()
    return t1 - t0, t2 - t1


def memory_child(n):
    from kinage.io.scenario import load_scenario
    from kinage.orbits import trace

    with tempfile.TemporaryDirectory() as tmp:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = trace(load_scenario(write_case(tmp, n)))
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(f"PEAK_MB {peak_mb:.0f} N {res.n_samples}")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[20_000, 100_000], help="star draws per case")
    ap.add_argument("--repeats", type=int, default=3, help="interleaved repeats (minimum taken)")
    ap.add_argument("--scaling-size", type=int, default=20_000, help="star draws of the core-scaling runs")
    ap.add_argument("--memory", type=int, metavar="N", help="also measure peak memory of a trace with N draws")
    ap.add_argument("--memory-child", type=int, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.memory_child:
        memory_child(args.memory_child)
        return
    kin = _kinage_command()
    cores_all = len(os.sched_getaffinity(0))
    lines = []
    with tempfile.TemporaryDirectory() as tmp:
        script = Path(tmp) / "plain_galpy.py"
        script.write_text(_GALPY_SCRIPT)
        for n in args.sizes:
            folder = Path(tmp) / f"n{n}"
            folder.mkdir()
            scn = write_case(folder, n)
            settings, n_control = initial_conditions(scn, folder)
            steps, tol = int(settings["time_steps"]), float(settings["integration_tolerance"])
            runs = {"trace": [], "plain": [], "floor": []}
            for _ in range(args.repeats):
                runs["trace"].append(_wall(kin + ["trace", str(scn), "--quiet"], env=_env(None), cwd=folder))
                runs["plain"].append(_wall([sys.executable, str(script), str(folder / "star.npy"), "401", "0",
                                            "20000"], env=_env(None)))
                runs["floor"].append(_wall([sys.executable, str(script), str(folder / "minimum.npy"), str(steps),
                                            str(tol), "200000"], env=_env(None)))
            t = {k: min(v) for k, v in runs.items()}
            lines.append((n, n_control, steps, tol, t))
        scaling = []
        folder = Path(tmp) / "scaling"
        folder.mkdir()
        scn = write_case(folder, args.scaling_size)
        for cores in sorted({1, 2, cores_all}):
            scaling.append((cores, min(_wall(kin + ["trace", str(scn), "--quiet"], env=_env(cores), cwd=folder)
                                       for _ in range(max(2, args.repeats - 1)))))
        t_int, t_search = kernel_share(scn)
    print(f"tracing benchmark: N star draws x {N_ASSOC} associations ({M_ASSOC} draws each), {MAX_AGE:g} Myr, "
          f"MWPotential2014, dop853_c; wall times of fresh processes (imports included), minimum of "
          f"{args.repeats} interleaved runs; {cores_all} cores")
    print(f"{'N':>8} {'controls':>8} {'grid':>5} {'tol':>6} {'kinage trace':>13} {'plain galpy':>12} {'ratio':>6} "
          f"{'floor':>7} {'ratio':>6}")
    for n, nc, steps, tol, t in lines:
        print(f"{n:8d} {nc:8d} {steps:5d} {tol:6.0e} {t['trace']:12.2f}s {t['plain']:11.2f}s "
              f"{t['trace'] / t['plain']:6.2f} {t['floor']:6.2f}s {t['trace'] / t['floor']:6.2f}")
    print("  plain galpy: the star's N draws only, galpy default accuracy (1e-12), 401-point grid; "
          "floor: star + control + association draws at the chosen tolerance and grid")
    print("  targets: trace / plain galpy <= 1.0, trace / floor <= 1.5")
    base = scaling[0][1]
    print(f"core scaling, kinage trace, {args.scaling_size} draws: " +
          ", ".join(f"{c} core{'s' if c > 1 else ''} {t:.2f} s ({base / t:.2f}x)" for c, t in scaling))
    print(f"fused search + Hermite refinement (pure numpy), 20,000 draws x {N_ASSOC} associations, one core: "
          f"{t_search:.2f} s against {t_int:.2f} s of galpy integration ({t_search / t_int:.2f}x); "
          "no compiled kernel: it could remove at most this share")
    if args.memory:
        out = subprocess.run([sys.executable, __file__, "--memory-child", str(args.memory)], capture_output=True,
                             text=True)
        peak = next((ln.split()[1] for ln in out.stdout.splitlines() if ln.startswith("PEAK_MB")), "failed")
        print(f"peak memory of a trace with {args.memory} draws (chunked): {peak} MB")


if __name__ == "__main__":
    main()
