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

Births cluster.  Stars born outside the listed candidates are not spread at
random: star formation is clustered, and many are born in the surroundings
of an association without belonging to it (near misses).  Their back-traced
paths also pass close to the association, so a random-direction field alone
makes a near miss look like a member whenever the path is too uncertain to
tell 10 pc from 50 pc.  The field hypothesis H_0 is therefore a mixture: a
share ``1 - s`` of field births with directions unrelated to any candidate
(the control rate above), and a share ``s`` (``[trace] neighbourhood_share``)
born in the surroundings of candidate j, H_0j, with the 2-D miss vector
Gaussian of dispersion sqrt(radius_j^2 + L^2), L = ``[trace]
neighbourhood_scale`` (within the same age window).  Its Bayes factor
against the unrelated field, Lambda_0j, is the same ratio of averages with
the wider kernel.  When the path is well known, a member gives
Lambda_j >> Lambda_0j and a near miss the reverse; when the path is
uncertain on scales of L, Lambda_j ~ Lambda_0j and the priors decide, which
is what the data allow.  ``s = 0`` gives the unrelated field alone.

Priors and posteriors.  P(H_0) = ``field_prior`` = f, split into f (1 - s)
for the unrelated field and f s / N for the surroundings of each candidate;
the rest shared equally, P(H_j) = (1 - f) / N.  With
Z = f (1 - s) + sum_k [P(H_k) Lambda_k + (f s / N) Lambda_0k],

    P(j | data) = P(H_j) Lambda_j / Z,
    P(near j, not in it | data) = (f s / N) Lambda_0j / Z,
    P(field | data) = [f (1 - s) + sum_k (f s / N) Lambda_0k] / Z,

which sum to 1 (the field probability includes the surroundings).  Both averages are ratios of Monte Carlo means, so the
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

__all__ = ["birth_kernel", "check_field_prior", "check_neighbourhood_share", "neighbourhood_width",
           "posterior_probabilities", "posterior_from_sums", "kernel_group_sums", "jackknife_groups", "SUM_KEYS",
           "weighted_interval", "PROBABILITY_THRESHOLD", "CONTROL_WIDTH", "CONTROL_HITS",
           "N_GROUPS", "DEFAULT_FIELD_PRIOR", "DEFAULT_NEIGHBOURHOOD_SHARE", "DEFAULT_NEIGHBOURHOOD_SCALE_PC",
           "MODEL_TEXT"]

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
#: documented default of ``[trace] neighbourhood_share``: the share of births outside the listed candidates
#: that happen in their surroundings.  Common practice, no source: field massive stars are mostly found near
#: star-forming regions rather than spread at random; 0.4 keeps most of the field prior unrelated.
DEFAULT_NEIGHBOURHOOD_SHARE = 0.4
#: documented default of ``[trace] neighbourhood_scale``, pc: the extent of an association's surroundings
#: (common practice, no source: star-forming complexes are tens of pc to ~100 pc across)
DEFAULT_NEIGHBOURHOOD_SCALE_PC = 50.0

