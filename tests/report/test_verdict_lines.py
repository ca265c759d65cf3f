"""Verdict lines: one quotable sentence per question, with the stage's numbers rounded by the one rule."""

from kinage.ages.verdicts import ages_verdict
from kinage.orbits.birthplace_verdict import birthplace_verdict
from kinage.report.verdicts import run_verdicts
from kinage.timing.motion_verdict import motion_verdict


def _fit(pm_ra, pm_dec, s_ra, s_dec, plx=1.0, s_plx=0.1, n=80):
    return {"values": {"pm_ra_cosdec_masyr": pm_ra, "pm_dec_masyr": pm_dec, "parallax_mas": plx},
            "sigma": {"pm_ra_cosdec_masyr": s_ra, "pm_dec_masyr": s_dec, "parallax_mas": s_plx},
            "n_toas": n, "converged": True}


def test_motion_line_quotes_the_total_proper_motion_with_its_propagated_error():
    # |mu| = hypot(30, 40) = 50; first-order propagation sigma^2 = (a sa)^2/mu^2 + (b sb)^2/mu^2
    # (Bevington & Robinson, Data Reduction and Error Analysis, eq. 3.14) = 3.67 -> one figure by the
    # Particle Data Group rule: "50 ± 4"
    line = motion_verdict(fit=_fit(30.0, 40.0, 3.0, 4.0))
    assert "50 ± 4 mas/yr" in line and "80 TOAs" in line and "parallax of 1.00 ± 0.10 mas" in line
    assert len(line.split()) <= 25


def test_motion_line_says_when_timing_measures_nothing():
    line = motion_verdict(fit=_fit(30.0, 40.0, 3000.0, 4000.0, s_plx=9e4, n=25))
    assert line.startswith("Timing does not measure the motion") and "imaging" in line
    assert len(line.split()) <= 25


def test_birthplace_line_names_the_favoured_association_or_none():
    base = {"settings": {"radial_velocity_source": "prior"}, "field_prior": 0.5,
            "field_probability": 0.3, "field_probability_error": 0.03}
    fav = dict(base, favoured="Ostrel OB4", associations=[
        {"name": "Ostrel OB4", "probability": 0.672, "probability_error": 0.027,
         "age_yr": {"median": 7.6e5, "lo68": 7.1e5, "hi68": 8.0e5}}, {"name": "Brant Group", "probability": 0.01}])
    line = birthplace_verdict(fav)
    # 0.027 -> two figures by the Particle Data Group rule; the age to its narrower half-width (40 kyr, one figure)
    assert "Ostrel OB4 (probability 0.672 ± 0.027) 760 kyr (68%: 710-800 kyr) ago" in line
    assert "2 candidates" in line and "radial-velocity prior" in line
    none = dict(base, favoured=None, associations=[dict(fav["associations"][0], probability=0.45,
                                                        probability_error=0.09)])
    line = birthplace_verdict(none)
    # 0.030: leading digits 300 keep two figures
    assert line.startswith("No association is favoured") and "0.45 ± 0.09" in line and "0.300 ± 0.030" in line


def test_ages_line_states_the_factor_between_the_ages():
    d = {"kinematic_age_yr": {"median": 7.6e5, "lo68": 7.1e5, "hi68": 8.0e5},
         "characteristic_age_yr": 1.9e6, "uncertainties": {"characteristic_age_yr": {"lo68": 1.77e6, "hi68": 2.05e6}},
         "cooling_age_yr": {"median": 8.7e4, "lo68": 6.9e4, "hi68": 1.4e5}, "cooling": {"model": "modified-urca"},
         "verdicts": [{"pair": "kinematic-characteristic", "consistent": False, "ratio": 7.6e5 / 1.9e6},
                      {"pair": "kinematic-cooling", "consistent": False, "ratio": 7.6e5 / 8.7e4}]}
    line = ages_verdict(d)
    # 1.9 Myr / 760 kyr = 2.5 and 760 / 87 = 8.7 (two significant figures, as the ages stage quotes factors)
    assert line == ("The kinematic age (760 kyr) is 2.5× below the characteristic age (1.90 Myr) and 8.7× above "
                    "the cooling age (87 kyr, modified-urca model).")
    d["verdicts"][0]["consistent"] = True
    assert "agrees within errors with the characteristic age" in ages_verdict(d)


def test_run_verdicts_say_when_a_question_was_not_asked():
    out = run_verdicts({}, planned=["trace"], failed={"trace": "InputError: x"})
    assert list(out) == ["motion", "birthplace", "ages"]
    assert out["motion"].startswith("Not asked") and "[campaign]" in out["motion"]
    assert out["birthplace"] == "Not answered: the trace stage failed."


def test_ages_line_names_what_would_explain_a_young_kinematic_age():
    # a kinematic age below tau_c = P/(2 Pdot) means the star was born spinning slowly or its field decayed
    # (Lorimer & Kramer 2005, sec. 3.1: tau_c equals the true age only for n = 3 and P0 << P)
    d = {"kinematic_age_yr": {"median": 8.7e5, "lo68": 8.0e5, "hi68": 9.4e5}, "characteristic_age_yr": 1.85e6,
         "uncertainties": {"characteristic_age_yr": {"lo68": 1.84e6, "hi68": 1.86e6},
                           "implied_initial_period_s": {"lo68": 0.327, "hi68": 0.352}},
         "implied_initial_period_s": 0.340, "braking_index": 3,
         "verdicts": [{"pair": "kinematic-characteristic", "consistent": False, "ratio": 8.7e5 / 1.85e6}]}
    line = ages_verdict(d)
    assert line == ("The kinematic age (870 kyr) is 2.1× below the characteristic age (1.85 Myr); field decay or an "
                    "initial period of 0.340 s would explain it.")
    assert len(line.split()) <= 25


def test_ages_line_compares_with_each_envelope_not_a_pooled_cooling_age():
    # envelopes whose cooling ages differ by more than their errors are named one by one (Potekhin, Chabrier &
    # Yakovlev 1997 relate iron and accreted envelopes; the line never quotes a pool none of them predicts)
    from kinage.ages.verdicts import ages_verdict

    env = [{"envelope": "iron", "median": 1.6e5, "lo68": 1.2e5, "hi68": 2.0e5},
           {"envelope": "accreted", "median": 9.2e4, "lo68": 8.5e4, "hi68": 1.0e5}]
    d = {"kinematic_age_yr": {"median": 7.6e5, "lo68": 7.1e5, "hi68": 8.0e5},
         "cooling_age_yr": {"median": 9.5e4, "lo68": 8.8e4, "hi68": 1.4e5},
         "cooling": {"model": "npe-SLy", "per_envelope": env},
         "verdicts": [{"pair": "kinematic-cooling", "consistent": False, "ratio": 8.0, "reconciling_envelopes": []}]}
    line = ages_verdict(d)
    assert "4.8-8.3× above the cooling ages (92-160 kyr by envelope" in line and "95 kyr" not in line
    d["verdicts"][0].update(consistent=True, reconciling_envelopes=["iron"])
    assert "agrees with the cooling age for the iron envelope" in ages_verdict(d)
