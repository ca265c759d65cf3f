"""Plain-language verdicts comparing two ages.

Two ages agree "within errors" when their medians differ by less than two
combined standard deviations in log age, the deviation of each taken as half
the width of its 68 % interval in ln(age) (a Gaussian-in-log convention:
common practice, no source).  Otherwise the verdict states which is younger,
by what factor, and what that implies.
"""

import numpy as np

__all__ = ["format_age", "log_sigma", "compare_intervals", "pair_verdict", "age_verdicts", "cooling_explanations"]


def format_age(yr):
    """An age in yr as short text: '840 yr', '12.6 kyr', '1.3 Myr'."""
    if yr is None or not np.isfinite(yr):
        return "n/a"
    if yr >= 1e9:
        return f"{yr / 1e9:.3g} Gyr"
    if yr >= 1e6:
        return f"{yr / 1e6:.3g} Myr"
    if yr >= 1e4:
        return f"{yr / 1e3:.3g} kyr"
    return f"{yr:,.0f} yr" if yr >= 100 else f"{yr:.3g} yr"


def log_sigma(iv):
    """Half the width of the 68 % interval in ln(age); 0 when not available."""
    if not iv or iv.get("lo68") is None or iv.get("hi68") is None or not iv["lo68"] > 0:
        return 0.0
    return 0.5 * (np.log(iv["hi68"]) - np.log(iv["lo68"]))


def compare_intervals(a, b, threshold=2.0):
    """Compare two age intervals.

    Parameters
    ----------
    a, b : dict
        With ``median``, ``lo68``, ``hi68`` in yr.
    threshold : float
        Number of combined sigmas (in ln age) counted as agreement.

    Returns
    -------
    dict
        ``ratio`` (a / b of the medians), ``z`` (separation in combined
        sigmas; inf when both are exact and differ), ``consistent`` (bool).
    """
    ratio = a["median"] / b["median"]
    sig = np.hypot(log_sigma(a), log_sigma(b))
    diff = abs(np.log(ratio))
    if sig > 0:
        z = diff / sig
    else:
        z = 0.0 if diff < 1e-9 else np.inf
    return {"ratio": float(ratio), "z": float(z), "consistent": bool(z <= threshold)}


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
    fa, fb = format_age(a["median"]), format_age(b["median"])
    if c["consistent"]:
        text = (f"The {name_a} ({fa}) and the {name_b} ({fb}) are consistent within errors "
                f"(ratio {c['ratio']:.2g}).")
    elif c["ratio"] < 1:
        text = f"The {name_a} ({fa}) is younger than the {name_b} ({fb}) by a factor {1 / c['ratio']:.2g}"
        text += f", implying {if_younger}." if if_younger else "."
    else:
        text = f"The {name_a} ({fa}) is older than the {name_b} ({fb}) by a factor {c['ratio']:.2g}"
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
    if not ({"accreted", "light"} & envs):
        hotter.append("a light-element (accreted) envelope")
    hotter.append("a kinematic age that is too long (a different birthplace)")
    colder.append("a kinematic age that is too short (a different birthplace)")
    fmt = lambda xs: (" (possible causes not already in the computed range: " + "; ".join(xs) + ")") if xs else ""
    return fmt(colder), fmt(hotter)


def age_verdicts(values, unc, kin, cool, s):
    """Verdicts for the pairs kinematic-characteristic, kinematic-spin_down (when P0 is given),
    kinematic-cooling and characteristic-cooling.

    Parameters
    ----------
    values : dict
        Nominal values of the ages stage (``implied_initial_period_s``,
        ``decay_timescale_yr``, ``braking_index_for_kinematic_age``, ``spinning_up``).
    unc : dict
        Monte Carlo intervals (``characteristic_age_yr``, ``spin_down_age_yr``), yr.
    kin : dict or None
        Kinematic-age interval, yr.
    cool : CoolingAgeResult or None
    s : AgesSettings

    Returns
    -------
    list of dict
    """
    tc_iv = unc.get("characteristic_age_yr")
    if tc_iv and values.get("characteristic_age_yr") is not None:
        # quote the nominal P/(2 Pdot) (the number in the JSON and summary); the spread stays Monte Carlo
        tc_iv = dict(tc_iv, median=values["characteristic_age_yr"])
    out = []
    p0 = values.get("implied_initial_period_s")
    tau_d = values.get("decay_timescale_yr")
    young = []
    if tau_d:
        young.append(f"exponential field decay with tau_d ~ {format_age(tau_d)}")
    if p0:
        young.append(f"or an initial period P0 ~ {p0:.3g} s for n = {s.braking_index:g}")
    n_req = values.get("braking_index_for_kinematic_age")
    old = (f"no field-decay solution: field growth, a braking index below {n_req:.2g} (n = 1 + 2 tau_c / t)"
           if n_req else "no field-decay solution") + ", or a kinematic age too long"
    miss = "star is spinning up" if values.get("spinning_up") else None
    out.append(pair_verdict("kinematic-characteristic", "kinematic age", kin, "characteristic age", tc_iv,
                            if_younger=" ".join(young), if_older=old, missing=miss))
    if s.initial_period_s is not None:
        out.append(pair_verdict("kinematic-spin_down", "kinematic age", kin,
                                f"spin-down age for n = {s.braking_index:g}, P0 = {s.initial_period_s:g} s",
                                unc.get("spin_down_age_yr"),
                                if_younger="a longer P0 or a lower braking index than assumed",
                                if_older="no spin-down history with this n and P0 reaches the kinematic age",
                                missing=miss))
    cool_iv = cool.pooled if cool is not None else None
    cmiss = None if cool is not None else "no temperature or luminosity in [star]"
    colder, hotter = cooling_explanations(s)
    v = pair_verdict("kinematic-cooling", "kinematic age", kin, "cooling age", cool_iv,
                     if_younger="the star is colder than the cooling curves predict at that age" + colder,
                     if_older="the star is hotter than the cooling curves predict at that age" + hotter,
                     missing=cmiss)
    if cool is not None and kin is not None and kin.get("median") is not None:
        fits = [f"{r['envelope']} {r['mass_msun']:g} Msun" for r in cool.per_model
                if r["median"] is not None and compare_intervals(kin, r)["consistent"]]
        v["favoured_models"] = fits
        v["short"] = v["text"]
        v["text"] += (f" Envelopes and masses consistent with the kinematic age: {', '.join(fits)}." if fits
                      else " No envelope and mass considered matches the kinematic age.")
    out.append(v)
    out.append(pair_verdict("characteristic-cooling", "characteristic age", tc_iv, "cooling age", cool_iv,
                            if_younger="the star is colder than expected at its characteristic age",
                            if_older="the star is hotter than expected at its characteristic age, as field decay "
                                     "(spin-down age too long) or heating would give",
                            missing=miss or cmiss))
    return out
