"""The astrometric solution handed from timing (or imaging) to tracing.

Parameters are ordered as :data:`PARAMETERS`.  Position parameters are small
offsets from the reference position (``ra``, ``dec``) in mas, with the ra
offset measured along a great circle (``ra*cos(dec)``), the usual convention
for astrometric catalogues.
"""

from dataclasses import dataclass, field

import astropy.units as u
import numpy as np
from astropy.time import Time

from .errors import InputError

__all__ = ["PARAMETERS", "UNITS", "AstrometricSolution", "solution_for_trace"]

#: order of the solution vector and covariance
PARAMETERS = ("ra", "dec", "pm_ra_cosdec", "pm_dec", "parallax")
#: units of values (offsets for ra/dec) and of sigma
UNITS = {"ra": "mas", "dec": "mas", "pm_ra_cosdec": "mas/yr", "pm_dec": "mas/yr", "parallax": "mas"}
_SIGMA_KEYS = {"ra": "ra_mas", "dec": "dec_mas", "pm_ra_cosdec": "pm_ra_cosdec_masyr",
               "pm_dec": "pm_dec_masyr", "parallax": "parallax_mas"}


@dataclass(frozen=True)
class AstrometricSolution:
    """Position, proper motion and parallax with their full covariance.

    Attributes
    ----------
    epoch : astropy.time.Time
        Reference epoch of position and proper motion.
    ra_deg, dec_deg : float
        Reference position (ICRS), degrees; the solution's position is this
        plus the ``ra``/``dec`` offsets (mas; ra offset along ra*cos(dec)).
    values : ndarray, shape (5,)
        ``ra`` offset (mas), ``dec`` offset (mas), ``pm_ra_cosdec`` (mas/yr),
        ``pm_dec`` (mas/yr), ``parallax`` (mas).  A parameter that is not
        measured has value NaN and a NaN row/column in the covariance.
    covariance : ndarray, shape (5, 5)
        In the same units.
    source : str
        Where it came from: ``'timing'``, ``'scenario'``, ``'timing+prior'``.
    """

    epoch: Time
    ra_deg: float
    dec_deg: float
    values: np.ndarray
    covariance: np.ndarray
    source: str = "scenario"
    extra: dict = field(default_factory=dict, compare=False)

    def __post_init__(self):
        v = np.asarray(self.values, float).reshape(5)
        c = np.asarray(self.covariance, float).reshape(5, 5)
        object.__setattr__(self, "values", v)
        object.__setattr__(self, "covariance", c)

    @property
    def sigma(self):
        """Standard errors, shape (5,), same units as ``values``."""
        return np.sqrt(np.diag(self.covariance))

    @property
    def correlation(self):
        """Correlation matrix (NaN where a parameter is unmeasured)."""
        s = self.sigma
        with np.errstate(invalid="ignore", divide="ignore"):
            return self.covariance / np.outer(s, s)

    @property
    def ra(self):
        """Right ascension including the fitted offset, Quantity [deg], in [0, 360) (an offset may cross 0h)."""
        off = 0.0 if not np.isfinite(self.values[0]) else self.values[0]
        ra = (self.ra_deg + off / 3.6e6 / np.cos(np.radians(self.dec_deg))) % 360.0
        return (0.0 if ra >= 360.0 else ra) * u.deg  # -1e-17 % 360 rounds to 360.0

    @property
    def dec(self):
        """Declination including the fitted offset, Quantity [deg]."""
        off = 0.0 if not np.isfinite(self.values[1]) else self.values[1]
        return (self.dec_deg + off / 3.6e6) * u.deg

    def value(self, name):
        """Value of one parameter (offsets for ra/dec), float in :data:`UNITS`."""
        return float(self.values[PARAMETERS.index(name)])

    def error(self, name):
        """Standard error of one parameter, float in :data:`UNITS`."""
        return float(self.sigma[PARAMETERS.index(name)])

    def sigma_dict(self):
        """Standard errors under the JSON keys ``ra_mas``, ``dec_mas``, ..."""
        return {_SIGMA_KEYS[p]: float(s) for p, s in zip(PARAMETERS, self.sigma)}

    def values_dict(self):
        """Values under the JSON keys (ra/dec as offsets in mas)."""
        return {_SIGMA_KEYS[p]: float(v) for p, v in zip(PARAMETERS, self.values)}

    def to_dict(self):
        return {
            "epoch_mjd_tdb": float(self.epoch.tdb.mjd),
            "ra_deg": float(self.ra.to_value(u.deg)),
            "dec_deg": float(self.dec.to_value(u.deg)),
            "values": self.values_dict(),
            "sigma": self.sigma_dict(),
            "parameters": list(PARAMETERS),
            "covariance": self.covariance.tolist(),
            "source": self.source,
        }

    @classmethod
    def from_star(cls, star, epoch=None):
        """Build the solution typed into a scenario's ``[star]`` table.

        Position offsets are zero with the given ``ra_error``/``dec_error``
        (mas); errors are correlated by ``[star.correlations]`` (any pair of
        ra, dec, pm_ra_cosdec, pm_dec, parallax) and ``pm_correlation``.
        Parameters not given are NaN.  When only ``distance`` is given the
        parallax is NaN (tracing then uses the distance directly).
        """
        if star.get("ra") is None or star.get("dec") is None:
            raise InputError("[star] ra", "position (ra, dec) is required")
        vals = np.full(5, np.nan)
        sig = np.full(5, np.nan)
        vals[0] = vals[1] = 0.0
        sig[0] = star.value("ra_error", "mas", 0.0)
        sig[1] = star.value("dec_error", "mas", 0.0)
        for i, key in ((2, "pm_ra_cosdec"), (3, "pm_dec"), (4, "parallax")):
            if star.get(key) is not None:
                vals[i] = star.value(key, UNITS[key])
                sig[i] = star.value(f"{key}_error", UNITS[key], 0.0)
        cov = np.diag(sig**2)
        corr = dict(star.get("correlations") or {})
        corr.setdefault("pm_ra_cosdec_pm_dec", star.get("pm_correlation") or 0.0)
        for i in range(5):
            for j in range(i + 1, 5):
                rho = corr.get(f"{PARAMETERS[i]}_{PARAMETERS[j]}", 0.0)
                if rho and np.isfinite(sig[i]) and np.isfinite(sig[j]):
                    cov[i, j] = cov[j, i] = rho * sig[i] * sig[j]
        ep = star.get("epoch") or epoch or Time("J2000", scale="tdb")
        return cls(ep, star.value("ra", "deg"), star.value("dec", "deg"), vals, cov, source="scenario")

    def combine(self, other, source=None):
        """Combine with an independent measurement (inverse-variance, full covariance).

        Parameters measured in only one of the two are taken from that one.
        Both solutions must refer to the same reference position and epoch.
        """
        a_ok = np.isfinite(self.values) & np.isfinite(np.diag(self.covariance))
        b_ok = np.isfinite(other.values) & np.isfinite(np.diag(other.covariance))
        vals = np.full(5, np.nan)
        cov = np.full((5, 5), np.nan)
        idx = np.flatnonzero(a_ok | b_ok)
        info = np.zeros((len(idx), len(idx)))
        vec = np.zeros(len(idx))
        for ok, sol in ((a_ok, self), (b_ok, other)):
            sub = np.flatnonzero(ok)
            if sub.size == 0:
                continue
            c = sol.covariance[np.ix_(sub, sub)]
            ci = np.linalg.pinv(c)
            pos = np.searchsorted(idx, sub)
            info[np.ix_(pos, pos)] += ci
            vec[pos] += ci @ sol.values[sub]
        c_new = np.linalg.pinv(info)
        vals[idx] = c_new @ vec
        cov[np.ix_(idx, idx)] = c_new
        return AstrometricSolution(self.epoch, self.ra_deg, self.dec_deg, vals, cov,
                                   source=source or f"{self.source}+{other.source}")


def solution_for_trace(scenario, fit_result=None):
    """The astrometry tracing uses.

    Without a timing fit: the values typed into ``[star]``.  With one: the
    inverse-variance combination of the timing solution and the ``[star]``
    values that carry errors (treated as independent measurements, e.g. from
    imaging); a parameter measured by only one of them is taken from it.
    The fit itself uses ``[star]`` values only as starting values.
    """
    typed = AstrometricSolution.from_star(scenario.star)
    if fit_result is None:
        return typed
    sol = fit_result.solution
    usable = np.isfinite(np.diag(typed.covariance)) & (np.diag(typed.covariance) > 0)
    vals = np.where(usable, typed.values, np.nan)
    cov = np.where(np.outer(usable, usable), typed.covariance, np.nan)
    typed = AstrometricSolution(sol.epoch, sol.ra_deg, sol.dec_deg, vals, cov, source="scenario")
    return sol.combine(typed, source=f"{sol.source}+scenario")
