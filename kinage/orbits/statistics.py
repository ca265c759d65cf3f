"""Encounter statistics per association, the chance baseline, probabilities, ranking and verdict.

An encounter is a draw whose closest approach lies inside the integration
window (not at the present or at the far end), with d_min below
``factor x radius`` and tau below ``age + tolerance``.  The chance rate is the
encounter fraction of control draws whose proper-motion directions were turned
at random (speed kept); the ratio of the two is kept as a descriptive number
(Hoogerwerf et al. 2001, A&A 365, 49; Tetzlaff et al. 2010, MNRAS 402, 2369,
use randomised inputs for the same purpose).  Fractions and the ratio are
Monte Carlo estimates of fixed quantities: they converge as draws are added.

What ranks the associations is the posterior probability of birth in each
(:mod:`.probability`: a birth kernel averaged over the draws against the same
average over the control draws, with ``[trace] field_prior`` for a birth
outside every candidate).  An association is *favoured* when it has the
highest probability and that probability is at least
:data:`~kinage.orbits.probability.PROBABILITY_THRESHOLD`.  No binomial or KS
p-value is reported: treating the Monte Carlo draws of one star as
independent trials makes such p-values shrink with the number of draws.
"""

import numpy as np

from ..io.results import interval
from .common_origin import compare_common_origin
from .probability import (DEFAULT_FIELD_PRIOR, DEFAULT_NEIGHBOURHOOD_SCALE_PC, DEFAULT_NEIGHBOURHOOD_SHARE,
                          PROBABILITY_THRESHOLD, birth_kernel, kernel_sums, posterior_from_sums,
                          weighted_interval)

__all__ = ["encounter_mask", "summarise_association", "rank_associations", "verdict", "PROBABILITY_THRESHOLD",
           "MIN_EFFECTIVE", "with_n_effective"]

#: below this many effective draws an interval is quoted as a value "from N encounters", not as a 68% interval
#: (common practice, no source: the 16th and 84th percentiles of fewer than ~20 draws rest on 3 draws each)
MIN_EFFECTIVE = 20


def with_n_effective(iv):
    """An unweighted interval dict with ``n_effective`` (= its sample count ``n``)."""
    iv = dict(iv)
    iv["n_effective"] = float(iv.get("n") or 0)
    return iv


def encounter_mask(dmin_pc, tau_myr, edge, valid, radius_pc, age_myr, factor, tolerance_myr):
    """Boolean mask of encounters (see module docstring)."""
    return valid & ~edge & (dmin_pc < factor * radius_pc) & (tau_myr < age_myr + tolerance_myr)


def _yr(iv):
    """An interval in Myr as one in yr (sample counts such as ``n_effective`` stay counts)."""
    return {k: (v * 1e6 if isinstance(v, float) and not k.startswith("n") else v) for k, v in iv.items()}


