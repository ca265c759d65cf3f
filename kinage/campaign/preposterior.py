"""Preposterior analysis: the birthplace probabilities a timing campaign may leave.

Today's trace draws theta_i (position offsets, proper motion, true parallax,
distance and radial velocity) sample p(theta | D0) under the field model, and
kinage's probabilities are exact functions of kernel averages over them
(:mod:`kinage.orbits.probability`): Lambda_j(D) = E[K_j | D] / c_j with the
chance rate c_j from the control draws.  A campaign measures y, the five
astrometric parameters, with the forecast covariance C (Fisher; position
offsets in mas).  After it,

    E[K_j | D0, y] = sum_i w_i K_ij / sum_i w_i,   w_i = N(y; theta_i, C),

the importance-sampling estimate with today's draws as proposal (Owen 2013,
Monte Carlo theory, methods and examples, ch. 9); no orbit is integrated
again.  The chance rates c_j are recomputed the same way: a control draw is
star draw (i mod n) with its direction of motion turned at random, so its
direction does not depend on the measurement but its speed, distance and
position do; a trace made after the campaign would turn the updated draws.
Control draw i therefore takes star draw (i mod n)'s weight, computed with
the measurement's covariance inflated just enough that at least
:data:`CONTROL_SHARE` of the draws stay effective (the chance passages are
rare: the exact weights would leave a handful of them).  Kept fixed
(``control="fixed"``) the chance rates make the reweighted probabilities a
fixed Bayesian model in which conservation below is exact; reweighted they
follow the measured speed and distance, as a new trace would.  Both are tested.

Outcomes (preposterior analysis, Raiffa & Schlaifer 1961, Applied
Statistical Decision Theory).  y is drawn from today's predictive
distribution p(y | D0) = integral N(y; theta, C) p(theta | D0) dtheta, where
p(theta | D0) is the posterior mixed over all hypotheses: under H_j the
state is the field posterior times K_j / E[K_j].  So the true state is today's
draw i picked with probability proportional to

    u_i = P_unrelated + sum_j P_j K_ij / <K_j> + sum_j P_near,j Kn_ij / <Kn_j>,

and with this choice the mean over outcomes of every updated probability
equals today's (conservation of expected belief, exact for the reweighted
estimate up to the sampling of outcomes).  Picking the true state uniformly
from the draws would instead favour the field.

Where the weights collapse (effective sample size (sum w)^2 / sum w^2 below
:data:`ESS_FLOOR`, Owen 2013 eq. 9.13), fresh draws come from the updated
posterior: today's astrometry combined with y by inverse-variance weighting
(:meth:`~kinage.astrometry.AstrometricSolution.combine`, as a fit is combined
with ``[star]`` for tracing), with the trace's distance and velocity priors;
they are integrated in one batch for all such outcomes.

Units: mas, mas/yr, pc, Myr inside; yr for reported age widths.
"""

from dataclasses import dataclass, field

import numpy as np

from ..astrometry import AstrometricSolution
from ..errors import InputError
from .kernels import (age_width, association_kernels, control_kernels, control_totals, draw_parameters,
                      probabilities_from_kernels)

__all__ = ["TodayState", "OutcomeSet", "today_state", "simulate_outcomes", "ESS_FLOOR", "FRESH_DRAWS", "DECISIVE",
           "FRESH_MIN", "FRESH_BUDGET",
           "CONTROL_SHARE"]

#: below this effective sample size an outcome's probabilities come from fresh draws (common practice, no
#: source: a few tens of effective draws keep a kernel average to ~15%)
ESS_FLOOR = 50.0
#: the chance rates' weights keep at least this share of the draws effective (common practice, no source:
#: the chance passages are rare, so fewer effective draws would leave a handful of them; see :func:`_tempered`)
CONTROL_SHARE = 0.2
#: fresh draws per outcome that needs them (at most) ...
FRESH_DRAWS = 200
#: ... and at least, when the fresh draws of all outcomes together would exceed the budget
FRESH_MIN = 50
#: budget of fresh draws for all outcomes together, in units of the trace's star draws (common practice, no
#: source: after a collapse of the weights the updated posterior is much narrower than today's, so its kernel
#: averages need fewer draws; this keeps a precise campaign's forecast within a few traces' time)
FRESH_BUDGET = 8.0
#: a hypothesis "settles" the birthplace when its probability reaches this (the decisive-probability definition of the forecast's JSON)
DECISIVE = 0.9


