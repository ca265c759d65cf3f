"""Photon-limited phase precision: Cramér–Rao bound against simulation and closed forms."""

import numpy as np
import pytest
from scipy import stats

from kinage.errors import InputError
from kinage.timing.photons import (
    PulseProfile,
    detection_sigma,
    expected_z2,
    fit_phase_ml,
    phase_error,
    simulate_photon_phases,
    sinusoid_phase_error,
)


@pytest.mark.parametrize("a", [0.01, 0.1, 0.5, 0.9, 1.0])
def test_sinusoid_fisher_closed_form_matches_numerical_integral(a):
    # I = int f'^2/f dphi for f = 1 + a cos 2 pi phi equals 4 pi^2 (1 - sqrt(1 - a^2))
    # (derivable: int sin^2/(1 + a cos) = (1 - sqrt(1 - a^2))/a^2 over a cycle; Gradshteyn & Ryzhik 3.613)
    prof = PulseProfile.sinusoid(a)
    closed = prof.fisher_per_photon()
    numeric = PulseProfile([a, 0.0], [0.0, 1e-300]).fisher_per_photon()  # forces the grid integral
    if a < 1.0:
        assert numeric == pytest.approx(closed, rel=1e-6)
    assert closed == pytest.approx(4 * np.pi**2 * (1 - np.sqrt(1 - a * a)), rel=1e-12)


def test_small_pulsed_fraction_limit():
    # small-a limit of the Cramér–Rao bound: 1/(2 pi a sqrt(N/2)) (Taylor expansion of 1 - sqrt(1 - a^2) = a^2/2)
    n = 1e6
    for a in (1e-3, 1e-2):
        assert sinusoid_phase_error(n, a) == pytest.approx(1 / (2 * np.pi * a * np.sqrt(n / 2)), rel=a * a)
    # and the exact form is below the small-a formula for strong pulsations
    assert sinusoid_phase_error(n, 0.5) < 1 / (2 * np.pi * 0.5 * np.sqrt(n / 2))


# photons per trial chosen so the bound is ~0.035-0.04 cycles (asymptotic regime);
# trial counts kept small for speed: Monte Carlo error of the spread is 1/sqrt(2 T)
@pytest.mark.parametrize("a,n,trials", [(0.01, 300_000, 100), (0.05, 13_000, 300), (0.2, 900, 300), (0.5, 200, 400)])
def test_ml_phase_spread_matches_cramer_rao(a, n, trials):
    # Cramér–Rao bound (e.g. Kay 1993, Fundamentals of Statistical Signal Processing, ch. 3) against an
    # unbinned maximum-likelihood fit of simulated photon phases (Ray et al. 2011, ApJS 194, 17)
    prof = PulseProfile.sinusoid(a)
    ph = simulate_photon_phases(prof, n, rng=11, phase=0.3, size=trials)
    est = fit_phase_ml(ph, prof, n_iter=3)
    spread = np.std(np.mod(est - 0.3 + 0.5, 1) - 0.5)
    bound = sinusoid_phase_error(n, a)
    mc = 1 / np.sqrt(2 * trials)
    # allow 3 Monte Carlo errors plus 4% for finite-N excess over the asymptotic bound
    assert abs(spread / bound - 1) < 3 * mc + 0.04


def test_two_harmonic_profile_bound_against_simulation():
    # numerical Fisher information of a general profile against ML fits (same references as above)
    prof = PulseProfile.harmonics([1.0, 0.6], pulsed_fraction=0.4)
    n, trials = 2000, 300
    ph = simulate_photon_phases(prof, n, rng=5, phase=0.1, size=trials)
    est = fit_phase_ml(ph, prof, n_iter=4)
    spread = np.std(np.mod(est - 0.1 + 0.5, 1) - 0.5)
    bound = 1 / np.sqrt(n * prof.fisher_per_photon())
    assert abs(spread / bound - 1) < 3 / np.sqrt(2 * trials) + 0.04


def test_background_dilutes_pulsed_fraction():
    # background B dilutes a to a S/(S+B) over N = (S+B) T photons (DESIGN physics notes; derivable)
    prof = PulseProfile.sinusoid(0.3)
    s, b, t = 2.0, 3.0, 1e4
    got = phase_error(prof, s, b, t)
    assert got == pytest.approx(sinusoid_phase_error((s + b) * t, 0.3 * s / (s + b)), rel=1e-12)


def test_pulsed_fraction_rescaling_of_harmonics():
    prof = PulseProfile.harmonics([1.0, 0.5], pulsed_fraction=0.35)
    assert prof.pulsed_fraction() == pytest.approx(0.35, rel=1e-6)
    assert prof.cos_amps[1] / prof.cos_amps[0] == pytest.approx(0.5)


def test_template_table_round_trip(tmp_path):
    # a template sampled from a known two-harmonic profile is recovered by its Fourier expansion
    true = PulseProfile([0.3, 0.1], [0.05, 0.0])
    phase = np.linspace(0, 1, 400, endpoint=False)
    path = tmp_path / "tpl.csv"
    np.savetxt(path, np.column_stack([phase, 7.0 * true.rate(phase)]), delimiter=",", header="phase,rate",
               comments="")
    tpl = PulseProfile.template(path)
    grid = np.linspace(0, 1, 50)
    assert np.allclose(tpl.rate(grid), true.rate(grid), atol=2e-3)


def test_expected_z2_against_simulation():
    # E[Z^2_n] = 2n + (N/2) sum a_k^2 (Buccheri et al. 1983, A&A 128, 245; leading order in N)
    prof = PulseProfile.sinusoid(0.2)
    n_ph, trials = 1000, 400
    ph = simulate_photon_phases(prof, n_ph, rng=2, size=trials)
    z2 = np.zeros(trials)
    for k in (1, 2):
        z2 += np.sum(np.cos(2 * np.pi * k * ph), -1) ** 2 + np.sum(np.sin(2 * np.pi * k * ph), -1) ** 2
    z2 *= 2 / n_ph
    expected = expected_z2(prof, 1.0, 0.0, n_ph, harmonics=2)
    assert np.mean(z2) == pytest.approx(expected, abs=3 * np.std(z2) / np.sqrt(trials))


def test_detection_sigma_matches_scipy_chi2():
    # Z^2_n of unpulsed photons is chi^2 with 2n dof (Buccheri et al. 1983); Gaussian equivalent via scipy
    for z, nh in ((10.0, 1), (20.0, 2), (45.0, 5)):
        assert detection_sigma(z, nh) == pytest.approx(stats.norm.isf(stats.chi2.sf(z, 2 * nh)), rel=1e-8)
    assert detection_sigma(1e4, 2) > 90  # no underflow to infinity or NaN
    assert np.isfinite(detection_sigma(1e4, 2))


@pytest.mark.parametrize("a", [0.0, -0.1, 1.3, np.nan])
def test_bad_pulsed_fraction(a):
    with pytest.raises(InputError, match="pulsed_fraction"):
        PulseProfile.sinusoid(a)


@pytest.mark.parametrize("s,b,field", [(0.0, 0.1, "source_rate"), (-1.0, 0.1, "source_rate"), (1.0, -0.5, "background_rate")])
def test_bad_rates(s, b, field):
    with pytest.raises(InputError, match=field):
        phase_error(PulseProfile.sinusoid(0.2), s, b, 1e3)


def test_negative_profile_rejected():
    with pytest.raises(InputError, match="negative"):
        PulseProfile.harmonics([0.9, 0.9])
