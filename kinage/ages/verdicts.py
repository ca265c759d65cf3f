"""Plain-language verdicts comparing two ages.

Two ages agree "within errors" when their medians differ by less than two
combined standard deviations in log age, the deviation of each taken from its
68 % interval in ln(age) on the side facing the other age (half the width for
a log-symmetric interval; a Gaussian-in-log convention with the usual
treatment of asymmetric errors: common practice, no source).  An interval open
above (``unbounded_above``, e.g. a characteristic age when Pdot is consistent
with zero) never excludes an older age.  Otherwise the verdict states which is
younger, by what factor, and what that implies.  Numbers are rounded to the
precision of their 68 % intervals by the Particle Data Group rule (at most
three significant figures).
"""

import numpy as np

from ..display.sentences import format_age, format_age_interval, format_interval
from .cooling_verdicts import cooling_pair_verdict
from .intervals import compare_intervals, format_factor, log_sigma  # noqa: F401 (re-exported)

__all__ = ["ages_verdict", "format_age", "format_interval", "format_age_interval", "format_factor", "log_sigma",
           "compare_intervals", "pair_verdict", "age_verdicts", "cooling_explanations", "cooling_caveat",
           "PLANE_CROSSING_SOURCE", "PLANE_CROSSING_NAME"]


def pair_verdict(pair, name_a, a, name_b, b, *, if_younger="", if_older="", missing=None):
    """One verdict record ``{pair, text, consistent, ratio, z}``.

    Parameters
    ----------
    pair : str
        Key such as ``"kinematic-characteristic"``.
    name_a, name_b : str
        Names used in the text ("kinematic age", ...).
    a, b : dict or None
        Intervals in yr (None: not available).
    if_younger, if_older : str
        What it implies when ``a`` is younger / older than ``b`` beyond errors.
    missing : str, optional
        Why one of the ages is unavailable (used when a or b is None).
    """
    if a is None or b is None or a.get("median") is None or b.get("median") is None:
        why = missing or f"{name_a if (a is None or a.get('median') is None) else name_b} not available"
        return {"pair": pair, "text": f"No comparison of {name_a} and {name_b}: {why}.",
                "consistent": None, "ratio": None, "z": None}
    c = compare_intervals(a, b)
    fa, fb = format_age_interval(a, inner=True), format_age_interval(b, inner=True)
    if c["consistent"]:
        apart = f", {c['z']:.1f} sigma apart" if np.isfinite(c["z"]) and c["z"] > 0 else ""
        text = (f"The {name_a} ({fa}) and the {name_b} ({fb}) are consistent within errors "
                f"(ratio {format_factor(c['ratio'])}{apart}).")
    elif c["ratio"] < 1:
        text = f"The {name_a} ({fa}) is younger than the {name_b} ({fb}) by a factor {format_factor(1 / c['ratio'])}"
        text += f", implying {if_younger}." if if_younger else "."
    else:
        text = f"The {name_a} ({fa}) is older than the {name_b} ({fb}) by a factor {format_factor(c['ratio'])}"
        text += f", implying {if_older}." if if_older else "."
    return {"pair": pair, "text": text, **c}


def cooling_explanations(s):
    """What could make a star colder / hotter than the computed curves, leaving out what they already span.

    Parameters
    ----------
    s : AgesSettings
        ``envelopes``, ``masses``, ``cooling_model``.

    Returns
    -------
    (str, str)
        Text appended after "colder than ..." and "hotter than ...": never an
        envelope, mass or process the computed range already contains.
    """
    from ..params import get

    envs = {str(e).lower() for e in (getattr(s, "envelopes", None) or ())}
    masses = [float(m) for m in (getattr(s, "masses", None) or ())]
    try:
        model = get("cooling_model", getattr(s, "cooling_model", None) or "modified-urca").values
    except Exception:  # noqa: BLE001 - an unknown model was reported by the ages stage already
        model = {}
    colder, hotter = [], []
    du = float(model.get("direct_urca_erg_s", 0.0) or 0.0) > 0
    if not du:
        colder.append("fast neutrino emission (direct Urca in a heavy star), which this model leaves out")
    elif masses and max(masses) < float(model.get("direct_urca_threshold_msun", 0.0)):
        colder.append(f"a mass above the direct-Urca threshold "
                      f"({float(model['direct_urca_threshold_msun']):g} M_sun), heavier than the masses considered")
    if "iron" not in envs:
        colder.append("a heavy-element (iron) envelope")
    hotter.append("heating (e.g. by magnetic-field decay), which these curves do not include")
    if not ({"accreted", "light"} & envs or any(e.startswith("light") for e in envs)):
        hotter.append("a light-element (accreted) envelope")
    hotter.append("a kinematic age that is too long (a different birthplace)")
    colder.append("a kinematic age that is too short (a different birthplace)")
    fmt = lambda xs: (" (possible causes not already in the computed range: " + "; ".join(xs) + ")") if xs else ""
    return fmt(colder), fmt(hotter)


