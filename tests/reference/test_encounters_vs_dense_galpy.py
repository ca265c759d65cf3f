"""Closest approaches found by the production trace path against a dense galpy integration.

``kinage.trace`` integrates star and association draws on a coarse output grid (by default 21 times over the
window) and finds each closest approach with ``hermite.closest_on_grid`` (via ``chunks.run_draws``), keeping the
star's position there (the birth position).  Here the same functions, on a 21-point grid over 20 Myr, are checked
against galpy alone: galpy's ``Orbit.integrate`` on a 1 kyr grid (Bovy 2015, ApJS 216, 29; MWPotential2014,
ro = 8 kpc, vo = 220 km/s), then scipy's bounded scalar minimisation of the separation of galpy's orbits
(``Orbit.x/y/z`` at any time inside the integrated range).  Closest-approach distance, time and the star's
position there must agree to 1e-3 pc (time: 1e-3 pc over the relative speed).

Coordinates: kinage's Galactocentric axes are astropy's (Sun on the -x axis, right-handed); galpy's rectangular
frame is left-handed with the Sun on the +x axis (galpy documentation, "Orbit initialization"), so
x_galpy = -x, y and z equal.  The conversion to galpy's cylindrical initial conditions is written out here, not
taken from kinage.  The stars are invented: each is launched from a point near the association's past position
at an invented time with an invented relative velocity, and flown to the present with galpy.
"""

import types

import astropy.units as u
import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from kinage._galpy import import_galpy
from kinage.orbits.chunks import integrate_associations, run_draws
from kinage.orbits.integrate import time_grid
from kinage.params import get

RO, VO = 8.0, 220.0  # galpy MWPotential2014 natural units (Bovy 2015)
WINDOW_MYR, STEPS = 20.0, 21  # the trace window of this check and kinage's default number of output times
TOLERANCE = 1e-7  # kinage's default [trace] integration_tolerance
# invented encounters: (time of closest approach Myr ago, miss vector pc, relative velocity km/s)
ENCOUNTERS = [(3.37, (0.4, -0.2, 0.1), (35.0, -60.0, 12.0)),
              (7.81, (-1.5, 2.2, 0.8), (-120.0, 40.0, 25.0)),
              (14.55, (4.0, 1.0, -3.0), (60.0, 150.0, -45.0))]
ASSOC = (np.array([-7.83, 0.41, 0.035]), np.array([8.0, 236.0, 3.5]))  # invented (kpc, km/s), Galactocentric


def _galpy_orbit(pos, vel):
    """galpy Orbit from Galactocentric (astropy axes) position kpc and velocity km/s (conversion in the module
    docstring)."""
    import_galpy()
    from galpy.orbit import Orbit

    x, y, z = -pos[0], pos[1], pos[2]
    vx, vy, vz = -vel[0], vel[1], vel[2]
    R, phi = np.hypot(x, y), np.arctan2(y, x)
    vR = (x * vx + y * vy) / R
    vT = (x * vy - y * vx) / R
    return Orbit([R / RO, vR / VO, vT / VO, z / RO, vz / VO, phi], ro=RO, vo=VO)


def _xyz(orbit, t_myr):
    """Position (kpc, astropy axes) of a galpy orbit at time t (Myr)."""
    t = t_myr * u.Myr
    return np.array([-orbit.x(t, quantity=False), orbit.y(t, quantity=False), orbit.z(t, quantity=False)]).reshape(3)


def _vxyz(orbit, t_myr):
    t = t_myr * u.Myr
    return np.array([-orbit.vx(t, quantity=False), orbit.vy(t, quantity=False), orbit.vz(t, quantity=False)]).reshape(3)


