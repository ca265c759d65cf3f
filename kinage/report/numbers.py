"""Pick and format the numbers a report shows for each stage.

Values are read from the stage's JSON dictionary, so every number in the
report is the one stored in ``results.json``.  Rules (the usual ones of a
results table):

* a value with an error is rounded to the error's precision, the error by the
  Particle Data Group rule (two significant figures when its leading digits
  are 100-354, one for 355-949, 950-999 rounded up to two; ``kinage._rounding``);
* units in the usual notation (mas/yr, µs, kyr, Myr) in the label or after
  the number; ages and times choose yr/kyr/Myr from their size;
* inputs are echoed in the unit the scenario gave (``74 eV`` stays eV);
* where the linearised timing model means nothing (errors beyond what any
  neutron star could show) the value reads "not constrained";
* labels are words, never raw JSON keys.
"""

import math

from .._rounding import percent_text, round_to_error, value_error
from ..display.numbers import _g2, fit_constrained, fmt, fmt_age, fmt_age_interval, fmt_duration_s, fmt_interval, fmt_power

__all__ = ["stage_rows", "fmt", "fmt_interval", "value_error", "fmt_age", "fmt_age_interval", "fmt_duration_s",
           "round_to_error", "fmt_power", "expected_parallax_mas", "astrometry_source_words", "LABELS",
           "distance_text", "shklovskii_text"]

#: words for JSON keys that may reach a table
LABELS = {
    "toa_error_s": "median TOA error", "n_toas": "number of TOAs", "baseline_yr": "baseline",
    "span_yr": "span of visits", "pm_significance": "proper-motion significance (expected motion)",
    "pm_error_along_motion_masyr": "proper-motion error along the expected motion",
    "expected_pm_masyr": "expected proper motion", "baseline_needed_yr": "baseline needed",
    "target_significance": "target significance", "chi2_reduced": "reduced chi-square",
    "converged": "converged", "iterations": "iterations", "n_parameters": "fitted parameters",
    "ra_mas": "position error, ra*cos(dec)", "dec_mas": "position error, dec",
    "pm_ra_cosdec_masyr": "proper motion, ra*cos(dec)", "pm_dec_masyr": "proper motion, dec",
    "parallax_mas": "parallax", "characteristic_age_yr": "characteristic age P/(2 Pdot)",
    "dipole_field_gauss": "dipole field", "spin_down_luminosity_erg_s": "spin-down luminosity",
    "max_spin_down_age_yr": "maximum spin-down age 2 tau_c/(n-1)", "spin_down_age_yr": "spin-down age (n, P0)",
    "implied_initial_period_s": "initial period implied by the kinematic age",
    "decay_timescale_yr": "field-decay timescale implied (exponential)", "braking_index": "braking index n",
    "kinematic_age_yr": "kinematic age", "cooling_age_yr": "cooling age (all envelopes and masses)",
    "plane_crossing_age_yr": "time since the last Galactic-plane crossing",
}

# --------------------------------------------------------------------------- stages
def _timing_rows(data, constrained=None, expected_parallax=None):
    """Astrometric values ± errors of a timing fit, 'not constrained' where the model means nothing.

    ``expected_parallax`` (mas, from the scenario's parallax or distance): a parallax error above it
    is said in words, since such a fit cannot tell the star's parallax from zero.
    """
    rows = []
    v, s = data.get("values") or {}, data.get("sigma") or {}
    cons = constrained or {}
    for key, label, unit in (("pm_ra_cosdec_masyr", "proper motion, ra*cos(dec)", "mas/yr"),
                             ("pm_dec_masyr", "proper motion, dec", "mas/yr"),
                             ("parallax_mas", "parallax", "mas")):
        val, err = v.get(key), s.get(key)
        ok = cons.get("parallax" if key == "parallax_mas" else "proper_motion", True)
        if err is None or not math.isfinite(err) or not ok:
            rows.append((label, "not constrained by timing" + (f" (formal error {fmt(err)} {unit})" if err else "")))
        else:
            sig = abs(val) / err if err else float("inf")
            text = f"{value_error(val, err, unit)} ({_g2(sig)}σ)"  # a significance is itself uncertain: 2 figures
            if key == "parallax_mas" and expected_parallax and err > expected_parallax:
                text += f"; not constrained: the expected parallax is {fmt_power(expected_parallax)} mas"
            rows.append((label, text))
    for key, label in (("ra_mas", "position offset, ra*cos(dec)"), ("dec_mas", "position offset, dec")):
        val, err = v.get(key), s.get(key)
        if err is not None and math.isfinite(err):
            rows.append((label, value_error(val, err, "mas") if cons.get("position", True)
                         else f"not constrained by timing (formal error {fmt(err)} mas)"))
    return rows


