"""Magnetic-field decay and the characteristic age it makes a star show.

With P Pdot proportional to B^2 and an initial period much shorter than
today's, P^2 grows as the integral of B^2 over time, so the characteristic
age of a star of true age t is

    tau_c(t) = int_0^t B(t')^2 dt' / B(t)^2.

Two laws are offered:

* exponential decay B = B0 exp(-t / tau_d), for which
  tau_c = (tau_d / 2) (exp(2 t / tau_d) - 1) (closed form);
* Ohm + Hall decay (Aguilera, Pons & Miralles 2008, ApJ 673, L167, eq. 1):
  B = B0 exp(-t / tau_O) / [1 + (tau_O / tau_H)(1 - exp(-t / tau_O))].

Both are inverted for the timescale that makes the characteristic age of a
star of true (e.g. kinematic) age t equal to the measured one.  A solution
exists only when tau_c > t (exponential) or tau_c exceeds the pure-Ohmic
value (Ohm + Hall): decay makes a star look older than it is, never younger.
All functions are vectorised over numpy arrays; times in yr (or astropy Quantities
of time, giving Quantity results in yr).
"""

import numpy as np
from scipy.special import lambertw

from .._units import quantity_edge

__all__ = [
    "exponential_field",
    "exponential_characteristic_age",
    "exponential_decay_timescale",
    "ohm_hall_field",
    "ohm_hall_characteristic_age",
    "ohm_hall_timescale",
    "ohm_hall_true_age",
]


@quantity_edge(None, t_yr="yr", decay_timescale_yr="yr")
def exponential_field(t_yr, decay_timescale_yr, b0=1.0):
    """B(t) = B0 exp(-t / tau_d); units of ``b0``."""
    return b0 * np.exp(-np.asarray(t_yr, float) / np.asarray(decay_timescale_yr, float))


@quantity_edge("yr", t_yr="yr", decay_timescale_yr="yr")
def exponential_characteristic_age(t_yr, decay_timescale_yr):
    """Characteristic age shown by a star of true age t with exponential decay.

    Parameters
    ----------
    t_yr : float or ndarray, yr
        True age.
    decay_timescale_yr : float or ndarray, yr
        tau_d (``inf`` gives no decay: tau_c = t).

    Returns
    -------
    float or ndarray, yr
        (tau_d / 2)(exp(2 t / tau_d) - 1).
    """
    t = np.asarray(t_yr, float)
    tau = np.asarray(decay_timescale_yr, float)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        x = 2.0 * t / tau
        return np.where(np.isinf(tau), t, 0.5 * tau * np.expm1(x))


