"""Pick and format the numbers a report shows for each stage.

Values are read from the stage's JSON dictionary, so every number in the
report is the one stored in ``results.json``.  Rules (the usual ones of a
results table):

* a value with an error is rounded to the error's precision, the error to
  two significant figures (one when it starts with 3 or more is also common;
  two is kept everywhere for simplicity);
* units in the usual notation (mas/yr, µs, kyr, Myr) in the label or after
  the number; ages and times choose yr/kyr/Myr from their size;
* inputs are echoed in the unit the scenario gave (``74 eV`` stays eV);
* where the linearised timing model means nothing (errors beyond what any
  neutron star could show) the value reads "not constrained";
* labels are words, never raw JSON keys.
"""

import math

__all__ = ["stage_rows", "fmt", "fmt_interval", "value_error", "fmt_age", "fmt_age_interval", "fmt_duration_s",
           "round_to_error", "LABELS"]

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

_MAS_PER_ARCSEC = 1000.0


def _sig_round(x, sig=2):
    if x == 0 or not math.isfinite(x):
        return x
    return round(x, sig - 1 - int(math.floor(math.log10(abs(x)))))


def _decimals_for(err, sig=None):
    """Decimals that show ``err`` rounded by the Particle Data Group rule (may be negative).

    The three leading digits of the error decide: 100-354 keep two significant
    figures, 355-949 one, 950-999 round up to 1000 and keep two (Particle Data
    Group, Review of Particle Physics, Introduction: rounding).  ``sig`` forces
    a number of significant figures instead.
    """
    exp = int(math.floor(math.log10(abs(err))))
    if sig is not None:
        return sig - 1 - exp
    lead = int(abs(err) / 10.0 ** (exp - 2))
    if lead < 355:
        return 1 - exp
    if lead < 950:
        return -exp
    return 1 - (exp + 1)


def round_to_error(value, error, sig=None):
    """(value text, error text) rounded to the error's precision (Particle Data Group rule by default)."""
    if error is None or not math.isfinite(error) or error <= 0:
        return fmt(value), None
    d = _decimals_for(error, sig)
    if abs(value) >= 1e5 or error >= 1e5 or (abs(value) < 1e-3 and error < 1e-3 and value != 0):
        exp = int(math.floor(math.log10(max(abs(value), error))))
        scale = 10.0**exp
        dd = max(_decimals_for(error / scale, sig), 0)
        return f"{value / scale:.{dd}f}e{exp:+d}", f"{error / scale:.{dd}f}e{exp:+d}"
    if d <= 0:
        q = 10.0 ** (-d)
        return f"{round(value / q) * q:.0f}", f"{round(error / q) * q:.0f}"
    return f"{value:.{d}f}", f"{error:.{d}f}"


def value_error(value, error, unit="", sig=None):
    """``'12.3 ± 0.4 mas/yr'``; without an error the value alone with 3 significant figures."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "n/a"
    v, e = round_to_error(float(value), None if error is None else float(error), sig)
    tail = f" {unit}" if unit else ""
    return f"{v} ± {e}{tail}" if e is not None else f"{v}{tail}"


def fmt(x, digits=3):
    """A number with ``digits`` significant figures; None as 'n/a'."""
    if x is None:
        return "n/a"
    if isinstance(x, bool):
        return "yes" if x else "no"
    if isinstance(x, int):
        return str(x)
    if isinstance(x, float):
        if not math.isfinite(x):
            return "n/a"
        if x == 0:
            return "0"
        if 99.5 <= abs(x) < 1e5:
            return f"{x:.0f}"
        if 1e-3 <= abs(x) < 99.5:
            return f"{x:.{digits}g}"
        return f"{x:.{digits - 1}e}"
    return str(x)


def _age_unit(yr):
    a = abs(yr)
    if a >= 1e9:
        return 1e9, "Gyr"
    if a >= 1e6:
        return 1e6, "Myr"
    if a >= 1e3:
        return 1e3, "kyr"
    return 1.0, "yr"


def fmt_age(yr, digits=3):
    """An age in yr as text in yr, kyr, Myr or Gyr."""
    if yr is None or not math.isfinite(yr):
        return "n/a"
    s, unit = _age_unit(yr)
    return f"{_g(yr / s, digits)} {unit}"


def _g(x, digits):
    if x == 0:
        return "0"
    if abs(x) >= 10 ** digits:
        return f"{x:.0f}"
    return f"{x:.{digits}g}"


def fmt_interval(d, unit=""):
    """``median (68%: lo–hi)`` from an interval dictionary, rounded to the interval's width."""
    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    med, lo, hi = d["median"], d.get("lo68"), d.get("hi68")
    tail = f" {unit}" if unit else ""
    if lo is None or hi is None:
        return fmt(med) + tail
    width = min(abs(med - lo), abs(hi - med)) or max(abs(med - lo), abs(hi - med))
    if not width:
        return fmt(med) + tail
    d_ = _decimals_for(width)
    if d_ <= 0 or abs(med) >= 1e5:
        return f"{fmt(_sig_round(med, 3))} (68%: {fmt(_sig_round(lo, 2))}–{fmt(_sig_round(hi, 2))}){tail}"
    return f"{med:.{d_}f} (68%: {lo:.{d_}f}–{hi:.{d_}f}){tail}"


