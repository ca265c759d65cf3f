"""Front door of the ages stage: every clock of one star side by side.

:func:`compare_ages` reads ``[star]`` and ``[ages]`` from a scenario (plus a
kinematic age from a trace, if given), computes the spin-down ages, the
field-decay timescales that reconcile the kinematic and characteristic ages,
the cooling age, and a plain-language verdict for each pair of ages.  All
uncertainties come from one joint Monte Carlo over the inputs.
"""

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..display.protocol import ResultDisplay
from .._units import quantity_edge
from ..errors import InputError, ModelRangeError
from ..io.results import interval
from .cooling_age import cooling_age, cooling_assumptions
from .display import _adapt_ages_cooling, _adapt_ages_ladder, _ages_numbers, _ages_table
from .draws import draw_kinematic_age, draw_spin, read_settings, star_motion
from .envelope import star_structure
from .pdot import pdot_note, pdot_state
from .spin_values import _implied, _spin_down
from .verdicts import PLANE_CROSSING_NAME, PLANE_CROSSING_SOURCE, age_verdicts, format_age, format_age_interval

__all__ = ["AgesResult", "compare_ages"]

_EMPTY = {"median": None, "lo68": None, "hi68": None}


def _short(iv):
    return {k: iv.get(k) for k in ("median", "lo68", "hi68")} if iv else dict(_EMPTY)


