"""Calibrate kinage's birth-association probabilities by injection and recovery.

Builds invented associations and neutron stars born in them or in the field
nearby (including near misses born 30-80 pc from an association centre),
flies every orbit with galpy directly (MWPotential2014 with galpy's default
Sun: R0 = 8 kpc, vc = 220 km/s, Schoenrich et al. 2010 solar motion; Bovy
2015, ApJS 216, 29), observes the stars with realistic errors and no radial
velocity, runs them through ``kinage batch`` and scores the stated
probabilities:

* a reliability table: stated probability in bins against the fraction of
  (star, association) pairs where the star was truly born there, with
  binomial (Wilson) 68% intervals (DeGroot & Fienberg 1983, The Statistician
  32, 12, for reliability of probability forecasts);
* the Brier score over all hypotheses (the listed associations and the field;
  Brier 1950, Mon. Weather Rev. 78, 1, multi-category form, 0 is perfect).

Usage::

    python scripts/calibrate_probabilities.py --stars 240 --out /tmp/calib --figure docs/calibration_reliability.png

The population, truth labels and the batch output stay in ``--out``.  The
fractions of births follow the prior the stars are run with: a fraction
``--field-fraction`` (= ``[trace] field_prior``) are born outside the
associations, the rest shared equally among them.  All names and values are
invented.
"""

import argparse
import json
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

__all__ = ["make_associations", "inject_population", "observe", "reliability_table", "brier_score",
           "trace_rows", "probability_matrix", "write_associations", "GALPY_SUN"]

#: galpy's defaults with MWPotential2014 (Bovy 2015); kinage's 'galpy-default' solar parameter set
GALPY_SUN = {"ro": 8.0, "vo": 220.0, "zo": 0.0208, "solarmotion": [-11.1, 12.24, 7.25]}
KICK_SIGMA_KMS = 265.0  # Hobbs et al. 2005, MNRAS 360, 974 (the 'hobbs2005' velocity prior)
NEAR_MISS_PC = (30.0, 80.0)
FIELD_SHELL_PC = (80.0, 350.0)
FIELD_MAX_AGE_MYR = 4.5  # field births up to this long ago
TRACE_MAX_AGE_MYR = 5.0
MAX_DISTANCE_PC = 2000.0  # stars farther than this are left out (parallax too poor), as a survey would


def _galpy():
    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
    from kinage._galpy import import_galpy

    import_galpy()
    from galpy.orbit import Orbit
    from galpy.potential import MWPotential2014

    return Orbit, MWPotential2014


def _orbit_from_cartesian(Orbit, pos_kpc, vel_kms):
    """galpy orbits from galpy-frame Cartesian states (x, y, z kpc; vx, vy, vz km/s), physical units."""
    x, y, z = pos_kpc.T
    vx, vy, vz = vel_kms.T
    R = np.hypot(x, y)
    phi = np.arctan2(y, x)
    vR = (x * vx + y * vy) / R
    vT = (x * vy - y * vx) / R
    return Orbit(np.column_stack([R / GALPY_SUN["ro"], vR / GALPY_SUN["vo"], vT / GALPY_SUN["vo"],
                                  z / GALPY_SUN["ro"], vz / GALPY_SUN["vo"], phi]), **GALPY_SUN)


def _state(o, t):
    """galpy-frame Cartesian positions (kpc) and velocities (km/s) at time t (Myr)."""
    import astropy.units as u

    tt = t * u.Myr
    pos = np.column_stack([o.x(tt), o.y(tt), o.z(tt)])
    vel = np.column_stack([o.vx(tt), o.vy(tt), o.vz(tt)])
    return np.atleast_2d(pos), np.atleast_2d(vel)


def _observables(o):
    return {"ra": np.atleast_1d(o.ra()), "dec": np.atleast_1d(o.dec()), "distance_pc": np.atleast_1d(o.dist()) * 1e3,
            "pm_ra_cosdec": np.atleast_1d(o.pmra()), "pm_dec": np.atleast_1d(o.pmdec()),
            "radial_velocity": np.atleast_1d(o.vlos())}


