"""One distance posterior from every distance measurement of a star.

    p(r | data) ~ prior(r) x L(parallax | 1000 / r) x L(distance estimate | r)

with r in pc, the parallax likelihood Gaussian in the true parallax 1000 / r
(mas; Bailer-Jones 2015, PASP 127, 994, eq. 3), and the distance estimate (e.g.
from the dispersion measure) Gaussian in r, or a split normal with
``error_low`` below and ``error_high`` above the estimate.  The prior is a
space-density prior (:class:`~kinage.kinematics.distance.DistancePrior`).  Any
measured parallax works, zero and negative included; either measurement may be
absent.  A distance estimate without an error is taken as exact (the posterior
is that one distance).

The posterior is evaluated on an adaptive grid in r: a geometric start grid
(with extra points at the measurements' own scales, so a narrow peak is never
missed), cut to where the density is within e^-50 of its peak, then split until
every interval holds less than 2e-4 of the probability and changes the log
density by less than 0.05.  Draws invert the cumulative distribution of the
piecewise-linear density exactly, with one uniform number in each of n equal
strata (in random order), so the draws' quantiles match the posterior's to
~1/n.

Units: parallax mas, distances pc.
"""

from dataclasses import dataclass, field

import numpy as np

from .._units import quantity_edge
from ..errors import InputError

__all__ = ["DistancePosterior", "distance_posterior", "SOURCES"]

#: the values of ``distance_source``
SOURCES = ("parallax", "distance", "parallax+distance")

_CUT = 50.0        # keep the part of the grid within e^-50 of the peak
_MAX_MASS = 2e-4   # largest probability in one grid interval
_MAX_DLOGP = 0.05  # largest change of the log density across one interval
_MIN_MASS = 1e-12  # intervals lighter than this are not split for their slope
_MAX_POINTS = 400_000


@dataclass(frozen=True)
class DistancePosterior:
    """The distance posterior of one star (see the module text).

    Attributes
    ----------
    source : {'parallax', 'distance', 'parallax+distance'}
        The measurements it combines.
    r_pc, pdf : ndarray
        Grid (pc) and normalised density (1/pc) there; empty for an exact distance.
    cdf : ndarray
        Cumulative probability at ``r_pc`` (trapezoids of ``pdf``).
    exact_pc : float or None
        The distance when it is known exactly (no error given).
    parallax_mas, parallax_error_mas : float or None
    distance_pc, distance_error_low_pc, distance_error_high_pc : float or None
    prior : DistancePrior
    warnings : list of str
    """

    source: str
    r_pc: np.ndarray
    pdf: np.ndarray
    cdf: np.ndarray
    exact_pc: float | None
    parallax_mas: float | None
    parallax_error_mas: float | None
    distance_pc: float | None
    distance_error_low_pc: float | None
    distance_error_high_pc: float | None
    prior: object
    warnings: list = field(default_factory=list)

    @property
    def uses_parallax(self):
        """Whether the parallax is one of the measurements combined."""
        return "parallax" in self.source

    def quantile(self, q):
        """Distance (pc) below which the posterior holds the probability ``q`` (scalar or array)."""
        q = np.asarray(q, float)
        if self.exact_pc is not None:
            return np.full(q.shape, self.exact_pc) if q.ndim else float(self.exact_pc)
        out = _invert(self.r_pc, self.pdf, self.cdf, np.clip(q, 0.0, 1.0))
        return out if q.ndim else float(out)

    def sample(self, n, rng=None):
        """``n`` distance draws (pc), stratified: one uniform number in each of n equal strata, shuffled.

        Parameters
        ----------
        n : int
        rng : numpy.random.Generator | int | None

        Returns
        -------
        ndarray, pc (all > 0)
        """
        rng = np.random.default_rng(rng)
        n = int(n)
        u = (rng.permutation(n) + rng.random(n)) / max(n, 1)
        if self.exact_pc is not None:
            return np.full(n, float(self.exact_pc))
        return _invert(self.r_pc, self.pdf, self.cdf, u)

    def summary(self):
        """Median and central 68% / 95% intervals of the posterior itself (pc)."""
        q = self.quantile([0.5, 0.15865525393145708, 0.8413447460685429, 0.022750131948179195,
                           0.9772498680518208])
        return dict(zip(("median", "lo68", "hi68", "lo95", "hi95"), (float(x) for x in q)))

    def words(self, parallax_origin=None):
        """Where the distance comes from, in words ('the parallax ... combined with the distance estimate ...').

        ``parallax_origin`` (e.g. 'timing fit') is named after the parallax.
        """
        parts = []
        if self.uses_parallax:
            origin = f" ({parallax_origin})" if parallax_origin else ""
            parts.append(f"the parallax {_pm(self.parallax_mas, self.parallax_error_mas, 'mas')}{origin}")
        if self.distance_pc is not None and "distance" in self.source:
            if self.exact_pc is not None:
                parts.append(f"the distance {self.distance_pc:.4g} pc (taken as exact: no distance_error)")
            elif self.distance_error_low_pc == self.distance_error_high_pc:
                parts.append(f"the distance estimate {_pm(self.distance_pc, self.distance_error_low_pc, 'pc')}")
            else:
                parts.append(f"the distance estimate {self.distance_pc:.4g} +{_sig2(self.distance_error_high_pc)} "
                             f"-{_sig2(self.distance_error_low_pc)} pc")
        text = " combined with ".join(parts)
        if self.exact_pc is None and self.prior is not None:
            text += f", with the {self.prior.name} space-density prior"
        return text

    def assumption(self, parallax_origin=None):
        """One sentence for a result's assumptions: the measurements, the likelihoods and the prior."""
        if self.exact_pc is not None:
            return (f"Distance {self.exact_pc:.4g} pc from [star] distance, taken as exact (no distance_error "
                    "given)")
        terms = ["space-density prior"]
        if self.uses_parallax:
            terms.append("parallax likelihood (Gaussian in the true parallax 1/d)")
        if "distance" in self.source:
            terms.append("distance-estimate likelihood (Gaussian in d"
                         + (", split normal" if self.distance_error_low_pc != self.distance_error_high_pc else "")
                         + ")")
        return (f"One distance posterior for every stage, from {self.words(parallax_origin)}: " + " x ".join(terms)
                + " (Bailer-Jones 2015, PASP 127, 994), drawn by inverting its cumulative distribution")


