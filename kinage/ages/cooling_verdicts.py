"""Verdicts of an age against the cooling age, one envelope at a time.

The cooling age of one measured temperature differs between envelopes by far
more than its Monte Carlo error (iron and fully accreted ends differ by a
factor ~2-3 at kT ~ 60 eV), so pooling the envelopes and quoting a "sigma"
against the pool measures the distance between models, not an error.  Here
another age (kinematic or characteristic) is compared with each envelope's
cooling age (pooled over the masses only) by the rule of
:func:`.intervals.compare_intervals`, and the verdict names the envelopes that
reconcile the two, or says that none does and on which side the other age
lies.  No separation in sigmas across envelopes is ever stated.
"""

import numpy as np

from ..display.sentences import format_age_interval
from .intervals import compare_intervals, format_factor

__all__ = ["cooling_pair_verdict"]


def _fmt(iv):
    return format_age_interval(iv, inner=True)


def _name(rec):
    """'the iron envelope', 'light elements with Delta M/M = 1e-12'."""
    x = rec.get("light_element_log_mass")
    if x is not None:
        return f"a light-element layer of Delta M/M = 1e{x:g}"
    return f"the {rec['envelope']} envelope"


def _list(words):
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " and " + words[-1]


def cooling_pair_verdict(pair, name_a, a, cool, *, if_younger="", if_older="", missing=None):
    """Verdict record of an age against the cooling age of every envelope.

    Parameters
    ----------
    pair : str
        Key such as ``"kinematic-cooling"``.
    name_a : str
        The other age's name ("kinematic age").
    a : dict or None
        The other age's interval (yr).
    cool : CoolingAgeResult or None
        With ``per_envelope`` (intervals in yr, in order of light-element mass).
    if_younger, if_older : str
        What it implies when ``a`` is younger / older than every envelope's cooling age.
    missing : str, optional
        Why an age is unavailable.

    Returns
    -------
    dict
        ``pair``, ``text``, ``consistent`` (True when at least one envelope
        reconciles the ages), ``ratio`` (a / cooling age of the closest
        envelope), ``z`` (None: no sigma across envelopes),
        ``reconciling_envelopes`` (names).
    """

    envs = [r for r in (cool.per_envelope if cool is not None else []) if r.get("median") is not None]
    if a is None or a.get("median") is None or not envs:
        why = missing or (f"{name_a} not available" if a is None or a.get("median") is None
                          else "cooling age not available")
        return {"pair": pair, "text": f"No comparison of {name_a} and cooling age: {why}.", "consistent": None,
                "ratio": None, "z": None, "reconciling_envelopes": []}
    cmp = [compare_intervals(a, r) for r in envs]
    fa = _fmt(a)
    closest = int(np.argmin([abs(np.log(c["ratio"])) for c in cmp]))
    ok = [r for r, c in zip(envs, cmp) if c["consistent"]]
    base = {"pair": pair, "consistent": bool(ok), "ratio": cmp[closest]["ratio"], "z": None,
            "reconciling_envelopes": [r["envelope"] for r in ok]}
    if ok:
        text = (f"The {name_a} ({fa}) agrees with the cooling age for "
                + _list([f"{_name(r)} ({_fmt(r)})" for r in ok]) + ".")
        others = [(r, c) for r, c in zip(envs, cmp) if not c["consistent"]]
        if others:
            text += " It does not agree with " + _list(
                [f"{_name(r)} ({_fmt(r)}; {name_a} {'younger' if c['ratio'] < 1 else 'older'} by a factor "
                 f"{format_factor(c['ratio'] if c['ratio'] > 1 else 1 / c['ratio'])})" for r, c in others]) + "."
        return {**base, "text": text}
    each = "; ".join(f"{_name(r)}: {_fmt(r)}" for r in envs)
    younger = [c["ratio"] < 1 for c in cmp]
    if all(younger) or not any(younger):
        lo, hi = (min(c["ratio"] for c in cmp), max(c["ratio"] for c in cmp))
        if all(younger):
            f_lo, f_hi, word, why = 1 / hi, 1 / lo, "younger", if_younger
        else:
            f_lo, f_hi, word, why = lo, hi, "older", if_older
        factor = format_factor(f_lo) if len(envs) == 1 or format_factor(f_lo) == format_factor(f_hi) else \
            f"{format_factor(f_lo)}-{format_factor(f_hi)}"
        every = "the cooling age" if len(envs) == 1 else "the cooling age for every envelope considered"
        text = f"The {name_a} ({fa}) is {word} than {every} ({each}) by a factor {factor}"
        text += f", implying {why}." if why else "."
        return {**base, "text": text}
    k = younger.index(False) if younger[0] else younger.index(True)  # first envelope on the other side
    pair_envs = (envs[k - 1], envs[k])
    text = (f"No envelope considered reconciles the {name_a} ({fa}) with the cooling age ({each}): the {name_a} "
            f"lies between the cooling ages for {_name(pair_envs[0])} and {_name(pair_envs[1])}, so a light-element "
            "mass between theirs may reconcile them (add values to [ages] light_element_mass).")
    return {**base, "text": text}
