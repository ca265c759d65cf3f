"""Read the ages inputs from a scenario and draw them for the Monte Carlo.

Measured quantities with an ``_error`` are drawn as independent Gaussians
(spin period truncated at zero).  The Shklovskii term uses the star's joint
distance and proper-motion draws: the trace's own draws when a trace ran, else
draws from the same distance posterior and astrometric conditioning
(:func:`kinage.kinematics.scenario_distance_posterior`,
:func:`kinage.kinematics.draw_astrometry`), so every stage uses one distance.
A kinematic age given in the scenario is drawn lognormally (median = value,
sigma of ln age = error / value); samples from a trace are resampled with
replacement.
"""

from dataclasses import dataclass, field

import astropy.units as u
import numpy as np

from ..errors import InputError
from ..io.schema import SCHEMA
from ..io.results import interval
from .spindown import shklovskii_pdot, transverse_velocity

__all__ = ["AgesSettings", "SpinDraws", "read_settings", "draw_spin", "draw_kinematic_age", "star_motion"]


@dataclass(frozen=True)
class AgesSettings:
    """The ``[ages]`` values (schema defaults when the table is absent), plain floats."""

    braking_index: float
    braking_index_error: float | None
    initial_period_s: float | None
    initial_period_error_s: float | None
    moment_of_inertia: float
    kinematic_age_yr: float | None
    kinematic_age_error_yr: float | None
    mass_msun: float
    radius_km: float
    envelopes: tuple
    masses: tuple
    cooling_model: str
    light_element_mass: tuple
    hall_timescale_yr: float | None
    ohmic_timescale_yr: float | None
    samples: int
    shklovskii: bool
    pairing: str | None = None


def _ages_value(section, key, unit=None):
    if section is not None:
        return section.value(key, unit)
    k = SCHEMA["ages"].get(key)
    return None if k is None else k.default


def _envelopes(section):
    """``[ages] envelopes`` with one 'light<log10 dM/M>' envelope per ``light_element_mass`` value, in order of
    light-element mass: iron first, the light-element layers, then fully accreted."""
    from .envelope import light_element_envelope

    envs = [str(e).lower() for e in _ages_value(section, "envelopes")]
    light = [light_element_envelope(x) for x in sorted(set(_ages_value(section, "light_element_mass") or ()))]
    if not light:
        return tuple(envs)
    head = [e for e in envs if e != "accreted"]
    at = head.index("iron") + 1 if "iron" in head else 0
    out = head[:at] + [e for e in light if e not in envs] + head[at:] + (["accreted"] if "accreted" in envs else [])
    return tuple(out)


def read_settings(scenario):
    """:class:`AgesSettings` from ``scenario.ages`` (or the schema defaults)."""
    a = scenario.ages
    s = AgesSettings(
        braking_index=float(_ages_value(a, "braking_index")),
        braking_index_error=_ages_value(a, "braking_index_error"),
        initial_period_s=_ages_value(a, "initial_period", "s"),
        initial_period_error_s=_ages_value(a, "initial_period_error", "s"),
        moment_of_inertia=float(_ages_value(a, "moment_of_inertia", "g cm2")),
        kinematic_age_yr=_ages_value(a, "kinematic_age", "yr"),
        kinematic_age_error_yr=_ages_value(a, "kinematic_age_error", "yr"),
        mass_msun=float(_ages_value(a, "mass", "solMass")),
        radius_km=float(_ages_value(a, "radius", "km")),
        envelopes=_envelopes(a),
        masses=tuple(float(x) for x in _ages_value(a, "masses")),
        cooling_model=str(_ages_value(a, "cooling_model")),
        light_element_mass=tuple(_ages_value(a, "light_element_mass") or ()),
        hall_timescale_yr=_ages_value(a, "hall_timescale", "yr"),
        ohmic_timescale_yr=_ages_value(a, "ohmic_timescale", "yr"),
        samples=int(_ages_value(a, "samples")),
        shklovskii=bool(_ages_value(a, "shklovskii")),
        # None: the schema default, which applies to models with an equation of state only; a set given in the
        # scenario must suit the model (kinage.ages.cooling.CoolingModel.with_pairing)
        pairing=str(a.value("pairing")) if a is not None and a.given("pairing") else None,
    )
    if not s.braking_index > 1:
        raise InputError("[ages] braking_index", f"must be greater than 1 (got {s.braking_index:g}); "
                         "n <= 1 gives no finite spin-down age")
    if any(not x > 0 for x in s.masses):
        raise InputError("[ages] masses", f"must all be positive (got {list(s.masses)})")
    return s


