"""Posterior probabilities of the birth association, with their Monte Carlo errors.

Size: one module on purpose; the model below, its kernel sums and the delta-method errors of the
probabilities read the same sums, and the derivation is easier to check in one place.

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
number.

Monte Carlo errors.  Every probability is a smooth function of per-association
kernel sums (star draws: member and surroundings kernels; control draws: the
four control kernels).  Their covariance is the plug-in (delta-method)
estimate for sums of independent draws, sum k_a k_b - S_a S_b / n (Efron &
Tibshirani 1993, An Introduction to the Bootstrap), and it is carried to the
probabilities by their numerical gradient.  A sum carried by a handful of
draws is a small Poisson count, whose plug-in variance is itself uncertain
and is zero when nothing was seen; every variance therefore gets one typical
passage's worth added ((sum k^2 / sum k)^2; ``PASSAGE_VARIANCE`` for an
empty control sum), so the stated error never falls below what one more or
one fewer passage would change, and no error exceeds sqrt(P (1 - P)), the
largest standard deviation in [0, 1] (Bhatia & Davis 2000, Am. Math. Mon.
107, 353).  Coverage on repeated seeds: DEVELOPERS.md.  Chance rates
with fewer than ``ZERO_PASSAGES_UPPER`` wide-kernel passages are replaced by
that upper limit (84% Poisson upper limit after none; Gehrels 1986, ApJ 303,
336), and the Bayes factor is then flagged as a lower limit.  Associations
are treated as independent (their kernels rarely involve the same draws).
A group jackknife used before could not see a handful of encounters: at 500
draws it stated 0.92 +/- 0.03 for a probability of 0.74.

Surroundings never approached.  When no star draw comes within
``NEAR_REACH`` widths sqrt(radius^2 + L^2) of a candidate (the largest
surroundings kernel is below exp(-NEAR_REACH^2 / 2)), its Bayes factor
Lambda_0j is zero, not a ratio of two vanishing rates.

A star is assigned to the association with the highest probability when that
probability is at least ``PROBABILITY_THRESHOLD`` (more likely than all
other hypotheses together).  Calibration: scripts/calibrate_probabilities.py
injects births, flies them with galpy and scores the stated probabilities by a
reliability table and the Brier score (Brier 1950, Mon. Weather Rev. 78, 1;
DeGroot & Fienberg 1983, The Statistician 32, 12).

Units: pc, Myr, km/s.  (Longer than ~450 lines because the model, its kernel sums and their errors are one
derivation, read together.)
"""

import numpy as np

from ..errors import InputError

__all__ = ["birth_kernel", "check_field_prior", "check_neighbourhood_share", "neighbourhood_width",
           "posterior_probabilities", "posterior_from_sums", "kernel_sums", "add_sums", "SUM_KEYS", "MAIN_KERNELS",
           "CONTROL_KERNELS", "PASSAGE_VARIANCE", "NEAR_REACH", "ZERO_PASSAGES_UPPER",
           "weighted_interval", "PROBABILITY_THRESHOLD", "CONTROL_WIDTH", "CONTROL_HITS",
           "DEFAULT_FIELD_PRIOR", "DEFAULT_NEIGHBOURHOOD_SHARE", "DEFAULT_NEIGHBOURHOOD_SCALE_PC",
           "MODEL_TEXT"]

#: an association is favoured when its probability is at least this (common practice, no source:
#: more likely than every other hypothesis together)
PROBABILITY_THRESHOLD = 0.5
#: width of the wide control kernel in units of the association's sigma (see module docstring)
CONTROL_WIDTH = 3.0
#: summed control kernel (effective number of chance passages) from which the direct chance rate is used alone
CONTROL_HITS = 30.0
#: wide-kernel chance passages assumed when fewer were seen: the 84% upper limit of a Poisson mean after
#: observing none, -ln(0.16) (Gehrels 1986, ApJ 303, 336, Table 1)
ZERO_PASSAGES_UPPER = 1.841
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
    "from the kernel sums' variances with a one-passage floor (Hoogerwerf, de Bruijne & de Zeeuw 2001 for the closest-approach reasoning)."
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


#: names of the per-association kernel sums :func:`posterior_from_sums` takes
SUM_KEYS = ("main", "main_valid", "control", "control_wide", "control_valid", "near", "control_near",
            "control_near_wide")