def expected_parallax_mas(star):
    """The parallax (mas) a scenario's ``[star]`` implies: its parallax, else 1000 / distance; None without either.

    ``star`` is the parsed ``[star]`` section (Quantities) or a plain dict of numbers in mas and pc.
    """
    if star is None:
        return None

    def _get(name, unit):
        x = star.get(name) if hasattr(star, "get") else getattr(star, name, None)
        if x is None:
            return None
        try:
            x = float(x.to_value(unit)) if hasattr(x, "to_value") else float(x)
        except (TypeError, ValueError):
            return None
        return x if math.isfinite(x) else None

    plx = _get("parallax", "mas")
    if plx is not None and plx > 0:
        return plx
    dist = _get("distance", "pc")
    return 1000.0 / dist if dist else None


def forecast_rows(d, expected_parallax=None):
    """Rows of a forecast; ``expected_parallax`` (mas) turns a parallax error above it into words."""
    rows = [("visits (TOAs)", f"{d.get('n_toas')} over {fmt(d.get('baseline_yr'))} yr"),
            ("median TOA error", fmt_duration_s(d.get("toa_error_s")))]
    if d.get("sun_avoidance_deg") is not None:
        src = d.get("sun_avoidance_source") or "given"
        how = "" if src == "given" else f", {src}: set [campaign] sun_avoidance or band to change it"
        moved = d.get("visits_moved_for_sun") or 0
        rows.append(("Sun avoidance", f"{fmt(d['sun_avoidance_deg'])}°{how}"
                     + (f"; {moved} of {d.get('n_toas')} visits moved" if moved else "")))
    cons = d.get("constrained") or {}
    s = d.get("sigma") or {}
    if expected_parallax is None:
        dist = (d.get("expected_motion") or {}).get("distance_pc")
        expected_parallax = 1000.0 / dist if dist else None
    for key, label, unit, what in (("pm_ra_cosdec_masyr", "proper-motion error, ra*cos(dec)", "mas/yr", "proper_motion"),
                                   ("pm_dec_masyr", "proper-motion error, dec", "mas/yr", "proper_motion"),
                                   ("parallax_mas", "parallax error", "mas", "parallax")):
        e = s.get(key)
        text = f"{_g2(e)} {unit}" if cons.get(what, True) else "not constrained by timing"
        if key == "parallax_mas" and cons.get(what, True) and expected_parallax and e and e > expected_parallax:
            text += f": the expected parallax ({fmt_power(expected_parallax)} mas) is not measurable"
        rows.append((label, text))
    if d.get("expected_pm_masyr") is not None:  # an estimate from a speed distribution: two figures
        rows.append(("expected proper motion", f"{_g2(d['expected_pm_masyr'])} mas/yr"))
    sig = d.get("pm_significance")
    if sig is not None:
        rows.append(("proper-motion significance of this plan", f"{_g2(sig)}σ"))
    need = d.get("baseline_needed_yr")
    target = d.get("target_significance")
    rows.append((f"baseline for {fmt(target)}σ", f"{need:.1f} yr" if need is not None else  # as sentence and figure
                 f"not reached within {fmt(d.get('max_baseline_yr'))} yr"))
    return rows