@dataclass
class SpinDraws:
    """Nominal values and Monte Carlo draws of the spin inputs (plain floats/arrays).

    ``pdot`` is the intrinsic period derivative (observed minus Shklovskii term
    when applied); ``pdot_shk`` is that term (zeros when not applied).
    """

    period: float
    pdot_observed: float
    pdot_shk: float
    pdot: float
    braking_index: float
    initial_period: float | None
    draws: dict = field(default_factory=dict)
    shklovskii: dict = field(default_factory=dict)


def _gauss(rng, value, error, n):
    if error is None or not error > 0:
        return np.full(n, float(value))
    return rng.normal(float(value), float(error), n)


def draw_spin(star, settings, n, rng, motion=None):
    """Draw P, Pdot (Shklovskii-corrected), n and P0.

    Parameters
    ----------
    star : Section
        ``[star]``; must give spin_period and spin_period_derivative.
    settings : AgesSettings
    n : int
        Number of draws.
    rng : numpy.random.Generator
    motion : dict, optional
        Distance and proper-motion draws for the Shklovskii term (:func:`star_motion`).

    Returns
    -------
    SpinDraws

    Raises
    ------
    InputError
        P0 >= P.
    """
    p = star.value("spin_period", "s")
    pe = star.value("spin_period_error", "s")
    pdot = star.value("spin_period_derivative", u.dimensionless_unscaled)
    pdote = star.value("spin_period_derivative_error", u.dimensionless_unscaled)
    p_d = np.abs(_gauss(rng, p, pe, n))
    pdot_d = _gauss(rng, pdot, pdote, n)
    n_d = _gauss(rng, settings.braking_index, settings.braking_index_error, n)
    p0 = settings.initial_period_s
    p0_d = None
    if p0 is not None:
        if p0 >= p:
            raise InputError("[ages] initial_period", f"must be shorter than the spin period P = {p:.6g} s "
                             f"(got P0 = {p0:.6g} s)")
        p0_d = np.abs(_gauss(rng, p0, settings.initial_period_error_s, n))
    shk = _shklovskii(settings, p_d, n, rng, motion)
    shk_d = shk.pop("draws")
    return SpinDraws(
        period=p, pdot_observed=pdot, pdot_shk=shk["pdot_shk_nominal"], pdot=pdot - shk["pdot_shk_nominal"],
        braking_index=settings.braking_index, initial_period=p0,
        draws={"period": p_d, "pdot_observed": pdot_d, "pdot_shk": shk_d, "pdot": pdot_d - shk_d,
               "braking_index": n_d, "initial_period": p0_d},
        shklovskii=shk,
    )


def star_motion(scenario, n, rng, *, star_draws=None, solution=None):
    """Distance and proper-motion draws of the star for the Shklovskii term.

    Parameters
    ----------
    scenario : Scenario
    n : int
        Draws to make when there is no trace.
    rng : numpy.random.Generator
    star_draws : StarDraws, optional
        The trace's draws: used as they are (the same distance posterior and
        proper motions as the trace).
    solution : AstrometricSolution, optional
        The astrometry the run uses (e.g. a timing fit combined with
        ``[star]``); default the ``[star]`` values.

    Returns
    -------
    dict or None
        ``distance_pc``, ``pm_ra_cosdec``, ``pm_dec`` (arrays), ``posterior``
        (DistancePosterior), ``source``; or ``{"note": ...}`` when the term
        cannot be computed.
    """
    from ..astrometry import AstrometricSolution
    from ..kinematics import draw_astrometry, scenario_distance_posterior

    if star_draws is not None:
        return {"distance_pc": np.asarray(star_draws.distance_pc, float),
                "pm_ra_cosdec": np.asarray(star_draws.pm_ra_cosdec, float),
                "pm_dec": np.asarray(star_draws.pm_dec, float),
                "posterior": star_draws.posterior, "source": star_draws.distance_source, "from_trace": True}
    star = scenario.star
    if solution is None:
        if star.get("ra") is None or star.get("dec") is None:  # the position does not enter the term
            star = star.replace(ra=0.0 * u.deg, dec=0.0 * u.deg)
        solution = AstrometricSolution.from_star(star)
    if not (np.isfinite(solution.values[2]) and np.isfinite(solution.values[3])):
        return {"note": "not applied: no proper motion given"}
    if not np.isfinite(solution.values[4]) and star.get("distance") is None:
        return {"note": "not applied: no parallax or distance given"}
    posterior = scenario_distance_posterior(scenario, solution)
    _, _, dist, pmra, pmdec = draw_astrometry(solution, posterior, n, rng)
    return {"distance_pc": dist, "pm_ra_cosdec": pmra, "pm_dec": pmdec, "posterior": posterior,
            "source": posterior.source}


