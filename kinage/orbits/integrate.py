"""Integrate many orbits backwards: galpy's C integrators, or straight lines.

Both kinds of result are an orbit bundle with the same small interface: the
backward time grid (Myr, from 0 to -max_age), positions on a strided grid for
the coarse closest-approach search, and the Cartesian state at chosen
(draw, time) pairs for the refinement.  Positions are kpc and velocities km/s
in astropy's right-handed Galactocentric frame (see :mod:`.frames`).

galpy's frame is left-handed (x points from the centre to the Sun): a position
(x, y, z) here is (-x, y, z) there, and likewise for velocities.  galpy puts
the initial condition at the first output time, so the grid starts at 0 and
runs to negative times (Bovy 2015, ApJS 216, 29; galpy documentation).  Orbits
are integrated in the natural units of the potential's parameter set
(``ro_kpc``, ``vo_kms``), with the Sun wherever the solar parameter set puts it:
the potential is not rescaled to the solar R0.
"""

import ctypes
import glob
import importlib
import os
import sys
import threading
import warnings

import numpy as np

from .._galpy import import_galpy, sigint_preserved
from ..errors import InputError
from .frames import KMS_TO_PCMYR

__all__ = ["set_integration_cores", "integration_cores", "set_thread_integrator_cores", "StraightOrbits",
           "GalpyOrbits", "integrate_orbits", "galpy_potential", "time_grid", "DEFAULT_TOLERANCE"]

#: default relative and absolute tolerance of galpy's adaptive integrators (``[trace] integration_tolerance``);
#: chosen by the convergence study in DEVELOPERS.md (galpy's own default is 1e-12)
DEFAULT_TOLERANCE = 1e-8

_POTENTIALS = {}


def time_grid(max_age_myr, time_steps):
    """Backward time grid from 0 to -max_age (Myr), ``time_steps`` points."""
    return np.linspace(0.0, -float(max_age_myr), int(time_steps))


def galpy_potential(pset):
    """The galpy potential object of a ``potential`` parameter set (None for 'none').

    ``values['object']`` may hold a galpy potential directly; ``values['galpy']``
    names one in :mod:`galpy.potential` or :mod:`galpy.potential.mwpotentials`,
    or gives ``'module:attribute'``.
    """
    obj = pset.values.get("object")
    if obj is not None:
        return obj
    spec = pset.values.get("galpy")
    if spec is None:
        return None
    if spec in _POTENTIALS:
        return _POTENTIALS[spec]
    import_galpy()
    try:
        if ":" in spec:
            mod, attr = spec.split(":", 1)
            pot = getattr(importlib.import_module(mod), attr)
        else:
            import galpy.potential as gp

            pot = getattr(gp, spec, None)
            if pot is None:
                from galpy.potential import mwpotentials

                pot = getattr(mwpotentials, spec)
    except (ImportError, AttributeError) as exc:
        raise InputError(f"potential '{pset.name}'", f"galpy has no potential {spec!r} ({exc})") from None
    _POTENTIALS[spec] = pot
    return pot


class StraightOrbits:
    """Force-free motion: x(t) = x0 + v t.

    Parameters
    ----------
    pos : ndarray, shape (n, 3), kpc
    vel : ndarray, shape (n, 3), km/s
    times : ndarray, Myr
    """

    def __init__(self, pos, vel, times):
        self.pos0 = np.asarray(pos, float)
        self.vel = np.asarray(vel, float)
        self.times = np.asarray(times, float)
        self.failed = {}
        self._v_kpc_myr = self.vel * (KMS_TO_PCMYR / 1000.0)

    @property
    def n(self):
        return len(self.pos0)

    def positions(self, cols):
        """Positions (kpc) at time indices ``cols``, shape (n, len(cols), 3)."""
        t = self.times[cols]
        return self.pos0[:, None, :] + self._v_kpc_myr[:, None, :] * t[None, :, None]

    def state(self, rows, cols):
        """Position (kpc) and velocity (km/s) of draws ``rows`` at time indices ``cols``."""
        rows, cols = np.broadcast_arrays(rows, cols)
        t = self.times[cols][..., None]
        return self.pos0[rows] + self._v_kpc_myr[rows] * t, self.vel[rows]

    def position_components(self):
        """x, y, z (kpc) at every grid time, each shape (n, nt)."""
        return tuple(self.pos0[:, c:c + 1] + self._v_kpc_myr[:, c:c + 1] * self.times[None, :] for c in range(3))

    def components(self):
        """Positions (kpc) and velocities (km/s) at every grid time, component first: each (3, n, nt)."""
        pos = self.pos0.T[:, :, None] + self._v_kpc_myr.T[:, :, None] * self.times[None, None, :]
        return pos, np.broadcast_to(self.vel.T[:, :, None], pos.shape)

    def z(self):
        """Height z (kpc), shape (n, nt)."""
        return self.pos0[:, 2:3] + self._v_kpc_myr[:, 2:3] * self.times[None, :]