@dataclass(repr=False)
class AgesResult(ResultDisplay):
    """All ages of one star, their uncertainties and verdicts (see :meth:`to_dict`)."""

    PLOTS = {"ladder": _adapt_ages_ladder, "cooling": _adapt_ages_cooling}
    PLOT_NEEDS = {"cooling": lambda r: r.cooling is not None}
    KEY_NUMBERS = _ages_numbers
    TABLE = _ages_table

    star: str
    values: dict
    uncertainties: dict
    kinematic: dict
    shklovskii: dict
    field_decay: dict
    cooling: object
    cooling_at_mass: object
    verdicts: list
    warnings: list
    inputs: dict
    parameter_sets: list = field(default_factory=list)
    assumptions: list = field(default_factory=list)
    seed: int | None = None
    samples: int = 0

    # -- protocol -----------------------------------------------------------
    def to_dict(self):
        """JSON-ready dict: the documented ages keys (cooling, spin-down, comparison) plus extras."""
        cool = self.cooling.to_dict() if self.cooling is not None else None
        out = dict(self.values)
        out["cooling_age_yr"] = _short(self.cooling.pooled) if self.cooling is not None else dict(_EMPTY)
        out["kinematic_age_yr"] = _short(self.kinematic.get("interval"))
        out["kinematic_age_source"] = self.kinematic.get("source")
        out["kinematic_age_draws"] = self.kinematic.get("method")
        out["uncertainties"] = self.uncertainties
        out["shklovskii"] = self.shklovskii
        out["field_decay"] = self.field_decay
        out["cooling"] = cool
        if cool is not None:
            out["cooling_age_range_yr"] = cool["range_yr"]
            out["cooling_age_per_model"] = cool["per_model"]
        if self.cooling_at_mass is not None:
            out["cooling_age_at_mass_yr"] = [{k: r[k] for k in ("envelope", "mass_msun", "median", "lo68", "hi68")}
                                             for r in self.cooling_at_mass.per_model]
        out["verdicts"] = [{"pair": v["pair"], "text": v["text"], "consistent": v["consistent"],
                            "ratio": v["ratio"], **({"favoured_models": v["favoured_models"]}
                                                    if "favoured_models" in v else {}),
                            **({"reconciling_envelopes": v["reconciling_envelopes"]}
                               if "reconciling_envelopes" in v else {})}
                           for v in self.verdicts]
        out["warnings"] = list(self.warnings)
        out["inputs"] = self.inputs
        out["assumptions"] = list(self.assumptions)
        out["parameter_sets"] = [p.summary() for p in self.parameter_sets]
        out["seed"] = self.seed
        out["samples"] = self.samples
        return out

    def verdict_line(self):
        """One quotable sentence: do the ages agree (see :func:`kinage.ages.verdicts.ages_verdict`)."""
        from .verdicts import ages_verdict

        return ages_verdict(self.to_dict())

    def summary(self):
        """1-4 plain-language sentences: do the clocks agree?  Ages rounded to their 68 % intervals."""
        parts = []
        kin = self.kinematic.get("interval")
        tc = self.values.get("characteristic_age_yr")
        lower = self.values.get("characteristic_age_lower_limit_yr")
        if kin and kin.get("median") is not None:
            name = ("Time since the Galactic-plane crossing" if self.kinematic.get("source") == PLANE_CROSSING_SOURCE
                    else "Kinematic age")
            parts.append(f"{name} {format_age_interval(kin, bare=True)}")
        if lower is not None:
            parts.append(f"characteristic age above {format_age(lower)} (2 sigma; Pdot consistent with zero)")
        elif tc is not None:
            tc_iv = self.uncertainties.get("characteristic_age_yr")
            parts.append(f"characteristic age {format_age_interval(tc_iv, tc, bare=True)}")
        if self.cooling is not None and self.cooling.pooled.get("median") is not None:
            envs = [e for e in self.cooling.per_envelope if e.get("median") is not None]
            if len(envs) > 1:  # one age per envelope: they differ by more than their errors
                parts.append("cooling age " + ", ".join(f"{format_age_interval(e, bare=True)} ({e['envelope']})"
                                                        for e in envs) + " by envelope")
            else:
                r = self.cooling.range_yr
                parts.append(f"cooling age {format_age_interval(self.cooling.pooled, bare=True)} "
                             f"(range {format_age(r['lo68'], 2)}-{format_age(r['hi68'], 2)} over the masses)")
        head = ("; ".join(parts) + ".") if parts else "No ages could be computed."
        if head[0].islower():
            head = head[0].upper() + head[1:]
        if self.values.get("cooling_note"):
            head += " " + self.values["cooling_note"] + "."
        key = [v for v in self.verdicts if v["consistent"] is not None][:2]
        tail = [v.get("short", v["text"]) for v in key]
        note = self.values.get("pdot_note")
        if note and self.values.get("pdot_detection") == "spinning_up":
            tail.insert(0, note[0].upper() + note[1:] + ".")
        return " ".join([head] + tail)

    def ladder_rows(self):
        """(label, interval) rows of the age-ladder figure."""
        u = self.uncertainties
        n = self.values.get("braking_index")
        plane = self.kinematic.get("source") == PLANE_CROSSING_SOURCE
        rows = [("time since plane crossing" if plane else "kinematic", self.kinematic.get("interval")),
                ("characteristic P/2Pdot", u.get("characteristic_age_yr")),
                (f"max. spin-down (n={n:.3g})", u.get("max_spin_down_age_yr"))]
        if self.values.get("initial_period_s") is not None:
            rows.append(("spin-down (n, P0)", u.get("spin_down_age_yr")))
        if self.cooling is not None:
            rows.append(("cooling (all models)", self.cooling.pooled))
            for r in self.cooling.per_model:
                rows.append((f"cooling {r['envelope']} {r['mass_msun']:g} Msun", r))
        return rows

    def write_products(self, out_dir):
        """Write the ages table (ECSV), cooling curves (ECSV) and two PNG figures; returns the paths."""
        from astropy.table import Table

        from ..io.results import atomic_path
        from .plots import plot_age_ladder, plot_cooling_curves

        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        paths = []
        rows = self.ladder_rows()
        t = Table(_ages_table(self))
        t.meta["star"] = self.star
        with atomic_path(out / "ages_table.ecsv") as tmp:
            t.write(tmp, format="ascii.ecsv", overwrite=True)
        paths.append(out / "ages_table.ecsv")
        paths.append(Path(plot_age_ladder(rows, out / "ages_ladder.png", title=f"Ages of {self.star}")))
        if self.cooling is not None:
            curves = self.cooling.curves
            ct = Table({"t": curves[0].t_yr})
            ct["t"].unit = "yr"
            for c in curves:
                name = f"T_inf_{c.envelope}_{c.mass_msun:g}"
                ct[name] = c.T_inf_K
                ct[name].unit = "K"
            ct.meta["model"] = self.cooling.model
            ct.meta["envelopes"] = {e["envelope"]: e["description"] for e in self.cooling.per_envelope}
            ct.meta["pairing"] = getattr(self.cooling, "pairing", None) or "none"
            with atomic_path(out / "ages_cooling_curves.ecsv") as tmp:
                ct.write(tmp, format="ascii.ecsv", overwrite=True)
            paths.append(out / "ages_cooling_curves.ecsv")
            temp = (self.cooling.observed, self.cooling.observed_error) if self.cooling.quantity == "temperature" \
                else None
            paths.append(Path(plot_cooling_curves(curves, out / "ages_cooling_curves.png", temperature=temp,
                                                  kinematic=self.kinematic.get("interval"),
                                                  kinematic_name=("time since the plane crossing"
                                                                  if self.kinematic.get("source") == PLANE_CROSSING_SOURCE
                                                                  else "kinematic age"),
                                                  title=f"Cooling curves ({self.cooling.model}"
                                                        + (f", pairing {self.cooling.pairing}"
                                                           if self.cooling.pairing != "none" else "")
                                                        + f") and {self.star}")))
        return paths


