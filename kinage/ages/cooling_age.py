"""Cooling age: invert cooling curves for a measured temperature or luminosity.

Curves are computed once per (envelope, mass) on a fixed log-time grid and
cached (:func:`.cooling.cooling_curve`); Monte Carlo draws of the measured
redshifted temperature (or luminosity) are then inverted by interpolation in
log T - log t, never by re-integrating.  The result reports the age for each
envelope and mass, the pooled interval (equal weight per combination) and the
range spanned by the combinations.
"""

from dataclasses import dataclass, field

import numpy as np

from .._units import quantity_edge
from ..errors import InputError, ModelRangeError
from ..io.results import interval
from .cooling import CoolingModel, cooling_curve

__all__ = ["CoolingAgeResult", "cooling_age", "cooling_assumptions"]

_EV_PER_K = 8.617333262e-5  # Boltzmann constant in eV/K (CODATA 2018)


@dataclass
class CoolingAgeResult:
    """Cooling age of one star over a set of envelopes and masses.

    Attributes
    ----------
    quantity : {'temperature', 'luminosity'}
    observed, observed_error : float
        K (redshifted temperature) or erg/s (redshifted luminosity).
    pooled : dict
        :func:`kinage.io.results.interval` of the ages of all combinations (yr).
    per_model : list of dict
        ``envelope``, ``mass_msun``, ``median``, ``lo68``, ``hi68``,
        ``fraction_in_range``, ``too_hot``, ``too_cold``.
    per_envelope : list of dict
        ``envelope``, ``median``, ``lo68``, ``hi68`` (yr) of the ages of one
        envelope pooled over the masses (equal weight per mass), plus
        ``description`` and ``light_element_log_mass`` (log10 Delta M/M, or
        None for iron, accreted and gpe83).
    range_yr : dict
        ``lo68``/``hi68``: the lowest lo68 and highest hi68 over the
        combinations; ``median_min``/``median_max``: range of their medians.
    curves : list of CoolingCurve
    model : str
    pairing : str
        ``pairing`` parameter set of the curves ('none': unpaired nucleons).
    warnings : list of str
    """

    quantity: str
    observed: float
    observed_error: float | None
    pooled: dict
    per_model: list
    range_yr: dict
    curves: list = field(repr=False)
    model: str = "minimal"
    warnings: list = field(default_factory=list)
    samples: np.ndarray = field(default=None, repr=False)
    per_envelope: list = field(default_factory=list)
    pairing: str = "none"

    def to_dict(self):
        """JSON-ready record."""
        return {
            "quantity": self.quantity,
            "observed": self.observed,
            "observed_error": self.observed_error,
            "model": self.model,
            "pairing": self.pairing,
            "cooling_age_yr": {k: self.pooled[k] for k in ("median", "lo68", "hi68", "lo95", "hi95")},
            "per_model": list(self.per_model),
            "per_envelope": list(self.per_envelope),
            "range_yr": dict(self.range_yr),
            "warnings": list(self.warnings),
        }


@quantity_edge(None, temperature_K="K", temperature_error_K="K", luminosity_erg_s="erg/s",
               luminosity_error_erg_s="erg/s", masses="solMass", radius_km="km")
