"""Posterior probabilities of the birth association, with their Monte Carlo errors.

The model
---------
Hypotheses: H_j "the star was born in candidate association j, at a time
within its age (age + tolerance), inside its extent", j = 1..N, and H_0 "it
was born outside all listed candidates" (the field).

Data: the measured astrometry.  Everything that is the same under all
hypotheses (position, distance, speed; the unknown radial velocity drawn
from the velocity prior) is marginalised by the Monte Carlo draws; what
tells the hypotheses apart is the *direction* of the star's motion.

Likelihood of H_j.  A star born in j left from a point drawn from the
association's extent, so its back-traced path misses the association centre
by a vector b in the plane across the relative motion; minimising the
separation over time removes the component along the motion (Hoogerwerf, de
Bruijne & de Zeeuw 2001, A&A 365, 49, Sect. 3 and Appendix A).  kinage takes
the association's members to be Gaussian with dispersion sigma_j =
``radius`` per coordinate, so b has density proportional to the kernel

    K_j = exp(-d_min^2 / (2 sigma_j^2))   if tau < age_j + tolerance and the
                                          closest approach is inside the window,
    K_j = 0                               otherwise.

Field alternative.  For a star born elsewhere the direction of motion is
unrelated to j: the control draws turn each draw's proper motion by a random
angle (speed kept, radial velocity redrawn) and give the chance rate of the
same kernel (randomised inputs as in Tetzlaff et al. 2010, MNRAS 402, 2369).

Bayes factor.  With the draws sampling the directions allowed by the
measurement and the control draws sampling all directions,

    Lambda_j = p(data | H_j) / p(data | H_0) = <K_j>_draws / <K_j>_control

(the kernel's normalisation cancels).  The chance rate <K_j>_control is
small and, averaged directly, carried by a handful of control draws, so it
is taken from a kernel ``CONTROL_WIDTH`` times wider, divided by
``CONTROL_WIDTH**2`` (exact when chance passages are spread uniformly over
the miss plane within that width, which holds when the association is far
compared with its size).  When the direct average rests on at least
``CONTROL_HITS`` effective passages (sum of the control kernels) it is used
alone, with a linear blend below that, so a star still close to its
association (where the wide kernel saturates) is not overstated.

Priors and posteriors.  P(H_0) = ``field_prior``; the rest shared equally,
P(H_j) = (1 - field_prior) / N.  Then

    P(j | data) = P(H_j) Lambda_j / [P(H_0) + sum_k P(H_k) Lambda_k],
    P(field | data) = P(H_0) / [same],

which sum to 1.  Both averages are ratios of Monte Carlo means, so the
probabilities converge as draws are added instead of drifting with their
number.  Their Monte Carlo error is a delete-one-group jackknife over
``N_GROUPS`` groups of draws (star and control draws of the same index stay
in the same group; Efron & Tibshirani 1993, An Introduction to the
Bootstrap, ch. 11).

A star is assigned to the association with the highest probability when that
probability is at least ``PROBABILITY_THRESHOLD`` (more likely than all
other hypotheses together).  Calibration: scripts/calibrate_probabilities.py
injects births, flies them with galpy and scores the stated probabilities by a
reliability table and the Brier score (Brier 1950, Mon. Weather Rev. 78, 1;
DeGroot & Fienberg 1983, The Statistician 32, 12).

Units: pc, Myr, km/s.
"""

import numpy as np

from ..errors import InputError

__all__ = ["birth_kernel", "check_field_prior", "posterior_probabilities", "weighted_interval",
           "PROBABILITY_THRESHOLD", "CONTROL_WIDTH", "CONTROL_HITS", "N_GROUPS", "DEFAULT_FIELD_PRIOR", "MODEL_TEXT"]

#: an association is favoured when its probability is at least this (common practice, no source:
#: more likely than every other hypothesis together)
PROBABILITY_THRESHOLD = 0.5
#: width of the wide control kernel in units of the association's sigma (see module docstring)
CONTROL_WIDTH = 3.0
#: summed control kernel (effective number of chance passages) from which the direct chance rate is used alone
CONTROL_HITS = 30.0
#: groups of draws for the jackknife error
N_GROUPS = 20
#: documented default of ``[trace] field_prior``
DEFAULT_FIELD_PRIOR = 0.5

#: one-paragraph statement of the model for reports
MODEL_TEXT = (
    "Probabilities: for each candidate association the likelihood of birth inside it (a Gaussian kernel in "
    "the closest-approach distance with the association's radius as dispersion, for closest approaches within "
    "its age) averaged over the Monte Carlo draws, divided by the same average over control draws with "
    "randomised directions of motion (the field alternative); prior {field:.2g} for a birth outside every "
    "listed candidate, the rest shared equally among them; Monte Carlo errors by a jackknife over groups of "
    "draws (Hoogerwerf, de Bruijne & de Zeeuw 2001 for the closest-approach reasoning)."
)


def birth_kernel(dmin_pc, tau_myr, edge, valid, radius_pc, age_myr, tolerance_myr, width=1.0):
    """Birth kernel K = exp(-d_min^2 / (2 (width radius)^2)) inside the age window, else 0.

    Parameters
    ----------
    dmin_pc, tau_myr : ndarray, pc and Myr
    edge, valid : ndarray of bool
        Closest approach at an end of the window; draw usable.
    radius_pc, age_myr, tolerance_myr : float
    width : float
        Kernel dispersion in units of ``radius_pc``.

    Returns
    -------
    ndarray of float (0 where invalid, at an edge or older than age + tolerance)
    """
    d = np.where(valid, np.asarray(dmin_pc, float), np.inf)
    ok = valid & ~np.asarray(edge, bool) & (np.nan_to_num(tau_myr, nan=np.inf) < age_myr + tolerance_myr)
    s = max(float(width * radius_pc), 1e-9)
    with np.errstate(over="ignore", invalid="ignore"):
        k = np.exp(-0.5 * (d / s) ** 2)
    return np.where(ok, k, 0.0)


