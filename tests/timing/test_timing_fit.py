"""Simulate and fit: closure, prior combination, convergence failures, products.

Closure tests: kinage's simulator makes the TOAs and kinage's fit reads them, so a sign or constant shared by
both passes; they check consistency and bookkeeping, not physics, and are not counted as outside checks.  The
outside checks of the same fit are tests/timing/test_fit_independent.py (TOAs from an independent generator) and
tests/reference/test_timing_vs_astropy.py (delays and the parallax sign against astropy).
"""

import astropy.units as u
import numpy as np
import pytest

from kinage.errors import ConvergenceError, InputError
from kinage.io.scenario import scenario_from_dict
from kinage.timing import fit_toas, forecast, read_toas, simulate_toas

pytestmark = pytest.mark.filterwarnings("ignore:ERFA function")

INJECT = {"pm_ra_cosdec": 12.0, "pm_dec": -7.0, "parallax": 4.0}


def _scenario(**camp):
    # the scenario's own motion (the fit's starting point) differs from the injected one
    star = {"ra": 120.4, "dec": 35.2, "distance": "400 pc", "spin_period": 0.48, "spin_period_derivative": 2e-15,
            "pm_ra_cosdec": 0.0, "pm_dec": 0.0}
    c = {"start": "2028-02-01", "baseline": 5, "visits_per_year": 6, "toa_error": "40 us", "sun_avoidance": 0}
    c.update(camp)
    return scenario_from_dict({"star": star, "campaign": c})


def test_simulated_table_format(tmp_path):
    sim = simulate_toas(_scenario(), rng=4, inject=INJECT)
    tab = sim.table
    assert tab.colnames[:3] == ["mjd", "error", "exposure"]
    assert tab.meta["time_scale"] == "tdb" and tab.meta["seed"] == 4
    assert tab.meta["injected"]["pm_ra_cosdec"] == 12.0
    path = sim.write(tmp_path / "toas.ecsv")
    back = read_toas(path)
    assert np.max(np.abs((back["mjd"] - tab["mjd"]).to_value(u.s))) < 1e-9
    d = sim.to_dict()
    assert d["n_toas"] == len(tab) and d["seed"] == 4
    # same seed, same numbers
    again = simulate_toas(_scenario(), rng=4, inject=INJECT)
    assert np.all((again.table["mjd"] - tab["mjd"]).to_value(u.s) == 0)


def test_closure_recovers_injected_motion():
    # Closure test (kinage simulates, kinage fits; not an outside check): simulate with an injected proper motion, fit, and recover it within 3 sigma in
    # >= 95% of seeded trials, with fitted errors within 20% of the Fisher forecast.
    scn = _scenario()
    fc = forecast(scn).to_dict()["sigma"]
    trials, inside, chi2 = 40, 0, []
    for seed in range(trials):
        sim = simulate_toas(scn, rng=1000 + seed, inject=INJECT)
        fit = fit_toas(sim.table, scn)
        d = fit.to_dict()
        assert d["converged"]
        ok = all(abs(d["values"][k] - INJECT[n]) < 3 * d["sigma"][k]
                 for k, n in (("pm_ra_cosdec_masyr", "pm_ra_cosdec"), ("pm_dec_masyr", "pm_dec"),
                              ("parallax_mas", "parallax")))
        inside += ok
        chi2.append(d["chi2_reduced"])
        for k in ("pm_ra_cosdec_masyr", "pm_dec_masyr", "parallax_mas"):
            assert d["sigma"][k] == pytest.approx(fc[k], rel=0.2)
    assert inside >= 0.95 * trials
    # reduced chi-square of correctly modelled white noise averages 1 (dof = 31 - 8 here)
    assert np.mean(chi2) == pytest.approx(1.0, abs=0.15)


def test_fit_from_file_with_red_noise_and_both_solvers(tmp_path):
    scn = _scenario(red_noise_amplitude=2e-12, red_noise_index=4.0, red_noise_modes=8)
    path = simulate_toas(scn, rng=7, inject=INJECT).write(tmp_path / "t.ecsv")
    a = fit_toas(path, scn)
    b = fit_toas(path, scn, method="dense")
    assert np.allclose(a.solution.values, b.solution.values, rtol=1e-6, atol=1e-6 * a.solution.sigma.max())
    assert np.allclose(a.solution.covariance, b.solution.covariance, rtol=1e-6)
    paths = a.write_products(tmp_path / "out")
    assert {p.name for p in paths} == {"fit_residuals.ecsv", "fit_residuals.png"}
    d = a.to_dict()
    for key in ("values", "sigma", "chi2_reduced", "n_toas", "converged", "residuals"):
        assert key in d
    assert d["source"] == "timing"


def test_external_prior_combination():
    # inverse-variance combination with the full covariance: C = (C_t^-1 + P^-1)^-1 (independent Gaussian
    # measurements; e.g. any least-squares text), computed here with numpy
    plain = _scenario()
    tab = simulate_toas(plain, rng=3, inject=INJECT).table
    t = fit_toas(tab, plain).solution
    prior = _scenario(prior_pm_ra_cosdec=11.5, prior_pm_ra_cosdec_error=0.8)
    fit = fit_toas(tab, prior)
    assert fit.solution.source == "timing+prior"
    p_inv = np.zeros((5, 5))
    p_inv[2, 2] = 1 / 0.8**2
    expect_cov = np.linalg.inv(np.linalg.inv(t.covariance) + p_inv)
    expect_val = expect_cov @ (np.linalg.solve(t.covariance, t.values) + p_inv[:, 2] * 11.5)
    assert np.allclose(fit.solution.covariance, expect_cov, rtol=1e-6, atol=1e-9)
    assert np.allclose(fit.solution.values, expect_val, rtol=1e-6, atol=1e-6)
    assert "timing_only" in fit.to_dict()


def test_non_convergence_raises_with_last_result():
    scn = _scenario()
    tab = simulate_toas(scn, rng=9, inject=INJECT).table
    with pytest.raises(ConvergenceError) as info:
        fit_toas(tab, scn, max_iter=1)
    last = info.value.last_result
    assert last is not None and last.converged is False and last.iterations == 1


def test_too_few_toas():
    scn = _scenario()
    tab = simulate_toas(scn, rng=1, inject=INJECT).table[:6]
    with pytest.raises(InputError, match="more TOAs"):
        fit_toas(tab, scn)