def cooling_age(temperature_K=None, temperature_error_K=None, *, luminosity_erg_s=None, luminosity_error_erg_s=None,
                masses=(1.2, 1.4, 1.6), radius_km=12.0, envelopes=("iron", "accreted"), model="minimal",
                samples=4000, rng=None, heating=None, where=None, pairing=None):
    """Cooling age for a measured redshifted temperature (or luminosity).

    Parameters
    ----------
    temperature_K : float or Quantity, K (or eV as kT), optional
        Redshifted effective temperature seen at infinity.
    temperature_error_K : float or Quantity, K, optional
        1-sigma error (Gaussian draws, truncated at zero); ``None``: exact.
    luminosity_erg_s, luminosity_error_erg_s : float or Quantity, erg/s, optional
        Redshifted bolometric luminosity instead of a temperature.
    masses : sequence of float or Quantity, solar masses
    radius_km : float or Quantity, km
        One radius for all masses.
    envelopes : sequence of str
        Envelope relations (:mod:`.envelope`): 'iron', 'accreted', 'gpe83' or
        'light<log10 dM/M>' (:func:`.envelope.light_element_envelope`).
    model : str or ParameterSet
        Cooling-model parameter set.
    samples : int
        Monte Carlo draws per combination.
    rng : numpy.random.Generator or int or None
    heating : callable or None
        Heating H(t_yr) in erg/s passed to every curve.
    where : str, optional
        Field named in error messages (default ``[star] temperature`` or
        ``[star] luminosity``).
    pairing : str or None
        ``pairing`` parameter set (:meth:`.cooling.CoolingModel.with_pairing`:
        None is the default set for models with an equation of state,
        unpaired otherwise).

    Returns
    -------
    CoolingAgeResult

    Raises
    ------
    ModelRangeError
        The measured value lies outside what every curve covers within the
        model's validity (hotter than any star after 100 yr or colder than the
        envelope relations allow).
    """
    import astropy.units as u

    if isinstance(temperature_K, u.Quantity):
        temperature_K = temperature_K.to_value(u.K, equivalencies=u.temperature_energy())
    if isinstance(temperature_error_K, u.Quantity):
        temperature_error_K = temperature_error_K.to_value(u.K, equivalencies=u.temperature_energy())
    if temperature_K is not None:
        quantity, value, err = "temperature", temperature_K, temperature_error_K
    elif luminosity_erg_s is not None:
        quantity, value, err = "luminosity", luminosity_erg_s, luminosity_error_erg_s
    else:
        raise InputError(where or "[star] temperature", "a temperature or a luminosity is needed for a cooling age")
    where = where or f"[star] {quantity}"
    value = float(value)
    if not value > 0:
        raise InputError(where, f"must be positive (got {value})")
    if err is not None and not float(err) > 0:
        raise InputError(f"{where}_error", f"must be positive (got {err})")
    masses = tuple(float(x) for x in masses)
    if not masses or not envelopes:
        raise InputError("[ages] masses", "need at least one mass and one envelope")
    m = CoolingModel.resolve(model)
    if pairing is not None or not isinstance(model, CoolingModel):
        m = m.with_pairing(pairing)
    rng = np.random.default_rng(rng)
    curves = [cooling_curve(mass, radius_km, env, model=m, heating=heating) for env in envelopes for mass in masses]
    radius_notes = _eos_radius_notes(m, masses, radius_km)

    if err is None:
        draws = np.full(samples, value)
    else:
        draws = rng.normal(value, float(err), samples)
        draws = draws[draws > 0]

    nominal_ok = False
    per_model, pooled, warnings = [], [], list(radius_notes)
    for c in curves:
        y = c.T_inf_K if quantity == "temperature" else c.L_inf_erg_s
        ages = c.age_at_temperature(draws) if quantity == "temperature" else c.age_at_luminosity(draws)
        nominal = c.age_at_temperature(value) if quantity == "temperature" else c.age_at_luminosity(value)
        nominal_ok |= bool(np.isfinite(nominal))
        ymax = np.nanmax(y[c.valid]) if c.valid.any() else np.nan
        iv = interval(ages)
        ok = np.isfinite(ages)
        rec = {"envelope": c.envelope, "mass_msun": c.mass_msun,
               "median": iv["median"], "lo68": iv["lo68"], "hi68": iv["hi68"],
               "nominal_yr": float(nominal) if np.isfinite(nominal) else None,
               "fraction_in_range": float(ok.mean()) if ok.size else 0.0,
               "too_hot": float(np.mean(draws > ymax)) if draws.size else 0.0,
               "too_cold": float(np.mean(~ok & (draws <= ymax))) if draws.size else 0.0}
        per_model.append(rec)
        pooled.append(ages[ok])
        if ok.size and 0 < ok.mean() < 0.99:
            warnings.append(f"{c.label}: {100 * (1 - ok.mean()):.0f}% of the {quantity} draws fall outside this "
                            f"curve's valid range ({m.t_start_yr:g}-{m.t_end_yr:g} yr) and are left out")
        elif ok.size and not ok.any():
            warnings.append(f"{c.label}: the measured {quantity} is outside this curve's valid range")

    if not nominal_ok:
        lo = min(np.nanmin((c.T_inf_K if quantity == "temperature" else c.L_inf_erg_s)[c.valid]) for c in curves)
        hi = max(np.nanmax((c.T_inf_K if quantity == "temperature" else c.L_inf_erg_s)[c.valid]) for c in curves)
        if quantity == "temperature":  # also as kT in eV, the unit X-ray observers quote
            got, span = (f"{value:.3g} K (kT = {value * _EV_PER_K:.3g} eV)",
                         f"{lo:.3g}-{hi:.3g} K, kT = {lo * _EV_PER_K:.3g}-{hi * _EV_PER_K:.3g} eV,")
        else:
            got, span = f"{value:.3g} erg/s", f"{lo:.3g}-{hi:.3g} erg/s"
        err = ModelRangeError(where, f"{got} is outside the range of cooling model '{m.display_name}' "
                              f"({span} between {m.t_start_yr:g} and {m.t_end_yr:g} yr for "
                              f"envelopes {', '.join(envelopes)} and masses {', '.join(f'{x:g}' for x in masses)} "
                              f"solMass)")
        err.side = "hot" if value > hi else "cold"  # hotter (brighter) or colder than every curve
        err.model_span_yr = (m.t_start_yr, m.t_end_yr)
        if quantity == "temperature":
            word = "hotter" if err.side == "hot" else "colder"
            short = (f"kT = {value * _EV_PER_K:.3g} eV is {word} than every curve of cooling model '{m.display_name}' "
                     f"(kT = {lo * _EV_PER_K:.3g}-{hi * _EV_PER_K:.3g} eV")
        else:
            word = "brighter" if err.side == "hot" else "fainter"
            short = (f"L = {value:.3g} erg/s is {word} than every curve of cooling model '{m.display_name}' "
                     f"({lo:.3g}-{hi:.3g} erg/s")
        err.short = short + f" from {m.t_start_yr:g} to {m.t_end_yr:g} yr)"
        raise err
    per_envelope = _per_envelope(envelopes, curves, pooled)
    all_ages = np.concatenate(pooled) if pooled else np.array([])
    meds = [r["median"] for r in per_model if r["median"] is not None]
    los = [r["lo68"] for r in per_model if r["lo68"] is not None]
    his = [r["hi68"] for r in per_model if r["hi68"] is not None]
    rng_yr = {"lo68": min(los) if los else None, "hi68": max(his) if his else None,
              "median_min": min(meds) if meds else None, "median_max": max(meds) if meds else None}
    return CoolingAgeResult(quantity=quantity, observed=value, observed_error=None if err is None else float(err),
                            pooled=interval(all_ages), per_model=per_model, range_yr=rng_yr, curves=curves,
                            model=m.name, warnings=warnings, samples=all_ages, per_envelope=per_envelope,
                            pairing=m.pairing_label)


