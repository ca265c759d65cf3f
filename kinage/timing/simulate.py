"""Simulate TOAs from the timing model with white and red noise.

For each visit the exact arrival time of the nearest whole pulse is found by
Newton iteration on the full model in double-double precision (spin phase
of the injected parameters at t + D(t), with the observer's position
recomputed at each step; TOAs at the geocentre, a site or the barycentre as
``[campaign] toa_reference`` says), then noise is
added: white noise of variance (s sigma)^2 + q^2 (``error_scale`` s,
``added_error`` q) and a red-noise realisation from the power law of
:mod:`kinage.timing.noise`.  The table's ``error`` column holds the quoted
per-visit error sigma, so a fit with the same scenario sees consistent noise.

Injected values: position offsets 0; the scenario's proper motion, or the
expected proper motion (:func:`kinage.timing.inputs.expected_proper_motion`)
at a random position angle; the scenario's parallax (or 1/distance), else 0;
spin from ``[star]``.  ``inject`` overrides any of them.
"""

from dataclasses import dataclass, field, replace
from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.table import Table

from ..display.protocol import ResultDisplay, fmt
from ..errors import InputError
from . import inputs
from .inputs import dispersion_measure
from .noise import noise_from_campaign
from .forecast_result import TIMING_ASSUMPTIONS
from . import precision
from .model import ASTRO_PARAMETERS, TimeGrid, TimingModel
from .plan import scenario_plan
from .reference import resolve_reference, timing_assumptions
from .toas import write_toas

__all__ = ["simulate_toas", "SimulationResult"]


# ------------------------------------------------------------------ display
def _simulation_numbers(r):
    from ..display.numbers import fmt_duration_s

    d = r.to_dict()
    return [("TOAs", d["n_toas"]), ("median TOA error", fmt_duration_s(d["toa_error_s"])),
            ("span", fmt(d["span_yr"], "yr")), ("seed", d["seed"])]


@dataclass(repr=False)
class SimulationResult(ResultDisplay):
    """Simulated TOAs.

    Attributes
    ----------
    table : astropy.table.Table
        ``mjd`` (Time, TDB, written as full-precision decimal MJD), ``error``
        (s), ``exposure`` (s; NaN when not given); meta ``time_scale``,
        ``seed``, ``injected`` (parameter values) and ``epoch_mjd_tdb``.
    injected : dict
        Injected values: ra/dec offsets (mas), pm (mas/yr), parallax (mas),
        freq (Hz), freq_dot (Hz/s).
    seed : int or None
    """

    KEY_NUMBERS = _simulation_numbers
    TABLE = lambda r: r.table  # noqa: E731

    table: Table
    injected: dict
    seed: object = None
    parameter_sets: list = field(default_factory=list)
    assumptions: list = field(default_factory=lambda: list(TIMING_ASSUMPTIONS))

    def write(self, path):
        """Write the table as ECSV atomically; returns the Path."""
        return write_toas(self.table, path)

    def write_products(self, out_dir):
        """Write ``toas.ecsv`` into ``out_dir``."""
        return [self.write(Path(out_dir) / "toas.ecsv")]

    def to_dict(self):
        err = u.Quantity(self.table["error"]).to_value(u.s)
        mjd = self.table["mjd"].to_value("mjd", "float")
        return {"n_toas": len(self.table), "seed": self.seed, "injected": dict(self.injected),
                "toa_error_s": float(np.median(err)), "first_mjd": float(mjd[0]), "last_mjd": float(mjd[-1]),
                "span_yr": float((mjd[-1] - mjd[0]) / 365.25), "time_scale": "tdb"}

    def summary(self):
        inj = self.injected
        med = np.median(u.Quantity(self.table["error"]).to_value(u.s))
        return (f"Simulated {len(self.table)} TOAs (median error {med * 1e3:.3g}"
                f" ms) with an injected proper motion of ({inj['pm_ra_cosdec']:.3g}, {inj['pm_dec']:.3g}) mas/yr and "
                f"parallax {inj['parallax']:.3g} mas (seed {self.seed}).")


def _injected(scenario, rng, inject):
    star = scenario.star
    freq, freq_dot, _ = inputs.spin_from_star(star, required=True, where="simulating TOAs")
    pra, pdec = star.value("pm_ra_cosdec", "mas/yr"), star.value("pm_dec", "mas/yr")
    if pra is None or pdec is None:
        motion = inputs.expected_proper_motion(scenario)
        mu = motion.pm_masyr or 0.0
        pa = rng.uniform(0, 2 * np.pi)
        pra, pdec = mu * np.sin(pa), mu * np.cos(pa)
    plx = star.value("parallax", "mas")
    if plx is None:
        d = star.value("distance", "pc")
        plx = 1000.0 / d if d else 0.0
    vals = {"ra": 0.0, "dec": 0.0, "pm_ra_cosdec": float(pra), "pm_dec": float(pdec), "parallax": float(plx),
            "freq": freq, "freq_dot": freq_dot, "dispersion_measure": dispersion_measure(star)}
    for k, v in (inject or {}).items():
        if k not in vals:
            raise InputError("inject", f"unknown parameter '{k}' (expected one of {', '.join(vals)})")
        vals[k] = float(v)
    return vals