def fmt_age_interval(d):
    """An age interval (yr) in one unit chosen from the median: ``'1.30 Myr (68%: 1.1–1.5 Myr)'``."""
    if not isinstance(d, dict) or d.get("median") is None:
        return "n/a"
    s, unit = _age_unit(d["median"])
    scaled = {k: (None if d.get(k) is None else d[k] / s) for k in ("median", "lo68", "hi68")}
    return fmt_interval(scaled, unit)


def fmt_duration_s(sec, error=None):
    """A time in seconds in the unit its size (or its error's) calls for: ns, µs, ms or s."""
    if sec is None or not math.isfinite(sec):
        return "n/a"
    size = abs(error) if error else abs(sec)
    for scale, unit in ((1e-6, "ns"), (1e-3, "µs"), (1.0, "ms")):
        if size < scale:
            f = 1e-9 if unit == "ns" else 1e-6 if unit == "µs" else 1e-3
            break
    else:
        f, unit = 1.0, "s"
    if error:
        return value_error(sec / f, error / f, unit)
    return f"{_g(sec / f, 3)} {unit}"


# --------------------------------------------------------------------------- stages
def _timing_rows(data, constrained=None):
    """Astrometric values ± errors of a timing fit, 'not constrained' where the model means nothing."""
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
            rows.append((label, f"{value_error(val, err, unit)} ({sig:.1f} sigma)"))
    for key, label in (("ra_mas", "position offset, ra*cos(dec)"), ("dec_mas", "position offset, dec")):
        val, err = v.get(key), s.get(key)
        if err is not None and math.isfinite(err):
            rows.append((label, value_error(val, err, "mas") if cons.get("position", True)
                         else f"not constrained by timing (formal error {fmt(err)} mas)"))
    return rows


def fit_constrained(data):
    """Whether a fit's errors mean anything: proper-motion errors below 1 arcsec/yr (faster than any known
    neutron star), parallax error below 1 arcsec, position error below 1 arcsec (common practice, no source)."""
    s = data.get("sigma") or {}
    pm = max(s.get("pm_ra_cosdec_masyr", math.inf), s.get("pm_dec_masyr", math.inf))
    return {"proper_motion": pm < _MAS_PER_ARCSEC, "parallax": s.get("parallax_mas", math.inf) < _MAS_PER_ARCSEC,
            "position": max(s.get("ra_mas", math.inf), s.get("dec_mas", math.inf)) < _MAS_PER_ARCSEC}


def _g2(x):
    """Two significant figures (a forecast error is itself an estimate), plain below 1e4."""
    if x is None or not math.isfinite(x):
        return "n/a"
    r = _sig_round(float(x), 2)
    if abs(r) < 1:
        return f"{r:.2g}"
    if abs(r) < 100:
        return f"{r:.3g}"
    return f"{r:.0f}" if abs(r) < 1e5 else f"{r:.1e}"


def forecast_rows(d):
    rows = [("visits (TOAs)", f"{d.get('n_toas')} over {fmt(d.get('baseline_yr'))} yr"),
            ("median TOA error", fmt_duration_s(d.get("toa_error_s")))]
    cons = d.get("constrained") or {}
    s = d.get("sigma") or {}
    for key, label, unit, what in (("pm_ra_cosdec_masyr", "proper-motion error, ra*cos(dec)", "mas/yr", "proper_motion"),
                                   ("pm_dec_masyr", "proper-motion error, dec", "mas/yr", "proper_motion"),
                                   ("parallax_mas", "parallax error", "mas", "parallax")):
        e = s.get(key)
        rows.append((label, f"{_g2(e)} {unit}" if cons.get(what, True) else "not constrained by timing"))
    if d.get("expected_pm_masyr") is not None:
        rows.append(("expected proper motion", f"{fmt(d['expected_pm_masyr'])} mas/yr"))
    sig = d.get("pm_significance")
    if sig is not None:
        rows.append(("proper-motion significance of this plan", f"{_g2(sig)} sigma"))
    need = d.get("baseline_needed_yr")
    target = d.get("target_significance")
    rows.append((f"baseline for {fmt(target)} sigma", f"{_g2(need)} yr" if need is not None else
                 f"not reached within {fmt(d.get('max_baseline_yr'))} yr"))
    return rows


