"""Encounter statistics per association, the chance baseline, ranking and verdict.

An encounter is a draw whose closest approach lies inside the integration
window (not at the present or at the far end), with d_min below
``factor x radius`` and tau below ``age + tolerance``.  The chance rate is the
encounter fraction of control draws whose proper-motion directions were turned
at random (speed kept); the ratio of the two ranks the associations
(Hoogerwerf et al. 2001, A&A 365, 49; Tetzlaff et al. 2010, MNRAS 402, 2369,
use randomised inputs for the same purpose).  An association is *favoured*
when it has at least ``MIN_ENCOUNTERS`` encounters, its encounter fraction is
at least ``MIN_RATIO`` times the chance rate and a binomial test rejects the
chance rate at ``MAX_P_CHANCE`` (thresholds: common practice, no source).
"""

import numpy as np
from scipy import stats

from ..io.results import interval
from .common_origin import compare_common_origin

__all__ = ["encounter_mask", "summarise_association", "rank_associations", "verdict", "MIN_ENCOUNTERS",
           "MIN_RATIO", "MAX_P_CHANCE"]

MIN_ENCOUNTERS = 3
MIN_RATIO = 3.0
MAX_P_CHANCE = 0.01


def encounter_mask(dmin_pc, tau_myr, edge, valid, radius_pc, age_myr, factor, tolerance_myr):
    """Boolean mask of encounters (see module docstring)."""
    return valid & ~edge & (dmin_pc < factor * radius_pc) & (tau_myr < age_myr + tolerance_myr)


def _yr(iv):
    return {k: (v * 1e6 if isinstance(v, float) else v) for k, v in iv.items()}


def summarise_association(name, radius_pc, age_myr, dmin_pc, tau_myr, edge, valid, rv_kms, *, factor,
                          tolerance_myr, control=None, control_runs=0):
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

    Returns
    -------
    dict
        JSON-ready summary; ``_mask`` holds the encounter mask (removed before output).
    """
    enc = encounter_mask(dmin_pc, tau_myr, edge, valid, radius_pc, age_myr, factor, tolerance_myr)
    n_valid = int(valid.sum())
    k = int(enc.sum())
    frac = k / n_valid if n_valid else 0.0
    out = {
        "name": name,
        "radius_pc": float(radius_pc),
        "age_myr": float(age_myr),
        "encounter_fraction": frac,
        "n_encounters": k,
        "n_valid": n_valid,
        "age_yr": _yr(interval(tau_myr[enc])),
        "dmin_pc": interval(dmin_pc[valid]),
        "tau_all_yr": _yr(interval(tau_myr[valid & ~edge])),
        "required_radial_velocity_kms": _rv_range(rv_kms[enc]),
        "common_origin": compare_common_origin(dmin_pc[valid]),
        "edge_fraction": float((edge & valid).sum() / n_valid) if n_valid else None,
    }
    out["chance_fraction"] = None
    out["chance_fraction_error"] = None
    out["n_control"] = 0
    out["ratio"] = None
    out["ratio_is_lower_limit"] = False
    out["p_chance"] = None
    if control is not None:
        cd, ct, ce, cv = control
        cenc = encounter_mask(cd, ct, ce, cv, radius_pc, age_myr, factor, tolerance_myr)
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
            p_null = max(chance, 0.5 / nc)
            out["p_chance"] = float(stats.binom.sf(k - 1, n_valid, p_null)) if n_valid else None
    out["_mask"] = enc
    return out


def _rv_range(rv):
    iv = interval(rv)
    res = {"median": iv["median"], "lo68": iv["lo68"], "hi68": iv["hi68"], "lo95": iv["lo95"], "hi95": iv["hi95"]}
    res["min"] = float(np.min(rv)) if rv.size else None
    res["max"] = float(np.max(rv)) if rv.size else None
    return res


def _is_favoured(s):
    if s["n_encounters"] < MIN_ENCOUNTERS or s["ratio"] is None:
        return False
    return s["ratio"] >= MIN_RATIO and s["p_chance"] is not None and s["p_chance"] < MAX_P_CHANCE


def rank_associations(summaries):
    """Sort summaries best first (by ratio, then encounter fraction); sets ``rank`` and ``favoured``.

    Returns
    -------
    ranked : list of dict
    favoured : str or None
        Name of the top association when it passes the favoured test.
    """
    def key(s):
        ratio = s["ratio"] if s["ratio"] is not None else 0.0
        return (-(ratio if s["n_encounters"] > 0 else 0.0), -s["encounter_fraction"], s["name"])

    ranked = sorted(summaries, key=key)
    for i, s in enumerate(ranked):
        s["rank"] = i + 1
        s["favoured"] = False
    fav = None
    if ranked and _is_favoured(ranked[0]):
        ranked[0]["favoured"] = True
        fav = ranked[0]["name"]
    return ranked, fav


def _age_text(iv):
    m, lo, hi = iv["median"], iv["lo68"], iv["hi68"]
    if m is None:
        return "no age"
    if hi < 1e6:
        return f"{m / 1e3:.0f} kyr (68%: {lo / 1e3:.0f}-{hi / 1e3:.0f} kyr)"
    return f"{m / 1e6:.2f} Myr (68%: {lo / 1e6:.2f}-{hi / 1e6:.2f} Myr)"


def verdict(ranked, favoured, control_available=True):
    """One or two plain sentences naming the favoured association, or saying that none is."""
    if not ranked:
        return "No candidate associations were given, so no birth association can be favoured."
    best = ranked[0]
    if favoured is not None:
        s = best
        chance = (f"{s['chance_fraction']:.2%}" if s["chance_fraction"] else
                  f"less than {0.5 / max(s['n_control'], 1):.2%}")
        return (f"{s['name']} is the favoured birth association: {s['encounter_fraction']:.1%} of the draws pass "
                f"within its radius criterion, against {chance} of randomised control draws (ratio "
                f"{'>' if s['ratio_is_lower_limit'] else ''}{s['ratio']:.1f}); kinematic age {_age_text(s['age_yr'])}.")
    if best["n_encounters"] == 0:
        return ("No association is favoured: no draw of the star came within the radius criterion of any "
                "candidate association inside its age.")
    if not control_available:
        return (f"No association is favoured: without control runs there is no chance baseline; {best['name']} "
                f"has the most encounters ({best['encounter_fraction']:.1%}).")
    return (f"No association is favoured: the best candidate, {best['name']}, has an encounter fraction of "
            f"{best['encounter_fraction']:.1%} against a chance rate of {best['chance_fraction']:.1%}, which is "
            "not a significant excess.")
