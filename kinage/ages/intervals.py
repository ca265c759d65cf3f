"""Compare two age intervals, and print ratios: the arithmetic every age verdict shares.

Separated from :mod:`kinage.ages.verdicts` so that the cooling verdicts and the
other verdicts can use it without importing each other.
"""

import numpy as np

__all__ = ["format_factor", "log_sigma", "compare_intervals"]


def format_factor(x):
    """A ratio as text with two significant figures and no exponent: 1.6, 24, 370, 12,000."""
    if x is None or not np.isfinite(x):
        return "n/a"
    r = float(f"{x:.2g}")
    return f"{r:,.0f}" if r >= 100 else f"{r:g}"


def log_sigma(iv):
    """Half the width of the 68 % interval in ln(age); 0 when not available."""
    if not iv or iv.get("lo68") is None or iv.get("hi68") is None or not iv["lo68"] > 0:
        return 0.0
    return 0.5 * (np.log(iv["hi68"]) - np.log(iv["lo68"]))


def _side_sigma(iv, side):
    """ln(hi68 / median) (``side='hi'``) or ln(median / lo68) (``'lo'``); inf above an open interval, 0 if exact."""
    med = iv["median"]
    if side == "hi":
        if iv.get("unbounded_above"):
            return np.inf
        end = iv.get("hi68")
        return float(np.log(end / med)) if end is not None and end > 0 and med > 0 else 0.0
    end = iv.get("lo68")
    return float(np.log(med / end)) if end is not None and end > 0 and med > 0 else 0.0


def compare_intervals(a, b, threshold=2.0):
    """Compare two age intervals.

    Parameters
    ----------
    a, b : dict
        With ``median``, ``lo68``, ``hi68`` in yr (``unbounded_above`` True
        for an interval open above).
    threshold : float
        Number of combined sigmas (in ln age) counted as agreement.

    Returns
    -------
    dict
        ``ratio`` (a / b of the medians), ``z`` (separation in combined
        sigmas, each taken on the side facing the other median; inf when both
        are exact and differ), ``consistent`` (bool).
    """
    ratio = a["median"] / b["median"]
    if ratio < 1:
        sig = np.hypot(_side_sigma(a, "hi"), _side_sigma(b, "lo"))
    elif ratio > 1:
        sig = np.hypot(_side_sigma(a, "lo"), _side_sigma(b, "hi"))
    else:
        sig = np.hypot(log_sigma(a), log_sigma(b))
    diff = abs(np.log(ratio))
    if sig > 0:
        z = diff / sig
    else:
        z = 0.0 if diff < 1e-9 else np.inf
    return {"ratio": float(ratio), "z": float(z), "consistent": bool(z <= threshold)}
