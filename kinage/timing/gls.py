"""Generalised least squares with a structured noise covariance.

For residuals R (s), design matrix M = dR/dtheta and noise covariance C, the
linearised GLS step and the parameter covariance are

    dtheta = -(M^T C^-1 M)^-1 M^T C^-1 R,    Cov(theta) = (M^T C^-1 M)^-1

(the Fisher matrix of a linear Gaussian model is M^T C^-1 M; Coles et al.
2011, MNRAS 418, 561 for timing with correlated noise).  Columns are scaled
to unit norm before inversion because spin and astrometric columns differ by
many orders of magnitude.
"""

import numpy as np
from scipy import linalg

from ..errors import ConvergenceError

__all__ = ["fisher_matrix", "covariance_from_fisher", "gls_step"]


def fisher_matrix(design, noise, method="woodbury"):
    """M^T C^-1 M for a design matrix (n, p) in s per parameter unit."""
    return np.atleast_2d(noise.quadratic(design, method=method))


def covariance_from_fisher(fisher):
    """Inverse of a Fisher matrix, stable for badly scaled parameters.

    Raises
    ------
    ConvergenceError
        When the matrix is singular (parameters not constrained by the data).
    """
    d = np.sqrt(np.abs(np.diag(fisher)))
    if np.any(d == 0) or not np.all(np.isfinite(fisher)):
        raise ConvergenceError("the timing data do not constrain every parameter (singular Fisher matrix)")
    scaled = fisher / np.outer(d, d)
    try:
        cho = linalg.cho_factor(scaled, lower=True)
        inv = linalg.cho_solve(cho, np.eye(scaled.shape[0]))
    except linalg.LinAlgError:
        raise ConvergenceError("the timing data do not constrain every parameter (Fisher matrix not "
                               "positive definite: too few TOAs or a degenerate plan)") from None
    return inv / np.outer(d, d)


def gls_step(design, resid, noise, method="woodbury"):
    """One GLS step.

    Returns
    -------
    step : ndarray
        Parameter change that minimises R^T C^-1 R to first order.
    cov : ndarray
        Parameter covariance (M^T C^-1 M)^-1.
    chi2 : float
        R^T C^-1 R before the step.
    """
    # one pass over the TOAs: [M R]^T C^-1 [M R] holds the Fisher matrix, M^T C^-1 R and chi-square
    x = np.column_stack([design, resid])
    q = np.atleast_2d(noise.quadratic(x, method=method))
    p = design.shape[1]
    cov = covariance_from_fisher(q[:p, :p])
    return -cov @ q[:p, p], cov, float(q[p, p])
