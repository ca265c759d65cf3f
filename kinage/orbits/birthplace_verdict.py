"""The one-sentence answer to "where and when was it born?".

Built from the trace's JSON dictionary (``TraceResult.to_dict()`` or the
``trace`` section of ``results.json``): the favoured association with its
probability and the kinematic age, or the most probable candidate and the
field probability when none is favoured, and what the answer rests on (the
candidates listed, the field prior, the assumed radial-velocity distribution
when the radial velocity is unknown).  At most about 25 words; the trace's
``summary()`` paragraph follows it with the detail.
"""

from .._rounding import percent_text
from .statistics import _prob_text

__all__ = ["birthplace_verdict"]


def _age(iv):
    from ..display.sentences import format_age_interval

    return format_age_interval(iv or {})


def _rests_on(d):
    """What the answer rests on: the candidates and the radial-velocity prior (or the field prior)."""
    n = len(d.get("associations") or [])
    what = f"{n} candidate{'s' if n != 1 else ''}"
    if (d.get("settings") or {}).get("radial_velocity_source") == "prior":
        return [what, "the radial-velocity prior"]
    prior = d.get("field_prior")
    return [what] + ([f"a field prior of {prior:.2g}"] if prior is not None else [])


def birthplace_verdict(d):
    """One quotable sentence on the star's birthplace and time.

    Parameters
    ----------
    d : dict
        The trace's ``to_dict()``.

    Returns
    -------
    str
    """
    assocs = d.get("associations") or []
    if not assocs:
        pc = d.get("plane_crossing_age_yr") or {}
        frac = d.get("plane_crossing_fraction") or 0.0
        if pc.get("median") is not None and frac >= 0.5:
            return (f"No candidate associations were given; the star last crossed the Galactic plane {_age(pc)} "
                    "ago, an upper bound on its age only if it was born in the plane.")
        return "No candidate associations were given, so no birthplace can be named."
    best = assocs[0]
    if best.get("probability") is None:
        return (f"No birthplace can be named without control draws; {best['name']} has the most encounters "
                f"({percent_text(best.get('encounter_fraction', 0.0))} of the draws).")
    p = _prob_text(best["probability"], best.get("probability_error"))
    p0 = _prob_text(d.get("field_probability"), d.get("field_probability_error"))
    if d.get("favoured"):
        return (f"Probably born in {best['name']} (probability {p}) {_age(best.get('age_yr'))} ago, given "
                f"{' and '.join(_rests_on(d))}.")
    if best.get("probability", 0.0) < 0.05:
        return (f"No association is favoured: a birth outside every candidate has probability {p0}, given "
                f"{' and '.join(_rests_on(d))}.")
    return (f"No association is favoured: the most probable, {best['name']}, has {p}; a birth elsewhere {p0} "
            f"({', '.join(_rests_on(d))}).")
