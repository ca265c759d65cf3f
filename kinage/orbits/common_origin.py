"""Expected closest-approach distances for a true common origin.

Hoogerwerf, de Bruijne & de Zeeuw 2001 (A&A 365, 49), Appendix A: two
measured positions, each with isotropic Gaussian errors of dispersion sigma
per coordinate and true separation mu, have a measured 3-D separation Delta
with density (their eq. A3)

    F_3D(Delta) = Delta / (2 sqrt(pi) sigma mu)
                  {exp[-(Delta - mu)^2 / (4 sigma^2)] - exp[-(Delta + mu)^2 / (4 sigma^2)]},

and for a true common origin (mu -> 0, their eq. A4)

    F_3D(Delta) = Delta^2 / (2 sqrt(pi) sigma^3) exp[-Delta^2 / (4 sigma^2)],

a Maxwellian with scale sqrt(2) sigma.  Equivalently Delta / (sqrt(2) sigma)
follows a (non-central) chi distribution with 3 degrees of freedom, which is
how the cumulative distribution is computed here (scipy.stats.ncx2).

kinage compares the Monte Carlo d_min distribution of each association with
the mu = 0 form, sigma fitted by maximum likelihood (sigma^2 = <d^2> / 6), by a
Kolmogorov-Smirnov test; it also fits (mu, sigma) of eq. A3.  The KS p-value
is approximate because sigma is fitted, and the minimisation over time removes
the error component along the relative velocity, so the comparison is a guide
rather than a calibrated test (as in Hoogerwerf et al. 2001).  The trace results
report only the KS distance: Monte Carlo draws of one star are not independent
measurements, so a KS p-value on them shrinks as draws are added (the
birth probabilities of :mod:`.probability` are what rank the associations).
"""

import numpy as np
from scipy import optimize, stats

__all__ = ["separation_pdf", "separation_cdf", "compare_common_origin"]


def separation_pdf(delta, sigma, mu=0.0):
    """Density of the 3-D separation (Hoogerwerf et al. 2001, eqs. A3/A4), per unit of ``delta``.

    Parameters
    ----------
    delta : array_like
        Separations (any length unit).
    sigma : float
        Error dispersion per coordinate of each position (same unit).
    mu : float
        True separation (same unit); 0 for a common origin.
    """
    d = np.asarray(delta, float)
    if mu <= 0:
        return d**2 / (2 * np.sqrt(np.pi) * sigma**3) * np.exp(-(d**2) / (4 * sigma**2))
    return d / (2 * np.sqrt(np.pi) * sigma * mu) * (np.exp(-((d - mu) ** 2) / (4 * sigma**2))
                                                     - np.exp(-((d + mu) ** 2) / (4 * sigma**2)))


def separation_cdf(delta, sigma, mu=0.0):
    """Cumulative distribution of the 3-D separation (non-central chi, 3 degrees of freedom)."""
    d = np.asarray(delta, float)
    s2 = 2.0 * sigma**2
    if mu <= 0:
        return stats.chi2.cdf(d**2 / s2, 3)
    return stats.ncx2.cdf(d**2 / s2, 3, mu**2 / s2)


def _nll_a3(p, d):
    """Negative log-likelihood of eq. A3 in a numerically stable form (log sigma, log mu)."""
    s, m = np.exp(p[0]), np.exp(p[1])
    logf = (np.log(d / (2 * np.sqrt(np.pi) * s * m)) - (d - m) ** 2 / (4 * s**2)
            + np.log(-np.expm1(-d * m / s**2)))
    return -np.sum(logf)


def compare_common_origin(dmin, max_fit=2000, rng=0):
    """Compare closest-approach distances with the common-origin distribution.

    Parameters
    ----------
    dmin : array_like, pc
    max_fit : int
        At most this many values (a fixed-seed subsample) enter the KS test and
        the (mu, sigma) fit; sigma for mu = 0 uses all values.
    rng : numpy.random.Generator | int | None

    Returns
    -------
    dict
        ``sigma_pc`` (ML sigma for mu = 0), ``ks_statistic``, ``ks_pvalue``
        (against eq. A4 with that sigma), ``fit_mu_pc``, ``fit_sigma_pc``
        (ML fit of eq. A3), ``n``.
    """
    d = np.asarray(dmin, float)
    d = d[np.isfinite(d) & (d >= 0)]
    out = {"n": int(d.size), "sigma_pc": None, "ks_statistic": None, "ks_pvalue": None,
           "fit_mu_pc": None, "fit_sigma_pc": None}
    if d.size < 5 or not np.any(d > 0):
        return out
    sigma = float(np.sqrt(np.mean(d**2) / 6.0))
    sub = d if d.size <= max_fit else np.random.default_rng(rng).choice(d, max_fit, replace=False)
    ks = stats.kstest(sub, lambda x: separation_cdf(x, sigma))
    out.update(sigma_pc=sigma, ks_statistic=float(ks.statistic), ks_pvalue=float(ks.pvalue))
    sub = np.maximum(sub, 1e-9 * sigma)
    res = optimize.minimize(_nll_a3, np.log([sigma, max(np.median(sub) * 0.5, 1e-6)]), args=(sub,),
                            method="Nelder-Mead", options={"xatol": 1e-4, "fatol": 1e-6, "maxiter": 400})
    if np.isfinite(res.fun):
        out.update(fit_sigma_pc=float(np.exp(res.x[0])), fit_mu_pc=float(np.exp(res.x[1])))
    return out