#: one-paragraph statement of the model for reports
MODEL_TEXT = (
    "Probabilities: for each candidate association the likelihood of birth inside it (a Gaussian kernel in "
    "the closest-approach distance with the association's radius as dispersion, for closest approaches within "
    "its age) averaged over the Monte Carlo draws, divided by the same average over control draws with "
    "randomised directions of motion (the field alternative); prior {field:.2g} for a birth outside every "
    "listed candidate, the rest shared equally among them; a share {share:.2g} of the field births placed in "
    "the candidates' surroundings (a Gaussian kernel of {scale:.3g} pc added in quadrature to the radius), so a "
    "near miss is not taken for a member when the path is too uncertain to tell them apart; Monte Carlo errors "
    "by a jackknife over groups of "
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


def check_neighbourhood_share(value, where="[trace] neighbourhood_share"):
    """The neighbourhood share as a float, or InputError unless 0 <= value < 1."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(where, f"must be a number from 0 (inclusive) to 1 (exclusive) (got {value!r})") from None
    if not 0.0 <= x < 1.0:
        raise InputError(where, f"must lie in [0, 1) (got {x:g})")
    return x


def neighbourhood_width(radius_pc, scale_pc):
    """Width of the surroundings' kernel in units of the radius, sqrt(radius^2 + scale^2) / radius.

    Parameters
    ----------
    radius_pc, scale_pc : float, pc

    Returns
    -------
    float (>= 1)
    """
    r = max(float(radius_pc), 1e-9)
    return float(np.hypot(r, float(scale_pc)) / r)


def _group_sums(k, v, groups, g):
    """Per-group sums of kernels and of valid counts: arrays (N, g)."""
    k, v = np.atleast_2d(k), np.atleast_2d(v)
    ks = np.zeros((k.shape[0], g))
    vs = np.zeros_like(ks)
    for j in range(k.shape[0]):
        ks[j] = np.bincount(groups, weights=k[j], minlength=g)
        vs[j] = np.bincount(groups, weights=v[j].astype(float), minlength=g)
    return ks, vs


def jackknife_groups(n, n_control, n_groups=N_GROUPS):
    """Group labels of the star draws and of the control draws, and the number of groups.

    Draw i of ``n`` goes to group floor(i g / n), so star and control draws of the
    same relative position share a group.

    Returns
    -------
    (ndarray of int, ndarray of int, int)
    """
    g = int(max(2, min(n_groups, n, n_control)))
    return (np.arange(n) * g) // max(n, 1), (np.arange(n_control) * g) // max(n_control, 1), g


#: names of the per-group sums :func:`posterior_from_sums` takes, in order
SUM_KEYS = ("main", "main_valid", "control", "control_wide", "control_valid", "near", "control_near",
            "control_near_wide")


def kernel_group_sums(main, control, radius_pc, age_myr, tolerance_myr, neighbourhood_scale_pc,
                      n_groups=N_GROUPS):
    """Per-group sums of one association's kernels: all :func:`posterior_from_sums` needs of it.

    Summing at once keeps memory at O(groups) per association instead of O(draws).

    Parameters
    ----------
    main, control : tuple (dmin_pc, tau_myr, edge, valid)
        Star and control draws for this association.
    radius_pc, age_myr, tolerance_myr : float
    neighbourhood_scale_pc : float
        ``[trace] neighbourhood_scale``, pc.
    n_groups : int

    Returns
    -------
    dict
        Arrays of shape (g,) under :data:`SUM_KEYS`.
    """
    gm, gc, g = jackknife_groups(len(main[0]), len(control[0]), n_groups)
    wn = neighbourhood_width(radius_pc, neighbourhood_scale_pc)
    out = {}
    for (name, valid_name, widths), (draws, groups) in zip(
            ((("main", "near"), "main_valid", (1.0, wn)),
             (("control", "control_wide", "control_near", "control_near_wide"), "control_valid",
              (1.0, CONTROL_WIDTH, wn, wn * CONTROL_WIDTH))),
            ((main, gm), (control, gc))):
        valid = np.asarray(draws[3], bool)
        for key, w in zip(name, widths):
            k = birth_kernel(draws[0], draws[1], draws[2], valid, radius_pc, age_myr, tolerance_myr, width=w)
            out[key] = np.bincount(groups, weights=k, minlength=g)
        out[valid_name] = np.bincount(groups, weights=valid.astype(float), minlength=g)
    return out


def _bayes_factor(km, vm, kc, kcw, vc):
    """Bayes factor against the unrelated field from summed kernels (star draws, control, wide control)."""
    mean_main = km / np.maximum(vm, 1.0)
    nc = np.maximum(vc, 1.0)
    alpha = np.clip(kc / CONTROL_HITS, 0.0, 1.0)
    chance = alpha * (kc / nc) + (1.0 - alpha) * (kcw / nc / CONTROL_WIDTH**2)
    # no control draw came near even for the wide kernel: at most half a wide-kernel passage
    chance = np.maximum(chance, 0.5 / (nc * CONTROL_WIDTH**2))
    return mean_main / chance


def _posteriors(km, vm, kc, kcw, vc, field_prior, near=None, share=0.0):
    """Posteriors from summed kernels; arrays over associations (last axis: leave-one-out copies).

    ``near`` holds the summed kernels (star, control, wide control) of the surroundings; ``share`` their
    part of the field prior.  Returns (P_j, P_field, Lambda_j, P_near_j, Lambda_0j).
    """
    n_assoc = km.shape[0]
    lam = _bayes_factor(km, vm, kc, kcw, vc)
    prior_j = (1.0 - field_prior) / n_assoc
    if near is None or share == 0.0:
        lam0 = np.zeros_like(lam)
    else:
        kmn, kcn, kcnw = near
        lam0 = _bayes_factor(kmn, vm, kcn, kcnw, vc)
    prior_0j = field_prior * share / n_assoc
    z = field_prior * (1.0 - share) + prior_j * lam.sum(axis=0) + prior_0j * lam0.sum(axis=0)
    p_near = prior_0j * lam0 / z
    return prior_j * lam / z, (field_prior * (1.0 - share)) / z + p_near.sum(axis=0), lam, p_near, lam0


def posterior_probabilities(k_main, v_main, k_ctrl, k_ctrl_wide, v_ctrl, field_prior, n_groups=N_GROUPS,
                            near=None, neighbourhood_share=0.0):
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
    near : tuple of ndarray (k_main, k_ctrl, k_ctrl_wide), optional
        Kernels of the surroundings (width :func:`neighbourhood_width`), shaped as above.
    neighbourhood_share : float
        Share of the field prior born in the candidates' surroundings, 0 <= s < 1.

    Returns
    -------
    dict
        ``probability`` (N,), ``probability_error`` (N,), ``field_probability``,
        ``field_probability_error``, ``likelihood_ratio`` (N,) (Bayes factor
        against the unrelated field), ``likelihood_ratio_error`` (N,),
        ``neighbourhood_probability`` (N,) and its ``_error`` (birth in the
        surroundings of each candidate but not in it; part of the field probability).
    """
    k_main, v_main = np.atleast_2d(k_main), np.atleast_2d(v_main)
    k_ctrl, k_ctrl_wide, v_ctrl = np.atleast_2d(k_ctrl), np.atleast_2d(k_ctrl_wide), np.atleast_2d(v_ctrl)
    gm, gc, g = jackknife_groups(k_main.shape[1], k_ctrl.shape[1], n_groups)
    km, vm = _group_sums(k_main, v_main, gm, g)
    kc, vc = _group_sums(k_ctrl, v_ctrl, gc, g)
    sums = {"main": km, "main_valid": vm, "control": kc, "control_wide": _group_sums(k_ctrl_wide, v_ctrl, gc, g)[0],
            "control_valid": vc}
    if near is not None:
        for key, arr, v, grp in zip(SUM_KEYS[5:], near, (v_main, v_ctrl, v_ctrl), (gm, gc, gc)):
            sums[key] = _group_sums(arr, v, grp, g)[0]
    return posterior_from_sums(sums, field_prior, neighbourhood_share)


def posterior_from_sums(sums, field_prior, neighbourhood_share=0.0):
    """Posterior probabilities and jackknife errors from per-group kernel sums.

    Parameters
    ----------
    sums : dict
        Arrays of shape (N, g) (N associations, g jackknife groups) under
        :data:`SUM_KEYS`; the three ``near`` keys may be missing when
        ``neighbourhood_share`` is 0.
    field_prior, neighbourhood_share : float

    Returns
    -------
    dict
        As :func:`posterior_probabilities`.
    """
    share = float(neighbourhood_share)
    keys = SUM_KEYS if share > 0.0 and all(k in sums for k in SUM_KEYS[5:]) else SUM_KEYS[:5]
    arrays = [np.atleast_2d(np.asarray(sums[k], float)) for k in keys]
    g = arrays[0].shape[1]

    def post(a):
        return _posteriors(*a[:5], field_prior, near=tuple(a[5:]) if len(a) > 5 else None, share=share)

    p, p0, lam, pn, _ = post([a.sum(axis=1) for a in arrays])
    pj, p0j, lamj, pnj, _ = post([a.sum(axis=1, keepdims=True) - a for a in arrays])

    def jack(x):
        return np.sqrt((g - 1) / g * np.sum((x - x.mean(axis=-1, keepdims=True)) ** 2, axis=-1))

    return {"probability": p, "probability_error": jack(pj), "field_probability": float(p0),
            "field_probability_error": float(jack(p0j[None, :])[0]), "likelihood_ratio": lam,
            "likelihood_ratio_error": jack(lamj), "neighbourhood_probability": pn,
            "neighbourhood_probability_error": jack(pnj)}


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
