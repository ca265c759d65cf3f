"""Is the spin-down detected?  The intrinsic Pdot against its error, and what a user is told when it is not.

Three cases, judged on the intrinsic Pdot (observed minus any Shklovskii term)
and the standard deviation of its Monte Carlo draws:

* ``spinning_down``: Pdot at least two sigma above zero; the spin-down ages are
  measurements.
* ``undetected``: Pdot within two sigma of zero, of either sign.  The
  characteristic age P/(2 Pdot) then has only a lower bound; draws that spin
  up are counted at the open end (tau_c -> infinity as Pdot -> 0+), so the
  percentiles are those of Pdot mapped through a monotonic function.
* ``spinning_up``: Pdot at least two sigma below zero (or negative and exact).
  Magnetic-dipole braking cannot spin a star up (Lorimer & Kramer 2005,
  section 3.1), so there is no spin-down age; the message says where a
  negative Pdot usually comes from.

The two-sigma threshold matches the agreement criterion of :mod:`.verdicts`
(common practice, no source).
"""

from dataclasses import dataclass

import numpy as np

__all__ = ["DETECTION_SIGMA", "PdotState", "pdot_state", "open_interval", "pdot_note"]

#: Pdot must lie this many standard deviations above zero to count as a measured spin-down
DETECTION_SIGMA = 2.0

_Q = (50, 15.865525393145708, 84.13447460685429, 2.2750131948179195, 97.72498680518208)


@dataclass(frozen=True)
class PdotState:
    """How well the intrinsic Pdot is known.

    Attributes
    ----------
    kind : {'spinning_down', 'undetected', 'spinning_up'}
    pdot : float
        Nominal intrinsic Pdot, s/s.
    sigma : float
        Standard deviation of its draws, s/s (0 when exact).
    z : float
        pdot / sigma (+-inf when exact).
    fraction_spinning_up : float
        Share of the draws with Pdot <= 0.
    """

    kind: str
    pdot: float
    sigma: float
    z: float
    fraction_spinning_up: float


def pdot_state(spin):
    """:class:`PdotState` of a :class:`~kinage.ages.draws.SpinDraws`."""
    d = np.asarray(spin.draws["pdot"], float)
    d = d[np.isfinite(d)]
    sigma = float(np.std(d)) if d.size > 1 else 0.0
    pdot = float(spin.pdot)
    if sigma > 0:
        z = pdot / sigma
    else:
        z = np.inf if pdot > 0 else -np.inf
    if z >= DETECTION_SIGMA:
        kind = "spinning_down"
    elif z <= -DETECTION_SIGMA:
        kind = "spinning_up"
    else:
        kind = "undetected"
    frac = float(np.mean(~(d > 0))) if d.size else float(not pdot > 0)
    return PdotState(kind, pdot, sigma, float(z), frac)


def open_interval(x, pdot):
    """Median and 68 % / 95 % intervals of a quantity that grows without bound as Pdot -> 0+.

    Draws with Pdot <= 0 are placed at +infinity, so an end that falls among
    them is ``None`` and ``unbounded_above`` is set.

    Parameters
    ----------
    x : ndarray
        Draws of the quantity (e.g. P/(2 Pdot), yr); their values where Pdot <= 0 are ignored.
    pdot : ndarray
        The matching Pdot draws, s/s.

    Returns
    -------
    dict
        As :func:`kinage.io.results.interval`, plus ``unbounded_above``.
    """
    x = np.where(np.asarray(pdot) > 0, np.asarray(x, float), np.inf)
    x = x[~np.isnan(x)]
    if x.size == 0:
        return {"median": None, "lo68": None, "hi68": None, "lo95": None, "hi95": None, "n": 0,
                "unbounded_above": True}
    q = np.percentile(x, _Q, method="nearest")  # no interpolation towards +inf
    val = [float(v) if np.isfinite(v) else None for v in q]
    return {"median": val[0], "lo68": val[1], "hi68": val[2], "lo95": val[3], "hi95": val[4],
            "n": int(np.isfinite(x).sum()), "unbounded_above": val[2] is None}


def _pm(value, sigma):
    return f"{value:.2g} ± {sigma:.2g} s/s" if sigma > 0 else f"{value:.3g} s/s"


def pdot_note(state, spin, lower_limit_text=None):
    """What a user is told when the spin-down is not measured (``None`` when it is).

    Parameters
    ----------
    state : PdotState
    spin : SpinDraws
        For the observed Pdot and the Shklovskii term.
    lower_limit_text : str, optional
        The characteristic age's two-sigma lower bound as text (case ``undetected``).

    Returns
    -------
    str or None
    """
    if state.kind == "spinning_down":
        return None
    shk = spin.shklovskii or {}
    if state.kind == "undetected":
        limit = f", tau_c > {lower_limit_text} (2 sigma)" if lower_limit_text else ""
        which = "the intrinsic Pdot" if shk.get("applied") else "Pdot"
        return (f"{which} = {_pm(state.pdot, state.sigma)} is within {DETECTION_SIGMA:g} sigma of zero "
                f"({100 * state.fraction_spinning_up:.0f}% of the draws spin up): the spin-down is not detected, so "
                f"the characteristic age is bounded only from below{limit}, and the dipole field and spin-down "
                "luminosity are upper bounds, not measurements")
    if shk.get("applied") and spin.pdot_observed > 0:
        vt, dist = shk.get("transverse_velocity_kms", float("nan")), shk.get("distance_kpc", float("nan"))
        return (f"the Shklovskii term P v_t^2/(c d) = {spin.pdot_shk:.2g} (v_t = {vt:.0f} km/s at {dist:.3g} kpc) "
                f"exceeds the observed Pdot = {spin.pdot_observed:.2g}, leaving an intrinsic Pdot of "
                f"{_pm(state.pdot, state.sigma)}: the distance or the proper motion is probably overestimated (or the "
                "observed Pdot underestimated); no spin-down age, dipole field or spin-down luminosity is computed")
    sig = f", {abs(state.z):.0f} sigma below zero" if np.isfinite(state.z) else ""
    return (f"the star is spinning up (Pdot = {_pm(state.pdot, state.sigma)}{sig}), which magnetic-dipole braking "
            "cannot do, so it has no spin-down age, dipole field or spin-down luminosity; a negative Pdot usually "
            "means timing noise or an unmodelled glitch over a short baseline, or an acceleration along the line "
            "of sight or an accretion torque, in which case the star is not an isolated, spinning-down star")
