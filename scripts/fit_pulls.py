"""Calibration of the timing fit over many seeded trials, for each TOA reference.

For an invented millisecond pulsar (2 us TOAs, 8 visits a year for 5 years) this simulates TOAs with
``kinage.timing.simulate_toas``, fits them with ``fit_toas`` and prints, per TOA reference, the spread
(standard deviation) and mean of the pulls (fitted - injected) / sigma of position, proper motion and
parallax, and the ratio of the fitted errors to the Fisher forecast.  A calibrated fit has pull spread 1
(standard error ~1/sqrt(2 N)) and error ratio 1.  tests/timing/test_fit_converge.py runs a reduced version.

    python scripts/fit_pulls.py [--trials 200]
"""

import argparse
import warnings

import numpy as np

KEYS = (("ra_mas", "ra"), ("dec_mas", "dec"), ("pm_ra_cosdec_masyr", "pm_ra_cosdec"), ("pm_dec_masyr", "pm_dec"),
        ("parallax_mas", "parallax"))
REFERENCES = {
    "geocentre": {},
    "site": {"toa_reference": "site", "site_longitude": 90.0, "site_latitude": -30.0, "site_height": "10 m"},  # invented: central Indian Ocean, > 1500 km from any observatory
    "barycentre": {"toa_reference": "barycentre", "barycentred_ra": 233.6002, "barycentred_dec": -11.4001},
}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=200)
    args = ap.parse_args(argv)
    warnings.simplefilter("ignore")
    from kinage.io.scenario import scenario_from_dict
    from kinage.timing import fit_toas, forecast, simulate_toas

    star = {"ra": 233.6, "dec": -11.4, "distance": "700 pc", "spin_period": 0.00273,
            "spin_period_derivative": 3e-20, "pm_ra_cosdec": -8.0, "pm_dec": 5.5}
    print(f"{args.trials} trials per reference; pull spread (sd) and mean; fitted / forecast error")
    print(f"{'reference':>11} {'param':>19} {'pull sd':>8} {'mean':>6} {'err/fcst':>9}")
    for name, keys in REFERENCES.items():
        camp = {"start": "2027-06-01", "baseline": 5, "visits_per_year": 8, "toa_error": "2 us",
                "sun_avoidance": 0, **keys}
        scn = scenario_from_dict({"star": star, "campaign": camp})
        fc = forecast(scn).to_dict()["sigma"]
        pulls, ratios, failed = [], [], 0
        for seed in range(args.trials):
            sim = simulate_toas(scn, rng=10_000 + seed)
            d = fit_toas(sim.table, scn).to_dict()
            failed += not d["converged"]
            pulls.append([(d["values"][k] - sim.injected[n]) / d["sigma"][k] for k, n in KEYS])
            ratios.append([d["sigma"][k] / fc[k] for k, _ in KEYS])
        pulls, ratios = np.array(pulls), np.array(ratios)
        for i, (k, _) in enumerate(KEYS):
            print(f"{name:>11} {k:>19} {pulls[:, i].std():8.3f} {pulls[:, i].mean():6.2f} {ratios[:, i].mean():9.3f}")
        print(f"{name:>11} {'all (pooled)':>19} {pulls.std():8.3f} {pulls.mean():6.2f}   "
              f"(sd standard error {1 / np.sqrt(2 * pulls.size):.3f}; {failed} not converged)")


if __name__ == "__main__":
    main()