def fit_rows(d):
    rows = [("TOAs fitted", str(d.get("n_toas"))), ("reduced chi-square", f"{d.get('chi2_reduced', float('nan')):.2f}"),
            ("converged", fmt(d.get("converged")))]
    res = d.get("residuals") or {}
    if res.get("weighted_rms_us") is not None:
        rows.append(("weighted rms residual", fmt_duration_s(res["weighted_rms_us"] * 1e-6)))
    rows += _timing_rows(d, fit_constrained(d))
    return rows


def trace_rows(d):
    rows = []
    assocs = d.get("associations") if isinstance(d.get("associations"), list) else []
    rows.append(("favoured birth association", d.get("favoured") or "none"))
    rows.append(("draws of the star", str(d.get("n_samples"))))
    pc = d.get("plane_crossing_age_yr")
    rows.append(("time since the last Galactic-plane crossing", fmt_age_interval(pc)))
    if d.get("field_probability") is not None:
        rows.append(("probability of no listed association (field, including their surroundings)",
                     _pct(d["field_probability"], d.get("field_probability_error"))))
    rows.append(("settings", _trace_settings(d.get("settings") or {})))
    return rows, association_rows(assocs)


def _trace_settings(s):
    parts = []
    if s.get("max_age_yr"):
        parts.append(f"back to {fmt_age(s['max_age_yr'])}")
    if s.get("potential"):
        parts.append(f"potential {s['potential']}")
    if s.get("astrometry_source"):
        parts.append(f"astrometry from {s['astrometry_source']}")
    if s.get("distance_source"):
        parts.append(f"distance from the {s['distance_source']}")
    return ", ".join(parts) or "n/a"


def _pct(x, err=None):
    if x is None:
        return "n/a"
    p = 100.0 * x
    if p < 0.1:
        return "< 0.1%" if p > 0 else "0%"
    if err:
        return value_error(p, 100.0 * err, "%").replace(" %", "%")
    return f"{p:.2g}%" if p < 10 else f"{p:.0f}%"


def association_rows(assocs, top=8):
    """Header and rows of the ranked association table (probability first when present)."""
    has_p = any(a.get("probability") is not None for a in assocs)
    has_near = any(a.get("neighbourhood_probability") for a in assocs)
    header = (["rank", "association"] + (["probability"] if has_p else [])
              + (["born nearby, not in it"] if has_near else [])
              + ["encounter fraction", "chance fraction", "kinematic age", "d_min (pc)"])
    rows = []
    for i, a in enumerate(assocs[:top]):
        r = [str(a.get("rank", i + 1)), str(a.get("name"))]
        if has_p:
            p = a.get("probability")
            r.append(_pct(p, a.get("probability_error")) if p is not None else "n/a")
        if has_near:
            pn = a.get("neighbourhood_probability")
            r.append(_pct(pn, a.get("neighbourhood_probability_error")) if pn is not None else "n/a")
        r += [_pct(a.get("encounter_fraction")), _pct(a.get("chance_fraction")),
              fmt_age_interval(a.get("age_yr")), fmt_interval(a.get("dmin_pc"))]
        rows.append(r)
    return header, rows


def ages_rows(d, raw_star=None):
    rows = []
    raw_star = raw_star or {}
    for key in ("spin_period", "spin_period_derivative", "temperature", "luminosity"):
        if key in raw_star:
            err = raw_star.get(f"{key}_error")
            rows.append((f"input: {key.replace('_', ' ')}",
                         f"{raw_star[key]}" + (f" ± {err}" if err is not None else "")))
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
        rows.append(("dipole field", f"{d['dipole_field_gauss']:.2g} G"))
    if d.get("spin_down_luminosity_erg_s") is not None:
        rows.append(("spin-down luminosity", f"{d['spin_down_luminosity_erg_s']:.2g} erg/s"))
    if d.get("implied_initial_period_s") is not None:
        rows.append(("initial period implied by the kinematic age",
                     fmt_interval(dict(u.get("implied_initial_period_s") or {}, median=d["implied_initial_period_s"]),
                                  "s")))
    elif d.get("implied_initial_period_note"):
        rows.append(("initial period implied by the kinematic age", d["implied_initial_period_note"]))
    if d.get("decay_timescale_yr") is not None:
        rows.append(("field-decay timescale implied (exponential)", fmt_age(d["decay_timescale_yr"])))
    cool = d.get("cooling_age_yr") or {}
    if cool.get("median") is not None:
        r = d.get("cooling_age_range_yr") or {}
        txt = fmt_age_interval(cool)
        if r.get("lo68") is not None:
            txt += f"; range over envelopes and masses {fmt_age(r['lo68'], 2)}–{fmt_age(r['hi68'], 2)}"
        rows.append(("cooling age (all envelopes and masses)", txt))
        c = d.get("cooling") or {}
        if c.get("model"):
            rows.append(("cooling model", str(c["model"])))
    return rows


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
