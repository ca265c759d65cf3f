"""The fast tracing settings (coarse grid, looser galpy tolerance, sized control draws) against strict runs."""

import json
import subprocess
import sys

import numpy as np
import pytest

from kinage import scenario_from_dict
from kinage.io.results import to_jsonable
from kinage.orbits import trace
from kinage.orbits.chunks import REFINE_MIN_PC
from kinage.orbits.closest import straight_line_closest_approach
from kinage.orbits.frames import KMS_TO_PCMYR
from kinage.orbits.hermite import AssociationGrid, StarChunk, closest_on_grid
from kinage.orbits.integrate import integrate_orbits, time_grid
from kinage.params import get
from tracing_helpers import random_states

HEADER = ("name,ra,dec,distance,distance_error,pm_ra_cosdec,pm_ra_cosdec_error,pm_dec,pm_dec_error,"
          "radial_velocity,radial_velocity_error,radius,age")


def _scenario(tmp_path, **trace_kw):
    """An invented star passing through 'Vesna Drift-3' and a decoy group (values invented)."""
    rows = ["Vesna Drift-3,101.5,4.0,430,10,-1.2,0.2,-0.8,0.2,15,2,18,4",
            "Orlen Decoy-7,96.0,8.0,470,10,2.0,0.2,1.0,0.2,-5,2,18,4",
            "Tarsa Wide-1,104.0,2.0,400,15,-0.5,0.3,-1.5,0.3,10,3,40,6"]
    path = tmp_path / "assoc.csv"
    path.write_text("\n".join([HEADER] + rows) + "\n")
    star = {"name": "Speedtest J0102", "ra": 98.0, "dec": 6.5, "parallax": 2.6, "parallax_error": 0.1,
            "pm_ra_cosdec": 38.0, "pm_ra_cosdec_error": 0.5, "pm_dec": -22.0, "pm_dec_error": 0.5}
    tr = {"associations": str(path), "samples": 1500, "association_samples": 60, "max_age": 4.0, "seed": 11}
    tr.update(trace_kw)
    return scenario_from_dict({"star": star, "trace": tr})


def _binomial_error(f, n):
    # standard error of a binomial fraction (textbook), floored at one count
    return np.sqrt(max(f * (1 - f), 1.0 / n) / n)


def test_default_accuracy_and_grid_agree_with_a_strict_run_within_monte_carlo_error(tmp_path):
    # strict: galpy's own default tolerance (1e-12) on a 401-point grid, all control draws as many as star draws
    fast = trace(_scenario(tmp_path)).to_dict()
    strict = trace(_scenario(tmp_path, integration_tolerance=1e-12, time_steps=401,
                             control_relative_error=1e-3, control_absolute_error=1e-4)).to_dict()
    by_name = {s["name"]: s for s in strict["associations"]}
    assert any(s["n_encounters"] > 50 for s in fast["associations"])  # the check is not empty
    for s in fast["associations"]:
        r = by_name[s["name"]]
        n = s["n_valid"]
        # same draws, so encounter fractions differ by far less than their Monte Carlo error
        assert abs(s["encounter_fraction"] - r["encounter_fraction"]) <= 0.1 * _binomial_error(r["encounter_fraction"], n)
        if r["n_encounters"] >= 20:
            med, lo, hi = (r["age_yr"][k] for k in ("median", "lo68", "hi68"))
            err = (hi - lo) / 2 / np.sqrt(r["n_encounters"])  # Monte Carlo error of a median ~ width / sqrt(n)
            assert abs(s["age_yr"]["median"] - med) <= 0.1 * err
        # control draws differ in number, so the chance rates agree within their combined Monte Carlo errors
        if r["chance_fraction"] is not None:
            tol = 3 * np.hypot(_binomial_error(s["chance_fraction"], s["n_control"]),
                               _binomial_error(r["chance_fraction"], r["n_control"]))
            assert abs(s["chance_fraction"] - r["chance_fraction"]) <= tol
        if r.get("probability") is not None and s.get("probability_error") is not None:
            tol = 3 * np.hypot(s["probability_error"] or 0.0, r.get("probability_error") or 0.0) + 1e-3
            assert abs(s["probability"] - r["probability"]) <= tol


def test_control_draws_give_the_stated_chance_rate_error(tmp_path):
    # binomial standard error sqrt(f (1 - f) / N) (textbook) must reach max(r f, e) for every association
    res = trace(_scenario(tmp_path, samples=4000, association_samples=20, control_relative_error=0.2,
                          control_absolute_error=0.01))
    d = res.to_dict()
    n_control = res.settings["control_draws"]
    assert 0 < n_control < d["n_samples"]  # fewer control draws than star draws here
    for s in d["associations"]:
        f, n = s["chance_fraction"], s["n_control"]
        assert n > 0
        assert np.sqrt(f * (1 - f) / n) <= 1.1 * max(0.2 * f, 0.01)