#: kernels summed over the star draws and over the control draws (order of the moment matrices)
MAIN_KERNELS = ("main", "near")
CONTROL_KERNELS = ("control", "control_wide", "control_near", "control_near_wide")
#: variance one passage adds to a control sum nothing has reached yet (kernel value 1); a sum with passages
#: gets the square of its typical kernel value, sum k^2 / sum k (the count floor, see module docstring); an
#: empty star-draw sum gets none (its probability is ~0, and one passage would be a step, not a slope)
PASSAGE_VARIANCE = 1.0
#: the star never comes within this many widths of an association's surroundings: no birth nearby
NEAR_REACH = 3.0


def kernel_sums(main, control, radius_pc, age_myr, tolerance_myr, neighbourhood_scale_pc):
    """Sums and second moments of one association's kernels: all :func:`posterior_from_sums` needs of it.

    Summing at once keeps memory at O(1) per association instead of O(draws); the sums of two sets of
    draws add (:func:`add_sums`), so the result does not depend on how the draws were split.

    Parameters
    ----------
    main, control : tuple (dmin_pc, tau_myr, edge, valid)
        Star and control draws for this association.
    radius_pc, age_myr, tolerance_myr : float
    neighbourhood_scale_pc : float
        ``[trace] neighbourhood_scale``, pc.

    Returns
    -------
    dict
        Floats under :data:`SUM_KEYS`; ``main_moments`` (2 x 2, sums of products of the
        :data:`MAIN_KERNELS`), ``control_moments`` (4 x 4, :data:`CONTROL_KERNELS`) and
        ``near_max`` (largest surroundings kernel of a star draw).
    """
    wn = neighbourhood_width(radius_pc, neighbourhood_scale_pc)
    out = {}
    for names, valid_name, widths, draws in ((MAIN_KERNELS, "main_valid", (1.0, wn), main),
                                             (CONTROL_KERNELS, "control_valid",
                                              (1.0, CONTROL_WIDTH, wn, wn * CONTROL_WIDTH), control)):
        valid = np.asarray(draws[3], bool)
        ks = np.array([birth_kernel(draws[0], draws[1], draws[2], valid, radius_pc, age_myr, tolerance_myr,
                                    width=w) for w in widths])
        for key, k in zip(names, ks):
            out[key] = float(k.sum())
        out[valid_name] = float(valid.sum())
        nz = np.any(ks > 0, axis=0)  # the moments need only the draws with a kernel
        sub = ks[:, nz]
        out["main_moments" if valid_name == "main_valid" else "control_moments"] = sub @ sub.T
        if valid_name == "main_valid":
            out["near_max"] = float(ks[1].max()) if ks.shape[1] else 0.0
    return out


def add_sums(a, b):
    """Kernel sums of two sets of draws together (sums and moments add; the largest kernel is the larger)."""
    out = {k: a[k] + b[k] for k in a if k != "near_max"}
    out["near_max"] = max(a["near_max"], b["near_max"])
    return out


def _chance(kc, kcw, nc):
    """Chance rate from summed control kernels (direct and wide) and the valid control count.

    Returns (rate, is_upper_limit): with fewer than :data:`ZERO_PASSAGES_UPPER` wide-kernel passages the
    rate is that many passages' worth, the 84% upper limit of a Poisson mean after none (Gehrels 1986,
    ApJ 303, 336), so the Bayes factor built on it is a lower limit.
    """
    nc = np.maximum(nc, 1.0)
    alpha = np.clip(kc / CONTROL_HITS, 0.0, 1.0)
    chance = alpha * (kc / nc) + (1.0 - alpha) * (kcw / nc / CONTROL_WIDTH**2)
    floor = ZERO_PASSAGES_UPPER / (nc * CONTROL_WIDTH**2)
    if chance.ndim == 2:
        # perturbed copies (last axis; copy 0 the estimate): the floor is a fixed offset taken from the
        # estimate, so the gradient still sees the chance passages' Monte Carlo error
        offset = np.maximum(floor[:, :1] - chance[:, :1], 0.0)
        return chance + offset, (offset > 0) & np.ones_like(chance, bool)
    return np.maximum(chance, floor), chance < floor


def _bayes_factor(km, vm, kc, kcw, vc):
    """Bayes factor against the unrelated field from summed kernels (star draws, control, wide control)."""
    return km / np.maximum(vm, 1.0) / _chance(kc, kcw, vc)[0]


