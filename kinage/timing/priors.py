"""External astrometric priors (imaging or VLBI proper motion, parallax).

A ``[campaign]`` table may give ``prior_pm_ra_cosdec``, ``prior_pm_dec`` and
``prior_parallax`` with their ``_error`` siblings.  They form an independent
:class:`~kinage.astrometry.AstrometricSolution` (unmeasured parameters NaN)
that is combined with the timing solution by inverse-variance weighting with
the full covariance.  For a linear Gaussian model this equals a joint fit with
the prior as extra data: the prior touches only the astrometric parameters,
so combining it with the spin-marginalised timing covariance is exact.
"""

import numpy as np

from ..astrometry import AstrometricSolution
from ..errors import InputError

__all__ = ["prior_solution"]

_KEYS = ((2, "prior_pm_ra_cosdec", "mas/yr"), (3, "prior_pm_dec", "mas/yr"), (4, "prior_parallax", "mas"))


def prior_solution(campaign, like):
    """The external prior as an AstrometricSolution, or None when none is given.

    Parameters
    ----------
    campaign : Section
        ``[campaign]`` table.
    like : AstrometricSolution
        Supplies the epoch and reference position.
    """
    vals = np.full(5, np.nan)
    cov = np.full((5, 5), np.nan)
    any_given = False
    for i, key, unit in _KEYS:
        v = campaign.value(key, unit)
        if v is None:
            continue
        e = campaign.value(f"{key}_error", unit)
        if e is None:
            raise InputError(f"[campaign] {key}_error", f"required with '{key}' (the prior's uncertainty)")
        vals[i] = v
        cov[i, :] = cov[:, i] = np.nan
        cov[i, i] = e**2
        any_given = True
    if not any_given:
        return None
    ok = np.isfinite(vals)
    # zero off-diagonal terms between the given parameters
    sub = np.ix_(ok, ok)
    block = np.diag(np.diag(cov)[ok])
    cov[sub] = block
    return AstrometricSolution(like.epoch, like.ra_deg, like.dec_deg, vals, cov, source="prior")