def fit_rows(d, expected_parallax=None):
    """Rows of a timing fit; ``expected_parallax`` (mas) turns a parallax error above it into words."""
    rows = [("TOAs fitted", str(d.get("n_toas"))), ("reduced chi-square", f"{d.get('chi2_reduced', float('nan')):.2f}"),
            ("converged", fmt(d.get("converged")))]
    res = d.get("residuals") or {}
    if res.get("weighted_rms_us") is not None:
        rows.append(("weighted rms residual", fmt_duration_s(res["weighted_rms_us"] * 1e-6)))
    rows += _timing_rows(d, fit_constrained(d), expected_parallax)
    return rows


def trace_rows(d):
    rows = []
    assocs = d.get("associations") if isinstance(d.get("associations"), list) else []
    rows.append(("favoured birth association", d.get("favoured") or "none"))
    rows.append(("draws of the star", str(d.get("n_samples"))))
    if isinstance(d.get("distance_pc"), dict) and d["distance_pc"].get("median") is not None:
        rows.append(("distance of the star, over all draws",
                     distance_text(d["distance_pc"], d.get("distance_source"),
                                   words=(d.get("settings") or {}).get("distance_words"))))
    rows += plane_crossing_rows(d)
    if d.get("field_probability") is not None:
        rows.append(("probability of no listed association (field, including their surroundings)",
                     _pct(d["field_probability"], d.get("field_probability_error"))))
    rows.append(("settings", _trace_settings(d.get("settings") or {})))
    return rows, association_rows(assocs, field=(d.get("field_probability"), d.get("field_probability_error")),
                                  favoured=d.get("favoured"))


def plane_crossing_rows(d):
    """Rows of the plane-crossing time: in words when most draws never crossed (then it is no age estimate)."""
    pc = d.get("plane_crossing_age_yr") or {}
    frac = d.get("plane_crossing_fraction")
    n_all = d.get("n_samples")
    crossed = _pct(frac)
    if frac is not None and n_all and 0 < frac < 0.01:
        crossed = f"{round(frac * n_all)} of {n_all}"
    if pc.get("median") is None:
        text = "none: no draw crossed the mid-plane within the window"
    elif frac is not None and frac < 0.5:
        text = (f"{fmt_age_interval(pc) if pc.get('n', 2) > 1 else fmt_age(pc['median'], 2)} for the {crossed} of "
                "the draws that crossed; no age estimate, as most draws did not cross")
    else:
        text = fmt_age_interval(pc)
    return [("time since the last Galactic-plane crossing", text), ("draws that crossed", crossed)]


_SOURCE_WORDS = {"timing": "timing fit", "scenario": "[star] values (imaging)", "forecast": "timing forecast"}


def astrometry_source_words(source):
    """'timing+scenario' -> 'timing fit combined with the [star] values (imaging)'."""
    parts = [_SOURCE_WORDS.get(p.strip(), p.strip()) for p in str(source).split("+") if p.strip()]
    return " combined with the ".join(parts) if parts else str(source)


def _trace_settings(s):
    parts = []
    if s.get("max_age_yr"):
        parts.append(f"back to {fmt_age(s['max_age_yr'])}")
    if s.get("potential"):
        parts.append(f"potential {s['potential']}")
    if s.get("astrometry_source"):
        parts.append(f"astrometry from the {astrometry_source_words(s['astrometry_source'])}")
    return ", ".join(parts) or "n/a"


def distance_text(iv, source, words=None):
    """'800 (68%: 730–890) pc from the parallax ... combined with the distance estimate ...'.

    ``words`` (the posterior's own description, ``settings.distance_words`` of a trace) replaces the
    generic words for ``source``.
    """
    words = words or {"parallax": "the parallax", "distance": "the [star] distance",
                      "parallax+distance": "the parallax combined with the [star] distance estimate"}.get(
        source, source or "n/a")
    if (iv.get("median") or 0) >= 2000.0:  # kpc, the unit people use for distant stars
        iv = {k: (v / 1000.0 if isinstance(v, (int, float)) and k != "n" else v) for k, v in iv.items()}
        return f"{fmt_interval(iv, 'kpc')} from {words}"
    return f"{fmt_interval(iv, 'pc')} from {words}"