@dataclass
class TodayState:
    """What the preposterior needs of today's trace.

    Attributes
    ----------
    names : list of str
        Associations in the trace's table order; the hypotheses are these and "field".
    theta : ndarray, shape (n, 5)
        Each draw's ra offset (mas, along ra cos dec), dec offset (mas), proper motion (mas/yr), true
        parallax (mas), relative to ``solution``'s reference position.
    kernel, kernel_near, valid : ndarray, shape (N, n)
        Birth kernels (width 1 and of the surroundings) and usable-draw flags.
    control : dict
        Control-draw kernel totals, arrays (N,) under the control keys of ``SUM_KEYS``.
    control_kernels : dict
        The same per control draw, arrays (N, n_control) (float32), for reweighting.
    control_map : ndarray of int (n_control,)
        The star draw each control draw was turned from (i mod n).
    p_now : ndarray, shape (N + 1,)
        Today's probabilities (associations, then the field).
    predictive : ndarray, shape (n,)
        Probabilities of picking each draw as the true state (see module docstring).
    ref : int or None
        Association whose kinematic age is followed (favoured, else most probable today).
    tau_ref_myr, enc_ref : ndarray (n,)
        Its closest-approach times and encounter flags.
    age_width_now_yr : float or None
        Width of its 68% kinematic-age interval today.
    """

    names: list
    theta: np.ndarray
    kernel: np.ndarray
    kernel_near: np.ndarray
    valid: np.ndarray
    control: dict
    control_kernels: dict
    control_map: np.ndarray
    field_prior: float
    share: float
    p_now: np.ndarray
    p_near_now: np.ndarray
    predictive: np.ndarray
    ref: int | None
    tau_ref_myr: np.ndarray
    enc_ref: np.ndarray
    age_width_now_yr: float | None
    solution: AstrometricSolution
    trace_result: object = field(repr=False, default=None)
    scenario: object = field(repr=False, default=None)

    @property
    def n(self):
        return self.theta.shape[0]


def today_state(trace_result, solution, scenario=None):
    """Collect today's draws, kernels and probabilities from a finished trace.

    Parameters
    ----------
    trace_result : TraceResult
        Made with control draws (``[trace] control_runs`` > 0).
    solution : AstrometricSolution
        The astrometry the trace used.
    scenario : Scenario, optional
        Kept for fresh draws.

    Returns
    -------
    TodayState
    """
    data = trace_result.data
    if data.get("control") is None:
        raise InputError("[trace] control_runs", "a birthplace forecast needs probabilities, hence control draws "
                         "(control_runs > 0)")
    cfg, adraws, afailed, main = data["cfg"], data["adraws"], data["association_failed"], data["main"]
    na = adraws.n_assoc
    per = [association_kernels(adraws, afailed, main, cfg, j) for j in range(na)]
    k1 = np.array([p[0] for p in per])
    kn = np.array([p[1] for p in per])
    valid = np.array([p[2] for p in per], float)
    ctrl = control_totals(trace_result, cfg)
    ck = control_kernels(trace_result, cfg)
    cmap = np.arange(ck["control"].shape[1]) % k1.shape[1]
    p_now, pn_now = probabilities_from_kernels(ctrl, cfg["field_prior"], cfg["neighbourhood_share"],
                                               k1.sum(1), valid.sum(1), kn.sum(1), kn.max(1) if kn.size else None)
    # predictive mixture over the hypotheses (module docstring)
    nv = np.maximum(valid.sum(1), 1.0)
    mean1, meann = k1.sum(1) / nv, kn.sum(1) / nv
    u = np.full(k1.shape[1], p_now[-1] - pn_now.sum())
    for j in range(na):
        if mean1[j] > 0:
            u += p_now[j] * k1[j] / mean1[j]
        if meann[j] > 0:
            u += pn_now[j] * kn[j] / meann[j]
    u = np.clip(u, 0.0, None)
    u /= u.sum()
    best = trace_result.best()
    ref = None if best is None else trace_result.data["index"][best["name"]]
    iv = best.get("age_yr", {}) if best else {}
    width_now = (iv["hi68"] - iv["lo68"]) if iv.get("hi68") is not None and iv.get("lo68") is not None else None
    tau_ref = per[ref][3] if ref is not None else np.zeros(k1.shape[1])
    enc_ref = per[ref][4] if ref is not None else np.zeros(k1.shape[1], bool)
    return TodayState(list(adraws.names), draw_parameters(data["draws"], solution), k1, kn, valid, ctrl, ck, cmap,
                      cfg["field_prior"], cfg["neighbourhood_share"], p_now, pn_now, u, ref, tau_ref, enc_ref,
                      width_now, solution, trace_result, scenario)