def _pm(value, error, unit=""):
    """'0.04 ± 0.01 s' (error to two significant figures), or the value alone."""
    u = f" {unit}" if unit else ""
    return f"{value:g} ± {error:.2g}{u}" if error else f"{value:g}{u}"


def _young_causes(values, unc, s):
    """What a kinematic age below the characteristic age implies: decay timescale and initial period."""
    out = []
    tau_d, p0 = values.get("decay_timescale_yr"), values.get("implied_initial_period_s")
    if tau_d:
        out.append(f"exponential field decay with tau_d ~ {format_age_interval(unc.get('decay_timescale_yr'), tau_d)}")
    if p0:
        iv = unc.get("implied_initial_period_s") or {}
        out.append(f"{'or ' if out else ''}an initial period P0 ~ "
                   f"{format_interval(p0, iv.get('lo68'), iv.get('hi68'), 's')} for n = {s.braking_index:g}")
    return " ".join(out)


def _old_causes(values, unc, s):
    """What a kinematic age above the characteristic age implies."""
    n, tmax = s.braking_index, format_age(values.get("max_spin_down_age_yr"))
    p0 = values.get("implied_initial_period_s")
    if p0:
        iv = unc.get("implied_initial_period_s") or {}
        return (f"spin-down with the assumed braking index n = {n:g} from an initial period P0 ~ "
                f"{format_interval(p0, iv.get('lo68'), iv.get('hi68'), 's')}, as the kinematic age is below the "
                f"maximum spin-down age 2 tau_c/(n-1) = {tmax} for that n (no field decay needed)")
    n_req = values.get("braking_index_for_kinematic_age")
    need = f"a braking index below {n_req:.2g} (n = 1 + 2 tau_c / t) or " if n_req else ""
    return (f"that no spin-down from any initial period reaches it with n = {n:g} (maximum spin-down age "
            f"2 tau_c/(n-1) = {tmax}) and no decaying field does (decay makes a star look older, not younger): "
            f"it needs {need}a growing field, unless the kinematic age is too long (a different birthplace)")


def _lower_limit_verdict(pair, name_a, a, lower, why, *, if_below, missing):
    """Verdict of an age against a characteristic age bounded only from below (Pdot consistent with zero)."""
    limit = f"the characteristic age, which {why} bounds only from below (tau_c > {format_age(lower)}, 2 sigma)"
    if a is None or a.get("median") is None:
        return {"pair": pair, "text": f"No comparison of {name_a} and characteristic age: {missing}.",
                "consistent": None, "ratio": None, "z": None}
    c = compare_intervals(a, {"median": lower, "unbounded_above": True})
    fa = format_age_interval(a, inner=True)
    if c["consistent"]:
        text = f"The {name_a} ({fa}) is consistent with {limit}."
    else:
        text = (f"The {name_a} ({fa}) is younger by a factor of at least {format_factor(1 / c['ratio'])} than "
                f"{limit}, implying {if_below}.")
    return {"pair": pair, "text": text, **c}


