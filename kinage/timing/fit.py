"""Fit TOAs: generalised least squares with iterated linearisation.

Starting from the scenario's values (position offsets 0, its proper motion
and parallax or 0, spin from ``[star]``), each iteration evaluates the full
model's residuals R and design matrix M and takes the GLS step
-(M^T C^-1 M)^-1 M^T C^-1 R (:mod:`kinage.timing.gls`) with the scenario's
white + red noise covariance.  Times and phases are carried in double-double
precision and the spin parameters as offsets from the starting values
(:mod:`kinage.timing.model`), so the steps shrink to ~1e-6 of the errors.
The observer geometry (Earth, site, Sun), the time grid and the noise model
are computed once.  Pulses are numbered once, from the starting model after
aligning its phase zero with the TOAs (phase connection is assumed).

The fit has converged when the largest step is below ``STEP_TOLERANCE`` of
its parameter's standard error, or when chi-square stopped decreasing within
its numerical noise, and the residuals show no wrong pulse numbers (two or
more beyond a quarter of the spin period and 4 times their noise: a
cycle-count problem, not a solution).  Otherwise it raises
:class:`~kinage.errors.ConvergenceError` whose ``last_result`` holds the last
iterate (``converged`` False) with a warning that names the likely cause: a
cycle-count problem (residuals beyond a quarter of the spin period), a
numerical floor (steps stopped shrinking at small residuals) or slow
convergence from a distant start.

TOAs may be referred to the geocentre, a telescope site or the barycentre
(:mod:`kinage.timing.reference`); an optional ``frequency`` column adds the
dispersion delay and, with more than one frequency, a fitted
dispersion-measure offset.

An external prior (``prior_pm_ra_cosdec`` etc. in ``[campaign]``) is combined
with the timing solution (:mod:`kinage.timing.priors`); the result then has
source 'timing+prior' and keeps the timing-only solution alongside.
"""

from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.time import Time

from ..astrometry import AstrometricSolution
from ..errors import ConvergenceError, InputError
from . import inputs
from .inputs import dispersion_measure
from .noise import noise_from_campaign
from .fit_result import FitResult
from .gls import gls_step
from .model import TimeGrid, TimingModel
from .motion_verdict import total_motion_of as _total_motion_of
from .priors import prior_solution
from .reference import resolve_reference, timing_assumptions
from .toas import (_period_text, check_errors_against_period, check_fit_table, frequency_column, read_toas, site_times,
                   validate_toas)

__all__ = ["fit_toas", "FitResult", "STEP_TOLERANCE", "check_errors_against_period"]

#: converged when every step is below this fraction of its parameter's error
STEP_TOLERANCE = 1e-3