@dataclass
class OutcomeSet:
    """Simulated outcomes of one campaign (one covariance).

    Attributes
    ----------
    probabilities : ndarray, shape (n_outcomes, N + 1)
        After the campaign: each association, then the field.
    method : list of str
        'reweight' or 'fresh' per outcome.
    ess : ndarray
        Effective sample size of each outcome's weights (Kish; Owen 2013, ch. 9).
    age_width_yr : ndarray
        68% width of the followed association's kinematic age after each outcome (NaN: no encounter).
    truth : ndarray of int
        Index of the draw taken as the true state.
    measured : ndarray, shape (n_outcomes, 5)
        Simulated measurements (NaN where the campaign does not measure the parameter).
    covariance : ndarray (5, 5)
        Campaign covariance in today's parametrisation.
    fresh_draws : ndarray of int
        Fresh draws each outcome used (0: reweighted).
    """

    probabilities: np.ndarray
    method: list
    ess: np.ndarray
    age_width_yr: np.ndarray
    truth: np.ndarray
    measured: np.ndarray
    covariance: np.ndarray
    fresh_draws: np.ndarray = None

    def __post_init__(self):
        if self.fresh_draws is None:
            self.fresh_draws = np.zeros(len(self.method), int)


def _whitener(cov):
    """(measured index, whitening matrix W with W^T C W = I, square-root factor S with S S^T = C)."""
    cov = np.asarray(cov, float)
    m = np.flatnonzero(np.isfinite(np.diag(cov)) & (np.nan_to_num(np.diag(cov)) > 0))
    if m.size == 0:
        raise InputError("[campaign]", "the campaign's forecast measures none of the five astrometric parameters")
    c = cov[np.ix_(m, m)]
    c = 0.5 * (c + c.T)
    lam, vec = np.linalg.eigh(c)
    keep = lam > lam.max() * 1e-14
    return m, vec[:, keep] / np.sqrt(lam[keep]), vec[:, keep] * np.sqrt(lam[keep])


def _weights(theta_w, y_w):
    """Normalised likelihood weights (rows: outcomes), from whitened draws and measurements."""
    chi2 = (np.sum(theta_w**2, axis=1)[None, :] - 2.0 * y_w @ theta_w.T)  # |y|^2 is constant per row
    logw = -0.5 * chi2
    logw -= logw.max(axis=1, keepdims=True)
    w = np.exp(logw)
    return w / w.sum(axis=1, keepdims=True)


def _tempered(theta_w, y_w, floor, w):
    """Weights of the same measurement with its covariance inflated (x 1 .. 1e8) until the ESS reaches ``floor``.

    For the chance rates: they are averages over rare chance passages of the control draws and depend on the
    star's speed and distance only smoothly, so weights from a less precise measurement follow the measured
    speed and distance without resting on the few control draws of a handful of star draws.
    """
    if 1.0 / np.sum(w**2) >= floor:  # the exact weights (``w``) are spread enough
        return w
    for scale in np.geomspace(2.0, 1e8, 27):
        w = _weights(theta_w / np.sqrt(scale), y_w / np.sqrt(scale))[0]
        if 1.0 / np.sum(w**2) >= floor:
            return w
    return np.full(theta_w.shape[0], 1.0 / theta_w.shape[0])


def _control_sums(state, w, control):
    """Control totals for star-draw weights ``w`` (normalised to sum 1): fixed, or each control draw weighted
    by the weight of the star draw it was turned from."""
    if control == "fixed":
        return state.control
    wc = (w * state.n)[state.control_map]
    return {k: v @ wc for k, v in state.control_kernels.items()}