_SOURCE_WORDS = {"parallax": "parallax", "distance": "[star] distance",
                 "parallax+distance": "parallax combined with the [star] distance"}


def _shklovskii(settings, p_d, n, rng, motion):
    zeros = np.zeros(n)
    out = {"applied": False, "pdot_shk_nominal": 0.0, "draws": zeros}
    if not settings.shklovskii:
        out["note"] = "switched off ([ages] shklovskii = false)"
        return out
    if motion is None:
        out["note"] = "not applied: no proper motion given"
        return out
    if "note" in motion:
        out["note"] = motion["note"]
        return out
    d_all = motion["distance_pc"] / 1000.0
    mu_all = np.hypot(motion["pm_ra_cosdec"], motion["pm_dec"])
    m = d_all.size
    # the same joint (distance, proper motion) draws, each used equally often, in random order
    rows = rng.permutation(np.arange(n) % m) if m != n else rng.permutation(m)
    d_d, mu_d = d_all[rows], mu_all[rows]
    shk_d = shklovskii_pdot(p_d, mu_d, d_d)
    d_med = float(np.median(d_all))
    out.update(applied=True, pdot_shk_nominal=float(np.median(shk_d)), draws=shk_d, distance_kpc=d_med,
               distance_source=motion["source"], proper_motion_masyr=float(np.median(mu_all)),
               transverse_velocity_kms=float(np.median(transverse_velocity(mu_all, d_all))),
               distance_interval_pc=interval(motion["distance_pc"]), n_distance_draws=int(m),
               distance_from_trace=bool(motion.get("from_trace")),
               pdot_shk_interval={k: v for k, v in interval(shk_d).items() if k != "n"})
    whose = "the trace's" if motion.get("from_trace") else "the star's"
    out["assumption"] = (f"Shklovskii term P v_t^2/(c d) subtracted draw by draw, with {whose} joint distance and "
                         f"proper-motion draws (distance from the {_SOURCE_WORDS.get(motion['source'], 'n/a')}); "
                         "Galactic acceleration terms neglected (Shklovskii 1970)")
    posterior = motion.get("posterior")
    if posterior is not None and not motion.get("from_trace"):
        out["distance_words"] = posterior.words()
        out["distance_assumption"] = posterior.assumption()
        out["distance_warnings"] = list(posterior.warnings)
    return out


def draw_kinematic_age(samples, settings, n, rng):
    """Kinematic-age draws (yr) and a description of how they were made.

    Parameters
    ----------
    samples : array-like or None, yr
        From a trace; resampled with replacement to ``n`` draws.
    settings : AgesSettings
    n : int
    rng : numpy.random.Generator

    Returns
    -------
    draws : ndarray or None
    method : str or None
    """
    if samples is not None:
        s = np.asarray(samples, float).ravel()
        s = s[np.isfinite(s) & (s > 0)]
        if s.size == 0:
            raise InputError("kinematic_age_samples", "no finite positive kinematic ages among the samples")
        return rng.choice(s, size=n, replace=True), f"{s.size} Monte Carlo samples resampled with replacement"
    t = settings.kinematic_age_yr
    if t is None:
        return None, None
    err = settings.kinematic_age_error_yr
    if err is None:
        return np.full(n, float(t)), "[ages] kinematic_age without error"
    sig = float(err) / float(t)
    return float(t) * np.exp(rng.normal(0.0, sig, n)), (
        f"[ages] kinematic_age drawn lognormally: median {t:.4g} yr, sigma(ln t) = error / value = {sig:.3g}")