def cooling_caveat(cool, threshold=0.1):
    """A sentence when many temperature (luminosity) draws fall outside the curves, else ''.

    Draws hotter than every curve at its first time are younger than the model
    covers and are left out, so the quoted cooling age is then an upper bound;
    draws colder than the curves at their last time make it a lower bound.
    """
    if cool is None or not cool.per_model:
        return ""
    hot = float(np.mean([r.get("too_hot", 0.0) for r in cool.per_model]))
    cold = float(np.mean([r.get("too_cold", 0.0) for r in cool.per_model]))
    what = cool.quantity
    hotter, colder = ("hotter", "colder") if what == "temperature" else ("brighter", "fainter")
    if hot > threshold:
        return (f" On average {100 * hot:.0f}% of the {what} draws per envelope and mass are {hotter} than the curves "
                "at their start and are left out, so the cooling age is an upper bound.")
    if cold > threshold:
        return (f" On average {100 * cold:.0f}% of the {what} draws per envelope and mass are {colder} than the curves "
                "reach and are left out, so the cooling age is a lower bound.")
    return ""


#: ``kinematic_age_source`` of a plane-crossing time standing in for a kinematic age
PLANE_CROSSING_SOURCE = "plane-crossing"
#: how a plane-crossing time is named wherever it is compared with other ages
PLANE_CROSSING_NAME = ("time since the Galactic-plane crossing (an age only if the star was born in the "
                       "mid-plane)")


def age_verdicts(values, unc, kin, cool, s, kin_name="kinematic age"):
    """Verdicts for the pairs kinematic-characteristic, kinematic-spin_down (when P0 is given),
    kinematic-cooling and characteristic-cooling.

    Parameters
    ----------
    values : dict
        Nominal values of the ages stage (``characteristic_age_yr``,
        ``spin_down_age_yr``, ``max_spin_down_age_yr``, ``implied_initial_period_s``,
        ``decay_timescale_yr``, ``braking_index_for_kinematic_age``, ``spinning_up``,
        ``pdot_note``, ``characteristic_age_lower_limit_yr``, ``period_s``).
    unc : dict
        Monte Carlo intervals (``characteristic_age_yr``, ``spin_down_age_yr``,
        ``decay_timescale_yr``, ``implied_initial_period_s``), yr and s.
    kin : dict or None
        Kinematic-age interval, yr.
    cool : CoolingAgeResult or None
    s : AgesSettings
    kin_name : str
        What ``kin`` is called in the text (:data:`PLANE_CROSSING_NAME` for a plane-crossing time).

    Returns
    -------
    list of dict
    """
    tc_iv = unc.get("characteristic_age_yr")
    if tc_iv and values.get("characteristic_age_yr") is not None:
        # quote the nominal P/(2 Pdot) (the number in the JSON and summary); the spread stays Monte Carlo
        tc_iv = dict(tc_iv, median=values["characteristic_age_yr"])
    lower = values.get("characteristic_age_lower_limit_yr")
    note = values.get("pdot_note")
    out = []
    miss = note if values.get("spinning_up") and lower is None else None
    if lower is not None:
        # Pdot consistent with zero: only tau_c > lower is known, so tau_d has an upper and P0 a lower bound
        from .field_decay import exponential_decay_timescale

        below = "field decay or an initial period close to today's period"
        if kin is not None and kin.get("median") is not None and kin["median"] < lower:
            t = kin["median"]
            td = float(exponential_decay_timescale(t, lower))
            nm1 = s.braking_index - 1.0
            p0 = values.get("period_s", 0.0) * (1.0 - nm1 * t / (2.0 * lower)) ** (1.0 / nm1)
            below = (f"exponential field decay with tau_d below {format_age(td)} or an initial period above "
                     f"{p0:.3g} s for n = {s.braking_index:g}")
        out.append(_lower_limit_verdict("kinematic-characteristic", kin_name, kin, lower, "a Pdot consistent "
                                        "with zero", if_below=below, missing=f"{kin_name} not available"))
    else:
        out.append(pair_verdict("kinematic-characteristic", kin_name, kin, "characteristic age", tc_iv,
                                if_younger=_young_causes(values, unc, s), if_older=_old_causes(values, unc, s),
                                missing=miss))
    if s.initial_period_s is not None:
        sd_iv = unc.get("spin_down_age_yr")
        if sd_iv and values.get("spin_down_age_yr") is not None:
            sd_iv = dict(sd_iv, median=values["spin_down_age_yr"])  # the nominal value, as for tau_c
        # t = P/((n-1) Pdot) [1 - (P0/P)^(n-1)] falls as P0 or n grows (Lorimer & Kramer 2005, eq. 3.13)
        out.append(pair_verdict("kinematic-spin_down", kin_name, kin,
                                f"spin-down age for n = {_pm(s.braking_index, s.braking_index_error)}, "
                                f"P0 = {_pm(s.initial_period_s, s.initial_period_error_s, 's')}", sd_iv,
                                if_younger="a longer P0 or a higher braking index than assumed (or field decay)",
                                if_older="a shorter P0 or a lower braking index than assumed",
                                missing=miss or ("the spin-down age is not constrained: " + note if lower else None)))
    cool_iv = cool.pooled if cool is not None else None
    cmiss = None if cool is not None else "no temperature or luminosity in [star]"
    colder, hotter = cooling_explanations(s)
    # each envelope on its own: the envelopes differ by more than the errors (cooling_verdicts)
    v = cooling_pair_verdict("kinematic-cooling", kin_name, kin, cool,
                             if_younger="the star is colder than the cooling curves predict at that age" + colder,
                             if_older="the star is hotter than the cooling curves predict at that age" + hotter,
                             missing=cmiss)
    caveat = cooling_caveat(cool)
    if v["consistent"] is not None and caveat:
        v["text"] += caveat
    if cool is not None and kin is not None and kin.get("median") is not None:
        fits = [f"{r['envelope']} {r['mass_msun']:g} Msun" for r in cool.per_model
                if r["median"] is not None and compare_intervals(kin, r)["consistent"]]
        v["favoured_models"] = fits
        v["short"] = v["text"]
        if fits:
            v["text"] += f" Envelopes and masses consistent with the kinematic age: {', '.join(fits)}."
        elif v["consistent"]:
            v["text"] += (" No single mass considered matches it: the agreement comes from the spread between the "
                          "masses.")
    out.append(v)
    if lower is not None:
        v = _lower_limit_verdict("characteristic-cooling", "cooling age", cool_iv, lower, "a Pdot consistent with zero",
                                 if_below="that the star is hotter than expected at its characteristic age",
                                 missing=cmiss or "no cooling age")
        if v["ratio"]:
            v["ratio"] = 1.0 / v["ratio"]  # this pair's ratio is tau_c / cooling age (here its lower bound)
        out.append(v)
    else:
        out.append(cooling_pair_verdict("characteristic-cooling", "characteristic age", tc_iv, cool,
                                        if_younger="the star is colder than expected at its characteristic age",
                                        if_older="the star is hotter than expected at its characteristic age, as "
                                                 "field decay (spin-down age too long) or heating would give",
                                        missing=miss or cmiss))
    if out[-1]["consistent"] is not None and caveat:
        out[-1]["text"] += caveat
    return out


