"""The birthplace forecast's result: numbers, JSON, one sentence, a table."""

from dataclasses import dataclass, field

import numpy as np

from .preposterior import DECISIVE, ESS_FLOOR

__all__ = ["BirthplaceForecast", "hypothesis_rows"]


def hypothesis_rows(names, p_now, probs):
    """One dict per hypothesis (associations, then "field") with the keys of forecast.birthplace.hypotheses."""
    rows = []
    for k, name in enumerate(list(names) + ["field"]):
        col = probs[:, k]
        q05, q50, q95 = np.quantile(col, [0.05, 0.5, 0.95])
        rows.append({"name": name, "probability_now": float(p_now[k]),
                     "probability_after_mean": float(np.mean(col)),
                     "probability_after_mean_error": float(np.std(col, ddof=1) / np.sqrt(col.size)),
                     "probability_after_q05": float(q05), "probability_after_q50": float(q50),
                     "probability_after_q95": float(q95),
                     "decisive_probability": float(np.mean(col >= DECISIVE))})
    return rows


def _method(methods):
    kinds = sorted(set(methods))
    return kinds[0] if len(kinds) == 1 else "reweight+fresh"


@dataclass
class BirthplaceForecast:
    """What the planned campaign will tell about the birthplace (preposterior analysis).

    Attributes
    ----------
    names : list of str
        Candidate associations (table order).
    p_now : ndarray (N + 1,)
        Today's probabilities (associations, then the field).
    outcomes : OutcomeSet
        The scenario's campaign.
    sweep : list of dict
        Per campaign length: ``length_yr``, ``decisive_probability``, ``n_outcomes``, ``information_bits``.
    age_width_now_yr : float or None
        Width of today's 68% kinematic-age interval of the followed association.
    age_association : str or None
    baseline_yr : float
        The scenario's campaign length.
    schedules : dict
        Schedule name -> ``decisive_probability`` and ``information_bits`` (``--compare-schedules``).
    """

    names: list
    p_now: np.ndarray
    outcomes: object
    sweep: list = field(default_factory=list)
    age_width_now_yr: float | None = None
    age_association: str | None = None
    baseline_yr: float = float("nan")
    schedules: dict = field(default_factory=dict)
    information_bits: float = float("nan")
    notes: list = field(default_factory=list)
    trace_result: object = field(default=None, repr=False)
    chosen_schedule: str | None = None

    @property
    def n_outcomes(self):
        return self.outcomes.probabilities.shape[0]

    @property
    def decisive_probability(self):
        """Share of outcomes in which some hypothesis reaches 0.9."""
        return float(np.mean(np.max(self.outcomes.probabilities, axis=1) >= DECISIVE))

    def hypotheses(self):
        return hypothesis_rows(self.names, self.p_now, self.outcomes.probabilities)

    def to_dict(self):
        o = self.outcomes
        widths = o.age_width_yr[np.isfinite(o.age_width_yr)]
        methods = list(o.method)
        return {
            "hypotheses": self.hypotheses(),
            "decisive_probability": self.decisive_probability,
            "decisive_threshold": DECISIVE,
            "n_outcomes": self.n_outcomes,
            "kinematic_age_association": self.age_association,
            "kinematic_age_width_now_yr": self.age_width_now_yr,
            "kinematic_age_width_after_yr": float(np.median(widths)) if widths.size else None,
            "method": _method(methods),
            "methods": {"reweight": methods.count("reweight"), "fresh": methods.count("fresh")},
            "outcome_methods": methods,
            "smallest_effective_sample_size": float(np.min(o.ess)),
            "fresh_draws_per_outcome": int(np.max(o.fresh_draws)) if np.any(o.fresh_draws) else None,
            "effective_sample_size_floor": ESS_FLOOR,
            "information_bits": self.information_bits,
            "baseline_yr": self.baseline_yr,
            "sweep": list(self.sweep),
            "schedules": dict(self.schedules),
            "chosen_schedule": self.chosen_schedule,
            "notes": list(self.notes),
        }

    def sentence(self):
        """One sentence for the forecast's summary (campaign length, chance of settling, today's leaders)."""
        order = np.argsort(-self.p_now)
        labels = list(self.names) + ["field"]
        today = ", ".join(f"{labels[k]} {self.p_now[k]:.2f}" for k in order[:2])
        chance = _percent(self.decisive_probability)
        text = (f"{_years(self.baseline_yr)} of timing give {_article(chance)} {chance} chance of "
                f"settling the birthplace (a probability >= {DECISIVE:g} for one hypothesis; today: {today})")
        reach = [s for s in self.sweep if s["decisive_probability"] is not None and s["decisive_probability"] >= 0.5]
        if reach and reach[0]["length_yr"] != self.baseline_yr:
            text += f"; {_years(reach[0]['length_yr'])} give {_percent(reach[0]['decisive_probability'])}"
        elif not reach and self.sweep:
            top = self.sweep[-1]
            text += f"; even {_years(top['length_yr'])} give only {_percent(top['decisive_probability'])}"
        return text + "."

    def write_products(self, out_dir):
        """Write forecast_birthplace.png (figure) and forecast_birthplace.ecsv (one row per hypothesis)."""
        from pathlib import Path

        from ..io.results import atomic_path
        from ..display.style import save_figure
        from .plots import birthplace_figure

        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        with atomic_path(out / "forecast_birthplace.ecsv") as tmp:
            self.table().write(tmp, format="ascii.ecsv", overwrite=True)
        png = save_figure(birthplace_figure(self), out / "forecast_birthplace.png")
        return [out / "forecast_birthplace.ecsv", Path(png)]

    def plot(self, ax=None):
        """The two-panel figure (:func:`kinage.campaign.plots.birthplace_figure`)."""
        from .plots import birthplace_figure

        return birthplace_figure(self, ax=ax)

    def table(self):
        """The hypotheses as an astropy Table (one row each)."""
        from astropy.table import Table

        rows = self.hypotheses()
        return Table(rows=[[r[k] for k in rows[0]] for r in rows], names=list(rows[0]))


def _years(x):
    return f"{x:.0f} yr" if abs(x - round(x)) < 0.05 else f"{x:.1f} yr"


def _percent(p):
    """A chance estimated from outcomes, to whole per cent (< 1% and > 99% at the ends)."""
    if p <= 0.0:
        return "< 1%"
    if p >= 1.0:
        return "> 99%"
    return f"{100 * p:.0f}%"


def _article(number_text):
    """'an' before a number read with a vowel sound (8, 11, 18, 80-89), else 'a'."""
    digits = number_text.lstrip("<> ").rstrip("%")
    return "an" if digits.startswith("8") or digits in ("11", "18") else "a"