def simulate_outcomes(state, covariances, n_outcomes, rng, *, ess_floor=ESS_FLOOR, fresh_draws=FRESH_DRAWS,
                      allow_fresh=True, control="reweight", fresh_budget=None):
    """Simulate outcomes of one or more campaigns and the probabilities each leaves.

    Parameters
    ----------
    state : TodayState
    covariances : list of ndarray (5, 5)
        Campaign covariances in today's parametrisation (mas, mas/yr; see
        :func:`kinage.campaign.sweep.to_today_epoch`).
    n_outcomes : int or list of int
        Outcomes per campaign.
    rng : numpy.random.Generator | int | None
    ess_floor : float
        Below this effective sample size an outcome uses fresh draws.
    fresh_draws : int or list of int
        Draws per such outcome (one number per campaign, or the same for all).
    allow_fresh : bool
        False keeps every outcome on the reweighted draws (tests of the reweighting).
    control : {'reweight', 'fixed'}
        Chance rates from the reweighted control draws (what a new trace gives), or today's unchanged.
    fresh_budget : float, optional
        Most fresh draws in all, in units of today's draws; each outcome's share scaled down to fit (not
        below :data:`FRESH_MIN`).  None: no limit.

    Returns
    -------
    list of OutcomeSet
    """
    if control not in ("reweight", "fixed"):
        raise InputError("control", f"expected 'reweight' or 'fixed' (got {control!r})")
    rng = np.random.default_rng(rng)
    if np.isscalar(n_outcomes):
        n_outcomes = [int(n_outcomes)] * len(covariances)
    if np.isscalar(fresh_draws):
        fresh_draws = [int(fresh_draws)] * len(covariances)
    sets, pending = [], []
    vw = state.valid
    for c_idx, (cov, n_out) in enumerate(zip(covariances, n_outcomes)):
        m, wmat, smat = _whitener(cov)
        truth = rng.choice(state.n, size=n_out, p=state.predictive)
        theta_m = state.theta[:, m]
        y = theta_m[truth] + rng.standard_normal((n_out, smat.shape[1])) @ smat.T
        theta_w, y_w = theta_m @ wmat, y @ wmat
        ess = np.empty(n_out)
        probs = np.full((n_out, len(state.names) + 1), np.nan)
        widths = np.full(n_out, np.nan)
        method = ["reweight"] * n_out
        control_floor = max(ess_floor, CONTROL_SHARE * state.n)
        for o in range(n_out):  # one outcome at a time: memory O(draws), whatever the number of outcomes
            w = _weights(theta_w, y_w[o:o + 1])[0]
            ess[o] = 1.0 / np.sum(w**2)
            wt = w if control == "fixed" else _tempered(theta_w, y_w[o:o + 1], control_floor, w)
            if allow_fresh and ess[o] < ess_floor:
                method[o] = "fresh"
                pending.append((c_idx, o, _control_sums(state, wt, control), int(fresh_draws[c_idx])))
                continue
            wo = w * state.n  # weights summing to the number of draws (the trace's normalisation)
            probs[o], _ = probabilities_from_kernels(_control_sums(state, wt, control), state.field_prior,
                                                     state.share, state.kernel @ wo, vw @ wo,
                                                     state.kernel_near @ wo,
                                                     np.where(wo > 0, state.kernel_near, 0.0).max(axis=1))
            if state.ref is not None and state.enc_ref.any():
                widths[o] = age_width(state.tau_ref_myr[state.enc_ref], wo[state.enc_ref])
        meas = np.full((n_out, 5), np.nan)
        meas[:, m] = y
        full = np.full((5, 5), np.nan)
        full[np.ix_(m, m)] = np.asarray(cov, float)[np.ix_(m, m)]
        sets.append(OutcomeSet(probs, method, ess, widths, truth, meas, full))
    if pending and fresh_budget is not None:
        total = sum(p[3] for p in pending)
        scale = min(1.0, fresh_budget * state.n / total)
        pending = [(c, o, cs, max(FRESH_MIN, int(round(nf * scale)))) for c, o, cs, nf in pending]
    for c_idx, o, _, nf in pending:
        sets[c_idx].fresh_draws[o] = nf
    if pending:
        from .fresh import fresh_outcomes

        fresh_outcomes(state, sets, pending, rng)
    return sets