def _relation(v, name, age_text):
    """'is 2.5× below the characteristic age (1.90 Myr)' from a pair verdict, or None without a comparison."""
    if not v or v.get("consistent") is None or not v.get("ratio"):
        return None
    if v["consistent"]:
        return f"agrees within errors with the {name} ({age_text})"
    r = v["ratio"]
    return (f"is {format_factor(1 / r)}× below the {name} ({age_text})" if r < 1 else
            f"is {format_factor(r)}× above the {name} ({age_text})")


def _cooling_relation(v, age_yr, envelopes, model):
    """The cooling clause of the verdict line, envelope by envelope when there are several.

    The envelopes' cooling ages differ by more than their errors, so one pooled age would be predicted by
    none of them: the line names the envelopes that reconcile the ages, or gives the range of factors.
    """
    envs = [e for e in envelopes or [] if e.get("median")]
    if len(envs) < 2 or not v or v.get("consistent") is None or not age_yr:
        return None
    ok = v.get("reconciling_envelopes") or []
    if ok:
        names = " and ".join(str(n) for n in ok)
        return f"agrees with the cooling age for the {names} envelope{'s' if len(ok) > 1 else ''}"
    meds = [e["median"] for e in envs]
    lo_t, hi_t = format_age(min(meds), 2), format_age(max(meds), 2)
    if lo_t.split()[-1] == hi_t.split()[-1]:
        lo_t = lo_t.split()[0]  # '92-160 kyr'
    ratios = [age_yr / m for m in meds]
    span = f"cooling ages ({lo_t}-{hi_t} by envelope{', ' + model if model else ''})"
    if min(ratios) > 1:
        return f"is {format_factor(min(ratios))}-{format_factor(max(ratios))}× above the {span}"
    if max(ratios) < 1:
        return f"is {format_factor(1 / max(ratios))}-{format_factor(1 / min(ratios))}× below the {span}"
    return f"lies between the {span}"