def make_associations(rng, n=4):
    """Invented associations today: positions 150-450 pc from the Sun, near-circular motion.

    Returns
    -------
    list of dict
        ``name``, observables (``ra``, ``dec``, ``distance``, ``pm_ra_cosdec``,
        ``pm_dec``, ``radial_velocity``), their errors, ``radius`` (pc),
        ``age`` (Myr) and the galpy orbit ``_orbit``.
    """
    Orbit, pot = _galpy()
    names = ["Norvale-A", "Corvina-B", "Lupra-C", "Aurenna-D", "Serpa-E", "Tucavel-F"]
    out = []
    for k in range(n):
        lon = 2 * np.pi * (k + rng.uniform(0.2, 0.8)) / n
        d = rng.uniform(0.15, 0.45)
        pos = np.array([GALPY_SUN["ro"] - d * np.cos(lon), d * np.sin(lon), rng.normal(0, 0.04)])
        R = np.hypot(pos[0], pos[1])
        vc = GALPY_SUN["vo"]  # nearly flat curve near the Sun
        # galpy's frame is left-handed: rotation is towards +phi with the Sun at phi = 0
        vel = np.array([-pos[1] / R, pos[0] / R, 0.0]) * vc + rng.normal(0, 5.0, 3)
        o = _orbit_from_cartesian(Orbit, pos[None, :], vel[None, :])
        obs = _observables(o)
        out.append({"name": names[k], "ra": float(obs["ra"][0]), "dec": float(obs["dec"][0]),
                    "distance": float(obs["distance_pc"][0]), "distance_error": 8.0,
                    "pm_ra_cosdec": float(obs["pm_ra_cosdec"][0]), "pm_ra_cosdec_error": 0.1,
                    "pm_dec": float(obs["pm_dec"][0]), "pm_dec_error": 0.1,
                    "radial_velocity": float(obs["radial_velocity"][0]), "radial_velocity_error": 2.0,
                    "radius": float(rng.uniform(8.0, 15.0)), "age": float(rng.uniform(2.5, 4.5)), "_pos": pos,
                    "_vel": vel})
    return out


def _kicks(rng, n):
    return rng.normal(0.0, KICK_SIGMA_KMS, (n, 3))


def _offsets(rng, n, lo_pc, hi_pc):
    """Isotropic offsets with radii uniform in volume between lo and hi (pc), in kpc."""
    u3 = rng.uniform(lo_pc**3, hi_pc**3, n)
    r = np.cbrt(u3) / 1e3
    v = rng.normal(size=(n, 3))
    return v / np.linalg.norm(v, axis=1)[:, None] * r[:, None]


def inject_population(rng, associations, n_stars, field_fraction=0.5, near_miss_share=0.4, kinds=None,
                      parents=None):
    """Stars born in the associations or in the field near them, flown to today with galpy.

    Parameters
    ----------
    rng : numpy.random.Generator
    associations : list of dict
        From :func:`make_associations`.
    n_stars : int
        Stars to make (before dropping those beyond ``MAX_DISTANCE_PC``).
    field_fraction : float
        Share born outside every association (the prior the stars are run with).
    near_miss_share : float
        Share of the field births that are near misses (30-80 pc from a centre).
    kinds, parents : sequence, optional
        Force the kind ('member', 'near-miss', 'field') and the association index of each star.

    Returns
    -------
    list of dict
        Per star: ``truth`` (association name or 'field'), ``kind`` ('member',
        'near-miss', 'field'), ``birth_myr`` and the true present observables.
    """
    Orbit, pot = _galpy()
    na = len(associations)
    kind = rng.choice(["member", "near-miss", "field"], n_stars,
                      p=[1 - field_fraction, field_fraction * near_miss_share, field_fraction * (1 - near_miss_share)])
    parent = rng.integers(0, na, n_stars)
    if kinds is not None:
        kind = np.asarray(kinds)
    if parents is not None:
        parent = np.asarray(parents, int)
    age = np.array([associations[j]["age"] for j in parent])
    tau = np.where(kind == "member", rng.uniform(0.3, 1.0, n_stars) * age, rng.uniform(0.3, FIELD_MAX_AGE_MYR, n_stars))
    stars = []
    for j, a in enumerate(associations):
        rows = np.flatnonzero(parent == j)
        if rows.size == 0:
            continue
        ao = _orbit_from_cartesian(Orbit, np.repeat(a["_pos"][None, :], rows.size, 0),
                                   np.repeat(a["_vel"][None, :], rows.size, 0))
        import astropy.units as u

        # each copy of the association orbit integrated back to its star's birth time
        grid = np.linspace(0.0, -1.0, 201)[None, :] * tau[rows][:, None]
        bpos, bvel = np.zeros((rows.size, 3)), np.zeros((rows.size, 3))
        for i, r in enumerate(rows):
            oi = ao[i]
            oi.integrate(grid[i] * u.Myr, pot, method="dop853_c")
            p, v = _state(oi, -tau[r])
            bpos[i], bvel[i] = p[0], v[0]
        off = np.zeros((rows.size, 3))
        k = kind[rows]
        m = k == "member"
        off[m] = rng.normal(0.0, a["radius"] / 1e3, (m.sum(), 3))
        nm = k == "near-miss"
        off[nm] = _offsets(rng, nm.sum(), *NEAR_MISS_PC)
        fd = k == "field"
        off[fd] = _offsets(rng, fd.sum(), *FIELD_SHELL_PC)
        so = _orbit_from_cartesian(Orbit, bpos + off, bvel + _kicks(rng, rows.size))
        for i, r in enumerate(rows):
            oi = so[i]
            oi.integrate(np.linspace(0.0, tau[r], 201) * u.Myr, pot, method="dop853_c")
            p, v = _state(oi, tau[r])
            now = _orbit_from_cartesian(Orbit, p, v)
            obs = {key: float(val[0]) for key, val in _observables(now).items()}
            stars.append({"truth": a["name"] if k[i] == "member" else "field", "kind": str(k[i]),
                          "near": a["name"], "birth_myr": float(tau[r]), **obs})
    return [s for s in stars if s["distance_pc"] < MAX_DISTANCE_PC]