def fit_toas(toas, scenario, *, max_iter=30, method="woodbury"):
    """Fit a TOA table by iterated generalised least squares.

    Parameters
    ----------
    toas : astropy.table.Table or str or Path
        TOA table (see :mod:`kinage.timing.toas`); its metadata may carry the
        reference keys of :mod:`kinage.timing.reference`.
    scenario : Scenario
        ``[star]`` gives the starting values, spin and ``dispersion_measure``;
        ``[campaign]`` (optional) the noise model, ``spin_terms``, the TOA
        reference keys and any external prior.
    max_iter : int
        Maximum number of linearisation steps.
    method : {'woodbury', 'dense'}

    Returns
    -------
    FitResult

    Raises
    ------
    InputError
        Bad table values or reference keys (naming the row, column or key).
    ConvergenceError
        When the steps do not settle within ``max_iter`` (``last_result``
        holds the last iterate, marked not converged, with the likely cause).
    """
    where = str(toas) if isinstance(toas, (str, Path)) else "TOA table"
    tab = read_toas(toas) if isinstance(toas, (str, Path)) else validate_toas(toas)
    star = scenario.star
    c = scenario.campaign
    reference = resolve_reference(c, tab.meta, where, base_dir=_folder(getattr(scenario, "path", None)),
                                  table_dir=_folder(toas) if isinstance(toas, (str, Path)) else None)
    if c is None:
        c = _DefaultCampaign()
    ra, dec = star.value("ra", "deg"), star.value("dec", "deg")
    if ra is None or dec is None:
        raise InputError("[star] ra", "position (ra, dec) is required to fit TOAs")
    freq, freq_dot, _ = inputs.spin_from_star(star, required=True, where="fitting TOAs")
    check_errors_against_period(tab, 1.0 / freq, where)
    f_mhz = frequency_column(tab, where)
    multi = f_mhz is not None and np.unique(f_mhz).size > 1
    dm0 = dispersion_measure(star)
    model = TimingModel(ra, dec, freq, freq_dot, 0.0, int(c.get("spin_terms", 2)), dm0, multi)
    check_fit_table(tab, where, model.n_parameters)
    times = site_times(tab, reference) if reference.kind == "site" else tab["mjd"].tdb
    epoch = star.get("epoch") or Time(np.round(0.5 * (times[0].to_value("mjd", "float") + times[-1].to_value("mjd", "float"))), format="mjd", scale="tdb")
    grid = TimeGrid.from_times(times, epoch, reference, f_mhz)  # geometry computed once
    errors = u.Quantity(tab["error"]).to_value(u.s)
    noise = noise_from_campaign(c, grid.seconds, errors)
    astro0 = [0.0, 0.0, star.value("pm_ra_cosdec", "mas/yr", 0.0), star.value("pm_dec", "mas/yr", 0.0),
              star.value("parallax", "mas", None)]
    if astro0[4] is None:
        d = star.value("distance", "pc")
        astro0[4] = 1000.0 / d if d else 0.0
    theta = model.start_vector(astro0, offsets=True)
    ph, pl, _, _ = model.phase_dd(grid, theta, offsets=True)
    frac = (ph - np.round(ph)) + pl
    theta[5] = -np.angle(np.mean(np.exp(2j * np.pi * frac))) / (2 * np.pi)  # align phase zero
    pulses = model.pulse_numbers(grid, theta, offsets=True)

    history = []
    cov = None
    tol = _chi2_noise(grid.seconds.size)
    for it in range(1, max_iter + 1):
        resid = model.residuals(grid, theta, pulses, offsets=True)
        design = model.design_matrix(grid, theta, pulses, offsets=True)
        try:
            step, cov, chi2 = gls_step(design, resid, noise, method)
        except ConvergenceError as exc:
            last = None if not history else _result(model, grid, theta, pulses, noise, method, c, epoch, tab,
                                                    history, cov, reference, False)
            raise ConvergenceError(str(exc), last_result=last) from None
        if not np.all(np.isfinite(step)):
            raise ConvergenceError("the fit diverged (non-finite step)")
        sig = np.sqrt(np.diag(cov))
        step_sigma = float(np.max(np.abs(step) / sig))
        theta = theta + step
        history.append((chi2, step_sigma))
        # chi2 is evaluated before each step: equal chi2 on two iterations means the last step changed nothing
        flat = it >= 3 and abs(history[-2][0] - chi2) <= tol * max(chi2, 1.0) and step_sigma < 0.1
        if step_sigma <= STEP_TOLERANCE or flat:
            lost = _misnumbered(model.residuals(grid, theta, pulses, offsets=True), noise, 1.0 / (freq + theta[6]))
            if lost:  # the steps settled, but on a wrong pulse numbering: not a solution
                last = _result(model, grid, theta, pulses, noise, method, c, epoch, tab, history, cov, reference,
                               False, failure=lost)
                raise ConvergenceError(f"the timing fit settled on a wrong pulse numbering: {lost}", last_result=last)
            return _result(model, grid, theta, pulses, noise, method, c, epoch, tab, history, cov, reference, True)
    last = _result(model, grid, theta, pulses, noise, method, c, epoch, tab, history, cov, reference, False)
    raise ConvergenceError(f"the timing fit did not converge in {max_iter} iterations: {last.warnings[-1]}",
                           last_result=last)


def _folder(path):
    return None if path is None else Path(path).resolve().parent


def _chi2_noise(n):
    """Relative numerical noise of chi-square: a few float64 roundings per TOA (common practice, no source)."""
    return max(1e-12 * n, 1e-10)


#: a TOA is taken as misnumbered when its residual passes a quarter period and this many times its noise
MISNUMBERED_SIGMA = 4.0


def _misnumbered(resid, noise, period):
    """Words on a wrong pulse numbering, or '' when the residuals do not show one.

    A residual beyond a quarter of the spin period that its own noise (white plus red, marginal) does not
    explain points to a wrong pulse number.  One such TOA may be an outlier (it keeps the warning of
    :func:`_result`); two or more mean the numbering from the starting model was wrong (common practice, no
    source: phase connection fails when the starting spin or position drifts by a cycle over a gap).
    """
    var = noise.white_var.copy()
    if noise.has_red:
        var = var + np.sum(noise.basis**2 * noise.phi, axis=1)
    far = (np.abs(resid) > 0.25 * period) & (np.abs(resid) > MISNUMBERED_SIGMA * np.sqrt(var))
    n = int(np.count_nonzero(far))
    if n < 2:
        return ""
    return (f"{n} of {resid.size} TOAs have residuals beyond a quarter of the spin period ({_period_text(period)}) "
            f"and {MISNUMBERED_SIGMA:g} times their errors, so their pulses are misnumbered: a cycle-count problem "
            "(the starting spin, spin derivative or position in [star] drift by a cycle over the data, or the TOAs "
            "are referred elsewhere than toa_reference says; check that [star] epoch is the epoch of spin_period "
            "and that site TOAs have toa_reference = 'site', give better starting values, or add TOAs that "
            "bridge the gaps)")


