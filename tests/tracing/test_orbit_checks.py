"""Orbit integration and closest approach against closed forms and conserved quantities."""

import numpy as np
import pytest

from kinage.orbits.closest import straight_line_closest_approach
from kinage.orbits.hermite import AssociationGrid, StarChunk, closest_on_grid
from kinage.orbits.frames import KMS_TO_PCMYR
from kinage.orbits.integrate import integrate_orbits, time_grid
from kinage.params import get
from tracing_helpers import random_states


def _closest(star, group):
    """Closest approach of star draw i to association draw i by the kernel trace runs (hermite.closest_on_grid)."""
    p, v = group.components()
    grid = AssociationGrid(np.moveaxis(p, 0, -1), np.moveaxis(v, 0, -1), group.times)
    return closest_on_grid(StarChunk(star, 0, star.n, origin=grid.origin), grid, 0, refine_below_pc=np.inf)


@pytest.mark.parametrize("which", ["none", "galpy-null"])
def test_force_free_closest_approach_matches_closed_form(which, null_potential_set):
    # Closed form for uniform relative motion: t* = -dr.dv/|dv|^2, d = |dr + dv t*| (elementary kinematics).
    rng = np.random.default_rng(5)
    n = 300
    ps, vs = random_states(rng, n)
    pa = ps + rng.normal(0, 0.3, (n, 3))
    va = vs + rng.normal(0, 150, (n, 3))
    times = time_grid(10.0, 401)
    pset = get("potential", "none") if which == "none" else null_potential_set
    s = integrate_orbits(ps, vs, times, pset)
    a = integrate_orbits(pa, va, times, pset)
    res = _closest(s, a)
    # closed form typed here (not kinage's straight-line helper); backwards in time, so t in [-10, 0] Myr:
    # t* = clip(-dr.dv / |dv|^2, -10, 0), tau = -t*; velocity km/s -> pc/Myr from astropy units
    import astropy.units as u

    dr = (ps - pa) * 1000.0
    dv = (vs - va) * (1 * u.km / u.s).to_value(u.pc / u.Myr)
    t_star = np.clip(-np.sum(dr * dv, axis=1) / np.sum(dv * dv, axis=1), -10.0, 0.0)
    d_ref = np.linalg.norm(dr + dv * t_star[:, None], axis=1)
    tau_ref = -t_star
    d_own, tau_own = straight_line_closest_approach(dr, dv, 10.0)  # kinage's helper agrees too
    np.testing.assert_allclose(d_own, d_ref, rtol=0, atol=1e-9)
    assert np.max(np.abs(res["dmin_pc"] - d_ref)) < 1e-6
    interior = (tau_ref > 1e-6) & (tau_ref < 10 - 1e-6)
    assert interior.sum() > 50
    assert np.max(np.abs(res["tau_myr"] - tau_ref)[interior]) < 1e-6


def test_energy_conserved_in_static_potential():
    # Energy E = Phi + v^2/2 is conserved in a static potential (Binney & Tremaine 2008, sect. 3.1);
    # Phi from galpy's MWPotential2014 (Bovy 2015, ApJS 216, 29).
    from galpy.potential import MWPotential2014, evaluatePotentials

    rng = np.random.default_rng(2)
    pos, vel = random_states(rng, 40)
    times = time_grid(10.0, 501)
    b = integrate_orbits(pos, vel, times, get("potential", "MWPotential2014"))
    p, v = b.state(np.arange(40)[:, None], np.arange(len(times))[None, :])
    E = evaluatePotentials(MWPotential2014, np.hypot(p[..., 0], p[..., 1]) / 8.0, p[..., 2] / 8.0) \
        + 0.5 * np.sum((v / 220.0) ** 2, axis=-1)
    assert np.max(np.abs(E / E[:, :1] - 1)) < 1e-8


def test_back_then_forward_returns_to_start():
    # Time reversibility of Hamiltonian motion: integrate back 10 Myr, then forward from the end point.
    rng = np.random.default_rng(3)
    pos, vel = random_states(rng, 30)
    times = time_grid(10.0, 201)
    pset = get("potential", "MWPotential2014")
    back = integrate_orbits(pos, vel, times, pset)
    p_end, v_end = back.state(np.arange(30), np.full(30, len(times) - 1))
    fwd = integrate_orbits(p_end, v_end, -times, pset)
    p0, _ = fwd.state(np.arange(30), np.full(30, len(times) - 1))
    assert np.max(np.linalg.norm(p0 - pos, axis=1)) * 1000 < 1e-6


def test_refined_minimum_agrees_with_fine_grid():
    # The refined closest approach on a 401-point grid agrees with a 20001-point brute-force minimum
    # (common practice, no source: convergence check against a finer grid).
    rng = np.random.default_rng(4)
    n = 40
    ps, vs = random_states(rng, n, speed=200)
    pa = ps + rng.normal(0, 0.2, (n, 3))
    va = vs + rng.normal(0, 100, (n, 3))
    pset = get("potential", "MWPotential2014")
    coarse_t = time_grid(10.0, 401)
    res = _closest(integrate_orbits(ps, vs, coarse_t, pset), integrate_orbits(pa, va, coarse_t, pset))
    fine_t = time_grid(10.0, 20001)
    s, a = integrate_orbits(ps, vs, fine_t, pset), integrate_orbits(pa, va, fine_t, pset)
    cols = np.arange(20001)
    d = np.linalg.norm(s.positions(cols) - a.positions(cols), axis=-1) * 1000
    dmin_fine = d.min(axis=1)
    assert np.all(res["dmin_pc"] <= dmin_fine + 1e-3)
    assert np.max(np.abs(res["dmin_pc"] - dmin_fine)) < 0.05  # fine grid step 0.5 kyr at <= ~1 pc/kyr


def test_failed_orbit_is_recorded_not_fatal():
    rng = np.random.default_rng(6)
    pos, vel = random_states(rng, 10)
    pos[4] = np.nan
    b = integrate_orbits(pos, vel, time_grid(1.0, 21), get("potential", "MWPotential2014"))
    assert list(b.failed) == [4]
    assert np.all(np.isfinite(b.array[np.arange(10) != 4]))


def test_plane_crossing_age_closed_form():
    # Force-free motion: z(t) = z0 + vz t crosses z = 0 at tau = z0 / vz (elementary kinematics).
    from kinage.orbits.plane import plane_crossing_age

    rng = np.random.default_rng(9)
    pos, vel = random_states(rng, 500)
    times = time_grid(5.0, 1001)
    b = integrate_orbits(pos, vel, times, get("potential", "none"))
    tau = plane_crossing_age(b)
    ref = pos[:, 2] * 1000 / (vel[:, 2] * KMS_TO_PCMYR)
    inside = (ref > 0) & (ref < 5.0)
    np.testing.assert_allclose(tau[inside], ref[inside], atol=1e-9)
    assert np.all(np.isnan(tau[~inside]))