def simulate_toas(scenario, *, rng=None, inject=None, frequency_mhz=None):
    """Draw a TOA table for the scenario's campaign.

    Parameters
    ----------
    scenario : Scenario
        Needs ``[star]`` ra, dec, spin_period and a ``[campaign]`` plan; the
        ``[campaign]`` TOA reference keys choose where the TOAs are referred to
        (written into the table's metadata, so that a fit reads them back).
    rng : numpy.random.Generator | int | None
        Random numbers (an int is a seed, recorded in the table meta).
    inject : dict, optional
        Override injected values: keys ``ra``, ``dec`` (mas offsets),
        ``pm_ra_cosdec``, ``pm_dec`` (mas/yr), ``parallax`` (mas), ``freq``
        (Hz), ``freq_dot`` (Hz/s), ``dispersion_measure`` (pc cm^-3).
    frequency_mhz : float or sequence, optional
        Observing frequencies, MHz, cycled over the visits; adds a
        ``frequency`` column and the dispersion delay of ``[star]
        dispersion_measure``.

    Returns
    -------
    SimulationResult
    """
    c = scenario.campaign
    if c is None:
        raise InputError("[campaign]", "required to simulate TOAs")
    path = getattr(scenario, "path", None)
    reference = resolve_reference(c, None, "the simulated table",
                                  base_dir=None if path is None else Path(path).resolve().parent)
    seed = rng if isinstance(rng, (int, np.integer)) else None
    rng = np.random.default_rng(rng)
    star = scenario.star
    ra, dec = star.value("ra", "deg"), star.value("dec", "deg")
    vals = _injected(scenario, rng, inject)
    plan = scenario_plan(scenario)  # the forecast's dates, with the expected direction for 'motion'
    freq_col = None
    if frequency_mhz is not None:
        f = np.atleast_1d(np.asarray(frequency_mhz, float))
        if f.size == 0 or np.any(~np.isfinite(f)) or np.any(f <= 0):
            raise InputError("frequency_mhz", "positive observing frequencies in MHz")
        freq_col = np.resize(f, plan.mjd.size)
    multi = freq_col is not None and np.unique(freq_col).size > 1
    model = TimingModel(ra, dec, vals["freq"], vals["freq_dot"], 0.0, int(c.get("spin_terms", 2)),
                        vals["dispersion_measure"], multi)
    epoch = star.get("epoch") or _mid(plan.mjd)
    errors, _ = inputs.visit_errors(scenario, plan.exposure)
    theta = model.start_vector([vals[k] for k in ASTRO_PARAMETERS], offsets=True)
    theta[5] = rng.uniform(0, 1)  # arbitrary phase zero
    grid = TimeGrid.from_times(plan.times, epoch, reference, freq_col)
    pulses = model.pulse_numbers(grid, theta, offsets=True)
    hi, lo = grid.seconds, grid.seconds_lo
    for it in range(5):  # Newton on the arrival time of pulse N (observer geometry moved each step)
        ph, pl, tau, (freq, freq_dot, freq_ddot) = model.phase_dd(grid, theta, offsets=True)
        frac = (ph - pulses) + pl
        dt = -frac / (freq + tau * (freq_dot + tau * freq_ddot / 2))
        hi, lo = precision.dd_add_float(hi, lo, dt)
        if it < 2:
            grid = _grid_at(epoch, hi, lo, reference, freq_col)
        else:  # steps below ~1e-4 s: move the observer along its velocity (error ~ a dt^2 / c < 1e-15 s)
            grid = _moved(grid, hi, lo, dt, reference)
    noise = noise_from_campaign(c, hi, errors)
    hi, lo = precision.dd_add_float(hi, lo, noise.draw(rng))
    times = (epoch + hi * u.s) + lo * u.s
    times = times.tdb
    times.format = "mjd"
    times.out_subfmt = "str"
    tab = Table()
    tab["mjd"] = times
    tab["error"] = errors * u.s
    tab["exposure"] = plan.exposure * u.s
    if freq_col is not None:
        tab["frequency"] = freq_col * u.MHz
    where = {"geocentre": "geocentric", "site": "site (topocentric TDB)", "barycentre": "barycentred"}[reference.kind]
    tab.meta.update({"time_scale": "tdb", "seed": seed, "epoch_mjd_tdb": float(epoch.tdb.mjd),
                     "injected": {k: float(v) for k, v in vals.items()},
                     "note": f"mjd: {where} arrival times, TDB, full-precision decimal MJD"})
    tab.meta.update(reference.to_meta())
    motion = inputs.expected_proper_motion(scenario) if star.get("pm_ra_cosdec") is None else None
    sets = list(motion.parameter_sets) if motion is not None else []
    return SimulationResult(tab, vals, seed, sets, timing_assumptions(reference, freq_col is not None))


def _moved(grid, hi, lo, dt, reference):
    shift = grid.velocity * dt[:, None]
    removed = grid.removed
    if removed is not None:  # barycentred: the removed Roemer delay r.s_ref moves with the observer
        from .model import _unit

        s_ref = _unit(np.radians(reference.barycentred_ra_deg), np.radians(reference.barycentred_dec_deg))
        removed = removed + shift @ s_ref
    return replace(grid, seconds=hi, seconds_lo=lo, earth=grid.earth + shift, sun=grid.sun - shift, removed=removed)


def _grid_at(epoch, hi, lo, reference, freq_col):
    """Grid whose times are epoch + (hi + lo) s exactly, geometry evaluated there."""
    grid = TimeGrid.from_jd(np.full(hi.size, epoch.tdb.jd1), epoch.tdb.jd2 + (hi + lo) / 86400.0, epoch,
                            reference, freq_col)
    return replace(grid, seconds=hi, seconds_lo=lo)


def _mid(mjd):
    from astropy.time import Time

    return Time(np.round(0.5 * (mjd[0] + mjd[-1])), format="mjd", scale="tdb")
