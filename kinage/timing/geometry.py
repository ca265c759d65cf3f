"""Observer positions: Earth, telescope site and Sun, computed once per TOA set.

Positions are barycentric (ICRS axes) in light-seconds, velocities in units
of c.  The Earth's barycentric and heliocentric position and velocity come
from astropy's built-in ephemeris (ERFA ``epv00``, the model behind
``get_body_barycentric_posvel`` with ephemeris 'builtin') or, with a JPL
file, from :func:`astropy.coordinates.get_body_barycentric_posvel`.

A telescope site adds its GCRS position and velocity, computed as astropy's
:meth:`~astropy.coordinates.EarthLocation.get_gcrs_posvel` does (ITRS ->
CIRS with the Earth rotation angle and polar motion, CIRS -> GCRS with the
IAU 2006/2000A celestial-to-intermediate matrix).  Earth orientation comes
from astropy's bundled IERS tables only (``auto_download`` off); outside
their range astropy's predictions (last values / 50-year mean pole) are used
and a warning says so.

For speed with many TOAs, the slowly varying parts (ephemeris,
celestial-to-intermediate matrix, TDB-TT) are evaluated on a grid of
half days and interpolated with 8-point Lagrange polynomials when that takes
fewer evaluations than the TOAs themselves; the interpolation error is
~3e-11 s of light travel (measured against astropy: 4e-9 s with whole-day
nodes); the celestial-to-intermediate matrix uses 2-day nodes (site within
~2 cm of astropy's), while the Earth rotation angle is evaluated exactly at
every TOA.
"""

import warnings
from contextlib import contextmanager
from dataclasses import dataclass

import numpy as np

__all__ = ["ObserverGeometry", "observer_geometry", "earth_and_sun", "site_gcrs", "iers_offline"]

_C_M_S = 299792458.0
_AU_M = 149597870700.0
_AU_S = _AU_M / _C_M_S
_DAY_S = 86400.0
_NODE_DAYS = 0.5
#: the celestial-to-intermediate matrix (precession-nutation, shortest period ~5.6 d) and TT-TDB: 2-day nodes
#: keep the site within ~1 cm of astropy's (tests/timing/test_delays.py)
_ROTATION_NODE_DAYS = 2.0
_OFFSETS = np.arange(-3, 5)  # 8 nodes around each point: k-3 .. k+4


@dataclass
class ObserverGeometry:
    """Barycentric geometry at each TOA.

    Attributes
    ----------
    position : ndarray (n, 3)
        Observer position, light-seconds.
    velocity : ndarray (n, 3)
        Observer velocity, units of c.
    sun : ndarray (n, 3)
        Vector from the observer to the Sun, light-seconds.
    warnings : list of str
    """

    position: np.ndarray
    velocity: np.ndarray
    sun: np.ndarray
    warnings: list


@contextmanager
def iers_offline():
    """Astropy Earth-orientation settings that never download: bundled tables, predictions beyond them."""
    from astropy.utils import iers

    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None), \
            iers.conf.set_temp("iers_degraded_accuracy", "warn"):
        yield


def _lagrange(values_at, jd1, jd2, origin, step=_NODE_DAYS):
    """Interpolate ``values_at(node_days) -> (m, ...)`` to the points, 8-point Lagrange on a regular grid."""
    t = (np.asarray(jd1, float) - origin) + np.asarray(jd2, float)
    k = np.floor(t / step).astype(np.int64)
    x = t / step - k
    need = np.unique((k[:, None] + _OFFSETS[None, :]).ravel())
    if need.size >= t.size:
        return None  # sparse points: evaluate directly
    vals = values_at(need * step)
    idx = np.searchsorted(need, k[:, None] + _OFFSETS[None, :])
    w = np.ones((t.size, _OFFSETS.size))
    for j, oj in enumerate(_OFFSETS):
        for m, om in enumerate(_OFFSETS):
            if m != j:
                w[:, j] *= (x - om) / (oj - om)
    picked = vals[idx]  # (n, 8, ...)
    return np.einsum("nj,nj...->n...", w, picked)


def _earth_sun_direct(jd1, jd2, ephemeris):
    """Earth position, velocity and Sun position (light-s, c, light-s) at TDB jd pairs."""
    if ephemeris == "builtin":
        import erfa

        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)  # epv00 outside 1900-2100: still the model's best
            pvh, pvb = erfa.epv00(jd1, jd2)
        pos = pvb["p"] * _AU_S
        vel = pvb["v"] * _AU_M / _DAY_S / _C_M_S
        sun = (pvb["p"] - pvh["p"]) * _AU_S
        return pos, vel, sun
    return _earth_sun_astropy(jd1, jd2, ephemeris)


def _earth_sun_astropy(jd1, jd2, ephemeris):
    """The same through astropy's ``get_body_barycentric(_posvel)`` with a named ephemeris (a JPL file path)."""
    import astropy.units as u
    from astropy.coordinates import get_body_barycentric, get_body_barycentric_posvel, solar_system_ephemeris
    from astropy.time import Time

    t = Time(jd1, jd2, format="jd", scale="tdb")
    with solar_system_ephemeris.set(ephemeris):
        p, v = get_body_barycentric_posvel("earth", t)
        s = get_body_barycentric("sun", t)
    pos = p.xyz.to_value(u.m).T / _C_M_S
    vel = v.xyz.to_value(u.m / u.s).T / _C_M_S
    return pos, vel, s.xyz.to_value(u.m).T / _C_M_S