def _sig2(x):
    """Two significant figures without an exponent for ordinary sizes ('180', '0.14')."""
    return f"{float(f'{x:.2g}'):g}"


def _pm(x, e, unit):
    return f"{x:.3g} +/- {_sig2(e)} {unit}"


def _log_density(r, prior, w, sw, d, lo, hi):
    """Unnormalised log posterior at distances ``r`` (pc)."""
    r = np.asarray(r, float)
    out = prior.log_density(r / 1000.0) if prior is not None else np.where(r > 0, 0.0, -np.inf)
    if w is not None:
        with np.errstate(divide="ignore"):
            out = out - 0.5 * ((w - 1000.0 / r) / sw) ** 2
    if d is not None:
        sig = np.where(r < d, lo, hi)
        out = out - 0.5 * ((r - d) / sig) ** 2
    return np.where(np.isfinite(out), out, -np.inf)


def _start_grid(prior, w, sw, d, lo, hi):
    r_max = 1000.0 * prior.r_max_kpc if prior is not None else 1e5
    pts = [np.geomspace(1e-2, r_max, 3001)]
    k = np.linspace(-8.0, 8.0, 161)
    if w is not None:
        wt = w + k * sw
        pts.append(1000.0 / wt[wt > 0])
    if d is not None:
        pts.append(d + np.where(k < 0, lo, hi) * k)
    r = np.unique(np.concatenate(pts))
    return r[(r > 0) & (r <= r_max)]


def _trapezoid_mass(r, lp):
    p = np.exp(lp - np.max(lp))
    return 0.5 * (p[1:] + p[:-1]) * np.diff(r), p


def _refine(r, f):
    lp = f(r)
    top = np.max(lp)
    keep = np.flatnonzero(lp > top - _CUT)
    i0, i1 = max(keep[0] - 1, 0), min(keep[-1] + 1, r.size - 1)
    r, lp = r[i0:i1 + 1], lp[i0:i1 + 1]
    for _ in range(60):
        mass, _ = _trapezoid_mass(r, lp)
        mass = mass / mass.sum()
        with np.errstate(invalid="ignore"):
            dlp = np.abs(np.diff(lp))
        dlp = np.where(np.isfinite(dlp), dlp, np.inf)
        split = (mass > _MAX_MASS) | ((dlp > _MAX_DLOGP) & (mass > _MIN_MASS))
        if not split.any() or r.size > _MAX_POINTS:
            break
        mid = 0.5 * (r[:-1] + r[1:])[split]
        r_new = np.concatenate([r, mid])
        order = np.argsort(r_new, kind="stable")
        r, lp = r_new[order], np.concatenate([lp, f(mid)])[order]
    return r, lp


