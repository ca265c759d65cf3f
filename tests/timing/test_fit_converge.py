"""Fits of simulated TOAs: convergence at every TOA error and reference, calibrated pulls, forecast agreement.

Closure tests (kinage simulates, kinage fits; not counted as outside checks): the TOAs come from kinage's own
simulator and the errors are compared with kinage's own Fisher forecast (agreement within 10%, a project rule).
The pull distribution of a correctly modelled linear Gaussian fit is the standard normal (any least-squares
text, e.g. Press et al., Numerical Recipes, sec. 15.6).  Outside checks of the same fit:
test_fit_independent.py (TOAs from an independent generator) and tests/reference/test_timing_vs_astropy.py.
"""

import json

import numpy as np
import pytest

from kinage.cli import main
from kinage.errors import ConvergenceError
from kinage.io.scenario import scenario_from_dict
from kinage.timing import fit_toas, forecast, simulate_toas

pytestmark = pytest.mark.filterwarnings("ignore::Warning")

REFERENCES = {
    "geocentre": {},
    "site": {"toa_reference": "site", "site_longitude": 90.0, "site_latitude": -30.0, "site_height": "10 m"},  # invented: central Indian Ocean, > 1500 km from any observatory
    "barycentre": {"toa_reference": "barycentre", "barycentred_ra": 233.6002, "barycentred_dec": -11.4001},
}
KEYS = (("ra_mas", "ra"), ("dec_mas", "dec"), ("pm_ra_cosdec_masyr", "pm_ra_cosdec"), ("pm_dec_masyr", "pm_dec"),
        ("parallax_mas", "parallax"))


def _scenario(error, period, visits=10, baseline=6, **camp):
    # invented star; a millisecond pulsar for the microsecond errors, a slow X-ray pulsar for the others
    star = {"ra": 233.6, "dec": -11.4, "distance": "700 pc", "spin_period": period,
            "spin_period_derivative": 3e-20 if period < 0.01 else 4e-14, "pm_ra_cosdec": -8.0, "pm_dec": 5.5}
    c = {"start": "2027-06-01", "baseline": baseline, "visits_per_year": visits, "toa_error": error,
         "sun_avoidance": 0}
    c.update(camp)
    return scenario_from_dict({"star": star, "campaign": c})


CASES = [("0.1 us", 0.00273), ("1 us", 0.00273), ("10 us", 0.00273), ("1 ms", 1.87), ("50 ms", 1.87)]


@pytest.mark.parametrize("reference", list(REFERENCES))
@pytest.mark.parametrize("error, period", CASES)
def test_fit_converges_for_every_error_and_reference(error, period, reference):
    scn = _scenario(error, period, **REFERENCES[reference])
    sim = simulate_toas(scn, rng=1)
    fit = fit_toas(sim.table, scn)  # raises ConvergenceError otherwise
    d = fit.to_dict()
    assert d["converged"] is True and d["iterations"] <= 6
    assert d["final_step_sigma"] < 1e-3
    assert d["toa_reference"] == reference
    for key in ("values", "sigma", "ra_deg", "dec_deg", "chi2_reduced", "n_toas", "converged", "iterations"):
        assert key in d
    pulls = [(d["values"][k] - sim.injected[n]) / d["sigma"][k] for k, n in KEYS]
    assert np.all(np.abs(pulls) < 4.5)


def test_pulls_have_unit_spread_and_errors_agree_with_the_forecast():
    # 60 seeded trials x 5 astrometric parameters = 300 pulls: their standard deviation is 1 within 10%
    # (standard error of a sample sd ~ 1/sqrt(2 N) = 4%); fitted errors agree with the forecast within 10%.
    # scripts/fit_pulls.py runs 200 trials for each TOA reference (pull sd 0.97-1.03, errors = forecast)
    scn = _scenario("2 us", 0.00273, visits=8, baseline=5)
    fc = forecast(scn).to_dict()["sigma"]
    pulls = []
    for seed in range(60):
        sim = simulate_toas(scn, rng=500 + seed)
        d = fit_toas(sim.table, scn).to_dict()
        assert d["converged"]
        pulls.append([(d["values"][k] - sim.injected[n]) / d["sigma"][k] for k, n in KEYS])
        for k, _ in KEYS[2:]:
            assert d["sigma"][k] == pytest.approx(fc[k], rel=0.10)
    pulls = np.array(pulls)
    assert np.std(pulls) == pytest.approx(1.0, abs=0.10)
    assert abs(np.mean(pulls)) < 0.2
    # each parameter alone (60 pulls: standard error of the sd ~9%)
    assert np.all(np.abs(np.std(pulls, axis=0) - 1) < 0.3)


@pytest.mark.parametrize("reference", ["site", "barycentre"])
def test_errors_agree_with_the_forecast_for_site_and_barycentred_toas(reference):
    # the forecast linearises at the geocentre; the site offset and the barycentring change errors by << 10%
    scn = _scenario("2 us", 0.00273, visits=8, baseline=5, **REFERENCES[reference])
    fc = forecast(scn).to_dict()["sigma"]
    d = fit_toas(simulate_toas(scn, rng=9).table, scn).to_dict()
    for k, _ in KEYS:
        assert d["sigma"][k] == pytest.approx(fc[k], rel=0.10), k