def observe(rng, stars, prefix="Injected", parallax_error=None, pm_error=None):
    """Measured astrometry: parallax error 0.05-0.2 mas, proper-motion error 0.1-0.4 mas/yr, no radial velocity.

    parallax_error, pm_error : float, optional
        Fixed errors (mas, mas/yr) instead of the random ranges.

    Returns
    -------
    list of dict
        Rows for a ``kinage batch`` star table (names ``<prefix> NNNN``).
    """
    rows = []
    for i, s in enumerate(stars):
        sw = rng.uniform(0.05, 0.2) if parallax_error is None else parallax_error
        spm = rng.uniform(0.1, 0.4) if pm_error is None else pm_error
        rows.append({"name": f"{prefix} {i:04d}", "ra": s["ra"], "dec": s["dec"],
                     "parallax": 1000.0 / s["distance_pc"] + sw * rng.normal(), "parallax_error": sw,
                     "pm_ra_cosdec": s["pm_ra_cosdec"] + spm * rng.normal(), "pm_ra_cosdec_error": spm,
                     "pm_dec": s["pm_dec"] + spm * rng.normal(), "pm_dec_error": spm})
    return rows


def _wilson(k, n, z=1.0):
    """Wilson score interval of a binomial proportion (z = 1: 68%)."""
    if n == 0:
        return (np.nan, np.nan)
    p = k / n
    c = (p + z * z / (2 * n)) / (1 + z * z / n)
    h = z * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    return (c - h, c + h)


def reliability_table(prob, outcome, edges=(0.0, 0.05, 0.2, 0.4, 0.6, 0.8, 0.95, 1.0)):
    """Stated probability in bins against the observed frequency (DeGroot & Fienberg 1983).

    Parameters
    ----------
    prob, outcome : array_like
        Stated probabilities and 0/1 outcomes of the same events.

    Returns
    -------
    list of dict
        Per non-empty bin: ``lo``, ``hi``, ``n``, ``mean_stated``, ``observed``,
        ``observed_lo``, ``observed_hi`` (Wilson 68%), ``within`` (the mean stated
        probability inside the 95% Wilson interval of the observed frequency).
    """
    p, o = np.asarray(prob, float), np.asarray(outcome, float)
    out = []
    for lo, hi in zip(edges[:-1], edges[1:]):
        sel = (p >= lo) & ((p < hi) | ((hi == edges[-1]) & (p <= hi)))
        n = int(sel.sum())
        if n == 0:
            continue
        k = int(o[sel].sum())
        lo68, hi68 = _wilson(k, n, 1.0)
        lo95, hi95 = _wilson(k, n, 2.0)
        m = float(p[sel].mean())
        out.append({"lo": lo, "hi": hi, "n": n, "mean_stated": m, "observed": k / n, "observed_lo": lo68,
                    "observed_hi": hi68, "within": bool(lo95 <= m <= hi95)})
    return out


def brier_score(prob_matrix, truth_index):
    """Multi-category Brier score, mean over stars of sum_j (f_ij - o_ij)^2 (Brier 1950); 0 is perfect.

    Parameters
    ----------
    prob_matrix : ndarray, shape (n_stars, n_hypotheses)
    truth_index : ndarray of int, the true hypothesis of each star
    """
    f = np.asarray(prob_matrix, float)
    o = np.zeros_like(f)
    o[np.arange(len(f)), np.asarray(truth_index)] = 1.0
    return float(np.mean(np.sum((f - o) ** 2, axis=1)))