def summarise_association(name, radius_pc, age_myr, dmin_pc, tau_myr, edge, valid, rv_kms, *, factor,
                          tolerance_myr, control=None, control_runs=0, distance_pc=None,
                          neighbourhood_scale_pc=DEFAULT_NEIGHBOURHOOD_SCALE_PC, sums=None):
    """Statistics of one association.

    Parameters
    ----------
    name : str
    radius_pc, age_myr : float
    dmin_pc, tau_myr : ndarray, pc and Myr (per star draw)
    edge, valid : ndarray of bool
    rv_kms : ndarray
        The star's heliocentric radial velocity of each draw, km/s.
    factor, tolerance_myr : float
        Encounter radius factor and age tolerance (Myr).
    control : tuple (dmin_pc, tau_myr, edge, valid) or None
        Control-draw results.
    control_runs : int
        Number of runs the control draws are split into (for the error of the chance rate).
    distance_pc : ndarray, optional
        The star's present distance of each draw, pc (for the distance implied by this birthplace).
    neighbourhood_scale_pc : float
        Extent of the association's surroundings, pc (``[trace] neighbourhood_scale``).
    sums : dict, optional
        The kernel sums of these star and control draws when already made (:func:`.probability.kernel_sums`
        of both, e.g. kept by the control rounds); made here otherwise.

    Returns
    -------
    dict
        JSON-ready summary; keys starting with ``_`` (encounter mask, birth
        kernels) are for :func:`rank_associations` and are removed before output.
    """
    enc = encounter_mask(dmin_pc, tau_myr, edge, valid, radius_pc, age_myr, factor, tolerance_myr)
    kern = birth_kernel(dmin_pc, tau_myr, edge, valid, radius_pc, age_myr, tolerance_myr)
    n_valid = int(valid.sum())
    k = int(enc.sum())
    frac = k / n_valid if n_valid else 0.0
    common = compare_common_origin(dmin_pc[valid])
    common.pop("ks_pvalue", None)  # shrinks with the number of draws; the KS distance itself converges
    out = {
        "name": name,
        "radius_pc": float(radius_pc),
        "age_myr": float(age_myr),
        "encounter_fraction": frac,
        "encounter_fraction_error": float(np.sqrt(frac * (1 - frac) / n_valid)) if n_valid else None,
        "n_encounters": k,
        "n_valid": n_valid,
        "age_yr": _yr(with_n_effective(interval(tau_myr[enc]))),
        "dmin_pc": interval(dmin_pc[valid]),
        "tau_all_yr": _yr(interval(tau_myr[valid & ~edge])),
        "required_radial_velocity_kms": _rv_range(rv_kms[enc]),
        "common_origin": common,
        "edge_fraction": float((edge & valid).sum() / n_valid) if n_valid else None,
        # what this birthplace implies: draws weighted by the birth kernel
        "radial_velocity_if_born_here_kms": weighted_interval(rv_kms, kern),
        "distance_if_born_here_pc": (weighted_interval(distance_pc, kern) if distance_pc is not None
                                     else weighted_interval([], [])),
        "age_if_born_here_yr": _yr(weighted_interval(tau_myr, kern)),
        "mean_birth_kernel": float(kern.sum() / n_valid) if n_valid else 0.0,
    }
    out["chance_fraction"] = None
    out["chance_fraction_error"] = None
    out["n_control"] = 0
    out["ratio"] = None
    out["ratio_is_lower_limit"] = False
    out["probability"] = None
    out["probability_error"] = None
    out["likelihood_ratio"] = None
    out["likelihood_ratio_error"] = None
    out["bayes_factor_is_lower_limit"] = False
    out["neighbourhood_probability"] = None
    out["neighbourhood_probability_error"] = None
    out["_sums"] = None
    if control is not None:
        cd, ct, ce, cv = control
        cenc = encounter_mask(cd, ct, ce, cv, radius_pc, age_myr, factor, tolerance_myr)
        # kernel sums and moments for the probabilities (memory O(1), not O(draws))
        out["_sums"] = sums if sums is not None else kernel_sums((dmin_pc, tau_myr, edge, valid), control,
                                                                 radius_pc, age_myr, tolerance_myr,
                                                                 neighbourhood_scale_pc)
        nc = int(cv.sum())
        kc = int(cenc.sum())
        out["n_control"] = nc
        if nc:
            chance = kc / nc
            out["chance_fraction"] = chance
            runs = [cenc[idx][cv[idx]].mean() for idx in np.array_split(np.arange(len(cd)), max(control_runs, 1))
                    if cv[idx].any()]
            out["chance_fraction_error"] = (float(np.std(runs, ddof=1) / np.sqrt(len(runs))) if len(runs) > 1
                                            else float(np.sqrt(max(chance * (1 - chance), 1.0 / nc) / nc)))
            floor = chance if kc > 0 else 0.5 / nc
            out["ratio"] = frac / floor
            out["ratio_is_lower_limit"] = kc == 0
    out["_mask"] = enc
    return out


def _rv_range(rv):
    iv = interval(rv)
    res = {"median": iv["median"], "lo68": iv["lo68"], "hi68": iv["hi68"], "lo95": iv["lo95"], "hi95": iv["hi95"]}
    res["min"] = float(np.min(rv)) if rv.size else None
    res["max"] = float(np.max(rv)) if rv.size else None
    res["n_effective"] = float(iv["n"])
    return res


def _assign_probabilities(summaries, field_prior, neighbourhood_share):
    """Set ``probability`` etc. on every summary; returns (field_probability, its error) or (None, None)."""
    if not summaries or any(s.get("_sums") is None for s in summaries):
        return None, None
    sums = {k: np.array([s["_sums"][k] for s in summaries]) for k in summaries[0]["_sums"]}
    res = posterior_from_sums(sums, field_prior, neighbourhood_share)
    for i, s in enumerate(summaries):
        for key in ("probability", "probability_error", "likelihood_ratio", "likelihood_ratio_error",
                    "neighbourhood_probability", "neighbourhood_probability_error"):
            s[key] = float(res[key][i])
        s["bayes_factor_is_lower_limit"] = bool(res["likelihood_ratio_is_lower_limit"][i])
    return res["field_probability"], res["field_probability_error"]