@quantity_edge("yr", t_yr="yr", tau_c_yr="yr")
def exponential_decay_timescale(t_yr, tau_c_yr):
    """Exponential decay timescale reconciling a true age with a characteristic age.

    Solves tau_c = (tau_d / 2)(exp(2 t / tau_d) - 1) for tau_d in closed form:
    with x = 2 t / tau_d and r = tau_c / t, e^x = 1 + r x, whose non-trivial
    root is x = -W_{-1}(-exp(-1/r) / r) - 1/r (Lambert W, lower branch).

    Parameters
    ----------
    t_yr : float or ndarray, yr
        True (e.g. kinematic) age.
    tau_c_yr : float or ndarray, yr
        Measured characteristic age.

    Returns
    -------
    float or ndarray, yr
        tau_d; ``nan`` where tau_c <= t (no decaying-field solution).
    """
    t = np.asarray(t_yr, float)
    tc = np.asarray(tau_c_yr, float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        r = tc / t
        ok = np.isfinite(r) & (r > 1.0) & (t > 0)
        rs = np.where(ok, r, 2.0)
        z = -np.exp(-1.0 / rs) / rs
        # z is in (-1/e, 0); round-off near r = 1 can push it just below -1/e
        z = np.maximum(z, -np.exp(-1.0) * (1 - 1e-15))
        x = -np.real(lambertw(z, k=-1)) - 1.0 / rs
        tau = np.where(ok & (x > 0), 2.0 * t / x, np.nan)
    return tau


@quantity_edge(None, t_yr="yr", ohmic_timescale_yr="yr", hall_timescale_yr="yr")
def ohm_hall_field(t_yr, ohmic_timescale_yr, hall_timescale_yr, b0=1.0):
    """Ohm + Hall field B(t) of Aguilera, Pons & Miralles (2008, eq. 1); units of ``b0``."""
    t = np.asarray(t_yr, float)
    to = np.asarray(ohmic_timescale_yr, float)
    th = np.asarray(hall_timescale_yr, float)
    s = np.exp(-t / to)
    return b0 * s / (1.0 + (to / th) * (1.0 - s))


@quantity_edge("yr", t_yr="yr", ohmic_timescale_yr="yr", hall_timescale_yr="yr")
def ohm_hall_characteristic_age(t_yr, ohmic_timescale_yr, hall_timescale_yr):
    """Characteristic age shown by a star of true age t under Ohm + Hall decay.

    Uses the closed-form integral of B^2: with a = tau_O / tau_H, c = 1 + a and
    s = exp(-t / tau_O),
    int_0^t B^2 dt' = B0^2 tau_O [c - ln(c - a s) - c / (c - a s)] / a^2,
    and its series for small a (pure Ohmic decay at a = 0).

    Parameters
    ----------
    t_yr : float or ndarray, yr
    ohmic_timescale_yr, hall_timescale_yr : float or ndarray, yr

    Returns
    -------
    float or ndarray, yr
    """
    t = np.asarray(t_yr, float)
    to = np.asarray(ohmic_timescale_yr, float)
    a = to / np.asarray(hall_timescale_yr, float)
    s = np.exp(-t / to)
    c = 1.0 + a
    u = c - a * s  # = 1 + a (1 - s) >= 1
    with np.errstate(divide="ignore", invalid="ignore"):
        # exact form, and for small a the expansion in a to second order
        exact = (c - np.log(u) - c / u) / a**2
        w = 1.0 - s
        series = _series_integral(s, a)
        integral = np.where(a * w > 1e-3, exact, series)
        b2 = (s / u) ** 2
        return to * integral / b2


def _series_integral(s, a):
    """int_s^1 x (1 + a(1 - x))^-2 dx to third order in a (valid for a (1 - s) << 1)."""
    # (1 + a y)^-2 = 1 - 2 a y + 3 a^2 y^2 - 4 a^3 y^3, y = 1 - x; integrate x y^k from s to 1
    y0 = 1.0 - s
    out = np.zeros(np.broadcast(s, a).shape)
    coeffs = (1.0, -2.0, 3.0, -4.0)
    for k, ck in enumerate(coeffs):
        # int_s^1 (1 - y) y^k dx with y = 1 - x  ->  int_0^{y0} (1 - y) y^k dy
        term = y0 ** (k + 1) / (k + 1) - y0 ** (k + 2) / (k + 2)
        out = out + ck * a**k * term
    return out


def _bisect(root_above, lo, hi, iterations, tol=1e-10):
    """Vectorised bisection: ``root_above(x)`` is True where the root lies above x.

    Returns the midpoint of the final bracket (same shape as ``lo``).
    """
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        up = root_above(mid)
        lo = np.where(up, mid, lo)
        hi = np.where(up, hi, mid)
        if np.all(hi - lo < tol):
            break
    return 0.5 * (lo + hi)


@quantity_edge("yr", t_yr="yr", tau_c_yr="yr", ohmic_timescale_yr="yr", hall_timescale_yr="yr")
def ohm_hall_timescale(t_yr, tau_c_yr, *, ohmic_timescale_yr=None, hall_timescale_yr=None, iterations=200):
    """Ohm + Hall timescale reconciling a true age with a characteristic age.

    Exactly one of the two timescales is given; the other is solved for by
    vectorised bisection in log time (the apparent characteristic age falls
    monotonically as either timescale grows).

    Parameters
    ----------
    t_yr : float or ndarray, yr
        True (e.g. kinematic) age.
    tau_c_yr : float or ndarray, yr
        Measured characteristic age.
    ohmic_timescale_yr, hall_timescale_yr : float or ndarray or None, yr
        The fixed timescale.
    iterations : int
        Bisection steps.

    Returns
    -------
    float or ndarray, yr
        The solved timescale; ``nan`` where none reproduces tau_c within the
        search range (1e-4 t to 1e8 t).
    """
    if (ohmic_timescale_yr is None) == (hall_timescale_yr is None):
        raise ValueError("give exactly one of ohmic_timescale_yr and hall_timescale_yr")
    t = np.asarray(t_yr, float)
    tc = np.asarray(tau_c_yr, float)
    shape = np.broadcast(t, tc, ohmic_timescale_yr if ohmic_timescale_yr is not None else hall_timescale_yr).shape

    def apparent(log_tau):
        tau = np.exp(log_tau)
        if ohmic_timescale_yr is None:
            return ohm_hall_characteristic_age(t, tau, hall_timescale_yr)
        return ohm_hall_characteristic_age(t, ohmic_timescale_yr, tau)

    with np.errstate(all="ignore"):
        lo = np.broadcast_to(np.log(t) + np.log(1e-4), shape).astype(float)
        hi = np.broadcast_to(np.log(t) + np.log(1e8), shape).astype(float)
        f_lo = apparent(lo) - tc  # short timescale: strong decay, large tau_c
        f_hi = apparent(hi) - tc
        ok = ~np.isnan(f_lo) & np.isfinite(f_hi) & (f_lo > 0) & (f_hi < 0)
        root = _bisect(lambda x: apparent(x) - tc > 0, lo, hi, iterations)
        out = np.where(ok, np.exp(root), np.nan)
    return out if out.shape else float(out)


@quantity_edge("yr", tau_c_yr="yr", ohmic_timescale_yr="yr", hall_timescale_yr="yr")
def ohm_hall_true_age(tau_c_yr, ohmic_timescale_yr, hall_timescale_yr, iterations=200):
    """True age at which Ohm + Hall decay makes a star show characteristic age tau_c.

    The apparent characteristic age grows monotonically with true age, so the
    root is found by vectorised bisection in log time between 1e-6 tau_c and tau_c.

    Parameters
    ----------
    tau_c_yr : float or ndarray, yr
    ohmic_timescale_yr, hall_timescale_yr : float or ndarray, yr

    Returns
    -------
    float or ndarray, yr
    """
    tc = np.asarray(tau_c_yr, float)
    shape = np.broadcast(tc, ohmic_timescale_yr, hall_timescale_yr).shape
    with np.errstate(all="ignore"):
        lo = np.broadcast_to(np.log(tc) + np.log(1e-6), shape).astype(float)
        hi = np.broadcast_to(np.log(tc), shape).astype(float)
        ok = np.isfinite(lo) & (tc > 0)
        root = _bisect(lambda x: ohm_hall_characteristic_age(np.exp(x), ohmic_timescale_yr, hall_timescale_yr) <= tc,
                       lo, hi, iterations)
        out = np.where(ok, np.exp(root), np.nan)
    return out if out.shape else float(out)
