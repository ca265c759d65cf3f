"""The result object of a timing forecast (stage-result protocol)."""

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..astrometry import PARAMETERS, AstrometricSolution
from ..display.protocol import ResultDisplay, fmt
from ..io.results import atomic_path
from .inputs import ExpectedMotion
from .plan import ObservingPlan

__all__ = ["ForecastResult", "TIMING_ASSUMPTIONS"]

#: assumptions shared by forecast, simulation and fit
TIMING_ASSUMPTIONS = [
    "Roemer and parallax delays from the Earth's barycentric position in astropy's built-in ephemeris "
    "(ERFA epv00; Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, ch. 8)",
    "TOAs referred to the geocentre in TDB for the forecast: the site offset, the solar Shapiro delay and the "
    "dispersion delay are known terms of the model, which simulation and fit include; their derivatives with "
    "respect to the astrometric parameters are too small to change the forecast errors",
    "phase connection assumed: every TOA is numbered by the nearest whole pulse of the starting model",
    "red noise: power law A^2/(12 pi^2) f_yr^-3 (f/f_yr)^-gamma in a Fourier basis (Lentati et al. 2013; "
    "van Haasteren & Vallisneri 2014); spin terms marginalised",
]


# ------------------------------------------------------------------ display
def _forecast_numbers(r):
    from ..display.numbers import fmt_duration_s

    from ..display.numbers import fit_constrained

    sig = r.solution.sigma_dict()
    ok = fit_constrained({"sigma": sig})
    pm = fmt(sig.get("pm_ra_cosdec_masyr"), "") and \
        f"{sig['pm_ra_cosdec_masyr']:.3g} / {sig['pm_dec_masyr']:.3g} mas/yr (ra*cos dec / dec)"
    px = fmt(sig.get("parallax_mas"), "mas")
    return [("visits", r.plan.n_visits), ("span", fmt(r.plan.span_yr, "yr")),
            ("median TOA error", r.toa_error_s is not None and fmt_duration_s(r.toa_error_s) or None),
            ("sigma_pm", pm if ok["proper_motion"] or pm is None else
             f"not constrained by timing (formal {sig['pm_ra_cosdec_masyr']:.2g} / {sig['pm_dec_masyr']:.2g} mas/yr)"),
            ("sigma_parallax", px if ok["parallax"] or px is None else f"not constrained by timing (formal {px})"),
            ("pm significance", fmt(r.pm_significance, "sigma", 2)),
            ("baseline needed", fmt(r.baseline_needed_yr, "yr"))] + _birthplace_numbers(getattr(r, "birthplace", None))


def _birthplace_numbers(bp):
    """The chance that the campaign settles the birthplace, when the forecast carries a birthplace forecast."""
    if bp is None:
        return []
    return [("birthplace settled", f"{100 * bp.decisive_probability:.0f}% of {bp.n_outcomes} simulated outcomes")]