def rank_associations(summaries, field_prior=DEFAULT_FIELD_PRIOR, neighbourhood_share=DEFAULT_NEIGHBOURHOOD_SHARE,
                      neighbourhood_scale_pc=DEFAULT_NEIGHBOURHOOD_SCALE_PC):
    """Give every summary its probability, sort best first; sets ``rank`` and ``favoured``.

    Parameters
    ----------
    summaries : list of dict
        From :func:`summarise_association`.
    field_prior : float
        Prior probability of a birth outside all candidates (``[trace] field_prior``).
    neighbourhood_share : float
        Share of those births in the candidates' surroundings (``[trace] neighbourhood_share``).
    neighbourhood_scale_pc : float
        Extent of the surroundings the summaries were made with, pc (reported only).

    Returns
    -------
    ranked : list of dict
        By probability (then encounter fraction, then name); without control
        draws (no field alternative) by encounter fraction.
    favoured : str or None
        The top association when its probability is at least :data:`PROBABILITY_THRESHOLD`.
    field : dict
        ``field_probability``, ``field_probability_error`` (None without control draws),
        ``field_prior``, ``neighbourhood_share``, ``neighbourhood_scale_pc`` and ``probability_threshold``.
    """
    p0, p0_err = _assign_probabilities(summaries, field_prior, neighbourhood_share)
    for s in summaries:
        s.pop("_sums", None)

    def key(s):
        prob = s["probability"] if s["probability"] is not None else 0.0
        return (-prob, -s["encounter_fraction"], s["name"])

    ranked = sorted(summaries, key=key)
    for i, s in enumerate(ranked):
        s["rank"] = i + 1
        s["favoured"] = False
    fav = None
    if ranked and ranked[0]["probability"] is not None and ranked[0]["probability"] >= PROBABILITY_THRESHOLD:
        ranked[0]["favoured"] = True
        fav = ranked[0]["name"]
    field = {"field_probability": p0, "field_probability_error": p0_err, "field_prior": float(field_prior),
             "neighbourhood_share": float(neighbourhood_share), "neighbourhood_scale_pc": float(neighbourhood_scale_pc),
             "probability_threshold": PROBABILITY_THRESHOLD}
    return ranked, fav, field


def _age_text(iv):
    """An age interval (yr) rounded to its 68% interval, as the ages stage quotes it; from fewer than
    :data:`MIN_EFFECTIVE` effective draws the value alone, "from N encounters"."""
    from ..display.sentences import format_age, format_age_interval

    if iv.get("median") is None:
        return "not measured (no draw met the encounter criterion)"
    n = iv.get("n_effective", iv.get("n"))
    if n is not None and n < MIN_EFFECTIVE:
        return f"~{format_age(iv['median'], 2)} (from {_count(n)} encounter{'' if round(n) == 1 else 's'})"
    return format_age_interval(iv)


def _count(n):
    """An effective number of draws in words: whole numbers as such, others to two figures."""
    return f"{n:.0f}" if abs(n - round(n)) < 0.05 or n >= 10 else f"{n:.2g}"


def _prob_text(p, err):
    """A probability with the digits its Monte Carlo error supports (the one rounding rule, kinage._rounding)."""
    from .._rounding import value_error

    if p is None:
        return "n/a"
    if p > 0.999 and (err is None or err < 0.0005):
        return "> 0.999"
    if p < 0.001 and (err is None or err < 0.0005):
        return "< 0.001"
    if err is None or not err > 0:
        return f"{p:.2g}"
    return value_error(p, err)


def verdict(ranked, favoured, control_available=True, field=None):
    """One or two plain sentences, in probabilities, naming the favoured association or saying that none is."""
    if not ranked:
        return "No candidate associations were given, so no birth association can be favoured."
    best = ranked[0]
    field = field or {}
    p0 = field.get("field_probability")
    prior = field.get("field_prior", DEFAULT_FIELD_PRIOR)
    if not control_available or best["probability"] is None:
        return (f"No association is favoured: without control draws there is no field alternative and so no "
                f"probabilities; {best['name']} has the most encounters ({best['encounter_fraction']:.1%} of the "
                "draws).")
    field_text = (f"probability {_prob_text(p0, field.get('field_probability_error'))} that it was born outside "
                  f"the listed candidates (prior {prior:.2g})")
    near = best.get("neighbourhood_probability")
    if near is not None and near >= 0.05:
        field_text += (f", {_prob_text(near, best.get('neighbourhood_probability_error'))} of it for a birth near "
                       f"{best['name']} but outside it")
    limit = ""
    if best.get("bayes_factor_is_lower_limit"):
        limit = (f" Control draws passed {best['name']} by chance too rarely to measure the chance rate, so it is "
                 f"taken at its 84% upper limit and the Bayes factor (at least {best['likelihood_ratio']:.2g}) and "
                 "probability are lower limits.")
    if favoured is not None:
        return (f"{best['name']} is the favoured birth association: probability "
                f"{_prob_text(best['probability'], best['probability_error'])} that the star was born in it, "
                f"{field_text}; kinematic age {_age_text(best['age_yr'])}." + limit)
    if best["n_encounters"] == 0 and best["probability"] < 0.05:
        return (f"No association is favoured: no draw of the star came within the radius criterion of any "
                f"candidate inside its age; {field_text}.")
    return (f"No association is favoured: the most probable, {best['name']}, has probability "
            f"{_prob_text(best['probability'], best['probability_error'])}, below the {PROBABILITY_THRESHOLD:.2g} "
            f"threshold; {field_text}." + limit)