def test_fused_kernel_matches_straight_line_closed_form_on_a_coarse_grid(null_potential_set):
    # force-free motion: the cubic Hermite interpolant is exact, so an 11-point grid gives the closed form
    rng = np.random.default_rng(8)
    n, m = 400, 7
    ps, vs = random_states(rng, n)
    pa, va = random_states(rng, m, speed=20.0)
    times = time_grid(10.0, 11)
    s = integrate_orbits(ps, vs, times, null_potential_set)
    a = integrate_orbits(pa, va, times, null_potential_set)
    p, v = a.components()
    grid = AssociationGrid(np.moveaxis(p, 0, -1), np.moveaxis(v, 0, -1), times)
    res = closest_on_grid(StarChunk(s, 0, m, origin=grid.origin), grid, 0, refine_below_pc=np.inf)
    pair = np.arange(n) % m
    d_ref, tau_ref = straight_line_closest_approach((ps - pa[pair]) * 1000, (vs - va[pair]) * KMS_TO_PCMYR, 10.0)
    np.testing.assert_allclose(res["dmin_pc"], d_ref, rtol=1e-9, atol=1e-6)
    inside = (tau_ref > 1e-6) & (tau_ref < 10.0 - 1e-6)
    np.testing.assert_allclose(res["tau_myr"][inside], tau_ref[inside], atol=1e-9)
    assert np.array_equal(res["edge"], ~inside)


def test_fused_kernel_matches_a_dense_galpy_grid_in_a_potential():
    # reference: galpy orbits on an 8,001-point grid, minimum by brute force plus a parabola (Bovy 2015, galpy);
    # the kernel sees only a 21-point grid (0.5 Myr steps) of the same orbits
    rng = np.random.default_rng(9)
    n, m = 300, 5
    ps, vs = random_states(rng, n, spread_kpc=0.05, speed=60.0)
    pa, va = random_states(rng, m, spread_kpc=0.05, speed=10.0)
    pset = get("potential", "MWPotential2014")
    coarse, fine = time_grid(10.0, 21), time_grid(10.0, 8001)
    s, a = integrate_orbits(ps, vs, coarse, pset), integrate_orbits(pa, va, coarse, pset)
    p, v = a.components()
    grid = AssociationGrid(np.moveaxis(p, 0, -1), np.moveaxis(v, 0, -1), coarse)
    res = closest_on_grid(StarChunk(s, 0, m, origin=grid.origin), grid, 0, refine_below_pc=REFINE_MIN_PC)
    sf, af = integrate_orbits(ps, vs, fine, pset), integrate_orbits(pa, va, fine, pset)
    pair = np.arange(n) % m
    cols = np.arange(len(fine))
    d = np.linalg.norm(sf.positions(cols) - af.positions(cols)[pair], axis=2) * 1000
    k = np.clip(np.argmin(d, axis=1), 1, len(fine) - 2)
    i = np.arange(n)
    f0, fm, fp = d[i, k] ** 2, d[i, k - 1] ** 2, d[i, k + 1] ** 2
    x = np.clip(0.5 * (fm - fp) / (fm - 2 * f0 + fp), -1, 1)
    d_ref = np.sqrt(f0 - 0.25 * (fm - fp) * x)
    near = (d_ref < REFINE_MIN_PC) & ~res["edge"]
    assert near.sum() >= 50
    np.testing.assert_allclose(res["dmin_pc"][near], d_ref[near], atol=2e-3)
    # beyond the refinement radius the parabola through three grid points is kept: ~1e-4 relative
    far = ~res["edge"] & (d_ref >= REFINE_MIN_PC)
    np.testing.assert_allclose(res["dmin_pc"][far], d_ref[far], rtol=1e-3)


def test_cores_and_chunks_do_not_change_the_numbers(tmp_path):
    from kinage.orbits.integrate import set_integration_cores

    scn = _scenario(tmp_path, samples=300, association_samples=20)
    try:
        set_integration_cores(1)
        a = trace(scn)
        set_integration_cores(2)
        b = trace(scn.replace(trace=scn.trace.replace(chunk_size=70)))
    finally:
        set_integration_cores(None)
    dump = lambda r: json.dumps(to_jsonable(r.to_dict()["associations"]))  # noqa: E731
    assert dump(a) == dump(b)


@pytest.mark.parametrize("code", ["import kinage",
                                  "import io, contextlib\nfrom kinage.cli import main\n"
                                  "with contextlib.redirect_stdout(io.StringIO()):\n"
                                  "    try:\n        main(['--help'])\n    except SystemExit:\n        pass"])
def test_start_up_loads_no_heavy_modules(code):
    # heavy modules that `import kinage` and `kinage --help` must not load (start-up time; common practice, no source)
    heavy = ["astropy.coordinates", "galpy", "scipy.stats", "matplotlib"]
    out = subprocess.run([sys.executable, "-c", code + f"\nimport sys\nprint([m for m in {heavy!r} if m in sys.modules])"],
                         capture_output=True, text=True, check=True)
    assert out.stdout.strip().splitlines()[-1] == "[]"


def test_truncated_normal_distances_match_scipy():
    # reference: scipy.stats.truncnorm (positive part of N(d, s)), compared by a KS test
    from scipy import stats

    from kinage.kinematics.distance import sample_distance_gaussian

    d, s = 300.0, 250.0
    x = sample_distance_gaussian(d, s, 20000, np.random.default_rng(2))
    assert np.all(x > 0)
    ref = stats.truncnorm(-d / s, np.inf, loc=d, scale=s)
    assert stats.kstest(x, ref.cdf).pvalue > 1e-3