@quantity_edge(None, kinematic_age_samples="yr")
def compare_ages(scenario, *, kinematic_age_samples=None, kinematic_age_source=None, rng=None, heating=None,
                 star_draws=None, solution=None):
    """Spin-down, field-decay, cooling and kinematic ages of one star, compared.

    Parameters
    ----------
    scenario : Scenario
        Uses ``[star]`` (spin_period, spin_period_derivative, temperature or
        luminosity, proper motion and parallax/distance for the Shklovskii
        term) and ``[ages]`` (defaults when absent).
    kinematic_age_samples : ndarray (yr) or Quantity [time], optional
        Monte Carlo kinematic ages from the trace stage; otherwise
        ``[ages] kinematic_age`` +- error, drawn lognormally; otherwise none.
    kinematic_age_source : str, optional
        Short description for the report; ``"plane-crossing"`` when the samples are times since the
        Galactic-plane crossing (then named so in every verdict, never "kinematic age").
    rng : numpy.random.Generator or int or None
        None: ``[trace] seed`` if given, else 1.
    heating : callable or None
        Heating H(t_yr) in erg/s for the cooling curves (e.g.
        :func:`kinage.ages.cooling.field_decay_heating`).
    star_draws : StarDraws, optional
        The trace's draws: the Shklovskii term uses its distances and proper motions.
    solution : AstrometricSolution, optional
        Else the astrometry drawn from (default ``[star]``), through the trace's distance posterior.

    Returns
    -------
    AgesResult

    Raises
    ------
    InputError
        n <= 1, P0 >= P, R not above the Buchdahl limit for a mass used.
    ModelRangeError
        The star's temperature (or luminosity) lies outside the cooling model.
    """
    from ..params import get as get_pset

    seed = None
    if rng is None:
        tr = scenario.trace
        seed = int(tr.seed) if tr is not None and tr.get("seed") is not None else 1
        rng = seed
    elif isinstance(rng, (int, np.integer)):
        seed = int(rng)
    rng = np.random.default_rng(rng)

    s = read_settings(scenario)
    star = scenario.star
    n = s.samples
    warnings = []
    star_structure(s.mass_msun, s.radius_km)
    for m in s.masses:
        star_structure(m, s.radius_km, where_mass="[ages] masses")

    # kinematic age ---------------------------------------------------------
    if kinematic_age_samples is not None and np.ndim(kinematic_age_samples) > 1:
        raise InputError("kinematic_age_samples", f"expected a 1-D array of ages (got an array of shape "
                                                  f"{tuple(int(x) for x in np.shape(kinematic_age_samples))})")
    kin_d, kin_method = draw_kinematic_age(kinematic_age_samples, s, n, rng)
    if kinematic_age_samples is not None:
        kin_iv = interval(np.asarray(kinematic_age_samples, float)[np.asarray(kinematic_age_samples, float) > 0])
        source = kinematic_age_source or "trace"
        if s.kinematic_age_yr is not None:
            warnings.append("[ages] kinematic_age ignored: kinematic-age samples from the trace were given")
    elif kin_d is not None:
        kin_iv = _lognormal_interval(s.kinematic_age_yr, s.kinematic_age_error_yr, n)
        source = kinematic_age_source or "scenario: [ages] kinematic_age"
    else:
        kin_iv, source = None, None
    kin_med = kin_iv["median"] if kin_iv else None

    # spin-down ---------------------------------------------------------------
    values = {"braking_index": s.braking_index, "initial_period_s": s.initial_period_s,
              "moment_of_inertia_g_cm2": s.moment_of_inertia}
    unc, shk, decay = {}, {"applied": False}, {}
    have_spin = star.get("spin_period") is not None and star.get("spin_period_derivative") is not None
    motion = (star_motion(scenario, n, rng, star_draws=star_draws, solution=solution)
              if have_spin and s.shklovskii else None)
    if star_draws is None and (motion or {}).get("posterior") is not None:
        warnings.extend(motion["posterior"].warnings)
    spin = draw_spin(star, s, n, rng, motion) if have_spin else None
    state = pdot_state(spin) if spin is not None else None
    spinning_up = bool(spin is not None and not spin.pdot > 0)
    for k in ("characteristic_age_yr", "dipole_field_gauss", "spin_down_luminosity_erg_s", "spin_down_age_yr",
              "max_spin_down_age_yr", "implied_initial_period_s", "decay_timescale_yr"):
        values[k] = None
    values["spinning_up"] = spinning_up
    values["implied_initial_period_note"] = None
    values["decay_timescale_note"] = None
    values["pdot_detection"] = None if state is None else state.kind
    values["pdot_intrinsic_error"] = None if state is None else state.sigma
    values["characteristic_age_lower_limit_yr"] = None
    values["pdot_note"] = None
    if spin is None:
        warnings.append("no spin_period and spin_period_derivative in [star]: spin-down ages skipped")
    else:
        shk = dict(spin.shklovskii)
        shk.update(pdot_observed=spin.pdot_observed, pdot_intrinsic=spin.pdot)
        values["period_s"] = spin.period
        values["pdot_intrinsic"] = spin.pdot
        if shk.get("applied") and spin.pdot_observed > 0 and spin.pdot_shk > 0.1 * spin.pdot_observed:
            warnings.append(f"the Shklovskii term is {100 * spin.pdot_shk / spin.pdot_observed:.0f}% of the observed "
                            "Pdot: the spin-down ages depend on the distance")
    if state is not None and state.kind == "spinning_up":
        values["pdot_note"] = pdot_note(state, spin)
        warnings.append(values["pdot_note"])
        values["implied_initial_period_note"] = "star is spinning up"
        values["decay_timescale_note"] = "star is spinning up"
        unc["fraction_spinning_up"] = state.fraction_spinning_up
    elif spin is not None:
        tc_d = _spin_down(values, unc, spin, s, state)
        if shk.get("applied"):
            unc["pdot_shklovskii"] = interval(spin.draws["pdot_shk"])
        if state.kind == "undetected":
            values["characteristic_age_lower_limit_yr"] = lower = unc["characteristic_age_yr"]["lo95"]
            values["pdot_note"] = pdot_note(state, spin, None if lower is None else format_age(lower))
            warnings.append(values["pdot_note"])
            if spinning_up:
                values["implied_initial_period_note"] = values["decay_timescale_note"] = (
                    "Pdot consistent with zero and negative: no nominal value")
        if kin_d is not None and not spinning_up:
            _implied(values, unc, decay, spin, s, kin_med, kin_d, tc_d, warnings)

    # cooling ------------------------------------------------------------------
    try:
        cool, cool_m = _cooling(star, s, rng, heating)
    except ModelRangeError as exc:
        # a measured temperature no cooling curve reaches is a finding about the star, not a bad input:
        # the spin-down ages stand, and the note says what the mismatch points to
        cool, cool_m = None, None
        values["cooling_note"] = _outside_cooling_note(exc)
        warnings.append(values["cooling_note"])
    if cool is not None:
        warnings.extend(cool.warnings)
    pset = get_pset("cooling_model", s.cooling_model, "[ages] cooling_model")
    psets = [pset] + ([get_pset("pairing", cool.pairing)] if cool is not None and cool.pairing != "none" else [])

    # verdicts -----------------------------------------------------------------
    verdicts = age_verdicts(values, unc, kin_iv, cool, s,
                            kin_name=PLANE_CROSSING_NAME if source == PLANE_CROSSING_SOURCE else "kinematic age")
    inputs = {"star": star.to_dict(), "ages": scenario.ages.to_dict() if scenario.ages is not None else {}}
    return AgesResult(
        star=str(star.get("name", "star")), values=values, uncertainties=unc,
        kinematic={"interval": kin_iv, "source": source, "method": kin_method},
        shklovskii=shk, field_decay=decay, cooling=cool, cooling_at_mass=cool_m, verdicts=verdicts,
        warnings=warnings, inputs=inputs, parameter_sets=psets, assumptions=_assumptions(s, shk, kin_method),
        seed=seed, samples=n)