def test_iteration_limit_keeps_the_last_iterate_with_the_cause():
    scn = _scenario("1 us", 0.00273)
    sim = simulate_toas(scn, rng=3, inject={"pm_ra_cosdec": -7.0})
    with pytest.raises(ConvergenceError) as info:
        fit_toas(sim.table, scn, max_iter=1)
    last = info.value.last_result
    assert last is not None and last.converged is False and last.iterations == 1
    assert "not converged" in last.warnings[-1] and "phase connection" not in last.warnings[-1]


def test_wrong_spin_is_diagnosed_as_a_cycle_count_problem(tmp_path, monkeypatch):
    # a spin frequency off by 1e-9 of itself drifts by ~30 cycles over the campaign: the pulses are misnumbered,
    # residuals pass a quarter period, and the diagnosis of a stopped fit names the cycle count
    scn = _scenario("1 us", 0.00273)
    sim = simulate_toas(scn, rng=4, inject={"freq": (1 / 0.00273) * (1 + 1e-9)})
    path = sim.write(tmp_path / "toas.ecsv")
    with pytest.raises(ConvergenceError) as info:
        fit_toas(path, scn, max_iter=2)
    assert "cycle-count" in info.value.last_result.warnings[-1]
    assert any("pulse numbering may be wrong" in w for w in info.value.last_result.warnings)
    # through the CLI (iteration limit lowered): the last iterate is written, converged false, exit status 1
    (tmp_path / "s.toml").write_text(
        '[star]\nra = 233.6\ndec = -11.4\ndistance = "700 pc"\nspin_period = 0.00273\n'
        'spin_period_derivative = 3e-20\npm_ra_cosdec = -8.0\npm_dec = 5.5\n'
        '[campaign]\ntoa_error = "1 us"\nsun_avoidance = 0\ntoas = "toas.ecsv"\n')
    import kinage.timing.fit as fit_module

    monkeypatch.setitem(fit_module.fit_toas.__kwdefaults__, "max_iter", 2)
    out = tmp_path / "fit.json"
    status = main(["fit", str(path), "--scenario", str(tmp_path / "s.toml"), "--json", str(out), "--quiet"])
    assert status == 1
    d = json.loads(out.read_text())
    assert d["converged"] is False and d["iterations"] == 2
    assert any("cycle-count" in w for w in d["warnings"])


def test_dispersion_measure_offset_fitted_with_two_frequencies():
    # cold-plasma delay 4.148808e3 s DM / f^2 (Lorimer & Kramer 2005, eq. 4.7) at 400 and 1400 MHz
    scn = _scenario("1 us", 0.00273)
    sim = simulate_toas(scn, rng=6, inject={"dispersion_measure": 30.02}, frequency_mhz=[400.0, 1400.0])
    start = scenario_from_dict({"star": {"ra": 233.6, "dec": -11.4, "distance": "700 pc", "spin_period": 0.00273,
                                         "spin_period_derivative": 3e-20, "pm_ra_cosdec": -8.0, "pm_dec": 5.5,
                                         "dispersion_measure": "30 pc / cm3"},
                                "campaign": {"toa_error": "1 us", "sun_avoidance": 0, "dates": ["2028-01-01"]}})
    fit = fit_toas(sim.table, start)
    d = fit.to_dict()
    assert d["converged"] and "dispersion_measure" in fit.parameters
    assert abs(d["dispersion_measure"] - 30.02) < 4 * d["dispersion_measure_sigma"]
    # sigma_DM ~ sigma_t / (K |1/nu_lo^2 - 1/nu_hi^2|) / sqrt(N/2) (two-frequency difference; order of magnitude)
    k = 4.148808e3 * (1 / 400.0**2 - 1 / 1400.0**2)
    assert 0.3 < d["dispersion_measure_sigma"] / (1e-6 / k / np.sqrt(len(sim.table) / 4)) < 3


@pytest.mark.parametrize("reference", list(REFERENCES))
def test_kinage_simulate_then_fit_round_trips_the_reference_keys(tmp_path, reference):
    # the simulated table carries the reference keys in its metadata; a scenario without them fits it
    keys = "".join(f"{k} = {json.dumps(v)}\n" for k, v in REFERENCES[reference].items())
    star = ('[star]\nra = 233.6\ndec = -11.4\ndistance = "700 pc"\nspin_period = 0.00273\n'
            'spin_period_derivative = 3e-20\npm_ra_cosdec = -8.0\npm_dec = 5.5\n')
    camp = '[campaign]\nstart = "2027-06-01"\nbaseline = 5\nvisits_per_year = 8\ntoa_error = "1 us"\nsun_avoidance = 0\n'
    (tmp_path / "sim.toml").write_text(star + camp + keys)
    (tmp_path / "fit.toml").write_text(star + '[campaign]\ntoa_error = "1 us"\ntoas = "toas.ecsv"\n')
    toas = tmp_path / "toas.ecsv"
    assert main(["simulate", str(tmp_path / "sim.toml"), "--output", str(toas), "--seed", "8", "--quiet"]) == 0
    from astropy.table import Table

    meta = Table.read(toas, format="ascii.ecsv").meta
    assert meta["toa_reference"] == reference
    out = tmp_path / "fit.json"
    assert main(["fit", str(toas), "--scenario", str(tmp_path / "fit.toml"), "--json", str(out), "--quiet"]) == 0
    d = json.loads(out.read_text())
    assert d["converged"] and d["toa_reference"] == reference
    assert abs(d["chi2_reduced"] - 1) < 0.6