def trace_rows(rows, associations_path, samples, field_prior, seed=7, association_samples=100, control_runs=4,
               time_steps=201, neighbourhood_share=None):
    """Run ``kinage.orbits.trace`` on star rows directly (the reduced calibration of the test suite).

    Returns
    -------
    list of dict
        The trace ``to_dict()`` of each star (None where tracing failed).
    """
    import warnings

    from kinage import scenario_from_dict
    from kinage.errors import InputError
    from kinage.orbits import trace

    out = []
    for i, r in enumerate(rows):
        raw = {"star": dict(r), "trace": {"associations": str(associations_path), "samples": samples,
                                          "association_samples": association_samples, "control_runs": control_runs,
                                          "max_age": TRACE_MAX_AGE_MYR, "time_steps": time_steps, "seed": seed + i,
                                          "field_prior": field_prior}}
        if neighbourhood_share is not None:
            raw["trace"]["neighbourhood_share"] = neighbourhood_share
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                out.append(trace(scenario_from_dict(raw)).to_dict())
        except InputError:
            out.append(None)
    return out


def probability_matrix(results, stars, associations):
    """(probabilities (n, N+1), truth index (n,), kinds (n,), hypothesis names) from trace dicts; the field last."""
    names = [a["name"] for a in associations] + ["field"]
    probs, truth, kinds = [], [], []
    for tr, s in zip(results, stars):
        if tr is None or tr.get("field_probability") is None:
            continue
        p = {a["name"]: a["probability"] for a in tr["associations"]}
        probs.append([p[n] for n in names[:-1]] + [tr["field_probability"]])
        truth.append(names.index(s["truth"]))
        kinds.append(s["kind"])
    return np.array(probs), np.array(truth, int), np.array(kinds), names


def write_associations(path, associations):
    """The association table as CSV in the default units."""
    from astropy.table import Table

    cols = ["name", "ra", "dec", "distance", "distance_error", "pm_ra_cosdec", "pm_ra_cosdec_error", "pm_dec",
            "pm_dec_error", "radial_velocity", "radial_velocity_error", "radius", "age"]
    Table(rows=[[a[c] for c in cols] for a in associations], names=cols).write(path, format="ascii.csv",
                                                                                overwrite=True)
    return path


def _write_inputs(out, assoc, rows, samples, field_prior, neighbourhood_share=None):
    from astropy.table import Table

    out.mkdir(parents=True, exist_ok=True)
    write_associations(out / "associations.csv", assoc)
    scols = list(rows[0])
    Table(rows=[[r[c] for c in scols] for r in rows], names=scols).write(out / "stars.csv", format="ascii.csv",
                                                                         overwrite=True)
    (out / "template.toml").write_text(
        "# template for the calibration batch (invented population)\n"
        "[star]\nname = \"template\"\n\n[trace]\nassociations = \"associations.csv\"\n"
        f"samples = {samples}\nassociation_samples = 100\ncontrol_runs = 4\nmax_age = \"{TRACE_MAX_AGE_MYR:g} Myr\"\n"
        f"time_steps = 201\nseed = 7\nfield_prior = {field_prior}\n"
        + ("" if neighbourhood_share is None else f"neighbourhood_share = {neighbourhood_share}\n"))


def _collect(out, rows, stars, assoc):
    """Trace results of every star from the batch folder (None where missing or failed)."""
    from kinage.batch.stars import safe_name

    results = []
    for r in rows:
        f = out / "batch" / "stars" / safe_name(r["name"]) / "star.json"
        try:
            rec = json.loads(f.read_text())
            res = rec["results"]
            results.append(res["stages"]["trace"] if "stages" in res else res["trace"])
        except (OSError, KeyError, TypeError, ValueError):
            results.append(None)
    return probability_matrix(results, stars, assoc)


def _figure(table, field_table, path):
    from matplotlib.figure import Figure  # no pyplot: the caller's backend is left alone

    fig = Figure(figsize=(4.6, 4.2))
    ax = fig.subplots()
    ax.plot([0, 1], [0, 1], color="0.6", lw=1, ls="--", label="perfect calibration")
    for tab, lab, mk in ((table, "birth in a listed association", "o"), (field_table, "birth in the field", "s")):
        x = [b["mean_stated"] for b in tab]
        y = [b["observed"] for b in tab]
        e = [[b["observed"] - b["observed_lo"] for b in tab], [b["observed_hi"] - b["observed"] for b in tab]]
        ax.errorbar(x, y, yerr=e, fmt=mk, ms=5, capsize=2, label=lab)
    ax.set_xlabel("stated probability (bin mean)")
    ax.set_ylabel("fraction truly born there (68% binomial)")
    ax.set_xlim(0, 1)
    ax.set_ylim(0, 1)
    ax.legend(loc="upper left", fontsize=8)
    fig.tight_layout()
    fig.savefig(path, dpi=130)