class GalpyOrbits:
    """Orbits integrated by galpy, kept in galpy's array (natural units, cylindrical)."""

    def __init__(self, orbit_array, times, ro, vo, failed):
        self.array = orbit_array  # (n, nt, 6): R, vR, vT, z, vz, phi (natural units)
        self.times = np.asarray(times, float)
        self.ro = float(ro)
        self.vo = float(vo)
        self.failed = dict(failed)

    @property
    def n(self):
        return self.array.shape[0]

    def _cart(self, a):
        R, phi = a[..., 0] * self.ro, a[..., 5]
        c, s = np.cos(phi), np.sin(phi)
        pos = np.stack([-R * c, R * s, a[..., 3] * self.ro], axis=-1)
        return pos, c, s

    def positions(self, cols):
        """Positions (kpc) at time indices ``cols``, shape (n, len(cols), 3)."""
        return self._cart(self.array[:, cols, :])[0]

    def state(self, rows, cols):
        """Position (kpc) and velocity (km/s) of draws ``rows`` at time indices ``cols``."""
        return self._state(self.array[rows, cols, :])

    def _state(self, a):
        pos, c, s = self._cart(a)
        vR, vT = a[..., 1] * self.vo, a[..., 2] * self.vo
        vel = np.stack([-(vR * c - vT * s), vR * s + vT * c, a[..., 4] * self.vo], axis=-1)
        return pos, vel

    def position_components(self):
        """x, y, z (kpc) at every grid time, each shape (n, nt)."""
        a = self.array
        R, phi = a[..., 0] * self.ro, a[..., 5]
        return -R * np.cos(phi), R * np.sin(phi), a[..., 3] * self.ro

    def components(self):
        """Positions (kpc) and velocities (km/s) at every grid time, component first: each (3, n, nt)."""
        a = self.array
        R, phi = a[..., 0] * self.ro, a[..., 5]
        c, s = np.cos(phi), np.sin(phi)
        vR, vT = a[..., 1] * self.vo, a[..., 2] * self.vo
        pos = np.stack([-R * c, R * s, a[..., 3] * self.ro])
        vel = np.stack([-(vR * c - vT * s), vR * s + vT * c, a[..., 4] * self.vo])
        return pos, vel


def _to_galpy(pos, vel, ro, vo):
    x, y, z = -pos[:, 0], pos[:, 1], pos[:, 2]
    vx, vy, vz = -vel[:, 0], vel[:, 1], vel[:, 2]
    R = np.hypot(x, y)
    phi = np.arctan2(y, x)
    vR = (x * vx + y * vy) / R
    vT = (x * vy - y * vx) / R
    return np.column_stack([R / ro, vR / vo, vT / vo, z / ro, vz / vo, phi])


_CORES = {"n": None}


def set_integration_cores(n):
    """Cores a trace may use (None: OMP_NUM_THREADS if set, else every core this process may run on).

    Batch workers set 1 so that several processes do not oversubscribe the machine.
    """
    _CORES["n"] = None if n is None else max(1, int(n))


def integration_cores():
    """Cores a trace uses: :func:`set_integration_cores`, else ``OMP_NUM_THREADS``, else the CPU affinity."""
    if _CORES["n"] is not None:
        return _CORES["n"]
    env = os.environ.get("OMP_NUM_THREADS", "").strip()
    if env.isdigit() and int(env) > 0:
        return int(env)
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


_OMP = {}


def _omp_set_num_threads():
    """``omp_set_num_threads`` of the OpenMP runtime galpy's C library uses (None when not found)."""
    if "f" not in _OMP:
        _OMP["f"] = None
        galpy = import_galpy()
        base = os.path.dirname(os.path.dirname(galpy.__file__))
        for path in sorted(glob.glob(os.path.join(base, "galpy.libs", "libgomp*.so*"))) + ["libgomp.so.1"]:
            try:
                _OMP["f"] = ctypes.CDLL(path).omp_set_num_threads
                break
            except (OSError, AttributeError):
                continue
    return _OMP["f"]


def set_thread_integrator_cores(n):
    """Let galpy's C integrators use ``n`` OpenMP threads when called from the current thread.

    OpenMP keeps this setting per calling thread, so worker threads that each
    integrate their own chunk of orbits set 1.  Returns False when galpy's
    OpenMP runtime was not found (then galpy uses its default).
    """
    if "galpy" not in sys.modules:  # nothing to set before galpy is loaded
        return False
    f = _omp_set_num_threads()
    if f is None:
        return False
    f(int(max(1, n)))
    return True