def _lognormal_interval(t, err, n):
    """Interval of a kinematic age given as value +- error and drawn lognormally (see :mod:`.draws`).

    Median t and t exp(-+sigma), t exp(-+2 sigma) with sigma = err / t: the
    exact percentiles of the draws, so the quoted age is the one the user gave.
    """
    sig = float(err) / float(t) if err else 0.0
    t = float(t)
    return {"median": t, "lo68": t * np.exp(-sig), "hi68": t * np.exp(sig), "lo95": t * np.exp(-2 * sig),
            "hi95": t * np.exp(2 * sig), "n": int(n)}


def _outside_cooling_note(exc):
    """The sentence for a measurement outside every cooling curve (a :class:`ModelRangeError` from the model)."""
    t0, t1 = getattr(exc, "model_span_yr", (None, None))
    if getattr(exc, "side", "hot") == "hot":
        meaning = ("passive cooling cannot keep a star this hot at any age the model covers, which points to "
                   "internal heating (magnetic-field decay, as in magnetars) or accretion")
        if t0 is not None:
            meaning += f", or to an age below {format_age(t0)}"
    else:
        meaning = "this points to faster cooling (direct Urca) than the model"
        if t1 is not None:
            meaning += f" or an age beyond {format_age(t1)}"
    return f"No cooling age: {getattr(exc, 'short', exc.problem)}; {meaning}"