def earth_and_sun(jd1, jd2, ephemeris="builtin"):
    """Earth barycentric position (light-s), velocity (c) and Sun position (light-s), shape (n, 3) each.

    Parameters
    ----------
    jd1, jd2 : ndarray
        Two-part Julian dates, TDB.
    ephemeris : str
        ``'builtin'`` or a JPL file path.
    """
    jd1 = np.atleast_1d(np.asarray(jd1, float))
    jd2 = np.broadcast_to(np.asarray(jd2, float), jd1.shape)
    origin = float(np.floor(np.min(jd1 + jd2)))

    def at(days):
        p, v, s = _earth_sun_direct(np.full(days.size, origin), days, ephemeris)
        return np.concatenate([p, v, s], axis=1)

    out = _lagrange(at, jd1, jd2, origin)
    if out is None:
        return _earth_sun_direct(jd1, jd2, ephemeris)
    return out[:, 0:3], out[:, 3:6], out[:, 6:9]


def site_gcrs(location, jd1, jd2):
    """GCRS position (light-s) and velocity (c) of a site at TDB jd pairs (topocentric TDB).

    Same construction as astropy's ``EarthLocation.get_gcrs_posvel``; the
    celestial-to-intermediate matrix and TT-TDB are interpolated from whole
    days, the Earth rotation angle and polar motion are exact per time.

    Returns
    -------
    position, velocity : ndarray (n, 3)
    notes : list of str
        Warnings about Earth-orientation data out of range.
    """
    import astropy.units as u
    import erfa
    from astropy.coordinates.builtin_frames.utils import get_polar_motion
    from astropy.time import Time

    jd1 = np.atleast_1d(np.asarray(jd1, float))
    jd2 = np.broadcast_to(np.asarray(jd2, float), jd1.shape)
    origin = float(np.floor(np.min(jd1 + jd2)))

    def slow(days):
        t = Time(np.full(days.size, origin), days, format="jd", scale="tdb")
        tt = t.tt
        c2i = erfa.c2i06a(tt.jd1, tt.jd2).reshape(-1, 9)
        dtt = ((tt.jd1 - t.jd1) + (tt.jd2 - t.jd2))[:, None] * _DAY_S
        return np.concatenate([c2i, dtt], axis=1)

    notes = []
    with iers_offline(), warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        vals = _lagrange(slow, jd1, jd2, origin, _ROTATION_NODE_DAYS)
        if vals is None:
            vals = slow((jd1 - origin) + jd2)
        c2i = vals[:, :9].reshape(-1, 3, 3)
        tt = Time(jd1, jd2 + vals[:, 9] / _DAY_S, format="jd", scale="tt")
        xp, yp = get_polar_motion(tt)
        sp = erfa.sp00(tt.jd1, tt.jd2)
        ut1 = tt.ut1
        era = erfa.era00(ut1.jd1, ut1.jd2)
        ci2t = erfa.c2tcio(np.eye(3), era, erfa.pom00(xp, yp, sp))
    for w in caught:
        text = str(w.message)
        if "IERS" in text or "polar motion" in text.lower() or "UT1" in text:
            notes.append("Earth orientation: some TOAs lie outside astropy's bundled IERS tables; "
                         "astropy's predictions are used there (site position good to ~metres for a few "
                         "months, worse further out)")
            break
    ref_to_gcrs = np.swapaxes(c2i, -1, -2)
    itrs_to_gcrs = ref_to_gcrs @ np.swapaxes(ci2t, -1, -2)
    xyz = np.array([location.x.to_value(u.m), location.y.to_value(u.m), location.z.to_value(u.m)], float)
    pos = itrs_to_gcrs @ xyz
    omega = 7.292115855306589e-5  # rad/s, astropy.coordinates.earth.OMEGA_EARTH
    vel = np.cross(ref_to_gcrs[..., 2] * omega, pos)
    return pos / _C_M_S, vel / _C_M_S, notes


def observer_geometry(jd1, jd2, reference=None):
    """Observer position, velocity and Sun vector for a TOA reference (see :mod:`.reference`).

    Parameters
    ----------
    jd1, jd2 : ndarray
        Two-part Julian dates, TDB (topocentric for a site).  For a barycentre
        reference these are the observation times at the Earth (the caller
        undoes the barycentring first).
    reference : TOAReference or None
        None means the geocentre with the built-in ephemeris.

    Returns
    -------
    ObserverGeometry
    """
    eph = "builtin" if reference is None else reference.ephemeris
    pos, vel, sun = earth_and_sun(jd1, jd2, eph)
    notes = []
    if reference is not None and reference.kind == "site":
        sp, sv, notes = site_gcrs(reference.location(), jd1, jd2)
        pos = pos + sp
        vel = vel + sv
    return ObserverGeometry(pos, vel, sun - pos, notes)