def check_field_prior(value, where="[trace] field_prior"):
    """The field prior as a float, or InputError unless 0 < value < 1."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(where, f"must be a number between 0 and 1, exclusive (got {value!r})") from None
    if not 0.0 < x < 1.0:
        raise InputError(where, f"must lie strictly between 0 and 1 (got {x:g})")
    return x


def _group_sums(k, v, groups):
    """Per-group sums of kernels and of valid counts: arrays (N, G)."""
    n_assoc = k.shape[0]
    ks = np.zeros((n_assoc, groups.max() + 1 if groups.size else 1))
    vs = np.zeros_like(ks)
    for j in range(n_assoc):
        ks[j] = np.bincount(groups, weights=k[j], minlength=ks.shape[1])
        vs[j] = np.bincount(groups, weights=v[j].astype(float), minlength=ks.shape[1])
    return ks, vs


def _posteriors(km, vm, kc, kcw, vc, field_prior):
    """Posteriors from summed kernels; arrays over associations (last axis: leave-one-out copies)."""
    n_assoc = km.shape[0]
    mean_main = km / np.maximum(vm, 1.0)
    nc = np.maximum(vc, 1.0)
    alpha = np.clip(kc / CONTROL_HITS, 0.0, 1.0)
    chance = alpha * (kc / nc) + (1.0 - alpha) * (kcw / nc / CONTROL_WIDTH**2)
    # no control draw came near even for the wide kernel: at most half a wide-kernel passage
    chance = np.maximum(chance, 0.5 / (nc * CONTROL_WIDTH**2))
    lam = mean_main / chance
    prior_j = (1.0 - field_prior) / n_assoc
    z = field_prior + prior_j * lam.sum(axis=0)
    return prior_j * lam / z, field_prior / z, lam


def posterior_probabilities(k_main, v_main, k_ctrl, k_ctrl_wide, v_ctrl, field_prior, n_groups=N_GROUPS):
    """Posterior probabilities of every candidate and of the field, with jackknife errors.

    Parameters
    ----------
    k_main, v_main : ndarray, shape (N, n)
        Birth kernels of the star draws for each of the N associations and
        whether each draw is valid for that association.
    k_ctrl, k_ctrl_wide, v_ctrl : ndarray, shape (N, n_control)
        Kernels of the control draws (width 1 and ``CONTROL_WIDTH``) and validity.
    field_prior : float
        Prior probability of a birth outside all candidates, 0 < p < 1.
    n_groups : int
        Groups for the jackknife (fewer when there are fewer draws).

    Returns
    -------
    dict
        ``probability`` (N,), ``probability_error`` (N,), ``field_probability``,
        ``field_probability_error``, ``likelihood_ratio`` (N,) (Bayes factor
        against the field), ``likelihood_ratio_error`` (N,).
    """
    k_main, v_main = np.atleast_2d(k_main), np.atleast_2d(v_main)
    k_ctrl, k_ctrl_wide, v_ctrl = np.atleast_2d(k_ctrl), np.atleast_2d(k_ctrl_wide), np.atleast_2d(v_ctrl)
    n, nc = k_main.shape[1], k_ctrl.shape[1]
    g = int(max(2, min(n_groups, n, nc)))
    gm = (np.arange(n) * g) // max(n, 1)
    gc = (np.arange(nc) * g) // max(nc, 1)
    km, vm = _group_sums(k_main, v_main, gm)
    kc, vc = _group_sums(k_ctrl, v_ctrl, gc)
    kcw, _ = _group_sums(k_ctrl_wide, v_ctrl, gc)
    tot = [a.sum(axis=1) for a in (km, vm, kc, kcw, vc)]
    p, p0, lam = _posteriors(*tot, field_prior)
    loo = [a.sum(axis=1, keepdims=True) - a for a in (km, vm, kc, kcw, vc)]
    pj, p0j, lamj = _posteriors(*loo, field_prior)

    def jack(x):
        return np.sqrt((g - 1) / g * np.sum((x - x.mean(axis=-1, keepdims=True)) ** 2, axis=-1))

    return {"probability": p, "probability_error": jack(pj), "field_probability": float(p0),
            "field_probability_error": float(jack(p0j[None, :])[0]), "likelihood_ratio": lam,
            "likelihood_ratio_error": jack(lamj)}


def weighted_interval(x, w):
    """Median and central 68% / 95% intervals of weighted samples (same keys as ``io.results.interval``).

    Parameters
    ----------
    x : ndarray
    w : ndarray, non-negative weights

    Returns
    -------
    dict
        ``median``, ``lo68``, ``hi68``, ``lo95``, ``hi95`` (None without weight)
        and ``n_effective`` (Kish's effective sample size, sum(w)^2 / sum(w^2)).
    """
    x, w = np.asarray(x, float), np.asarray(w, float)
    ok = np.isfinite(x) & (w > 0)
    out = dict.fromkeys(("median", "lo68", "hi68", "lo95", "hi95"))
    out["n_effective"] = 0.0
    if not ok.any():
        return out
    x, w = x[ok], w[ok] / np.max(w[ok])
    order = np.argsort(x)
    x, w = x[order], w[order]
    c = np.cumsum(w) - 0.5 * w
    c /= w.sum()
    for key, q in (("median", 0.5), ("lo68", 0.15865525), ("hi68", 0.84134475), ("lo95", 0.02275013),
                   ("hi95", 0.97724987)):
        out[key] = float(np.interp(q, c, x))
    out["n_effective"] = float(w.sum() ** 2 / np.sum(w**2))
    return out