def _invert(r, pdf, cdf, u):
    """Exact inverse of the CDF of the piecewise-linear density ``pdf`` on ``r`` at probabilities ``u``."""
    u = np.asarray(u, float)
    k = np.clip(np.searchsorted(cdf, u, side="right") - 1, 0, r.size - 2)
    h = r[k + 1] - r[k]
    p0, p1 = pdf[k], pdf[k + 1]
    slope = (p1 - p0) / h
    a = np.clip(u - cdf[k], 0.0, None)
    disc = np.sqrt(np.maximum(p0 * p0 + 2.0 * slope * a, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.where(p0 + disc > 0, 2.0 * a / (p0 + disc), 0.0)
    return r[k] + np.clip(x, 0.0, h)


@quantity_edge(None, parallax_mas="mas", parallax_error_mas="mas", distance_pc="pc", distance_error_pc="pc",
               distance_error_low_pc="pc", distance_error_high_pc="pc")
def distance_posterior(*, prior, parallax_mas=None, parallax_error_mas=None, distance_pc=None,
                       distance_error_pc=None, distance_error_low_pc=None, distance_error_high_pc=None,
                       where="[star]"):
    """The distance posterior from a parallax and/or a distance estimate.

    Parameters
    ----------
    prior : DistancePrior
        Space-density prior (also applied to a distance estimate alone).
    parallax_mas, parallax_error_mas : float or Quantity [angle], optional, mas
        Measured parallax (any sign) and its error (> 0).
    distance_pc : float or Quantity [length], optional, pc
        Distance estimate (> 0).
    distance_error_pc : float or Quantity [length], optional, pc
        Its symmetric Gaussian error; or give ``distance_error_low_pc`` and
        ``distance_error_high_pc`` (split normal).  No error: the distance is
        exact (with a warning).
    where : str
        Table named in error messages.

    Returns
    -------
    DistancePosterior

    Raises
    ------
    InputError
        Neither measurement given, an error that is not positive, or
        measurements the prior gives no probability (beyond its ``r_max``).
    """
    w = None if parallax_mas is None or not np.isfinite(parallax_mas) else float(parallax_mas)
    sw = parallax_error_mas
    if w is not None and not (sw is not None and np.isfinite(sw) and sw > 0):
        raise InputError(f"{where} parallax_error", f"must be a positive number of mas (got {sw})")
    d = None if distance_pc is None or not np.isfinite(distance_pc) else float(distance_pc)
    if d is not None and not d > 0:
        raise InputError(f"{where} distance", f"must be positive (got {d} pc)")
    lo = hi = None
    if d is not None:
        lo = distance_error_low_pc if distance_error_low_pc is not None else distance_error_pc
        hi = distance_error_high_pc if distance_error_high_pc is not None else distance_error_pc
        for key, e in (("distance_error_low" if distance_error_low_pc is not None else "distance_error", lo),
                       ("distance_error_high" if distance_error_high_pc is not None else "distance_error", hi)):
            if e is not None and not (np.isfinite(e) and e > 0):
                raise InputError(f"{where} {key}", f"must be positive (got {e} pc)")
    if w is None and d is None:
        raise InputError(f"{where} parallax", "a distance needs a parallax (with parallax_error) or a distance "
                                               "(with distance_error); neither is given")
    source = "parallax+distance" if (w is not None and d is not None) else ("parallax" if w is not None else "distance")
    notes = _tension(w, sw, d, lo, hi, where) if source == "parallax+distance" else []
    common = dict(parallax_mas=w, parallax_error_mas=None if w is None else float(sw), distance_pc=d,
                  distance_error_low_pc=lo, distance_error_high_pc=hi, prior=prior)
    if d is not None and lo is None:
        text = (f"{where} distance ({d:.6g} pc) is given without distance_error: the distance is taken as exact"
                + ("; the parallax does not change it" if w is not None else ""))
        return DistancePosterior("distance", np.empty(0), np.empty(0), np.empty(0), d, warnings=[text] + notes,
                                 **common)

    r_max = 1000.0 * prior.r_max_kpc if prior is not None else np.inf
    if d is not None and d - 3.0 * lo > r_max:
        raise InputError(f"{where} distance", f"{d:g} pc lies beyond the largest distance of the "
                                              f"'{prior.name}' prior ({r_max:g} pc); choose another "
                                              "[trace] distance_prior")

    def f(r):
        return _log_density(r, prior, w, None if w is None else float(sw), d, lo, hi)

    r = _start_grid(prior, w, None if w is None else float(sw), d, lo, hi)
    lp = f(r)
    if not np.isfinite(lp).any():
        raise InputError(f"{where} parallax", "the measurements leave no distance the prior allows")
    r, lp = _refine(r, f)
    mass, p = _trapezoid_mass(r, lp)
    total = mass.sum()
    pdf = p / total
    cdf = np.concatenate([[0.0], np.cumsum(mass) / total])
    return DistancePosterior(source, r, pdf, cdf, None, warnings=notes, **common)


#: a parallax and a distance estimate further apart than this many combined standard deviations get a warning
TENSION_SIGMA = 3.0


def _tension(w, sw, d, lo, hi, where):
    """A warning when the parallax and the distance estimate disagree (parallax 1000/d against w)."""
    w_d = 1000.0 / d
    err_d = (hi if w_d > w else lo) or 0.0  # the side of the distance error that points towards the parallax
    sig = np.hypot(sw, 1000.0 * err_d / d**2)
    z = abs(w - w_d) / sig
    if not z > TENSION_SIGMA:
        return []
    return [f"{where} parallax ({w:.3g} +/- {sw:.2g} mas) and distance ({d:.4g} pc, i.e. a parallax of {w_d:.3g} "
            f"mas) disagree by {z:.1f} sigma; the combined distance lies where both are least improbable: check "
            "them, or use one with distance_from"]