def _cooling(star, s, rng, heating):
    temp, lum = star.value("temperature", "K"), star.value("luminosity", "erg/s")
    if temp is None and lum is None:
        return None, None
    kw = dict(temperature_K=temp, temperature_error_K=star.value("temperature_error", "K") if temp else None,
              luminosity_erg_s=None if temp else lum,
              luminosity_error_erg_s=None if temp else star.value("luminosity_error", "erg/s"),
              radius_km=s.radius_km, envelopes=s.envelopes, model=s.cooling_model, samples=s.samples,
              heating=heating, pairing=getattr(s, "pairing", None))
    cool = cooling_age(masses=s.masses, rng=rng, **kw)
    try:
        cool_m = cooling_age(masses=(s.mass_msun,), rng=rng, **kw)
    except ValueError:
        cool_m = None
    return cool, cool_m


def _assumptions(s, shk, kin_method):
    a = [
        "Characteristic age P/(2 Pdot) assumes braking index 3 and P0 << P (Lorimer & Kramer 2005, eq. 3.14)",
        "Dipole field 3.2e19 sqrt(P Pdot) G: the catalogue convention (vacuum dipole, orthogonal rotator, R = 10 km, "
        "I = 1e45 g cm^2; Lorimer & Kramer 2005, eq. 3.15), as published fields are quoted; "
        f"dipole_field_input_radius_gauss is the same dipole sqrt(3 c^3 I P Pdot / (8 pi^2 R^6)) for the [ages] "
        f"radius R = {s.radius_km:g} km and I = {s.moment_of_inertia:.3g} g cm^2",
        f"Spin-down luminosity 4 pi^2 I Pdot / P^3 with I = {s.moment_of_inertia:.3g} g cm^2 (Lorimer & Kramer 2005)",
        "Field decay with P0 << P: tau_c = int B^2 dt / B^2; exponential (closed form) and Ohm + Hall "
        "(Aguilera, Pons & Miralles 2008, ApJ 673, L167)",
        *cooling_assumptions(s),
        "Gaussian, independent input errors propagated by Monte Carlo",
    ]
    if shk.get("applied"):
        a.append(shk["assumption"])
        if shk.get("distance_assumption"):
            a.append(shk["distance_assumption"])
    if kin_method:
        a.append(f"Kinematic age: {kin_method}")
    return a
