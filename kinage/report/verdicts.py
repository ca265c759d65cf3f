"""The three verdict lines of a run: one quotable sentence per question.

Each stage builds its own line (:func:`kinage.timing.motion_verdict.motion_verdict`,
:func:`kinage.orbits.birthplace_verdict.birthplace_verdict`,
:func:`kinage.ages.verdicts.ages_verdict`) from its JSON dictionary; this
module puts them together under the keys ``motion``, ``birthplace`` and
``ages`` (``summary.verdicts`` in ``results.json``), shown first under each
question in the report and in ``RunResult.summary()``.
"""

__all__ = ["VERDICT_KEYS", "run_verdicts", "stage_verdict"]

#: verdict key -> (stages that answer it, the scenario table that asks it)
VERDICT_KEYS = {"motion": (("forecast", "fit"), "campaign"), "birthplace": (("trace",), "trace"),
                "ages": (("ages",), "ages")}


def stage_verdict(key, dicts):
    """The verdict line ``key`` from the stages' ``to_dict()`` (name -> dict); None when no stage answers."""
    if key == "motion":
        from ..timing.motion_verdict import motion_verdict

        return motion_verdict(forecast=dicts.get("forecast"), fit=dicts.get("fit"))
    if key == "birthplace":
        from ..orbits.birthplace_verdict import birthplace_verdict

        return birthplace_verdict(dicts["trace"]) if dicts.get("trace") else None
    if key == "ages":
        from ..ages.verdicts import ages_verdict

        return ages_verdict(dicts["ages"]) if dicts.get("ages") else None
    raise KeyError(key)


def run_verdicts(dicts, planned=(), failed=None):
    """``{"motion": ..., "birthplace": ..., "ages": ...}``: one sentence each.

    Parameters
    ----------
    dicts : dict
        Stage name -> the stage's ``to_dict()``.
    planned : sequence of str
        Stages the scenario asked for (a question not asked says so).
    failed : dict, optional
        Stage name -> message of a stage that failed.
    """
    failed = failed or {}
    out = {}
    for key, (stages, table) in VERDICT_KEYS.items():
        text = stage_verdict(key, dicts)
        if text is None:
            bad = next((s for s in stages if s in failed), None)
            if bad:
                text = f"Not answered: the {bad} stage failed."
            elif any(s in planned for s in stages):
                text = "Not answered: an earlier stage failed."
            else:
                text = f"Not asked: the scenario has no [{table}] table."
        out[key] = text
    return out
