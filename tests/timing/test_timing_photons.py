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


def _z2(phases, harmonics):
    # Z^2_n = (2/N) sum_{k<=n} [(sum cos 2 pi k phi)^2 + (sum sin 2 pi k phi)^2]  (Buccheri et al. 1983, A&A 128, 245)
    n_ph = phases.shape[-1]
    z = 0.0
    for k in range(1, harmonics + 1):
        z = z + np.sum(np.cos(2 * np.pi * k * phases), -1) ** 2 + np.sum(np.sin(2 * np.pi * k * phases), -1) ** 2
    return 2 * z / n_ph


@pytest.mark.parametrize("harmonics", [1, 2, 4])
def test_z2_of_pure_noise_has_expectation_2n(harmonics):
    # uniform phases (numpy, not kinage's simulator): Z^2_n is chi^2 with 2n dof, E = 2n (Buccheri et al. 1983);
    # kinage's expectation with no pulsation is the same 2n, and the draws pass a KS test against scipy's chi^2
    rng = np.random.default_rng(11)
    z = _z2(rng.random((2000, 300)), harmonics)
    assert np.mean(z) == pytest.approx(2 * harmonics, abs=4 * np.sqrt(4 * harmonics / z.size))
    assert stats.kstest(z, stats.chi2(2 * harmonics).cdf).pvalue > 1e-3
    # no pulsation: a source drowned by background (dilution S/(S+B) ~ 1e-9)
    assert expected_z2(PulseProfile.sinusoid(0.5), 1e-9, 1.0, 300, harmonics=harmonics) == pytest.approx(2 * harmonics)


def test_expected_z2_of_a_sinusoid():
    # f = 1 + a cos(2 pi phi): E[e^{2 pi i phi}] = a/2, so E|sum e^{2 pi i phi}|^2 = N + N(N-1) a^2/4 and exactly
    # E[Z^2_n] = 2n + (N - 1) a^2 / 2 (the first harmonic only; Buccheri et al. 1983 to leading order in N).
    # Phases drawn by inverting the CDF phi + a sin(2 pi phi)/(2 pi) by Newton's method (independent of kinage's
    # rejection sampler); the CDF is monotonic with slope >= 1 - a, so 12 steps converge to rounding.
    a, n_ph, trials = 0.2, 1000, 400
    q = np.random.default_rng(2).random((trials, n_ph))
    ph = q.copy()
    for _ in range(12):
        ph -= (ph + a * np.sin(2 * np.pi * ph) / (2 * np.pi) - q) / (1 + a * np.cos(2 * np.pi * ph))
    assert np.max(np.abs(ph + a * np.sin(2 * np.pi * ph) / (2 * np.pi) - q)) < 1e-12
    z = _z2(ph, 2)
    exact = 4 + (n_ph - 1) * a**2 / 2
    assert np.mean(z) == pytest.approx(exact, abs=3 * np.std(z) / np.sqrt(trials))
    # kinage's expectation (leading order in N) differs from the exact one by a^2/2 = 0.02
    assert expected_z2(PulseProfile.sinusoid(a), 1.0, 0.0, n_ph, harmonics=2) == pytest.approx(exact, abs=0.03)
    # and kinage's photon simulator gives the same mean
    zk = _z2(simulate_photon_phases(PulseProfile.sinusoid(a), n_ph, rng=3, size=trials), 2)
    assert np.mean(zk) == pytest.approx(exact, abs=3 * np.std(zk) / np.sqrt(trials))


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
