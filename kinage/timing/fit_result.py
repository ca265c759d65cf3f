"""The result of a timing fit: the astrometric solution, residuals, diagnostics and their display."""

from dataclasses import dataclass, field
from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.table import Table

from ..astrometry import AstrometricSolution
from ..display.protocol import ResultDisplay, _with_error, fmt
from ..io.results import atomic_path
from .forecast_result import TIMING_ASSUMPTIONS
from .motion_verdict import total_motion_of as _total_motion_of
from .reference import TOAReference

__all__ = ["FitResult"]


# ------------------------------------------------------------------ display
def _fit_numbers(r):
    from ..display.numbers import fit_constrained

    v, s = r.solution.values_dict(), r.solution.sigma_dict()
    ok = fit_constrained({"sigma": s})

    def shown(key, unit, what):
        if ok[what]:
            return _with_error(v[key], s[key], unit)
        return f"not constrained by timing (formal error {fmt(s[key], unit, 2)})"

    return [("TOAs", r.n_toas),
            ("pm_ra_cosdec", shown("pm_ra_cosdec_masyr", "mas/yr", "proper_motion")),
            ("pm_dec", shown("pm_dec_masyr", "mas/yr", "proper_motion")),
            ("parallax", shown("parallax_mas", "mas", "parallax")),
            ("reduced chi2", fmt(r.chi2_reduced, "", 3)), ("converged", r.converged)]