def _scatter_warning(chi2, dof):
    """Words when chi-square is far from its expectation: the stated errors do not describe the scatter.

    For a correct noise model chi-square has mean dof and standard deviation sqrt(2 dof) (any statistics
    text); beyond 5 of those (and a factor 1.5) the sigmas are off by about sqrt(chi2 / dof).
    """
    if dof <= 0:
        return ""
    red = chi2 / dof
    band = 5.0 * np.sqrt(2.0 / dof)
    if red > max(1.0 + band, 1.5):
        return (f"reduced chi-square {red:.3g}: the TOAs scatter more than their errors say, so the stated sigmas "
                f"are too small by about a factor {np.sqrt(red):.2g}; describe the extra noise with [campaign] "
                "error_scale, added_error or red noise")
    if red < min(1.0 - band, 1 / 1.5):
        return (f"reduced chi-square {red:.3g}: the TOAs scatter less than their errors say, so the stated sigmas "
                f"are too large by about a factor {1 / np.sqrt(red):.2g}; check the unit of the error column "
                "(without a unit it is in seconds)")
    return ""


def _diagnosis(history, resid, period):
    """Plain-words cause of a non-converged fit."""
    steps = np.array([h[1] for h in history])
    worst = float(np.max(np.abs(resid)))
    if worst > 0.25 * period:
        return (f"residuals reach {worst / period:.2f} of the spin period (more than a quarter), so some pulses are "
                "probably misnumbered: a cycle-count problem (gaps too long for the starting spin or position, or a "
                "wrong starting model); give better starting values in [star] or add TOAs that bridge the gaps")
    if steps.size >= 4 and steps[-1] > 0.3 * np.min(steps[:-1]):
        return (f"the steps stopped shrinking at {steps[-1]:.2g} sigma while the residuals stay below a quarter of "
                "the period: a numerical floor (strongly correlated parameters or badly conditioned data), not a "
                "phase-connection problem; the last iterate is probably usable")
    return (f"the steps were still shrinking ({steps[-1]:.2g} sigma at the last iteration): the start is far from the "
            "solution; raise the iteration limit or start nearer")


def _result(model, grid, theta, pulses, noise, method, c, epoch, tab, history, cov, reference, converged,
            failure=""):
    resid = model.residuals(grid, theta, pulses, offsets=True)
    chi2 = float(noise.quadratic(resid, method=method))
    names = model.parameter_names
    values = model.absolute(theta)
    sig = np.sqrt(np.diag(cov))
    timing = AstrometricSolution(epoch, model.ra_deg, model.dec_deg, values[:5], cov[:5, :5], source="timing")
    prior = prior_solution(c, timing)
    solution = timing.combine(prior, source="timing+prior") if prior is not None else timing
    warnings = list(grid.notes)
    if grid.frequency_mhz is not None and not model.fit_dispersion:
        warnings.append(f"one observing frequency: the dispersion measure is held at [star] dispersion_measure = "
                        f"{model.dispersion_measure:g} pc cm^-3, not fitted")
    period = 1.0 / values[6]
    if np.max(np.abs(resid)) > 0.25 * period:
        warnings.append("residuals exceed a quarter of the spin period: the pulse numbering may be wrong")
    scatter = _scatter_warning(chi2, grid.seconds.size - theta.size)
    if scatter:
        warnings.append(scatter)
    if not converged:
        warnings.append("not converged: " + (failure or _diagnosis(history, resid, period)))
    sig_toa = model.astro_partials(grid) @ values[:5]
    mjd = tab["mjd"].tdb.to_value("mjd", "float")
    dense = np.linspace(mjd[0], mjd[-1], 600)
    dgrid = TimeGrid.from_times(Time(dense, format="mjd", scale="tdb"), epoch)
    dsig = model.astro_partials(dgrid) @ values[:5]
    return FitResult(
        solution=solution, timing_solution=timing,
        parameters={k: float(v) for k, v in zip(names, values)},
        parameter_errors={k: float(v) for k, v in zip(names, sig)},
        chi2=chi2, n_toas=grid.seconds.size, n_parameters=theta.size, converged=converged,
        iterations=len(history), mjd=mjd, residuals_s=resid, errors_s=np.sqrt(noise.white_var),
        signature_s=sig_toa, signature_grid=(dense, dsig), final_step_sigma=float(history[-1][1]),
        reference=reference, warnings=warnings,
        assumptions=timing_assumptions(reference, grid.frequency_mhz is not None) + [
            "generalised least squares with fixed noise parameters (Coles et al. 2011, MNRAS 418, 561)"],
    )


class _DefaultCampaign:
    """Schema defaults of ``[campaign]`` when a scenario has no such table."""

    def get(self, name, default=None):
        from ..io.schema import SCHEMA

        key = SCHEMA["campaign"][name]
        return default if key.default is None else key.default

    def value(self, name, unit=None, default=None):
        return self.get(name, default)

