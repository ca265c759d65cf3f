"""Front door of the birthplace forecast: trace today, simulate the campaign's outcomes, summarise.

>>> from kinage.campaign import birthplace_forecast          # doctest: +SKIP
>>> bf = birthplace_forecast(scenario, forecast_result)      # doctest: +SKIP
>>> bf.to_dict()["decisive_probability"]                     # doctest: +SKIP
"""

import numpy as np

from ..astrometry import AstrometricSolution
from ..errors import InputError
from .preposterior import DECISIVE, FRESH_BUDGET, FRESH_DRAWS, simulate_outcomes, today_state
from .result import BirthplaceForecast
from .sweep import dates_covariance, information_bits, length_covariances, sweep_lengths, to_today_epoch

__all__ = ["birthplace_forecast", "forecast_with_birthplace", "check_birthplace_inputs", "check_outcomes",
           "OUTCOMES_RANGE",
           "SWEEP_OUTCOMES"]

#: allowed ``[campaign] outcomes``
OUTCOMES_RANGE = (20, 100_000)
#: outcomes per swept campaign length and per compared schedule (at most the main run's)
SWEEP_OUTCOMES = 100


def check_outcomes(value, where="[campaign] outcomes"):
    """The number of outcomes as an int, or InputError unless a whole number in 20..100,000."""
    lo, hi = OUTCOMES_RANGE
    try:
        n = int(value)
        ok = float(value) == n
    except (TypeError, ValueError):
        ok = False
    if not ok or not lo <= n <= hi:
        raise InputError(where, f"must be a whole number from {lo} to {hi:,} (got {value!r})")
    return n


def check_birthplace_inputs(scenario, where="--birthplace"):
    """InputError (one line, naming the missing table) unless the scenario has [campaign] and associations."""
    if scenario.campaign is None:
        raise InputError("[campaign]", f"{where} needs a [campaign] table (the planned timing campaign)")
    if scenario.trace is None or scenario.trace.get("associations") is None:
        raise InputError("[trace] associations", f"{where} needs candidate associations ([trace] associations)")
    if scenario.trace.get("control_runs") is not None and int(scenario.trace.get("control_runs")) < 1:
        raise InputError("[trace] control_runs", f"{where} needs the birth probabilities, hence control draws "
                         "(control_runs >= 1)")
    return check_outcomes(scenario.campaign.get("outcomes", 200))