def _posteriors(km, vm, kc, kcw, vc, field_prior, near=None, share=0.0, near_ok=None):
    """Posteriors from summed kernels; arrays over associations (optional last axis: perturbed copies).

    ``near`` holds the summed kernels (star, control, wide control) of the surroundings; ``share`` their
    part of the field prior; ``near_ok`` (N,) is False for associations whose surroundings the star never
    approaches (their Bayes factor is 0).  Returns (P_j, P_field, Lambda_j, P_near_j, Lambda_0j).
    """
    n_assoc = km.shape[0]
    lam = _bayes_factor(km, vm, kc, kcw, vc)
    prior_j = (1.0 - field_prior) / n_assoc
    if near is None or share == 0.0:
        lam0 = np.zeros_like(lam)
    else:
        kmn, kcn, kcnw = near
        lam0 = _bayes_factor(kmn, vm, kcn, kcnw, vc)
        if near_ok is not None:
            ok = np.asarray(near_ok, bool).reshape((n_assoc,) + (1,) * (lam0.ndim - 1))
            lam0 = np.where(ok, lam0, 0.0)
    prior_0j = field_prior * share / n_assoc
    z = field_prior * (1.0 - share) + prior_j * lam.sum(axis=0) + prior_0j * lam0.sum(axis=0)
    p_near = prior_0j * lam0 / z
    return prior_j * lam / z, (field_prior * (1.0 - share)) / z + p_near.sum(axis=0), lam, p_near, lam0


def _sum_covariance(total, moments, n, empty=0.0):
    """Monte Carlo covariance of kernel sums over n draws, with the one-passage floor on the variances.

    Delta method for sums of independent draws: Cov(S_a, S_b) = sum k_a k_b - S_a S_b / n (Efron &
    Tibshirani 1993, An Introduction to the Bootstrap, for the plug-in estimate); each variance gets one
    typical passage's worth added (sum k^2 / sum k, squared; :data:`PASSAGE_VARIANCE` for an empty sum),
    so a sum carried by a handful of draws (or by none) is not stated more precisely than one passage
    more or fewer allows.
    """
    s = np.asarray(total, float)
    cov = np.asarray(moments, float) - np.outer(s, s) / max(float(n), 1.0)
    cov = 0.5 * (cov + cov.T)
    q = np.diag(np.asarray(moments, float))
    one = np.where(s > 0, q / np.where(s > 0, s, 1.0), empty)  # kernel of a typical passage
    cov[np.diag_indices_from(cov)] = np.maximum(np.diag(cov), 0.0) + one**2
    return cov


def posterior_probabilities(k_main, v_main, k_ctrl, k_ctrl_wide, v_ctrl, field_prior, near=None,
                            neighbourhood_share=0.0, **_ignored):
    """Posterior probabilities of every candidate and of the field, with Monte Carlo errors.

    Parameters
    ----------
    k_main, v_main : ndarray, shape (N, n)
        Birth kernels of the star draws for each of the N associations and
        whether each draw is valid for that association.
    k_ctrl, k_ctrl_wide, v_ctrl : ndarray, shape (N, n_control)
        Kernels of the control draws (width 1 and ``CONTROL_WIDTH``) and validity.
    field_prior : float
        Prior probability of a birth outside all candidates, 0 < p < 1.
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
        ``likelihood_ratio_is_lower_limit`` (N,), ``neighbourhood_probability`` (N,)
        and its ``_error`` (birth in the surroundings of each candidate but not in
        it; part of the field probability).
    """
    k_main, v_main = np.atleast_2d(k_main), np.atleast_2d(v_main)
    k_ctrl, k_ctrl_wide, v_ctrl = np.atleast_2d(k_ctrl), np.atleast_2d(k_ctrl_wide), np.atleast_2d(v_ctrl)
    if near is None:
        kn, kcn, kcnw = np.zeros_like(k_main), np.zeros_like(k_ctrl), np.zeros_like(k_ctrl)
    else:
        kn, kcn, kcnw = (np.atleast_2d(np.asarray(x, float)) for x in near)
    sums = {k: [] for k in SUM_KEYS + ("main_moments", "control_moments", "near_max")}
    for j in range(k_main.shape[0]):
        m = np.array([k_main[j], kn[j]], float) * v_main[j]
        c = np.array([k_ctrl[j], k_ctrl_wide[j], kcn[j], kcnw[j]], float) * v_ctrl[j]
        for key, x in zip(MAIN_KERNELS + CONTROL_KERNELS, list(m) + list(c)):
            sums[key].append(float(x.sum()))
        sums["main_valid"].append(float(np.sum(v_main[j])))
        sums["control_valid"].append(float(np.sum(v_ctrl[j])))
        sums["main_moments"].append(m @ m.T)
        sums["control_moments"].append(c @ c.T)
        sums["near_max"].append(float(m[1].max()) if m.shape[1] else 0.0)
    return posterior_from_sums({k: np.array(v) for k, v in sums.items()}, field_prior, neighbourhood_share)


