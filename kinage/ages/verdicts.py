"""Plain-language verdicts comparing two ages.

Two ages agree "within errors" when their medians differ by less than two
combined standard deviations in log age, the deviation of each taken as half
the width of its 68 % interval in ln(age) (a Gaussian-in-log convention:
common practice, no source).  Otherwise the verdict states which is younger,
by what factor, and what that implies.
"""

import numpy as np

__all__ = ["format_age", "log_sigma", "compare_intervals", "pair_verdict"]


def format_age(yr):
    """An age in yr as short text: '840 yr', '12.6 kyr', '1.3 Myr'."""
    if yr is None or not np.isfinite(yr):
        return "n/a"
    if yr >= 1e9:
        return f"{yr / 1e9:.3g} Gyr"
    if yr >= 1e6:
        return f"{yr / 1e6:.3g} Myr"
    if yr >= 1e4:
        return f"{yr / 1e3:.3g} kyr"
    return f"{yr:,.0f} yr" if yr >= 100 else f"{yr:.3g} yr"


def log_sigma(iv):
    """Half the width of the 68 % interval in ln(age); 0 when not available."""
    if not iv or iv.get("lo68") is None or iv.get("hi68") is None or not iv["lo68"] > 0:
        return 0.0
    return 0.5 * (np.log(iv["hi68"]) - np.log(iv["lo68"]))


def compare_intervals(a, b, threshold=2.0):
    """Compare two age intervals.

    Parameters
    ----------
    a, b : dict
        With ``median``, ``lo68``, ``hi68`` in yr.
    threshold : float
        Number of combined sigmas (in ln age) counted as agreement.

    Returns
    -------
    dict
        ``ratio`` (a / b of the medians), ``z`` (separation in combined
        sigmas; inf when both are exact and differ), ``consistent`` (bool).
    """
    ratio = a["median"] / b["median"]
    sig = np.hypot(log_sigma(a), log_sigma(b))
    diff = abs(np.log(ratio))
    if sig > 0:
        z = diff / sig
    else:
        z = 0.0 if diff < 1e-9 else np.inf
    return {"ratio": float(ratio), "z": float(z), "consistent": bool(z <= threshold)}


def pair_verdict(pair, name_a, a, name_b, b, *, if_younger="", if_older="", missing=None):
    """One verdict record ``{pair, text, consistent, ratio, z}``.

    Parameters
    ----------
    pair : str
        Key such as ``"kinematic-characteristic"``.
    name_a, name_b : str
        Names used in the text ("kinematic age", ...).
    a, b : dict or None
        Intervals in yr (None: not available).
    if_younger, if_older : str
        What it implies when ``a`` is younger / older than ``b`` beyond errors.
    missing : str, optional
        Why one of the ages is unavailable (used when a or b is None).
    """
    if a is None or b is None or a.get("median") is None or b.get("median") is None:
        why = missing or f"{name_a if (a is None or a.get('median') is None) else name_b} not available"
        return {"pair": pair, "text": f"No comparison of {name_a} and {name_b}: {why}.",
                "consistent": None, "ratio": None, "z": None}
    c = compare_intervals(a, b)
    fa, fb = format_age(a["median"]), format_age(b["median"])
    if c["consistent"]:
        text = (f"The {name_a} ({fa}) and the {name_b} ({fb}) are consistent within errors "
                f"(ratio {c['ratio']:.2g}).")
    elif c["ratio"] < 1:
        text = f"The {name_a} ({fa}) is younger than the {name_b} ({fb}) by a factor {1 / c['ratio']:.2g}"
        text += f", implying {if_younger}." if if_younger else "."
    else:
        text = f"The {name_a} ({fa}) is older than the {name_b} ({fb}) by a factor {c['ratio']:.2g}"
        text += f", implying {if_older}." if if_older else "."
    return {"pair": pair, "text": text, **c}