@dataclass(repr=False)
class ForecastResult(ResultDisplay):
    """Forecast astrometric precision of a timing campaign.

    Attributes
    ----------
    solution : AstrometricSolution
        Scenario values (NaN where not given) with the forecast covariance.
    plan : ObservingPlan
    toa_errors : ndarray
        Per-visit TOA errors, s.
    photon : dict or None
        Photon statistics per visit (None when ``toa_error`` is given).
    motion : ExpectedMotion
    pm_error_along_motion : float, mas/yr
    pm_significance : float or None
    baseline_needed_yr : float or None
    sweep : dict of arrays
        ``baseline_yr``, ``n_toas``, ``pm_error_masyr`` (along the direction of motion; direction-averaged
        when unknown), ``parallax_error_mas``, ``pm_significance``.
    reverse : dict
        TOA error / exposure needed for the target proper-motion error.
    combined : AstrometricSolution or None
        Forecast combined with the external prior, when one is given.
    schedules : dict or None
        Errors of the 'even', 'parallax' and 'motion' schedules with the same visits
        (:func:`kinage.timing.forecast.compare_schedules`); None for explicit dates or a TOA table.
    """

    PLOTS = {"baseline": "kinage.timing.plots:forecast_figure", "plan": "kinage.timing.plots:plan_figure",
             "birthplace": "kinage.campaign.plots:forecast_birthplace_figure"}
    PLOT_NEEDS = {"birthplace": lambda r: getattr(r, "birthplace", None) is not None}
    KEY_NUMBERS = _forecast_numbers
    TABLE = lambda r: r.sweep_table()  # noqa: E731

    solution: AstrometricSolution
    plan: ObservingPlan
    toa_errors: np.ndarray
    photon: dict | None
    motion: ExpectedMotion
    pm_error_along_motion: float
    pm_significance: float | None
    target_significance: float
    max_baseline_yr: float
    baseline_needed_yr: float | None
    sweep: dict
    reverse: dict
    phase_connection: dict
    combined: AstrometricSolution | None = None
    warnings: list = field(default_factory=list)
    parameter_sets: list = field(default_factory=list)
    red_noise: bool = False
    schedules: dict | None = None
    #: what the campaign will tell about the birthplace (kinage.campaign.BirthplaceForecast), when asked
    birthplace: object = None
    #: the Sun window the plan and sweep were made on (reused for other campaign lengths)
    sun_window: object = field(default=None, repr=False, compare=False)
    assumptions: list = field(default_factory=lambda: list(TIMING_ASSUMPTIONS) + [
        "Fisher (Cramér–Rao) errors of the linearised model: reached by a fit only at high signal-to-noise",
        "photon-limited TOA error from the Cramér–Rao bound of the pulse phase (Ray et al. 2011, ApJS 194, 17)",
        "expected transverse speed, when not given: median projected speed of the velocity prior",
    ])

    @property
    def toa_error_s(self):
        """Median per-visit TOA error, s."""
        return float(np.median(self.toa_errors))

    def to_dict(self):
        corr = self.solution.correlation
        pairs = {f"{PARAMETERS[i]}:{PARAMETERS[j]}": float(corr[i, j])
                 for i in range(5) for j in range(i + 1, 5)}
        out = {
            "toa_error_s": self.toa_error_s,
            "n_toas": self.plan.n_visits,
            "baseline_yr": float(self.plan.requested_baseline_yr),
            "span_yr": self.plan.span_yr,
            "epoch_mjd_tdb": float(self.solution.epoch.tdb.mjd),
            "sigma": self.solution.sigma_dict(),
            "pm_significance": self.pm_significance,
            "pm_error_along_motion_masyr": self.pm_error_along_motion,
            "expected_pm_masyr": self.motion.pm_masyr,
            "expected_motion": self.motion.to_dict(),
            "target_significance": self.target_significance,
            "max_baseline_yr": self.max_baseline_yr,
            "baseline_needed_yr": self.baseline_needed_yr,
            "correlations": pairs,
            "covariance": self.solution.covariance.tolist(),
            "parameters": list(PARAMETERS),
            "photon_statistics": self.photon,
            "phase_connection": self.phase_connection,
            "reverse": self.reverse,
            "red_noise": self.red_noise,
            "visits_moved_for_sun": int(np.count_nonzero(self.plan.shift_days)),
            "sun_avoidance_deg": float(self.plan.sun_avoidance_deg),
            "sun_avoidance_source": self.plan.sun_avoidance_source,
            "sweep": {k: np.asarray(v).tolist() for k, v in self.sweep.items()},
            "warnings": list(self.warnings),
            "schedule": self.plan.schedule,
            "schedules": self.schedules,
            "constrained": self.constrained(),
        }
        if self.combined is not None:
            out["sigma_with_prior"] = self.combined.sigma_dict()
        if self.birthplace is not None:
            out["birthplace"] = self.birthplace.to_dict()
        return out

    def constrained(self):
        """Whether timing's errors are within what the linearised model can mean.

        Returns
        -------
        dict
            ``proper_motion``, ``parallax``, ``position`` -> bool (see :mod:`kinage.timing.forecast_words`).
        """
        from .forecast_words import constrained

        return constrained(self.solution.sigma_dict(), self.pm_error_along_motion)

    def verdict_line(self):
        """One quotable sentence on the motion (see :mod:`kinage.timing.motion_verdict`)."""
        from .motion_verdict import motion_verdict

        return motion_verdict(forecast=self.to_dict())

    def summary(self):
        from .forecast_words import forecast_summary

        text = forecast_summary(self)
        if self.birthplace is not None:
            text += " " + self.birthplace.sentence()
        return text

    def sweep_table(self):
        """The baseline sweep as an astropy Table with units."""
        import astropy.units as u
        from astropy.table import Table

        t = Table()
        t["baseline"] = self.sweep["baseline_yr"] * u.yr
        t["n_toas"] = self.sweep["n_toas"]
        t["pm_error"] = self.sweep["pm_error_masyr"] * u.mas / u.yr
        t["parallax_error"] = self.sweep["parallax_error_mas"] * u.mas
        t["pm_significance"] = self.sweep["pm_significance"]
        t.meta["target_significance"] = self.target_significance
        return t

    def plan_table(self):
        """The visits: MJD (TDB), exposure, TOA error and Sun shift."""
        import astropy.units as u
        from astropy.table import Table

        t = Table()
        t["mjd"] = self.plan.mjd
        t["exposure"] = self.plan.exposure * u.s
        t["toa_error"] = self.toa_errors * u.s
        t["sun_shift"] = self.plan.shift_days * u.d
        t["date"] = self.plan.times.isot
        t.meta["time_scale"] = "tdb"
        t.meta["schedule"] = self.plan.schedule
        t.meta["sun_avoidance_deg"] = self.plan.sun_avoidance_deg
        return t

    def write_products(self, out_dir):
        """Write forecast_sweep.ecsv, forecast_plan.ecsv, forecast_baseline.png and forecast_plan.png."""
        from ..display.style import save_figure
        from .plots import forecast_figure, plan_figure

        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        paths = []
        for name, tab in (("forecast_sweep.ecsv", self.sweep_table()), ("forecast_plan.ecsv", self.plan_table())):
            with atomic_path(out / name) as tmp:
                tab.write(tmp, format="ascii.ecsv", overwrite=True)
            paths.append(out / name)
        for name, draw in (("forecast_baseline.png", forecast_figure), ("forecast_plan.png", plan_figure)):
            paths.append(Path(save_figure(draw(self), out / name)))
        if self.birthplace is not None:
            paths += self.birthplace.write_products(out)
        return paths
