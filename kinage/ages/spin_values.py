"""Spin-down values of the ages comparison and what the kinematic age implies (initial period, field-decay
timescales), each with its Monte Carlo interval; used by :func:`kinage.ages.compare.compare_ages`."""

import numpy as np

from ..display.sentences import format_age
from ..io.results import interval
from .field_decay import (exponential_decay_timescale, ohm_hall_characteristic_age, ohm_hall_timescale,
                          ohm_hall_true_age)
from .pdot import open_interval
from .spindown import (braking_index_age, characteristic_age, dipole_field, implied_initial_period,
                       max_braking_index_age, spin_down_luminosity)

__all__ = []


def _num(x):
    x = float(x)
    return x if np.isfinite(x) else None


def _spin_down(values, unc, spin, s, state):
    """Nominal spin-down values (Pdot > 0) and their Monte Carlo intervals; returns the tau_c draws (yr).

    Ages grow without bound as Pdot -> 0+, so when some draws spin up their
    intervals are taken with those draws at +infinity (:func:`.pdot.open_interval`).
    """
    d = spin.draws
    p, pd, nb = spin.period, spin.pdot, s.braking_index
    if pd > 0:
        values["characteristic_age_yr"] = _num(characteristic_age(p, pd))
        # the catalogue convention 3.2e19 sqrt(P Pdot) G (R = 10 km, I = 1e45 g cm^2), as published fields are quoted
        values["dipole_field_gauss"] = _num(dipole_field(p, pd))
        # the same vacuum dipole for the [ages] radius and moment of inertia
        values["dipole_field_input_radius_gauss"] = _num(dipole_field(p, pd, s.radius_km, s.moment_of_inertia))
        values["spin_down_luminosity_erg_s"] = _num(spin_down_luminosity(p, pd, s.moment_of_inertia))
        values["max_spin_down_age_yr"] = _num(max_braking_index_age(p, pd, nb))
        if s.initial_period_s is not None:
            values["spin_down_age_yr"] = _num(braking_index_age(p, pd, nb, s.initial_period_s))
    age_iv = interval if state.fraction_spinning_up == 0 else (lambda x: open_interval(x, d["pdot"]))
    tc_d = characteristic_age(d["period"], d["pdot"])
    unc["characteristic_age_yr"] = age_iv(tc_d)
    unc["dipole_field_gauss"] = interval(dipole_field(d["period"], d["pdot"]))
    unc["spin_down_luminosity_erg_s"] = interval(spin_down_luminosity(d["period"], d["pdot"], s.moment_of_inertia))
    unc["max_spin_down_age_yr"] = age_iv(max_braking_index_age(d["period"], d["pdot"], d["braking_index"]))
    if d["initial_period"] is not None:
        unc["spin_down_age_yr"] = age_iv(braking_index_age(d["period"], d["pdot"], d["braking_index"],
                                                           d["initial_period"]))
    unc["fraction_spinning_up"] = state.fraction_spinning_up
    return tc_d


def _implied(values, unc, decay, spin, s, kin_med, kin_d, tc_d, warnings):
    """Initial period and decay timescales implied by the kinematic age."""
    d = spin.draws
    p, pd, nb = spin.period, spin.pdot, s.braking_index
    tc = values["characteristic_age_yr"]
    p0 = _num(implied_initial_period(p, pd, kin_med, nb))
    values["implied_initial_period_s"] = p0
    if p0 is None:
        values["implied_initial_period_note"] = (
            f"no solution: the kinematic age {format_age(kin_med)} exceeds the maximum spin-down age "
            f"2 tau_c/(n-1) = {format_age(values['max_spin_down_age_yr'])} for n = {nb:g}")
    p0_d = implied_initial_period(d["period"], d["pdot"], kin_d, d["braking_index"])
    unc["implied_initial_period_s"] = interval(p0_d)
    unc["implied_initial_period_fraction_with_solution"] = float(np.mean(np.isfinite(p0_d)))
    values["braking_index_for_kinematic_age"] = _num(1.0 + 2.0 * tc / kin_med)

    tau_d = _num(exponential_decay_timescale(kin_med, tc))
    values["decay_timescale_yr"] = tau_d
    if tau_d is None:
        values["decay_timescale_note"] = (
            f"no solution: the kinematic age {format_age(kin_med)} is not shorter than the characteristic age "
            f"{format_age(tc)} (decay only makes a star look older)")
    td_d = exponential_decay_timescale(kin_d, tc_d)
    unc["decay_timescale_yr"] = interval(td_d)
    decay["exponential"] = {
        "decay_timescale_yr": tau_d, "interval": interval(td_d),
        "fraction_with_solution": float(np.mean(np.isfinite(td_d))),
        "initial_field_gauss": _num(values["dipole_field_gauss"] * np.exp(kin_med / tau_d)) if tau_d else None,
        "note": values["decay_timescale_note"],
    }
    to, th = s.ohmic_timescale_yr, s.hall_timescale_yr
    oh = {"ohmic_timescale_yr": to, "hall_timescale_yr": th}
    if to is not None and th is not None:
        oh["characteristic_age_at_kinematic_age_yr"] = interval(ohm_hall_characteristic_age(kin_d, to, th))
        oh["true_age_for_measured_tau_c_yr"] = interval(ohm_hall_true_age(tc_d, to, th))
        oh["note"] = "both timescales given: forward prediction"
    elif to is not None or th is not None:
        solved = ohm_hall_timescale(kin_d, tc_d, ohmic_timescale_yr=to, hall_timescale_yr=th)
        key = "hall_timescale_yr" if th is None else "ohmic_timescale_yr"
        oh[f"solved_{key}"] = interval(solved)
        oh["fraction_with_solution"] = float(np.mean(np.isfinite(solved)))
        oh["note"] = f"{key.replace('_yr', '').replace('_', ' ')} solved for with the other fixed"
    else:
        oh["note"] = "not computed: give [ages] ohmic_timescale and/or hall_timescale"
    decay["ohm_hall"] = oh
