"""The result object of a timing forecast (stage-result protocol)."""

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..astrometry import PARAMETERS, AstrometricSolution
from ..io.results import atomic_path
from .inputs import ExpectedMotion
from .plan import ObservingPlan

__all__ = ["ForecastResult", "TIMING_ASSUMPTIONS"]

#: assumptions shared by forecast, simulation and fit
TIMING_ASSUMPTIONS = [
    "Roemer and parallax delays from the Earth's barycentric position in astropy's built-in ephemeris "
    "(ERFA epv00; Lorimer & Kramer 2005, Handbook of Pulsar Astronomy, ch. 8)",
    "TOAs referred to the geocentre in TDB; observatory offset, solar Shapiro delay and dispersion ignored",
    "phase connection assumed: every TOA is numbered by the nearest whole pulse of the starting model",
    "red noise: power law A^2/(12 pi^2) f_yr^-3 (f/f_yr)^-gamma in a Fourier basis (Lentati et al. 2013; "
    "van Haasteren & Vallisneri 2014); spin terms marginalised",
]


@dataclass
class ForecastResult:
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
    """

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
            "sweep": {k: np.asarray(v).tolist() for k, v in self.sweep.items()},
            "warnings": list(self.warnings),
        }
        if self.combined is not None:
            out["sigma_with_prior"] = self.combined.sigma_dict()
        return out

    def summary(self):
        sig = self.solution.sigma_dict()
        s = (f"With {self.plan.n_visits} visits over {self.plan.span_yr:.1f} yr and a median TOA error of "
             f"{self.toa_error_s * 1e3:.3g} ms, timing gives a proper-motion error of "
             f"{sig['pm_ra_cosdec_masyr']:.3g} (ra*cos dec) / {sig['pm_dec_masyr']:.3g} (dec) mas/yr "
             f"and a parallax error of {sig['parallax_mas']:.3g} mas.")
        if self.pm_significance is None:
            return s + " The expected proper motion is unknown (no distance), so no significance is given."
        ok = self.pm_significance >= self.target_significance
        s += (f" The expected motion of {self.motion.pm_masyr:.3g} mas/yr would be detected at "
              f"{self.pm_significance:.2g} sigma" if ok else
              f" The expected motion of {self.motion.pm_masyr:.3g} mas/yr would reach only "
              f"{self.pm_significance:.2g} sigma")
        if ok:
            s += f" (target {self.target_significance:g} sigma reached)."
        elif self.baseline_needed_yr is None:
            s += f"; no baseline up to {self.max_baseline_yr:g} yr reaches {self.target_significance:g} sigma at this cadence"
        else:
            s += f"; {self.target_significance:g} sigma needs a baseline of {self.baseline_needed_yr:.1f} yr"
        factor = self.reverse.get("photon_factor")
        if not ok and factor is not None:
            s += (f", or TOA errors of {self.reverse['toa_error_needed_s'] * 1e3:.3g} ms ({factor:.3g} times more "
                  "photons per visit) at this baseline"
                  + (f" ({self.reverse['exposure_needed_s'] / 1e3:.3g} ks per visit)."
                     if self.reverse.get("exposure_needed_s") else "."))
        elif not ok:
            s += "."
        photon = self.photon or {}
        if photon.get("detectable") is False:
            s = (f"Each visit detects the pulsation at only {photon['detection_sigma_per_visit']:.2g} sigma "
                 f"(expected Z^2_{photon.get('harmonics', 2)} = {photon['expected_z2']:.3g}), so no TOA can be "
                 "measured with this plan; the numbers that follow assume TOAs anyway. ") + s
        return s

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
        t.meta["time_scale"] = "tdb"
        return t

    def write_products(self, out_dir):
        """Write forecast_sweep.ecsv, forecast_plan.ecsv and forecast_baseline.png."""
        from .plots import forecast_figure

        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        paths = []
        for name, tab in (("forecast_sweep.ecsv", self.sweep_table()), ("forecast_plan.ecsv", self.plan_table())):
            with atomic_path(out / name) as tmp:
                tab.write(tmp, format="ascii.ecsv", overwrite=True)
            paths.append(out / name)
        paths.append(Path(forecast_figure(self, out / "forecast_baseline.png")))
        return paths