def ages_verdict(d):
    """One quotable sentence (at most ~25 words): do the ages agree, by what factor, on which model.

    Parameters
    ----------
    d : dict
        The ages stage's ``to_dict()`` (or the ``ages`` section of ``results.json``).

    Returns
    -------
    str
        E.g. "The kinematic age (760 kyr) is 2.5× below the characteristic age (1.90 Myr) and 8.7× above the
        cooling age (87 kyr, modified-urca model)."
    """
    pairs = {v.get("pair"): v for v in d.get("verdicts") or [] if isinstance(v, dict)}
    kin = d.get("kinematic_age_yr") or {}
    unc = d.get("uncertainties") or {}
    tc, lower = d.get("characteristic_age_yr"), d.get("characteristic_age_lower_limit_yr")
    cool = d.get("cooling_age_yr") or {}
    if lower is not None:
        tc_name, tc_text = "lower bound on the characteristic age", f"above {format_age(lower)}"
    else:
        tc_name, tc_text = "characteristic age", format_age_interval(dict(unc.get("characteristic_age_yr") or {},
                                                                         median=tc), bare=True) if tc else "n/a"
    model = (d.get("cooling") or {}).get("model")
    envelopes = (d.get("cooling") or {}).get("per_envelope")
    cool_text = format_age_interval(cool, bare=True) + (f", {model} model" if model else "")
    plane = d.get("kinematic_age_source") == PLANE_CROSSING_SOURCE
    kin_label = "time since the Galactic-plane crossing" if plane else "kinematic age"
    if kin.get("median") is not None:
        subject = f"The {kin_label} ({format_age_interval(kin, bare=True)})"
        clauses = [_relation(pairs.get("kinematic-characteristic"), tc_name, tc_text),
                   _cooling_relation(pairs.get("kinematic-cooling"), kin.get("median"), envelopes, model)
                   or _relation(pairs.get("kinematic-cooling"), "cooling age", cool_text)]
    elif tc is not None or lower is not None:
        subject = f"The {tc_name} ({tc_text})" if lower is None else "The characteristic age"
        clauses = [_cooling_relation(pairs.get("characteristic-cooling"), tc, envelopes, model)
                   or _relation(pairs.get("characteristic-cooling"), "cooling age", cool_text)]
    else:
        subject, clauses = None, []
    clauses = [c for c in clauses if c]
    if len(clauses) == 2 and clauses[0].startswith("is ") and clauses[1].startswith("is "):
        clauses[1] = clauses[1][3:]
    if subject and clauses:
        line = f"{subject} {' and '.join(clauses)}"
        kc = pairs.get("kinematic-characteristic") or {}
        if kin.get("median") is not None and kc.get("consistent") is False and kc.get("ratio"):
            p0 = d.get("implied_initial_period_s")
            if kc["ratio"] < 1:
                iv = unc.get("implied_initial_period_s") or {}
                start = (f"an initial period of {format_interval(p0, iv.get('lo68'), iv.get('hi68'), 's', bare=True)}"
                         if p0 else "a long initial period")
                why = f"; field decay or {start} would explain it"
            else:
                why = f"; spin-down with braking index {d.get('braking_index') or 3:g} does not reach it"
            if len((line + why).split()) <= 25:  # the implication when it fits the quotable length
                line += why
        return line + "."
    if kin.get("median") is not None:
        return (f"Only the {kin_label} is known, {format_age_interval(kin)}; there is no spin-down or cooling "
                "age to compare it with.")
    if tc is not None:
        n = d.get("braking_index") or 3
        tc_full = format_age_interval(dict(unc.get("characteristic_age_yr") or {}, median=tc))
        return (f"Only the characteristic age is known, {tc_full}, "
                f"assuming braking index {n:g} and a short initial period.")
    if cool.get("median") is not None:
        return f"Only the cooling age is known, {format_age_interval(cool)} ({model or 'cooling'} model)."
    return "No ages could be computed from the inputs given."
