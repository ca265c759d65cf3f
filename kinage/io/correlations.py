"""Correlations between a star's astrometric errors (``[star.correlations]``).

Catalogues and VLBI papers quote the correlation coefficients of their
astrometric solutions: position with parallax, parallax with proper motion,
and so on.  A scenario gives them as a table keyed by the two parameters'
names joined by an underscore, in either order::

    [star.correlations]
    parallax_pm_ra_cosdec = 0.31
    ra_dec = -0.12

The parameters are ``ra``, ``dec``, ``parallax``, ``pm_ra_cosdec`` and
``pm_dec`` (the position errors are ``ra_error`` along the great circle,
``ra*cos(dec)``, and ``dec_error``, as astrometric catalogues give them).  The
correlation matrix of the parameters that have errors must be positive
definite.
"""

import math

import numpy as np

from ..errors import InputError

__all__ = ["ASTROMETRIC", "parse_correlations", "correlation_problem", "pair_key"]

#: the astrometric parameters a correlation may join, in the order of the solution vector
ASTROMETRIC = ("ra", "dec", "pm_ra_cosdec", "pm_dec", "parallax")


def pair_key(a, b):
    """The canonical key of a pair: the two names in :data:`ASTROMETRIC` order, joined by '_'."""
    i, j = sorted((ASTROMETRIC.index(a), ASTROMETRIC.index(b)))
    return f"{ASTROMETRIC[i]}_{ASTROMETRIC[j]}"


def _split(name):
    """``(a, b)`` for a key ``a_b`` with a and b astrometric names, else None (names contain '_')."""
    for a in ASTROMETRIC:
        if name.startswith(a + "_") and name[len(a) + 1:] in ASTROMETRIC:
            return a, name[len(a) + 1:]
    return None


def parse_correlations(raw, where="[star.correlations]"):
    """Validate a correlations table.

    Parameters
    ----------
    raw : dict
        ``{"parallax_pm_ra_cosdec": 0.3, ...}``.
    where : str
        Name of the table for messages.

    Returns
    -------
    dict of str -> float
        Canonical pair keys (:func:`pair_key`) to coefficients.

    Raises
    ------
    InputError
        A key that is not two astrometric names, a parameter paired with
        itself, a pair given twice, a value that is not a number in [-1, 1].
    """
    if not isinstance(raw, dict):
        raise InputError(where, "expected a table such as [star.correlations] with keys like "
                                f"parallax_pm_ra_cosdec = 0.3 (got {type(raw).__name__})")
    out = {}
    for name, val in raw.items():
        pair = _split(str(name))
        if pair is None:
            raise InputError(f"{where} {name}", "expected two of " + ", ".join(ASTROMETRIC) + " joined by '_' "
                             "(e.g. parallax_pm_ra_cosdec)")
        a, b = pair
        if a == b:
            raise InputError(f"{where} {name}", "a parameter's correlation with itself is 1 by definition")
        if isinstance(val, bool) or not isinstance(val, (int, float)) or not math.isfinite(val):
            raise InputError(f"{where} {name}", f"expected a number in [-1, 1] (got {val!r})")
        if not -1.0 <= val <= 1.0:
            raise InputError(f"{where} {name}", f"a correlation coefficient lies in [-1, 1] (got {val:g})")
        key = pair_key(a, b)
        if key in out:
            raise InputError(f"{where} {name}", f"the pair {a}, {b} is given twice")
        out[key] = float(val)
    return out


def correlation_matrix(correlations, names):
    """The correlation matrix of ``names`` (unit diagonal) from canonical pair keys."""
    n = len(names)
    r = np.eye(n)
    for i in range(n):
        for j in range(i + 1, n):
            rho = correlations.get(pair_key(names[i], names[j]), 0.0)
            r[i, j] = r[j, i] = rho
    return r


def correlation_problem(correlations, measured):
    """Why a correlation set cannot be a covariance, or None when it can.

    Parameters
    ----------
    correlations : dict of str -> float
        From :func:`parse_correlations`.
    measured : sequence of str
        Parameters that have a nonzero error (only they enter the matrix).

    Returns
    -------
    str or None
    """
    unused = [k for k in correlations if any(p not in measured for p in k_pair(k))]
    if unused:
        return (f"'{unused[0]}' correlates a parameter without a value and a nonzero error; give both "
                f"parameters with their _error keys")
    names = [p for p in ASTROMETRIC if p in measured]
    if len(names) < 2:
        return None
    eig = np.linalg.eigvalsh(correlation_matrix(correlations, names))
    if eig.min() <= 1e-10:
        return (f"the correlations of {', '.join(names)} do not form a positive-definite matrix (smallest "
                f"eigenvalue {eig.min():.3g}); check their signs and sizes")
    return None


def k_pair(key):
    """The two parameter names of a canonical pair key."""
    return _split(key)
