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
never more than there are star draws for this criterion.

The birth probabilities need more: the Bayes factor of an association divides
by its chance rate, taken from the wide control kernel (see
:mod:`.probability`), whose Monte Carlo error is about one over the square
root of the effective number of passages (the summed kernel).  For every
association whose probability (in it or in its surroundings) is at least
:data:`RELEVANT_PROBABILITY` after a round, kinage adds control draws until the
wide kernel has summed to :data:`~.probability.CONTROL_HITS` passages (a
relative error of about 18%), up to :data:`MAX_CONTROL_FACTOR` times the star
draws (and never more than :data:`MAX_EXTRA_CONTROL_DRAWS` unless there are
more star draws).  Control draws beyond the star draws reuse the star draws in order with
new random directions.  A rare chance passage therefore cannot swing a
probability unseen: without this, a probability of 0.93 +/- 0.02 at 2,000 draws
could read 0.69 at 8,000.

The control result has the same layout as the star's (per-association d_min,
tau, edge for every control draw, pairing draw i with association draw
i mod m), so statistics may use the whole control d_min distribution.
"""

import numpy as np

from ..progress import progress_bar
from .chunks import run_draws
from .probability import CONTROL_HITS, add_sums, kernel_sums, posterior_from_sums
from .statistics import encounter_mask

__all__ = ["control_draws_needed", "required_control_draws", "probability_control_draws", "FIRST_ROUND",
           "MAX_ROUNDS", "usable_draws", "MAX_CONTROL_FACTOR", "MAX_EXTRA_CONTROL_DRAWS", "RELEVANT_PROBABILITY",
           "probability_control_cap", "probability_results", "largest_probability_error", "cached_kernel_sums"]

#: control draws of the first round
FIRST_ROUND = 2000
#: rounds at most (the second normally suffices)
MAX_ROUNDS = 4
#: control draws at most this many times the star draws (for the Bayes factors' chance rates) ...
MAX_CONTROL_FACTOR = 4
#: ... and beyond the star draws, at most this many in all (bounds memory for very large runs)
MAX_EXTRA_CONTROL_DRAWS = 200_000
#: associations whose probability (in it or nearby) reaches this need a precise chance rate
RELEVANT_PROBABILITY = 0.01


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
    need = 0.0
    for j in range(adraws.n_assoc):
        valid = usable_draws(ctrl, adraws, afailed, j)
        enc = encounter_mask(ctrl["dmin"][j].astype(float), ctrl["tau"][j].astype(float), ctrl["edge"][j], valid,
                             adraws.radius_pc[j], adraws.age_myr[j], cfg["factor"], cfg["tolerance"])
        nv = int(valid.sum())
        p = (int(enc.sum()) + 2.0) / (nv + 4.0)
        need = max(need, p * (1.0 - p) / max(r * p, e) ** 2 * (n / max(nv, 1)))
    return int(np.ceil(need))


def probability_control_cap(n_star):
    """Most control draws the probabilities may ask for with ``n_star`` star draws."""
    return int(min(MAX_CONTROL_FACTOR * n_star, max(n_star, MAX_EXTRA_CONTROL_DRAWS)))


def usable_draws(results, adraws, afailed, j):
    """Usable draws of association j: orbit integrated for the star (or control) draw and its association draw."""
    n = results["dmin"].shape[1]
    bad = np.zeros(n, bool)
    bad[[i for i in results["failed"] if i < n]] = True
    abad = np.zeros(adraws.m, bool)
    abad[[i % adraws.m for i in afailed if i // adraws.m == j]] = True
    return ~bad & ~abad[np.arange(n) % adraws.m] & np.isfinite(results["dmin"][j])


def probability_results(ctrl, main, adraws, afailed, cfg):
    """Birth probabilities and their Monte Carlo errors from the star and control draws so far.

    Parameters
    ----------
    ctrl, main : dict
        Control and star results (``dmin``, ``tau``, ``edge`` of shape (n_assoc, N), ``failed``).
    adraws, afailed, cfg :
        As for :func:`required_control_draws` (``cfg`` also gives ``field_prior``,
        ``neighbourhood_share`` and ``neighbourhood_scale``).

    Returns
    -------
    (dict, dict)
        :func:`~.probability.posterior_from_sums`'s result and the sums it was made from.
    """
    scale = cfg.get("neighbourhood_scale", 50.0)
    per_assoc = []
    for j in range(adraws.n_assoc):
        args = (adraws.radius_pc[j], adraws.age_myr[j], cfg["tolerance"], scale)
        per_assoc.append(add_sums(cached_kernel_sums(main, j, adraws, afailed, args, "main"),
                                  cached_kernel_sums(ctrl, j, adraws, afailed, args, "control")))
    sums = {k: np.array([a[k] for a in per_assoc]) for k in per_assoc[0]}
    return posterior_from_sums(sums, cfg["field_prior"], cfg.get("neighbourhood_share", 0.0)), sums


_NONE = (np.zeros(0), np.zeros(0), np.zeros(0, bool), np.zeros(0, bool))


def cached_kernel_sums(results, j, adraws, afailed, args, role):
    """Kernel sums of association j over ``results``' draws, kept with the results between control rounds.

    Sums add (:func:`~.probability.add_sums`), so draws appended since the last call are summed alone and
    added: the star draws are summed once per batch and the control draws once each, instead of every
    round.  ``role``: ``"main"`` (star draws) or ``"control"``.
    """
    cache = results.setdefault("_kernel_sums", {})
    n = results["dmin"].shape[1]
    done, sums = cache.get((j, args), (0, None))
    if done < n or sums is None:
        valid = usable_draws(results, adraws, afailed, j)[done:]
        part = (results["dmin"][j, done:].astype(float), results["tau"][j, done:].astype(float),
                results["edge"][j, done:], valid)
        new = kernel_sums(part, _NONE, *args) if role == "main" else kernel_sums(_NONE, part, *args)
        sums = new if sums is None else add_sums(sums, new)
        cache[(j, args)] = (n, sums)
    return sums


def largest_probability_error(res):
    """The largest Monte Carlo error of any stated probability (candidates, their surroundings, the field)."""
    errs = [float(np.max(res["probability_error"], initial=0.0)),
            float(np.max(res["neighbourhood_probability_error"], initial=0.0)), float(res["field_probability_error"])]
    return max(errs)


def probability_control_draws(ctrl, main, adraws, afailed, cfg, hits=CONTROL_HITS):
    """Control draws that give the chance rate of every relevant association CONTROL_HITS wide-kernel passages.

    Parameters
    ----------
    ctrl, main : dict
        Control and star results so far (``dmin``, ``tau``, ``edge`` of shape (n_assoc, N), ``failed``).
    adraws, afailed, cfg :
        As for :func:`probability_results`.
    hits : float
        Wide-kernel passages wanted (more when the probabilities' precision asks for it).

    Returns
    -------
    int
        0 when no association is relevant or every relevant one has enough passages.
    """
    n_ctrl = ctrl["dmin"].shape[1]
    res, sums = probability_results(ctrl, main, adraws, afailed, cfg)
    need = 0.0
    for j in range(adraws.n_assoc):
        relevant = res["probability"][j] + res["neighbourhood_probability"][j] >= RELEVANT_PROBABILITY
        passages = float(sums["control_wide"][j])
        if relevant and sums["main"][j] > 0 and passages < hits:
            need = max(need, n_ctrl * hits / max(passages, 0.5))
    return int(np.ceil(need))


def _merge(parts):
    out = {k: np.concatenate([p[k] for p in parts], axis=1) for k in ("dmin", "tau", "edge")}
    out["failed"] = {}
    for p in parts:
        out["failed"].update(p["failed"])
    out["plane"], out["tracks"], out["birth"] = None, None, {}
    return out


def control_draws_needed(states, run, assoc, adraws, afailed, cfg, n_max, *, progress=False, main=None,
                         n_max_probability=None, initial=None, hits=CONTROL_HITS):
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
        At most this many control draws for the chance rates' own precision.
    main : dict, optional
        The star draws' results; with it, the birth probabilities' needs count too
        (:func:`probability_control_draws`), up to ``n_max_probability`` draws.
    initial : dict, optional
        Control results already run (draws 0 .. N-1); rounds continue from them.
    hits : float
        Wide-kernel chance passages wanted for every relevant association.

    Returns
    -------
    dict
        The control results (layout of :func:`~kinage.orbits.chunks.run_draws`) for the N draws used.
    """
    if initial is not None:
        parts, done = [initial], initial["dmin"].shape[1]
    else:
        parts, done = [], 0
    cap_p = n_max if main is None or n_max_probability is None else max(n_max, int(n_max_probability))
    ctrl = initial

    def target_after(ctrl):
        need = min(n_max, required_control_draws(ctrl, adraws, afailed, cfg))
        if main is not None:
            need = max(need, min(cap_p, probability_control_draws(ctrl, main, adraws, afailed, cfg, hits)))
        return int(min(max(n_max, cap_p), np.ceil(need * 1.05))) if need > done else done

    target = min(n_max, FIRST_ROUND) if initial is None else target_after(initial)
    for _ in range(MAX_ROUNDS):
        if target <= done:
            break
        cpos, cvel = states(done, target)
        with progress_bar(target - done, desc="control draws", enabled=progress) as bar:
            parts.append(run_draws(cpos, cvel, assoc=assoc, adraws=adraws, bar=bar, offset=done, **run))
        done = target
        merged = _merge(parts) if len(parts) > 1 else parts[0]
        if ctrl is not None and "_kernel_sums" in ctrl:
            merged["_kernel_sums"] = ctrl["_kernel_sums"]  # sums of the earlier draws, which lead the merged ones
        ctrl = merged
        target = target_after(ctrl)
    return ctrl