@pytest.fixture(scope="module")
def case():
    from galpy.potential import MWPotential2014

    import_galpy()
    dense = np.linspace(0.0, -WINDOW_MYR, 20001)  # 1 kyr steps
    assoc = _galpy_orbit(*ASSOC)
    assoc.integrate(dense * u.Myr, MWPotential2014, method="dop853_c")
    stars_now, refs = [], []
    for tau, miss_pc, dv in ENCOUNTERS:
        # the star passes the association's centre at -tau with the given miss vector and relative velocity
        p = _xyz(assoc, -tau) + np.asarray(miss_pc) / 1000.0
        v = _vxyz(assoc, -tau) + np.asarray(dv)
        s = _galpy_orbit(p, v)
        s.integrate(np.linspace(0.0, tau, 4001) * u.Myr, MWPotential2014, method="dop853_c")
        now_p, now_v = _xyz(s, tau), _vxyz(s, tau)
        stars_now.append((now_p, now_v))
        # reference: the present star flown back densely with galpy, separation minimised with scipy
        back = _galpy_orbit(now_p, now_v)
        back.integrate(dense * u.Myr, MWPotential2014, method="dop853_c")
        sep = np.linalg.norm(np.array([-back.x(dense * u.Myr), back.y(dense * u.Myr), back.z(dense * u.Myr)])
                             - np.array([-assoc.x(dense * u.Myr), assoc.y(dense * u.Myr), assoc.z(dense * u.Myr)]),
                             axis=0)
        k = int(np.argmin(sep))
        res = minimize_scalar(lambda t: 1000.0 * np.linalg.norm(_xyz(back, t) - _xyz(assoc, t)),
                              bounds=(dense[min(k + 2, len(dense) - 1)], dense[max(k - 2, 0)]), method="bounded",
                              options={"xatol": 1e-9})
        v_rel_pcmyr = np.linalg.norm(_vxyz(back, res.x) - _vxyz(assoc, res.x)) * 1.0227121650537077  # km/s -> pc/Myr
        refs.append({"dmin_pc": res.fun, "tau_myr": -res.x, "pos_kpc": _xyz(back, res.x), "v_rel": v_rel_pcmyr})
    # production path: the functions kinage.trace calls, on its 21-point grid
    pset = get("potential", "MWPotential2014")
    times = time_grid(WINDOW_MYR, STEPS)
    apos, avel = ASSOC[0][None], ASSOC[1][None]
    grid, failed = integrate_associations(apos, avel, times, pset, tolerance=TOLERANCE, method="dop853_c",
                                          rows_cap=100)
    assert not failed
    adraws = types.SimpleNamespace(n_assoc=1, m=1, radius_pc=np.array([10.0]), names=["Invented assoc"])
    spos = np.array([p for p, _ in stars_now])
    svel = np.array([v for _, v in stars_now])
    out = run_draws(spos, svel, times, pset, grid, adraws, tolerance=TOLERANCE, method="dop853_c", rows_cap=100,
                    cores=1)
    return out, refs


def test_grid_is_the_documented_default():
    # 21 output times over the window, from the present backwards (kinage's [trace] time_steps default)
    times = time_grid(WINDOW_MYR, STEPS)
    assert len(times) == 21 and times[0] == 0.0 and times[-1] == -WINDOW_MYR


def test_closest_approach_distance_and_time_match_dense_galpy(case):
    out, refs = case
    assert not out["failed"]
    for i, ref in enumerate(refs):
        assert out["dmin"][0, i] == pytest.approx(ref["dmin_pc"], abs=1e-3), i
        # the time to the distance a star covers in 1e-3 pc at the relative speed (float32 storage: 1e-6 rel.)
        tol = 1e-3 / ref["v_rel"] + 2e-6 * ref["tau_myr"]
        assert out["tau"][0, i] == pytest.approx(ref["tau_myr"], abs=tol), i


def test_birth_positions_match_dense_galpy(case):
    out, refs = case
    idx, pos = out["birth"][0]
    assert list(idx) == [0, 1, 2]  # every star passes within 5 association radii
    for i, ref in enumerate(refs):
        np.testing.assert_allclose(pos[i] * 1000.0, ref["pos_kpc"] * 1000.0, rtol=0, atol=1e-3)