def _eos_radius_notes(m, masses, radius_km, tolerance_km=0.5):
    """Warnings when an EOS model's radii differ from the radius given (which it then does not use)."""
    if m.eos is None or radius_km is None:
        return []
    off = [(mass, m.radius_for(mass, radius_km)) for mass in masses]
    off = [(mass, r) for mass, r in off if abs(r - radius_km) > tolerance_km]
    if not off:
        return []
    return [f"[ages] radius = {radius_km:g} km is not used by cooling model '{m.name}': its equation of state "
            f"'{m.eos}' gives " + ", ".join(f"R = {r:.2f} km at {mass:g} Msun" for mass, r in off)]


def _per_envelope(envelopes, curves, pooled):
    """Interval of each envelope's ages pooled over the masses (each mass's draws weigh the same)."""
    from .envelope import light_element_log_mass, envelope_label

    out = []
    for env in dict.fromkeys(str(e).lower() for e in envelopes):
        ages = [a for c, a in zip(curves, pooled) if c.envelope == env]
        iv = interval(np.concatenate(ages) if ages else np.array([]))
        out.append({"envelope": env, "median": iv["median"], "lo68": iv["lo68"], "hi68": iv["hi68"],
                    "description": envelope_label(env), "light_element_log_mass": light_element_log_mass(env)})
    return out


def cooling_assumptions(s):
    """The cooling model's lines of an assumptions list (reference-star scalings, or a star from an EOS).

    Parameters
    ----------
    s : AgesSettings
        ``cooling_model``, ``light_element_mass``, ``radius_km``.
    """
    from ..params import get

    eos = get("cooling_model", s.cooling_model).values.get("eos")
    light = (f", light-element layers log10(Delta M/M) = {', '.join(f'{x:g}' for x in s.light_element_mass)}"
             if s.light_element_mass else "")
    env = (f"Envelopes: Potekhin, Chabrier & Yakovlev 1997 (iron, accreted{light}), Gudmundsson, Pethick & "
           "Epstein 1983")
    if eos is None:
        return [f"Isothermal-core cooling from 100 yr, model '{s.cooling_model}': C ~ 1e39 T9 erg/K, "
                "L_MU ~ 1e40 T9^8 erg/s, no superfluidity (Yakovlev & Pethick 2004, ARA&A 42, 169)", env,
                f"One radius R = {s.radius_km:g} km for every mass; redshift sqrt(1 - 2GM/Rc^2)"]
    from ..params.pairing import DEFAULT

    pairing = get("pairing", getattr(s, "pairing", None) or DEFAULT)
    if pairing.name == "none":
        paired = "unpaired nucleons (pairing 'none')"
    else:
        v = pairing.values
        paired = (f"nucleon pairing '{pairing.name}' (neutron 1S0 {v['neutron_singlet']}, neutron 3P2 "
                  f"{v['neutron_triplet']}, proton 1S0 {v['proton_singlet']}; Ho et al. 2015 gap fits): heat capacity "
                  "and modified Urca/bremsstrahlung reduction factors (Levenfish & Yakovlev 1994; Yakovlev et al. "
                  "2001), pair breaking and formation with the vector current removed (Leinson & Perez 2006; Page "
                  "et al. 2009); crust left out")
    return [f"Isothermal interior from 100 yr, model '{s.cooling_model}': TOV star of EOS {eos} for each mass, "
            "heat capacity and modified Urca + nucleon bremsstrahlung of an npe core integrated over the "
            f"volume with redshift factors (Yakovlev et al. 2001, Phys. Rep. 354, 1); {paired}", env,
            f"Radius from the EOS for each mass (the [ages] radius is not used); redshift sqrt(1 - 2GM/Rc^2)"]
