"""Report numbers: rounding to the error, units from the size, words where timing means nothing."""

import pytest

from kinage.report.numbers import (fit_constrained, fit_rows, fmt_age_interval, fmt_duration_s, fmt_interval,
                                   fmt_power, round_to_error, stage_rows, value_error)


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
    # the narrower half-width (136 kyr) has two significant figures by the Particle Data Group rule, so the
    # median and both ends are given to 10 kyr alike
    assert fmt_age_interval({"median": 469e3, "lo68": 333e3, "hi68": 616e3}) == "470 kyr (68%: 330-620 kyr)"
    assert fmt_age_interval({"median": 1.31e6, "lo68": 1.18e6, "hi68": 1.45e6}) == "1.31 Myr (68%: 1.18-1.45 Myr)"


@pytest.mark.parametrize("interval, expected", [
    # one decimal place for median and ends, from the narrower half-width (Particle Data Group rule: 55 -> one
    # figure, 43.8 -> one figure, 532 -> one figure), never fewer than two significant figures of the median
    ({"median": 407.0, "lo68": 352.0, "hi68": 490.0}, "410 (68%: 350-490)"),
    ({"median": 55.8, "lo68": 12.0, "hi68": 160.0}, "56 (68%: 12-160)"),
    ({"median": 652.0, "lo68": 120.0, "hi68": 2200.0}, "650 (68%: 120-2,200)"),
    # a range through zero reads "from -250 to 290", not "-250–290" (common practice, no source)
    ({"median": 45.0, "lo68": -253.0, "hi68": 289.0}, "50 (68%: -250 to 290)"),
    # an end that is not zero keeps its sign: a radial velocity 45 (68%: -3.5 to 104) km/s rounded to tens
    # must not read "0-100" (common practice, no source)
    ({"median": 45.0, "lo68": -3.5, "hi68": 104.0}, "50 (68%: -3.5 to 100)"),
])
def test_interval_median_and_ends_share_one_precision(interval, expected):
    assert fmt_interval(interval) == expected


@pytest.mark.parametrize("x, expected", [
    # printed scientific notation (a times sign and a superscript power), two significant figures by default
    (2.8e11, "2.8 × 10¹¹"), (6.0e31, "6.0 × 10³¹"), (9.97e12, "1.0 × 10¹³"), (3.2e-5, "3.2 × 10⁻⁵"),
    (170.3, "170"), (1.5, "1.5"),
])
def test_powers_of_ten_in_print_notation(x, expected):
    assert fmt_power(x) == expected


def test_value_and_error_share_one_power_of_ten():
    assert value_error(1.23e6, 4.0e5, "mas") == "(1.2 ± 0.4) × 10⁶ mas"


@pytest.mark.parametrize("p, err, expected", [
    (1.0, 2.2e-16, "> 99.9%"), (0.99995, 1e-5, "> 99.9%"), (1.0, None, "100%"), (0.572, 0.034, "57.2 ± 3.4%"), (3e-4, None, "< 0.1%"),
    (0.4123, 2e-4, "41.2%"),  # an error below what a percentage shows: the value alone, not 41.23 ± 0.02%
])
def test_probabilities_as_percentages_without_spurious_digits(p, err, expected):
    from kinage.report.numbers import _pct

    assert _pct(p, err) == expected


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
    assert "1.23e+06" not in " ".join(rows.values()) and "e+" not in " ".join(rows.values())


def test_labels_are_words_and_inputs_keep_their_unit():
    ages = {"kinematic_age_yr": {"median": 7.5e5, "lo68": 7.0e5, "hi68": 8.0e5}, "characteristic_age_yr": 1.9e6,
            "uncertainties": {"characteristic_age_yr": {"median": 1.9e6, "lo68": 1.77e6, "hi68": 2.05e6}},
            "spin_down_luminosity_erg_s": 1.4e31, "braking_index": 3.0}
    rows = stage_rows("ages", ages, {"star": {"temperature": "74 eV", "temperature_error": "3 eV"}})
    labels = [k for k, _ in rows]
    assert all("_" not in k for k in labels)  # never a raw JSON key
    assert dict(rows)["input: temperature"] == "74 eV ± 3 eV"  # echoed as given, not converted to K
    assert dict(rows)["spin-down luminosity"] == "1.4 × 10³¹ erg/s"  # printed notation, not code's 1.4e+31


def test_parallax_beyond_reach_is_said_in_words():
    # a timing parallax error larger than the parallax itself (here 40 mas against 1.5 mas at 650 pc) cannot
    # tell the star's parallax from zero: the report says so instead of quoting the number alone
    # (common practice, no source)
    from kinage.report.numbers import expected_parallax_mas, forecast_rows

    fit = {"values": {"pm_ra_cosdec_masyr": 55.4, "pm_dec_masyr": -28.5, "parallax_mas": -20.2},
           "sigma": {"pm_ra_cosdec_masyr": 4.8, "pm_dec_masyr": 18.1, "parallax_mas": 40.4},
           "n_toas": 61, "chi2_reduced": 1.0, "converged": True}
    rows = dict(fit_rows(fit, expected_parallax=1000.0 / 650.0))
    assert "not constrained" in rows["parallax"] and "1.5 mas" in rows["parallax"]
    assert "not constrained" not in rows["proper motion, ra*cos(dec)"]
    assert rows["proper motion, dec"] == "-29 ± 18 mas/yr (1.6σ)"  # value to the error's precision, halves away from zero
    fc = {"n_toas": 61, "baseline_yr": 6.0, "toa_error_s": 9.5e-5, "constrained": {},
          "sigma": {"pm_ra_cosdec_masyr": 4.75, "pm_dec_masyr": 18.1, "parallax_mas": 40.4},
          "expected_pm_masyr": 101.26, "expected_motion": {"distance_pc": 650.0}, "pm_significance": 7.64,
          "target_significance": 3.0, "baseline_needed_yr": 3.33}
    rows = dict(forecast_rows(fc))
    assert "not measurable" in rows["parallax error"]
    assert rows["expected proper motion"] == "100 mas/yr"  # an estimate from a speed distribution: 2 figures
    # the parallax a scenario implies: its parallax, else 1000 / distance (pc)
    assert expected_parallax_mas({"distance": 650.0}) == pytest.approx(1.538, rel=1e-3)
    assert expected_parallax_mas({"parallax": 0.33, "distance": 900.0}) == 0.33


def test_astrometry_source_in_words():
    # the internal token 'timing+scenario' is no label for a reader
    from kinage.report.numbers import astrometry_source_words

    assert astrometry_source_words("timing+scenario") == "timing fit combined with the [star] values (imaging)"
    assert astrometry_source_words("scenario") == "[star] values (imaging)"
