"""Report numbers: rounding to the error, units from the size, words where timing means nothing."""

import pytest

from kinage.report.numbers import (fit_constrained, fit_rows, fmt_age_interval, fmt_duration_s, round_to_error,
                                   stage_rows, value_error)


@pytest.mark.parametrize("value, error, expected", [
    # Particle Data Group rounding (Review of Particle Physics, Introduction, "rounding"): the three leading
    # digits of the error decide: 100-354 -> two significant figures, 355-949 -> one, 950-999 -> up to 1000
    (0.827, 0.119, ("0.83", "0.12")),
    (0.827, 0.367, ("0.8", "0.4")),
    (0.827, 0.0981, ("0.83", "0.10")),
    (37.7492, 0.0171, ("37.749", "0.017")),
    (523.4, 37.2, ("520", "40")),
    (13.03, 1.52, ("13.0", "1.5")),
])
def test_rounding_follows_the_particle_data_group_rule(value, error, expected):
    assert round_to_error(value, error) == expected


def test_value_error_carries_the_unit():
    assert value_error(1.2012, 0.137, "mas") == "1.20 ± 0.14 mas"


@pytest.mark.parametrize("seconds, unit", [(0.058, "ms"), (2.1e-6, "µs"), (4e-7, "ns"), (3.2, "s")])
def test_time_unit_from_its_size(seconds, unit):
    # a 58 ms residual is shown in ms, not as 58000 µs (the usual practice, no source)
    assert fmt_duration_s(seconds).endswith(" " + unit)


def test_age_interval_in_one_unit_from_the_median():
    txt = fmt_age_interval({"median": 469e3, "lo68": 333e3, "hi68": 616e3})
    assert txt.endswith("kyr") and "469" in txt
    assert fmt_age_interval({"median": 1.31e6, "lo68": 1.18e6, "hi68": 1.45e6}).endswith("Myr")


def test_unconstrained_timing_reads_not_constrained():
    # errors above 1 arcsec/yr: faster than any known neutron star (common practice, no source)
    data = {"values": {"pm_ra_cosdec_masyr": -3.2e3, "pm_dec_masyr": 1.4e4, "parallax_mas": 1.23e6,
                       "ra_mas": 8e3, "dec_mas": 6e4},
            "sigma": {"pm_ra_cosdec_masyr": 3.5e3, "pm_dec_masyr": 4.9e3, "parallax_mas": 7.7e5,
                      "ra_mas": 1.3e4, "dec_mas": 1.8e4},
            "n_toas": 25, "chi2_reduced": 1.7, "converged": True}
    assert fit_constrained(data) == {"proper_motion": False, "parallax": False, "position": False}
    rows = dict(fit_rows(data))
    assert rows["parallax"].startswith("not constrained")
    assert rows["proper motion, dec"].startswith("not constrained")
    assert "1.23e+06" not in " ".join(rows.values())


def test_labels_are_words_and_inputs_keep_their_unit():
    ages = {"kinematic_age_yr": {"median": 7.5e5, "lo68": 7.0e5, "hi68": 8.0e5}, "characteristic_age_yr": 1.9e6,
            "uncertainties": {"characteristic_age_yr": {"median": 1.9e6, "lo68": 1.77e6, "hi68": 2.05e6}},
            "spin_down_luminosity_erg_s": 1.4e31, "braking_index": 3.0}
    rows = stage_rows("ages", ages, {"star": {"temperature": "74 eV", "temperature_error": "3 eV"}})
    labels = [k for k, _ in rows]
    assert all("_" not in k for k in labels)  # never a raw JSON key
    assert dict(rows)["input: temperature"] == "74 eV ± 3 eV"  # echoed as given, not converted to K
    assert dict(rows)["spin-down luminosity"] == "1.4e+31 erg/s"