def shklovskii_text(shk):
    """The Shklovskii row: the term, and the distance only when it is not the trace's (then it is stated there)."""
    iv = shk.get("pdot_shk_interval") or {}
    term = "n/a"
    if iv.get("median") is not None:
        term = f"{fmt_power(iv['median'])} s/s"
        if iv.get("lo68") is not None and iv.get("hi68") is not None:
            term += f" (68%: {fmt_power(iv['lo68'])} to {fmt_power(iv['hi68'])})"
    if shk.get("distance_from_trace"):
        return f"{term}, with the trace's distance and proper-motion draws"
    dist = shk.get("distance_interval_pc") or {}
    return f"{term}, at the distance {distance_text(dist, shk.get('distance_source'), shk.get('distance_words'))}"


def _pct(x, err=None):
    return percent_text(x, err)


def association_rows(assocs, top=8, field=None, favoured=None):
    """Header and rows of the ranked association table (probability first when present).

    ``field`` — ``(field_probability, its error)`` — adds a last row for a birth outside every listed
    candidate, so the probabilities of the column add up to one before the reader's eyes; ``favoured``
    (a name) is marked in its row.
    """
    has_p = any(a.get("probability") is not None for a in assocs)
    has_near = any(a.get("neighbourhood_probability") for a in assocs)
    header = (["rank", "association"] + (["birth probability"] if has_p else [])
              + (["born nearby, not in it"] if has_near else [])
              + ["encounter fraction", "chance fraction", "kinematic age", "d_min (pc)"])
    rows = []
    for i, a in enumerate(assocs[:top]):
        name = str(a.get("name")) + (" (favoured)" if favoured is not None and a.get("name") == favoured else "")
        r = [str(a.get("rank", i + 1)), name]
        if has_p:
            p = a.get("probability")
            r.append(_pct(p, a.get("probability_error")) if p is not None else "n/a")
        if has_near:
            pn = a.get("neighbourhood_probability")
            r.append(_pct(pn, a.get("neighbourhood_probability_error")) if pn is not None else "n/a")
        r += [_pct(a.get("encounter_fraction"), a.get("encounter_fraction_error")),
              _pct(a.get("chance_fraction"), a.get("chance_fraction_error")),
              fmt_age_interval(a.get("age_yr")), fmt_interval(a.get("dmin_pc"))]
        rows.append(r)
    if len(assocs) > top:
        rest = sum(a.get("probability") or 0.0 for a in assocs[top:])
        rows.append(["", f"{len(assocs) - top} more (trace_associations.ecsv)"]
                    + ([_pct(rest)] if has_p else []) + [""] * (len(header) - 2 - has_p))
    if has_p and field is not None and field[0] is not None:
        near = sum(a.get("neighbourhood_probability") or 0.0 for a in assocs)
        r = ["", "none listed: born outside every candidate (field)", _pct(field[0], field[1])]
        if has_near:
            r.append(f"of which {_pct(near)} near a candidate")
        rows.append(r + [""] * (len(header) - len(r)))
    return header, rows


