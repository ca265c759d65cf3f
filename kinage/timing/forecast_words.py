"""The forecast summary in words, including when timing cannot measure.

The forecast's errors come from a model linearised at the scenario's values.
Beyond a point they stop meaning anything: a proper-motion error above
1 arcsec/yr, a parallax error above 100 mas (the parallax of a star at
10 pc, closer than any known isolated neutron star) or a position error above
1 arcsec (where the delay stops being linear in the offset, see
:meth:`kinage.timing.model.TimingModel.astro_partials`).  There the summary
says in words that timing does not constrain the quantity and what would
(imaging astrometry, a longer baseline, more photons per visit, with the
factor); the numbers stay in the JSON.
"""

import numpy as np

__all__ = ["PM_LIMIT_MASYR", "PARALLAX_LIMIT_MAS", "POSITION_LIMIT_MAS", "PRACTICAL_EXPOSURE_S", "constrained",
           "forecast_summary", "factor_words"]

#: proper-motion error beyond which the linearised timing model has no meaning, mas/yr (1 arcsec/yr)
PM_LIMIT_MASYR = 1000.0
#: parallax error beyond which timing says nothing: the parallax of a star at 10 pc, mas
PARALLAX_LIMIT_MAS = 100.0
#: position error beyond which the delay is no longer linear in the offset, mas (1 arcsec)
POSITION_LIMIT_MAS = 1000.0
#: longest exposure per visit worth quoting in words, s (about 12 days; common practice, no source)
PRACTICAL_EXPOSURE_S = 1.0e6


def _sigma_text(x):
    """A significance with two significant figures, written out ('2,900', not '2.9e+03')."""
    if not np.isfinite(x):
        return "n/a"
    return f"{float(f'{x:.2g}'):,.0f}" if abs(x) >= 100 else f"{x:.2g}"


def constrained(sigma, pm_error_along_motion):
    """Which quantities the forecast errors can meaningfully describe.

    Parameters
    ----------
    sigma : dict
        ``AstrometricSolution.sigma_dict()`` (mas, mas/yr).
    pm_error_along_motion : float, mas/yr
    """
    pm = max(pm_error_along_motion, sigma["pm_ra_cosdec_masyr"], sigma["pm_dec_masyr"])
    pos = max(sigma.get("ra_mas", 0.0), sigma.get("dec_mas", 0.0))
    return {"proper_motion": bool(pm <= PM_LIMIT_MASYR), "parallax": bool(sigma["parallax_mas"] <= PARALLAX_LIMIT_MAS),
            "position": bool(pos <= POSITION_LIMIT_MAS)}


def factor_words(x):
    """A large factor in words: '3.2', '45', 'about 4,400', 'more than a million'."""
    if not np.isfinite(x):
        return "an unbounded number of"
    if x < 10:
        return f"{x:.2g}"
    if x < 1000:
        return f"{x:.0f}"
    if x < 1e6:
        return "about " + f"{float(f'{x:.2g}'):,.0f}"
    return "more than a million"


def _num(x):
    """An error with two significant figures, without exponents in the usual range."""
    if x == 0 or not np.isfinite(x):
        return f"{x:g}"
    if abs(x) >= 100:
        return f"{float(f'{x:.2g}'):.0f}"
    return f"{x:.2g}"


def _time(s):
    """A TOA error with a unit chosen from its size."""
    for unit, scale in (("s", 1.0), ("ms", 1e3), ("µs", 1e6)):
        if s * scale >= 1.0:
            return f"{s * scale:.3g} {unit}"
    return f"{s * 1e9:.3g} ns"


def _pm_remedy(r):
    """What would measure the expected proper motion (words with factors)."""
    target = r.motion.pm_masyr / r.target_significance
    parts = ["imaging astrometry (X-ray or optical imaging, or VLBI for a radio source)"]
    factor = r.reverse.get("photon_factor")
    if factor is not None:
        parts.append(f"{factor_words(factor)} times more photons per visit")
    if r.baseline_needed_yr is not None:
        parts.append(f"a baseline of {r.baseline_needed_yr:.1f} yr")
    elif r.plan.span_yr > 0:
        # sigma_mu ~ T^-3/2 at a fixed cadence (white noise)
        k = (r.pm_error_along_motion / target) ** (2.0 / 3.0)
        parts.append(f"a baseline of about {_num(k * r.plan.span_yr)} yr ({factor_words(k)} times longer, "
                     "at the same cadence)")
    return (f"measuring the expected {_num(r.motion.pm_masyr)} mas/yr at {r.target_significance:g} sigma would "
            "need " + ", or ".join(parts))