@dataclass(repr=False)
class FitResult(ResultDisplay):
    """A timing fit.

    Attributes
    ----------
    solution : AstrometricSolution
        Source 'timing', or 'timing+prior' when an external prior is combined.
    timing_solution : AstrometricSolution
        The timing-only solution.
    parameters : dict
        All fitted values (astrometric in mas, mas/yr; spin freq Hz, freq_dot Hz/s).
    parameter_errors : dict
    chi2 : float
    n_toas, n_parameters : int
    converged : bool
    iterations : int
    final_step_sigma : float
        Largest absolute step, in units of its error, of the last iteration.
    reference : TOAReference
        Where the TOAs are referred to.
    mjd, residuals_s, errors_s, signature_s : ndarray
        TOA epochs (MJD TDB, float for plotting), post-fit residuals, effective
        errors and the fitted astrometric delay at each TOA (s).
    """

    PLOTS = {"residuals": "kinage.timing.plots:residual_figure"}
    KEY_NUMBERS = _fit_numbers
    TABLE = lambda r: r.residual_table()  # noqa: E731

    solution: AstrometricSolution
    timing_solution: AstrometricSolution
    parameters: dict
    parameter_errors: dict
    chi2: float
    n_toas: int
    n_parameters: int
    converged: bool
    iterations: int
    mjd: np.ndarray
    residuals_s: np.ndarray
    errors_s: np.ndarray
    signature_s: np.ndarray
    signature_grid: tuple | None = None
    final_step_sigma: float = float("nan")
    reference: TOAReference = field(default_factory=TOAReference)
    warnings: list = field(default_factory=list)
    parameter_sets: list = field(default_factory=list)
    assumptions: list = field(default_factory=lambda: list(TIMING_ASSUMPTIONS) + [
        "generalised least squares with fixed noise parameters (Coles et al. 2011, MNRAS 418, 561)",
    ])

    @property
    def chi2_reduced(self):
        return self.chi2 / (self.n_toas - self.n_parameters)

    def to_dict(self):
        r = self.residuals_s
        w = 1 / self.errors_s**2
        out = {
            "values": self.solution.values_dict(),
            "sigma": self.solution.sigma_dict(),
            "source": self.solution.source,
            "epoch_mjd_tdb": float(self.solution.epoch.tdb.mjd),
            "ra_deg": float(self.solution.ra.value),
            "dec_deg": float(self.solution.dec.value),
            "covariance": self.solution.covariance.tolist(),
            "proper_motion_total_masyr": _total_motion_of(self.solution),
            "chi2": self.chi2,
            "chi2_reduced": self.chi2_reduced,
            "n_toas": self.n_toas,
            "n_parameters": self.n_parameters,
            "converged": self.converged,
            "iterations": self.iterations,
            "final_step_sigma": self.final_step_sigma,
            "toa_reference": self.reference.kind,
            "ephemeris": self.reference.ephemeris,
            "spin": {k: v for k, v in self.parameters.items() if k in ("phase", "freq", "freq_dot", "freq_ddot")},
            "spin_sigma": {k: v for k, v in self.parameter_errors.items() if k in ("phase", "freq", "freq_dot", "freq_ddot")},
            "dispersion_measure": self.parameters.get("dispersion_measure"),
            "dispersion_measure_sigma": self.parameter_errors.get("dispersion_measure"),
            "residuals": {"rms_us": float(np.sqrt(np.mean(r**2)) * 1e6),
                          "weighted_rms_us": float(np.sqrt(np.sum(w * r**2) / np.sum(w)) * 1e6),
                          "max_abs_us": float(np.max(np.abs(r)) * 1e6), "n": int(r.size)},
            "warnings": list(self.warnings),
        }
        if self.solution is not self.timing_solution:
            out["timing_only"] = {"values": self.timing_solution.values_dict(),
                                  "sigma": self.timing_solution.sigma_dict()}
        return out

    def verdict_line(self):
        """One quotable sentence on the motion (see :mod:`kinage.timing.motion_verdict`)."""
        from .motion_verdict import motion_verdict

        return motion_verdict(fit=self.to_dict())

    def summary(self):
        from .._rounding import value_error

        v, s = self.solution.values_dict(), self.solution.sigma_dict()
        pri = " combined with the external prior" if self.solution.source == "timing+prior" else ""
        if min(s["pm_ra_cosdec_masyr"], s["pm_dec_masyr"]) > 1000.0:
            # 1 arcsec/yr: faster than any known neutron star, so the fit does not constrain the motion; the
            # numbers stay in the JSON but are not quoted as if they were measurements
            plx = ("nor the parallax" if s["parallax_mas"] > 1000.0
                   else f"though it gives a parallax of {value_error(v['parallax_mas'], s['parallax_mas'], 'mas')}")
            return (f"The timing fit of {self.n_toas} TOAs (at the {self.reference.kind}){pri} does not constrain "
                    f"the proper motion ({plx}): its errors exceed 1 arcsec/yr, where the linearised timing model "
                    f"has no meaning, so imaging astrometry is needed for the motion (reduced chi-square "
                    f"{self.chi2_reduced:.2f}{'' if self.converged else ', NOT converged'}).")
        from .._rounding import round_to_error

        def pm(key):  # value and error rounded to the error (Particle Data Group rule)
            value, error = round_to_error(v[key], s[key])
            return f"{value} ± {error}" if error is not None else value

        plx = v["parallax_mas"], s["parallax_mas"]
        if abs(plx[0]) < 2.0 * plx[1]:
            plx_text = f"a parallax not distinguished from zero ({pm('parallax_mas')} mas)"
        else:
            plx_text = f"a parallax of {pm('parallax_mas')} mas"
        text = (f"The timing fit of {self.n_toas} TOAs (at the {self.reference.kind}){pri} gives a proper motion of "
                f"{pm('pm_ra_cosdec_masyr')} (ra*cos dec) and {pm('pm_dec_masyr')} (dec) mas/yr and {plx_text} "
                f"(reduced chi-square {self.chi2_reduced:.2f}"
                f"{'' if self.converged else ', NOT converged'}).")
        return text

    def residual_table(self):
        t = Table()
        t["mjd"] = self.mjd
        t["residual"] = self.residuals_s * u.s
        t["error"] = self.errors_s * u.s
        t["astrometric_delay"] = self.signature_s * u.s
        t.meta["time_scale"] = "tdb"
        t.meta["toa_reference"] = self.reference.kind
        t.meta["note"] = "mjd rounded to float64 for plotting; residuals are exact"
        return t

    def write_products(self, out_dir):
        """Write ``fit_residuals.ecsv`` and ``fit_residuals.png``."""
        from .plots import residual_figure

        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        with atomic_path(out / "fit_residuals.ecsv") as tmp:
            self.residual_table().write(tmp, format="ascii.ecsv", overwrite=True)
        return [out / "fit_residuals.ecsv", Path(residual_figure(self, out / "fit_residuals.png"))]