def ages_rows(d, raw_star=None):
    rows = []
    raw_star = raw_star or {}
    for key in ("spin_period", "spin_period_derivative", "temperature", "luminosity"):
        if key in raw_star:
            err = raw_star.get(f"{key}_error")
            rows.append((f"input: {key.replace('_', ' ')}",
                         f"{raw_star[key]}" + (f" ± {err}" if err is not None else "")))
    shk = d.get("shklovskii") or {}
    if shk.get("applied"):
        rows.append(("Shklovskii term P v_t^2/(c d) subtracted", shklovskii_text(shk)))
    elif shk.get("note"):
        rows.append(("Shklovskii term", str(shk["note"])))
    rows.append(("kinematic age", fmt_age_interval(d.get("kinematic_age_yr"))
                 + (f" ({d['kinematic_age_source']})" if d.get("kinematic_age_source") else "")))
    u = d.get("uncertainties") or {}
    tc = d.get("characteristic_age_yr")
    if tc is not None:
        rows.append(("characteristic age P/(2 Pdot)", fmt_age_interval(dict(u.get("characteristic_age_yr") or {},
                                                                            median=tc))))
    if d.get("max_spin_down_age_yr") is not None:
        rows.append((f"maximum spin-down age for n = {fmt(d.get('braking_index'))}",
                     fmt_age(d["max_spin_down_age_yr"])))
    if d.get("dipole_field_gauss") is not None:
        own = d.get("dipole_field_input_radius_gauss")
        rows.append(("dipole field", f"{fmt_power(d['dipole_field_gauss'])} G (catalogue convention, R = 10 km)"
                     + (f"; {fmt_power(own)} G for the [ages] radius"
                        if own and fmt_power(own) != fmt_power(d["dipole_field_gauss"]) else "")))
    if d.get("spin_down_luminosity_erg_s") is not None:
        rows.append(("spin-down luminosity", f"{fmt_power(d['spin_down_luminosity_erg_s'])} erg/s"))
    if d.get("implied_initial_period_s") is not None:
        rows.append(("initial period implied by the kinematic age",
                     fmt_interval(dict(u.get("implied_initial_period_s") or {}, median=d["implied_initial_period_s"]),
                                  "s")))
    elif d.get("implied_initial_period_note"):
        rows.append(("initial period implied by the kinematic age", d["implied_initial_period_note"]))
    if d.get("decay_timescale_yr") is not None:
        iv = u.get("decay_timescale_yr") or {}
        rows.append(("field-decay timescale implied (exponential)",
                     fmt_age_interval(dict(iv, median=d["decay_timescale_yr"])) if iv.get("lo68") is not None
                     else fmt_age(d["decay_timescale_yr"], 2)))
    elif d.get("decay_timescale_note"):
        rows.append(("field-decay timescale implied (exponential)", str(d["decay_timescale_note"])))
    cool = d.get("cooling_age_yr") or {}
    if cool.get("median") is not None:
        r = d.get("cooling_age_range_yr") or {}
        txt = fmt_age_interval(cool)
        if r.get("lo68") is not None:
            txt += f"; range over envelopes and masses {_age_range(r['lo68'], r['hi68'])}"
        rows.append(("cooling age (all envelopes and masses)", txt))
        c = d.get("cooling") or {}
        if c.get("model"):
            rows.append(("cooling model", str(c["model"])))
    return rows


def _age_range(lo, hi):
    """'58 kyr-150 kyr': both ends with two significant figures, as the ages summary writes the range."""
    from ..ages.verdicts import format_age

    return f"{format_age(lo, 2)}-{format_age(hi, 2)}"


def stage_rows(stage, data, raw=None):
    """(label, text) rows of a stage's headline numbers.

    Parameters
    ----------
    stage : str
        'forecast', 'fit', 'trace' or 'ages'.
    data : dict
        The stage's JSON dictionary.
    raw : dict, optional
        The scenario's raw tables (inputs are echoed as given).
    """
    raw = raw or {}
    if stage == "forecast":
        rows = forecast_rows(data)
    elif stage == "fit":
        rows = fit_rows(data)
    elif stage == "trace":
        rows = trace_rows(data)[0]
    elif stage == "ages":
        rows = ages_rows(data, raw.get("star"))
    else:
        rows = [(LABELS.get(k, k.replace("_", " ")), fmt(v)) for k, v in data.items()
                if isinstance(v, (int, float, bool)) or v is None]
    for w in data.get("warnings", []) if isinstance(data.get("warnings"), list) else []:
        rows.append(("warning", str(w)))
    return rows