def _print_table(title, tab):
    print(title)
    print(f"  {'bin':>11}  {'n':>5}  {'stated':>6}  {'observed (68%)':>22}  within 95%")
    for b in tab:
        print(f"  {b['lo']:.2f}-{b['hi']:.2f}  {b['n']:5d}  {b['mean_stated']:6.3f}  "
              f"{b['observed']:6.3f} ({b['observed_lo']:.3f}-{b['observed_hi']:.3f})  {'yes' if b['within'] else 'NO'}")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--stars", type=int, default=240, help="stars to inject (default 240)")
    ap.add_argument("--associations", type=int, default=4)
    ap.add_argument("--samples", type=int, default=1000, help="Monte Carlo draws per star")
    ap.add_argument("--field-fraction", type=float, default=0.5, help="share of field births = [trace] field_prior")
    ap.add_argument("--near-miss-share", type=float, default=0.4,
                    help="share of the field births that are near misses 30-80 pc from a centre (default 0.4)")
    ap.add_argument("--neighbourhood-share", type=float, default=None,
                    help="[trace] neighbourhood_share to run with (default: kinage's default)")
    ap.add_argument("--seed", type=int, default=2026)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--out", default="calibration_run")
    ap.add_argument("--figure", default=None, help="write the reliability diagram here (PNG)")
    args = ap.parse_args(argv)
    rng = np.random.default_rng(args.seed)
    out = Path(args.out)
    t0 = time.time()
    assoc = make_associations(rng, args.associations)
    stars = inject_population(rng, assoc, args.stars, field_fraction=args.field_fraction,
                              near_miss_share=args.near_miss_share)
    rows = observe(rng, stars)
    _write_inputs(out, assoc, rows, args.samples, args.field_fraction, args.neighbourhood_share)
    (out / "truth.json").write_text(json.dumps([{"name": r["name"], **s} for r, s in zip(rows, stars)], indent=1))
    t1 = time.time()
    print(f"injected {len(stars)} stars ({sum(s['kind'] == 'member' for s in stars)} members, "
          f"{sum(s['kind'] == 'near-miss' for s in stars)} near misses, {sum(s['kind'] == 'field' for s in stars)} "
          f"field) around {len(assoc)} associations in {t1 - t0:.0f} s; running kinage batch ...", flush=True)
    subprocess.run([sys.executable, "-m", "kinage", "batch", str(out / "stars.csv"), "--scenario",
                    str(out / "template.toml"), "--out", str(out / "batch"), "--workers", str(args.workers),
                    "--quiet"], check=False)
    t2 = time.time()
    probs, truth, kinds, names = _collect(out, rows, stars, assoc)
    na = len(names) - 1
    onehot = np.zeros_like(probs)
    onehot[np.arange(len(truth)), truth] = 1
    table = reliability_table(probs[:, :na].ravel(), onehot[:, :na].ravel())
    field_table = reliability_table(probs[:, na], onehot[:, na])
    bs = brier_score(probs, truth)
    base = np.bincount(truth, minlength=na + 1) / len(truth)
    bs_ref = brier_score(np.repeat(base[None, :], len(truth), 0), truth)
    print(f"scored {len(truth)} stars (batch {t2 - t1:.0f} s)")
    _print_table("Reliability, (star, listed association) pairs:", table)
    _print_table("Reliability, field probability:", field_table)
    print(f"Brier score {bs:.3f} (stating the population fractions for every star: {bs_ref:.3f}; 0 is perfect)")
    top = probs.argmax(axis=1)
    for k in ("member", "near-miss", "field"):
        sel = kinds == k
        if sel.any():
            print(f"  {k:9s} n={sel.sum():3d}: mean probability of the truth {probs[sel, truth[sel]].mean():.2f}, "
                  f"most probable hypothesis is the truth for {np.mean(top[sel] == truth[sel]):.0%}")
    summary = {"n_stars": int(len(truth)), "brier": bs, "brier_reference": bs_ref, "reliability": table,
               "field_reliability": field_table, "samples": args.samples, "seed": args.seed,
               "near_miss_share": args.near_miss_share, "neighbourhood_share": args.neighbourhood_share}
    (out / "calibration.json").write_text(json.dumps(summary, indent=1))
    if args.figure:
        _figure(table, field_table, args.figure)
        print(f"figure: {args.figure}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
