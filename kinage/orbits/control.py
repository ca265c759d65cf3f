"""How many control draws the chance rates need, and running them.

The chance rate of an association is the encounter fraction f of control
draws (the star's draws with the proper-motion direction turned at random).
With N control draws its Monte Carlo standard error is the binomial
sqrt(f (1 - f) / N).  The wanted error is max(r f, e): relative (r =
``[trace] control_relative_error``, default 10%) for common rates, absolute
(e = ``control_absolute_error``, default 0.002) for rare ones, so

    N = f (1 - f) / max(r f, e)^2,

at most ~1 / (r e) = 5,000 draws with the defaults (at f = e / r = 2%).
kinage runs a first round of :data:`FIRST_ROUND` control draws, estimates
every association's f with (k + 2) / (N + 4) (the Agresti & Coull 1998,
Am. Stat. 52, 119 centre, so that a count of zero does not promise zero
error), and adds draws until the largest N over all associations is reached,
never more than there are star draws.

The control result has the same layout as the star's (per-association d_min,
tau, edge for every control draw, pairing draw i with association draw
i mod m), so statistics may use the whole control d_min distribution.
"""

import numpy as np

from ..progress import progress_bar
from .chunks import run_draws
from .statistics import encounter_mask

__all__ = ["control_draws_needed", "required_control_draws", "FIRST_ROUND", "MAX_ROUNDS"]

#: control draws of the first round
FIRST_ROUND = 2000
#: rounds at most (the second normally suffices)
MAX_ROUNDS = 3


def required_control_draws(ctrl, adraws, afailed, cfg):
    """Control draws that give every association's chance rate its wanted standard error (module docstring).

    Parameters
    ----------
    ctrl : dict
        Control results so far (``dmin``, ``tau``, ``edge`` of shape (n_assoc, N), ``failed``).
    adraws : AssociationDraws
    afailed : dict
        Failed association draws {row: reason}.
    cfg : dict
        Trace settings (``factor``, ``tolerance``, ``control_relative_error``, ``control_absolute_error``).

    Returns
    -------
    int
    """
    r, e = float(cfg["control_relative_error"]), float(cfg["control_absolute_error"])
    n = ctrl["dmin"].shape[1]
    bad = np.zeros(n, bool)
    bad[[i for i in ctrl["failed"] if i < n]] = True
    need = 0.0
    for j in range(adraws.n_assoc):
        abad = np.zeros(adraws.m, bool)
        abad[[i % adraws.m for i in afailed if i // adraws.m == j]] = True
        valid = ~bad & ~abad[np.arange(n) % adraws.m] & np.isfinite(ctrl["dmin"][j])
        enc = encounter_mask(ctrl["dmin"][j].astype(float), ctrl["tau"][j].astype(float), ctrl["edge"][j], valid,
                             adraws.radius_pc[j], adraws.age_myr[j], cfg["factor"], cfg["tolerance"])
        nv = int(valid.sum())
        p = (int(enc.sum()) + 2.0) / (nv + 4.0)
        need = max(need, p * (1.0 - p) / max(r * p, e) ** 2 * (n / max(nv, 1)))
    return int(np.ceil(need))


def _merge(parts):
    out = {k: np.concatenate([p[k] for p in parts], axis=1) for k in ("dmin", "tau", "edge")}
    out["failed"] = {}
    for p in parts:
        out["failed"].update(p["failed"])
    out["plane"], out["tracks"], out["birth"] = None, None, {}
    return out


def control_draws_needed(states, run, assoc, adraws, afailed, cfg, n_max, *, progress=False):
    """Run control draws in rounds until the chance rates are precise enough.

    Parameters
    ----------
    states : callable
        ``states(start, stop)`` -> Galactocentric positions (kpc) and
        velocities (km/s) of control draws ``start ... stop - 1``, each
        shape (stop - start, 3); called once per round, in order.
    run : dict
        Keyword arguments of :func:`~kinage.orbits.chunks.run_draws` (times, pset, tolerance, ...).
    assoc, adraws, afailed, cfg :
        As for :func:`required_control_draws`.
    n_max : int
        At most this many control draws.

    Returns
    -------
    dict
        The control results (layout of :func:`~kinage.orbits.chunks.run_draws`) for the N draws used.
    """
    parts, done = [], 0
    target = min(n_max, FIRST_ROUND)
    for _ in range(MAX_ROUNDS):
        cpos, cvel = states(done, target)
        with progress_bar(target - done, desc="control draws", enabled=progress) as bar:
            parts.append(run_draws(cpos, cvel, assoc=assoc, adraws=adraws, bar=bar, offset=done, **run))
        done = target
        ctrl = _merge(parts) if len(parts) > 1 else parts[0]
        if done >= n_max:
            break
        need = required_control_draws(ctrl, adraws, afailed, cfg)
        if need <= done:
            break
        target = min(n_max, int(np.ceil(need * 1.05)))
    return ctrl