def posterior_from_sums(sums, field_prior, neighbourhood_share=0.0):
    """Posterior probabilities and their Monte Carlo errors from per-association kernel sums.

    Parameters
    ----------
    sums : dict
        Arrays over the N associations under :data:`SUM_KEYS`, ``main_moments``
        (N, 2, 2), ``control_moments`` (N, 4, 4) and ``near_max`` (N,), as made by
        :func:`kernel_sums`.
    field_prior, neighbourhood_share : float

    Returns
    -------
    dict
        As :func:`posterior_probabilities`.
    """
    share = float(neighbourhood_share)
    base = {k: np.atleast_1d(np.asarray(sums[k], float)) for k in SUM_KEYS}
    n_assoc = base["main"].shape[0]
    near_ok = np.asarray(sums.get("near_max", np.ones(n_assoc)), float) >= np.exp(-0.5 * NEAR_REACH**2)
    kernels = MAIN_KERNELS + CONTROL_KERNELS
    # copy 0: the estimate; copy 1 + 6 j + t: kernel sum t of association j moved by h (numerical gradient)
    n_copies = 1 + len(kernels) * n_assoc
    arr = {k: np.repeat(base[k][:, None], n_copies, axis=1) for k in SUM_KEYS}
    steps = np.zeros((n_assoc, len(kernels)))
    for j in range(n_assoc):
        for t, key in enumerate(kernels):
            h = 1e-6 * (base[key][j] + 1.0)
            steps[j, t] = h
            arr[key][j, 1 + len(kernels) * j + t] += h

    def post(a):
        near = (a["near"], a["control_near"], a["control_near_wide"]) if share > 0.0 else None
        return _posteriors(a["main"], a["main_valid"], a["control"], a["control_wide"], a["control_valid"],
                           field_prior, near=near, share=share, near_ok=near_ok)

    p, p0, lam, pn, _ = post(arr)
    mm = np.asarray(sums["main_moments"], float).reshape(n_assoc, 2, 2)
    cm = np.asarray(sums["control_moments"], float).reshape(n_assoc, 4, 4)

    def error(x):
        """Delta-method standard error of x (array (..., n_copies)); associations independent."""
        x = np.atleast_2d(x)
        var = np.zeros(x.shape[0])
        for j in range(n_assoc):
            cols = 1 + len(kernels) * j + np.arange(len(kernels))
            grad = (x[:, cols] - x[:, :1]) / steps[j]
            gm, gc = grad[:, :2], grad[:, 2:]
            cov_m = _sum_covariance([base[k][j] for k in MAIN_KERNELS], mm[j], base["main_valid"][j])
            cov_c = _sum_covariance([base[k][j] for k in CONTROL_KERNELS], cm[j], base["control_valid"][j],
                                    empty=np.sqrt(PASSAGE_VARIANCE))
            if share == 0.0:  # the surroundings' kernels do not enter
                gm, gc = gm[:, :1], gc[:, :2]
                cov_m, cov_c = cov_m[:1, :1], cov_c[:2, :2]
            var += np.einsum("ia,ab,ib->i", gm, cov_m, gm) + np.einsum("ia,ab,ib->i", gc, cov_c, gc)
        return np.sqrt(np.maximum(var, 0.0))  # rounding can leave a tiny negative sum

    def perror(x):
        """Error of a probability, never above sqrt(P (1 - P)), the largest standard deviation of a
        quantity in [0, 1] with that mean (Bhatia & Davis 2000, Am. Math. Mon. 107, 353)."""
        x = np.atleast_2d(x)
        return np.minimum(error(x), np.sqrt(np.clip(x[:, 0] * (1.0 - x[:, 0]), 0.0, 0.25)))

    lower = _chance(base["control"], base["control_wide"], base["control_valid"])[1] & (base["main"] > 0)
    return {"probability": p[:, 0], "probability_error": perror(p), "field_probability": float(p0[0]),
            "field_probability_error": float(perror(p0[None, :])[0]), "likelihood_ratio": lam[:, 0],
            "likelihood_ratio_error": error(lam), "likelihood_ratio_is_lower_limit": lower,
            "neighbourhood_probability": pn[:, 0], "neighbourhood_probability_error": perror(pn),
            "near_reached": near_ok}


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