def _integrate_rows(vxvv, t_nat, pot, method, ro, vo, quiet=True, **kw):
    """galpy's integration of ``vxvv``, with the process's SIGINT handler kept (see ``_galpy.sigint_preserved``)."""
    with sigint_preserved():
        return _integrate_rows_galpy(vxvv, t_nat, pot, method, ro, vo, quiet=quiet, **kw)


def _integrate_rows_galpy(vxvv, t_nat, pot, method, ro, vo, quiet=True, **kw):
    from galpy.orbit import Orbit

    if not quiet:  # the caller silences warnings (warning filters are not thread-safe)
        o = Orbit(vxvv, ro=ro, vo=vo)
        o.integrate(t_nat, pot, method=method, progressbar=False, **kw)
        return o.orbit
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        o = Orbit(vxvv, ro=ro, vo=vo)
        o.integrate(t_nat, pot, method=method, progressbar=False, **kw)
    return o.orbit  # the orbit array itself (getOrbit() would copy it)


def integrate_orbits(pos, vel, times, potential, *, method="dop853_c", tolerance=None, quiet=True, cores=None,
                     **galpy_kwargs):
    """Integrate orbits from their present state back over ``times``.

    Parameters
    ----------
    pos : ndarray, shape (n, 3), kpc
        Galactocentric positions (astropy convention).
    vel : ndarray, shape (n, 3), km/s
    times : ndarray, Myr
        Grid starting at 0 and running negative.
    potential : ParameterSet
        ``potential`` parameter set; ``galpy`` None means straight lines.
    method : str
        galpy integrator (a C one: 'dop853_c', 'symplec4_c', ...).
    tolerance : float, optional
        Relative and absolute tolerance of an adaptive integrator (galpy's
        ``rtol`` = ``atol``; default galpy's own, 1e-12).
    quiet : bool
        Silence galpy's warnings here (False: the caller does, e.g. around a
        pool of threads, since warning filters are process-wide).
    cores : int, optional
        OpenMP threads of galpy's C integrator for this call (default: in the
        main thread :func:`integration_cores`, elsewhere as set for the thread).
    **galpy_kwargs
        Passed to ``Orbit.integrate`` (e.g. ``rtol``, ``atol``).

    Returns
    -------
    StraightOrbits or GalpyOrbits
        With ``failed``: {row: reason} for draws that could not be integrated
        (their rows hold NaN).
    """
    pos = np.asarray(pos, float)
    vel = np.asarray(vel, float)
    if tolerance is not None:
        galpy_kwargs.setdefault("rtol", float(tolerance))
        galpy_kwargs.setdefault("atol", float(tolerance))
    galpy_kwargs["quiet"] = quiet
    pot = galpy_potential(potential)
    if pot is None:
        return StraightOrbits(pos, vel, times)
    import_galpy()
    from galpy.util import conversion

    if cores is not None:
        set_thread_integrator_cores(cores)
    elif threading.current_thread() is threading.main_thread():
        set_thread_integrator_cores(integration_cores())  # e.g. batch workers: 1 (worker threads set their own)

    ro, vo = float(potential.values["ro_kpc"]), float(potential.values["vo_kms"])
    t_nat = np.asarray(times, float) / (1000.0 * conversion.time_in_Gyr(vo, ro))
    n, nt = len(pos), len(t_nat)
    failed = {}
    with np.errstate(invalid="ignore", divide="ignore"):
        vxvv = _to_galpy(pos, vel, ro, vo)
    ok = np.all(np.isfinite(vxvv), axis=1) & (vxvv[:, 0] > 0)
    for i in np.flatnonzero(~ok):
        failed[int(i)] = "non-finite or central initial condition"
    good = np.flatnonzero(ok)
    if good.size == n:
        try:
            arr = _integrate_rows(vxvv, t_nat, pot, method, ro, vo, **galpy_kwargs)
        except Exception:  # noqa: BLE001 - fall back to one orbit at a time to find the culprit
            arr = None
        if arr is not None:
            bad = ~np.all(np.isfinite(arr[:, -1, :]), axis=1)  # a failure propagates to the last step
            for i in np.flatnonzero(bad):
                failed[int(i)] = "integration produced non-finite values"
            return GalpyOrbits(arr, times, ro, vo, failed)
    arr = np.full((n, nt, 6), np.nan)
    if good.size:
        try:
            arr[good] = _integrate_rows(vxvv[good], t_nat, pot, method, ro, vo, **galpy_kwargs)
        except Exception:  # noqa: BLE001
            for i in good:
                try:
                    arr[i] = _integrate_rows(vxvv[i:i + 1], t_nat, pot, method, ro, vo, **galpy_kwargs)[0]
                except Exception as exc:  # noqa: BLE001
                    failed[int(i)] = f"integration failed: {type(exc).__name__}: {exc}"
    for i in good:
        if int(i) not in failed and not np.all(np.isfinite(arr[i])):
            failed[int(i)] = "integration produced non-finite values"
    return GalpyOrbits(arr, times, ro, vo, failed)
