"""Timing-fit wall time against the number of TOAs, white noise and with red noise.

Simulates TOAs for an invented millisecond pulsar (1 us errors, 10 years) at 1e3 .. 1e5 TOAs, fits them with
``kinage.timing.fit_toas`` and prints the wall time of the fit alone (simulation not timed), the iterations,
and the growth exponent b of t ~ N^b from a least-squares line through log t vs log N.  The observer geometry
(ephemeris, site) and the time grid are computed once per fit, so the cost should grow about linearly.

    python scripts/bench_fit.py [--quick] [--reference geocentre|site|barycentre]
"""

import argparse
import time
import warnings

import numpy as np


def _scenario(n_toas, red, reference):
    from kinage.io.scenario import scenario_from_dict

    camp = {"start": "2026-09-01", "baseline": 10, "visits_per_year": 50, "toa_error": "1 us",
            "sun_avoidance": 0}
    if red:
        camp.update(red_noise_amplitude=3e-14, red_noise_index=4.0, red_noise_modes=30)
    if reference == "site":
        camp.update(toa_reference="site", site_longitude=-40.0, site_latitude=25.0, site_height="10 m")  # invented: mid-Atlantic, no observatory
    if reference == "barycentre":
        camp.update(toa_reference="barycentre", barycentred_ra=301.2, barycentred_dec=15.7)
    star = {"ra": 301.2, "dec": 15.7, "distance": "1.1 kpc", "spin_period": 0.00329,
            "spin_period_derivative": 5e-20, "pm_ra_cosdec": -6.0, "pm_dec": 2.5}
    return scenario_from_dict({"star": star, "campaign": camp})


def _dense_plan(n_toas):
    """n_toas epochs over 10 years: sessions every ~4 days, many sub-integration TOAs per session (radio-like)."""
    from kinage.timing.plan import ObservingPlan

    def make_plan(campaign, ra_deg, dec_deg, **kw):
        rng = np.random.default_rng(n_toas)
        sessions = max(10, n_toas // 50)
        start = 61284.0 + np.arange(sessions) * (3652.5 / sessions)
        mjd = np.sort(np.repeat(start, int(np.ceil(n_toas / sessions)))[:n_toas]
                      + rng.uniform(0, 0.1, n_toas))  # within ~2.4 h of each session's start
        return ObservingPlan(mjd, np.full(mjd.size, np.nan), np.zeros(mjd.size), 10.0, 0.0)

    return make_plan


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="1e3 .. 1e4 TOAs only")
    ap.add_argument("--reference", default="geocentre", choices=("geocentre", "site", "barycentre"))
    args = ap.parse_args(argv)
    warnings.simplefilter("ignore")
    from kinage.timing import fit_toas, simulate, simulate_toas

    sizes = [1000, 3000, 10000] if args.quick else [1000, 3000, 10000, 30000, 100000]
    print(f"timing fit wall time, TOA reference: {args.reference} (simulation not timed)")
    print(f"{'TOAs':>8} {'noise':>6} {'fit s':>8} {'iter':>5} {'step/sigma':>11} {'chi2_r':>7}")
    results = {False: [], True: []}
    for red in (False, True):
        for n in sizes:
            scn = _scenario(n, red, args.reference)
            simulate.make_plan = _dense_plan(n)  # the plan module allows one visit a day; radio TOAs are denser
            table = simulate_toas(scn, rng=n).table
            t0 = time.perf_counter()
            fit = fit_toas(table, scn)
            dt = time.perf_counter() - t0
            results[red].append((len(table), dt))
            print(f"{len(table):8d} {'red' if red else 'white':>6} {dt:8.2f} {fit.iterations:5d} "
                  f"{fit.final_step_sigma:11.1e} {fit.chi2_reduced:7.3f}")
    for red, rows in results.items():
        n, t = np.array(rows).T
        b = np.polyfit(np.log(n), np.log(t), 1)[0]
        print(f"growth exponent ({'red' if red else 'white'} noise): t ~ N^{b:.2f} "
              f"({n[0]:.0f} -> {n[-1]:.0f} TOAs: {t[0]:.2f} s -> {t[-1]:.2f} s)")


if __name__ == "__main__":
    main()