def birthplace_forecast(scenario, forecast_result, *, outcomes=None, rng=None, samples=None, trace_result=None,
                        sweep=True, schedules=False, progress=False, associations=None):
    """Distribution of the birthplace probabilities after the planned campaign.

    Parameters
    ----------
    scenario : Scenario
        With ``[star]``, ``[campaign]`` and ``[trace]`` (associations).
    forecast_result : ForecastResult
        The campaign's Fisher forecast (its 5x5 covariance is the measurement's).
    outcomes : int, optional
        Simulated outcomes (default ``[campaign] outcomes``, 200).
    rng : numpy.random.Generator | int | None
        Seed of the outcomes; the trace of today's data uses ``[trace] seed`` (1 when absent) when ``rng`` is
        None or an int, as ``kinage trace`` does.
    samples : int, optional
        Overrides ``[trace] samples``.
    trace_result : TraceResult, optional
        Today's trace (made with ``[star]`` astrometry), when already at hand.
    sweep : bool
        Also the decisive probability against campaign length (1 yr to ``max_baseline``).
    schedules : bool
        Also each schedule's decisive probability and expected information.
    progress : bool
    associations : AssociationTable, optional

    Returns
    -------
    BirthplaceForecast
    """
    n_default = check_birthplace_inputs(scenario, where="a birthplace forecast")
    n_out = n_default if outcomes is None else check_outcomes(outcomes, "outcomes")
    seed = scenario.trace.get("seed")
    seed = 1 if seed is None else int(seed)
    if isinstance(rng, (int, np.integer)):
        seed = int(rng)
    gen = np.random.default_rng(np.random.SeedSequence([seed, 21]) if rng is None or isinstance(rng, (int, np.integer))
                                else rng)
    today = AstrometricSolution.from_star(scenario.star)
    if trace_result is None:
        from ..orbits import trace

        trace_result = trace(scenario, solution=today, rng=seed, samples=samples, progress=progress,
                             associations=associations)
    state = today_state(trace_result, today, scenario)
    fsol = forecast_result.solution
    covs = [to_today_epoch(fsol.covariance, fsol.epoch, today.epoch)]
    n_side = min(n_out, SWEEP_OUTCOMES)
    own = float(forecast_result.plan.span_yr)
    jobs = []  # (kind, key, covariance | "main" | None): the scenario's own length and schedule reuse the main set
    if sweep:
        lengths = sweep_lengths(forecast_result.max_baseline_yr, own)
        for length, (cov, epoch) in zip(lengths, length_covariances(scenario, forecast_result, lengths)):
            same = abs(length - own) < 0.01 and forecast_result.plan.schedule == "even"
            jobs.append(("length", float(length), "main" if same else
                         None if cov is None else to_today_epoch(cov, epoch, today.epoch)))
    if schedules and forecast_result.schedules:
        for name, row in forecast_result.schedules.items():
            if "mjd" not in row:
                continue
            if name == forecast_result.plan.schedule:
                jobs.append(("schedule", name, "main"))
                continue
            cov, epoch = dates_covariance(scenario, forecast_result, row["mjd"])
            jobs.append(("schedule", name, to_today_epoch(cov, epoch, today.epoch)))
    side = [j for j in jobs if isinstance(j[2], np.ndarray)]
    # the main campaign: FRESH_DRAWS per collapsed outcome; lengths and schedules, which give one number each
    # (a share of outcomes), half as many; all within FRESH_BUDGET times today's draws
    sets = simulate_outcomes(state, covs + [j[2] for j in side], [n_out] + [n_side] * len(side), gen,
                             fresh_draws=[FRESH_DRAWS] + [FRESH_DRAWS // 2] * len(side), fresh_budget=FRESH_BUDGET)
    main = sets[0]
    found = {id(j): s for j, s in zip(side, sets[1:])}

    def numbers(job):
        s = main if isinstance(job[2], str) else found.get(id(job))
        if s is None:
            return {"decisive_probability": None, "information_bits": None, "n_outcomes": 0}
        return {"decisive_probability": float(np.mean(s.probabilities.max(1) >= DECISIVE)),
                "information_bits": information_bits(state.p_now, s.probabilities),
                "n_outcomes": int(s.probabilities.shape[0])}

    sweep_rows = [{"length_yr": j[1], **numbers(j)} for j in jobs if j[0] == "length"]
    sched = {j[1]: numbers(j) for j in jobs if j[0] == "schedule"}
    ref = state.names[state.ref] if state.ref is not None else None
    notes = ["chance rates recomputed for every outcome from the control draws, each weighted like the star draw "
             "it was turned from (its direction is random, its speed and distance follow the measurement; weights "
             "tempered to keep 20% of the draws effective)",
             f"campaign lengths and schedules: {n_side} outcomes each, same cadence and TOA errors"]
    return BirthplaceForecast(state.names, state.p_now, main, sweep_rows, state.age_width_now_yr, ref,
                              float(forecast_result.plan.span_yr), sched,
                              information_bits(state.p_now, main.probabilities), notes, trace_result)


def forecast_with_birthplace(scenario, *, outcomes=None, rng=None, samples=None, progress=False, associations=None,
                             schedules=True, **kwargs):
    """The timing forecast with its birthplace forecast attached (``result.birthplace``).

    With ``[campaign] schedule = "birthplace"`` the 'even', 'parallax' and 'motion' schedules (same visits)
    are compared by their expected information about the birthplace (Lindley 1956: expected reduction of the
    entropy of the hypothesis probabilities) and the forecast is made with the best.

    Parameters
    ----------
    scenario : Scenario
    outcomes, rng, samples, progress, associations :
        As for :func:`birthplace_forecast`.
    schedules : bool
        Also compare the schedules' decisive probability and information.
    **kwargs
        Passed to :func:`kinage.timing.forecast` (e.g. ``method``).

    Returns
    -------
    ForecastResult
    """
    from ..timing import forecast

    check_birthplace_inputs(scenario)
    if outcomes is not None:
        check_outcomes(outcomes, "outcomes")
    c = scenario.campaign
    choose = str(c.get("schedule") or "even").strip().lower() == "birthplace"
    kw = dict(outcomes=outcomes, rng=rng, samples=samples, progress=progress, associations=associations)
    if not choose:
        res = forecast(scenario, progress=progress, **kwargs)
        res.birthplace = birthplace_forecast(scenario, res, schedules=schedules, **kw)
        return res
    if c.get("dates") is not None or c.get("toas") is not None and c.get("start") is None:
        raise InputError("[campaign] schedule", "'birthplace' places the visits itself: it needs start, baseline "
                         "and visits_per_year, not explicit dates or a TOA table")
    even = scenario.replace(campaign=c.replace(schedule="even"))
    res = forecast(even, progress=progress, **kwargs)
    first = birthplace_forecast(even, res, schedules=True, sweep=False, **kw)
    info = {k: v["information_bits"] for k, v in first.schedules.items()}
    best = max(info, key=lambda k: (info[k], k == "even"))
    chosen = scenario.replace(campaign=c.replace(schedule=best))
    if best != "even":
        res = forecast(chosen, progress=progress, **kwargs)
    res.birthplace = birthplace_forecast(chosen, res, trace_result=first.trace_result, schedules=schedules, **kw)
    res.birthplace.chosen_schedule = best
    res.birthplace.notes.append(
        f"schedule 'birthplace' chose '{best}': expected information about the birthplace "
        + ", ".join(f"{k} {v:.2f} bits" for k, v in info.items()))
    return res