def _parallax_remedy(r, sigma_plx):
    plx = r.solution.values[4]
    want = plx / r.target_significance if np.isfinite(plx) and plx > 0 else PARALLAX_LIMIT_MAS
    what = (f"the expected {_num(plx)} mas at {r.target_significance:g} sigma" if np.isfinite(plx) and plx > 0
            else f"a {PARALLAX_LIMIT_MAS:g} mas error")
    return (f"reaching {what} would need an imaging or VLBI parallax, or {factor_words((sigma_plx / want) ** 2)} "
            "times more photons or visits")


def forecast_summary(r):
    """Plain-words summary of a ForecastResult (see module docstring)."""
    sig = r.solution.sigma_dict()
    ok = constrained(sig, r.pm_error_along_motion)
    sched = "" if r.plan.schedule in ("even", "dates") else f" (schedule \"{r.plan.schedule}\")"
    s = (f"With {r.plan.n_visits} visits{sched} over {r.plan.span_yr:.1f} yr and a median TOA error of "
         f"{_time(r.toa_error_s)}, ")
    if ok["proper_motion"]:
        along = "along the expected motion" if r.motion.direction is not None else "averaged over directions"
        s += (f"timing gives a proper-motion error of {_num(r.pm_error_along_motion)} mas/yr {along} "
              f"({_num(sig['pm_ra_cosdec_masyr'])} in ra*cos dec, {_num(sig['pm_dec_masyr'])} in dec)")
        s += (f" and a parallax error of {_num(sig['parallax_mas'])} mas." if ok["parallax"] else
              "; it does not constrain the parallax (its error would exceed 100 mas, the parallax of a star at "
              f"10 pc): {_parallax_remedy(r, sig['parallax_mas'])}.")
        s += _significance(r)
    else:
        s += ("timing does not constrain the proper motion: its error would exceed 1 arcsec/yr, where the "
              "linearised timing model has no meaning (the numbers stay in the JSON). ")
        if r.motion.pm_masyr:
            s += _pm_remedy(r)[0].upper() + _pm_remedy(r)[1:] + "."
        if ok["parallax"]:
            s += f" The parallax error would be {_num(sig['parallax_mas'])} mas."
        else:
            s += (" Nor does it constrain the parallax (error above 100 mas, the parallax of a star at 10 pc); "
                  f"{_parallax_remedy(r, sig['parallax_mas'])}.")
    if not ok["position"] and ok["proper_motion"]:
        s += " Timing does not improve on the position (error above 1 arcsec): take it from imaging."
    s += _schedule_hint(r)
    photon = r.photon or {}
    if photon.get("detectable") is False:
        s = (f"Each visit detects the pulsation at only {photon['detection_sigma_per_visit']:.2g} sigma "
             f"(expected Z^2_{photon.get('harmonics', 2)} = {photon['expected_z2']:.3g}), so no TOA can be "
             "measured with this plan; the numbers that follow assume TOAs anyway. ") + s
    return s


def _significance(r):
    if r.pm_significance is None:
        return " The expected proper motion is unknown (no distance), so no significance is given."
    reached = r.pm_significance >= r.target_significance
    s = (f" The expected motion of {_num(r.motion.pm_masyr)} mas/yr would be detected at "
         f"{_sigma_text(r.pm_significance)} sigma (target {r.target_significance:g} sigma reached)." if reached else
         f" The expected motion of {_num(r.motion.pm_masyr)} mas/yr would reach only {_sigma_text(r.pm_significance)} sigma")
    if reached:
        return s
    if r.baseline_needed_yr is None:
        s += f"; no baseline up to {r.max_baseline_yr:g} yr reaches {r.target_significance:g} sigma at this cadence"
    else:
        s += f"; {r.target_significance:g} sigma needs a baseline of {r.baseline_needed_yr:.1f} yr"
    factor = r.reverse.get("photon_factor")
    if factor is not None:
        s += (f", or TOA errors of {_time(r.reverse['toa_error_needed_s'])} ({factor_words(factor)} times more "
              "photons per visit) at this baseline")
        exp = r.reverse.get("exposure_needed_s")
        if exp and exp <= PRACTICAL_EXPOSURE_S:
            s += f" ({exp / 1e3:.3g} ks per visit)"
        elif exp:
            s += ", far beyond any practical exposure per visit; imaging astrometry is the way to measure it"
    return s + "."


def _schedule_hint(r):
    sch = r.schedules or {}
    if r.plan.schedule != "even" or "parallax_error_mas" not in sch.get("parallax", {}):
        return ""
    best = sch["parallax"]["parallax_error_mas"]
    ratio = sch["even"]["parallax_error_mas"] / best
    if ratio <= 2.0:
        return ""
    s = (f" Placing the same visits near the parallax extremes (schedule = \"parallax\") would make the parallax "
         f"error {factor_words(ratio)} times smaller")
    if best > PARALLAX_LIMIT_MAS:
        return s + ", though still not a measurement."
    return s + f" ({_num(best)} mas)."
