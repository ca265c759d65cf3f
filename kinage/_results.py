"""Notebook display for result objects: ``plot(kind=None, ax=None)``, a short ``repr``, ``_repr_html_``, ``table()``.

Result classes inherit :class:`ResultDisplay` (with ``@dataclass(repr=False)``).  Their figures are named
in :data:`PLOTS` (kind -> ``"module:function"`` of a drawing function owned by the stage, or
``"adapter:name"`` for a small adapter below), their key numbers in :data:`KEY_NUMBERS` and their main
table in :data:`TABLES`, all by class name, so the result modules only name the mixin.

Drawing functions follow one contract: ``func(result, ..., ax=None)`` draws into ``ax`` when given
(otherwise into a new figure) and returns the Figure; a multi-panel figure may take ``fig=`` instead
(a figure or subfigure to fill).  They never save: file writing stays in ``write_products``.  Nothing
here selects a matplotlib backend.
"""

import importlib
import inspect

__all__ = ["ResultDisplay", "draw", "scenario_repr", "scenario_html"]


def _table(self):
    """The result's main table as an astropy QTable (columns with units).

    Forecast: the baseline sweep; fit: the residuals; trace: one row per
    association (best first); ages: each age with its 68% interval.
    """
    from astropy.table import QTable

    from .errors import InputError

    func = TABLES.get(type(self).__name__)
    if func is None:
        raise InputError("table", f"{type(self).__name__} has no table")
    return QTable(func(self))


def _is_plain_table(value):
    import sys

    table = sys.modules.get("astropy.table")  # no Table can exist before astropy.table is imported
    return table is not None and type(value) is table.Table


_RESULT_TABLE = []


def _result_table_class():
    """``ResultTable``: an astropy ``Table`` that, called, returns itself as a ``QTable`` (made on first use)."""
    if not _RESULT_TABLE:
        from astropy.table import QTable, Table

        class ResultTable(Table):
            """An astropy Table kept as a result's ``table`` attribute; ``result.table()`` gives it as a QTable."""

            def __call__(self):
                return QTable(self)

        ResultTable.__module__ = __name__
        ResultTable.__qualname__ = "ResultTable"
        _RESULT_TABLE.append(ResultTable)
    return _RESULT_TABLE[0]


def __getattr__(name):  # pickled ResultTables find their class
    if name == "ResultTable":
        return _result_table_class()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


class ResultDisplay:
    """Mixin: ``plot``, ``__repr__`` and ``_repr_html_`` from ``_plot_kinds`` and ``_key_numbers``."""

    #: kind -> "module:function" (first kind is the default); empty: the registry below by class name
    _plot_kinds = {}

    def _kinds(self):
        return self._plot_kinds or PLOTS.get(type(self).__name__, {})

    def _key_numbers(self):
        """(label, text) pairs of the few numbers that describe the result."""
        func = KEY_NUMBERS.get(type(self).__name__)
        return func(self) if func else []

    def __init_subclass__(cls, **kwargs):
        super().__init_subclass__(**kwargs)
        # a result whose dataclass has a field named 'table' keeps it (the method would become its default);
        # the Table stored there is made callable (see __setattr__), so ``result.table()`` works as well
        if "table" not in getattr(cls, "__annotations__", {}) and "table" not in vars(cls):
            cls.table = _table

    def __setattr__(self, name, value):
        if name == "table" and not callable(value) and _is_plain_table(value):
            value = _result_table_class()(value, copy=False)
        super().__setattr__(name, value)

    def plot(self, kind=None, ax=None, **kwargs):
        """Draw one of the result's figures.

        Parameters
        ----------
        kind : str, optional
            One of ``plot_kinds()``; default the first.
        ax : matplotlib.axes.Axes, optional
            Draw into this Axes (a multi-panel figure splits its area);
            default a new figure.
        **kwargs
            Passed to the drawing function (e.g. ``name=`` of an association).

        Returns
        -------
        matplotlib.figure.Figure
        """
        from .errors import InputError

        kinds = self.plot_kinds()
        if not kinds:
            raise InputError("plot", f"{type(self).__name__} has no figures")
        kind = kinds[0] if kind is None else kind
        if kind not in kinds and not (kind in self._kinds() and _available(self._kinds()[kind])):
            raise InputError("plot kind", f"expected one of {', '.join(map(repr, kinds))} (got {kind!r})")
        return draw(self._kinds()[kind], self, ax=ax, **kwargs)

    def plot_kinds(self):
        """The figure kinds :meth:`plot` draws, default first."""
        name = type(self).__name__
        return [k for k, spec in self._kinds().items() if _available(spec) and _drawable(self, name, k)]

    def _safe_numbers(self):
        try:
            return [(str(k), str(v)) for k, v in self._key_numbers() if v is not None]
        except Exception:  # noqa: BLE001 - a repr must never fail
            return []

    def __repr__(self):
        nums = self._safe_numbers()
        body = "; ".join(f"{k} {v}" for k, v in nums)
        return f"<{type(self).__name__}{': ' + body if body else ''}>"

    def _repr_html_(self):
        from html import escape

        rows = "".join(f"<tr><th style='text-align:left'>{escape(k)}</th><td style='text-align:left'>{escape(v)}"
                       "</td></tr>" for k, v in self._safe_numbers())
        try:
            summary = self.summary()
        except Exception:  # noqa: BLE001
            summary = ""
        return (f"<div><strong>{escape(type(self).__name__)}</strong>"
                f"<table>{rows}</table><p>{escape(summary)}</p></div>")


# ------------------------------------------------------------------ drawing
def _available(spec):
    try:
        _resolve(spec)
    except (ImportError, AttributeError, KeyError):
        return False
    return True


def _drawable(result, class_name, kind):
    """Whether this result has what figure ``kind`` shows (see :data:`NEEDS`)."""
    need = NEEDS.get((class_name, kind))
    try:
        return need is None or bool(need(result))
    except Exception:  # noqa: BLE001 - a listing must never fail; plot() then says what is missing
        return True


def _resolve(spec):
    if callable(spec):
        return spec
    mod, _, name = spec.partition(":")
    if mod == "adapter":
        return globals()[f"_adapt_{name}"]
    return getattr(importlib.import_module(mod), name)


def draw(spec, *args, ax=None, **kwargs):
    """Call a drawing function (``"module:function"`` or callable) so that it returns a Figure.

    Parameters
    ----------
    spec : str or callable
    *args
        Positional arguments of the drawing function (the result first).
    ax : matplotlib.axes.Axes, optional

    Returns
    -------
    matplotlib.figure.Figure
    """
    func = _resolve(spec)
    if getattr(func, "_kinage_adapter", False):
        return func(*args, ax=ax, **kwargs)
    params = inspect.signature(func).parameters
    if "ax" in params:  # the owner's function follows the contract
        if "path" in params and "path" not in kwargs:
            kwargs["path"] = None
        out = func(*args, ax=ax, **kwargs)
        return _figure_of(out, ax)
    if "fig" in params:  # a multi-panel figure: draw into a subfigure in the Axes' slot
        target = top = None
        if ax is not None:
            if ax.get_subplotspec() is None:
                from .errors import InputError

                raise InputError("ax", "this figure has several panels and fills a grid cell: give an Axes from "
                                 "plt.subplots or fig.add_subplot (not fig.add_axes), or no ax for a new figure")
            top = ax.figure
            target = top.add_subfigure(ax.get_subplotspec())
            ax.remove()
        out = func(*args, fig=target, **kwargs)
        return top if top is not None else _figure_of(out, None)
    raise TypeError(f"{func.__module__}.{func.__name__} takes neither ax= nor fig=; it cannot draw into an Axes")


def _figure_of(out, ax):
    from matplotlib.figure import Figure

    if isinstance(out, Figure):
        return out
    if ax is not None:
        return ax.figure
    if hasattr(out, "figure") and isinstance(out.figure, Figure):
        return out.figure
    raise TypeError("the drawing function returned no Figure")


# ------------------------------------------------------------------ adapters
def _adapter(func):
    func._kinage_adapter = True
    return func


@_adapter
def _adapt_ages_ladder(result, ax=None):
    plots = importlib.import_module("kinage.ages.plots")
    return draw(plots.plot_age_ladder, result.ladder_rows(), ax=ax, title=f"Ages of {result.star}")


@_adapter
def _adapt_ages_cooling(result, ax=None):
    from .errors import InputError

    plots = importlib.import_module("kinage.ages.plots")
    c = result.cooling
    if c is None:
        raise InputError("plot kind", "no cooling age was computed (no temperature or luminosity)")
    temp = (c.observed, c.observed_error) if c.quantity == "temperature" else None
    return draw(plots.plot_cooling_curves, c.curves, ax=ax, temperature=temp,
                kinematic=result.kinematic.get("interval"),
                title=f"Cooling curves ({c.model}) and {result.star}")


# ------------------------------------------------------------------ key numbers
def fmt(value, unit="", digits=3):
    """``value`` with ``digits`` significant digits and a unit ('n/a' for None / NaN)."""
    import math

    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return None
    return f"{value:.{digits}g} {unit}".strip()


def _first(d, *keys):
    for k in keys:
        if isinstance(d, dict) and d.get(k) is not None:
            return d[k]
    return None


def _forecast_numbers(r):
    from .report.numbers import fmt_duration_s

    from .report.numbers import fit_constrained

    sig = r.solution.sigma_dict()
    ok = fit_constrained({"sigma": sig})
    pm = fmt(sig.get("pm_ra_cosdec_masyr"), "") and \
        f"{sig['pm_ra_cosdec_masyr']:.3g} / {sig['pm_dec_masyr']:.3g} mas/yr (ra*cos dec / dec)"
    px = fmt(sig.get("parallax_mas"), "mas")
    return [("visits", r.plan.n_visits), ("span", fmt(r.plan.span_yr, "yr")),
            ("median TOA error", r.toa_error_s is not None and fmt_duration_s(r.toa_error_s) or None),
            ("sigma_pm", pm if ok["proper_motion"] or pm is None else
             f"not constrained by timing (formal {sig['pm_ra_cosdec_masyr']:.2g} / {sig['pm_dec_masyr']:.2g} mas/yr)"),
            ("sigma_parallax", px if ok["parallax"] or px is None else f"not constrained by timing (formal {px})"),
            ("pm significance", fmt(r.pm_significance, "sigma", 2)),
            ("baseline needed", fmt(r.baseline_needed_yr, "yr"))] + _birthplace_numbers(getattr(r, "birthplace", None))


def _birthplace_numbers(bp):
    """The chance that the campaign settles the birthplace, when the forecast carries a birthplace forecast."""
    if bp is None:
        return []
    return [("birthplace settled", f"{100 * bp.decisive_probability:.0f}% of {bp.n_outcomes} simulated outcomes")]


def _with_error(value, error, unit):
    """``value +/- error unit``, the value rounded to the error's precision (the report's rule)."""
    from .report.numbers import value_error

    return value_error(value, error, unit).replace("±", "+/-")


def _fit_numbers(r):
    from .report.numbers import fit_constrained

    v, s = r.solution.values_dict(), r.solution.sigma_dict()
    ok = fit_constrained({"sigma": s})

    def shown(key, unit, what):
        if ok[what]:
            return _with_error(v[key], s[key], unit)
        return f"not constrained by timing (formal error {fmt(s[key], unit, 2)})"

    return [("TOAs", r.n_toas),
            ("pm_ra_cosdec", shown("pm_ra_cosdec_masyr", "mas/yr", "proper_motion")),
            ("pm_dec", shown("pm_dec_masyr", "mas/yr", "proper_motion")),
            ("parallax", shown("parallax_mas", "mas", "parallax")),
            ("reduced chi2", fmt(r.chi2_reduced, "", 3)), ("converged", r.converged)]


def _simulation_numbers(r):
    from .report.numbers import fmt_duration_s

    d = r.to_dict()
    return [("TOAs", d["n_toas"]), ("median TOA error", fmt_duration_s(d["toa_error_s"])),
            ("span", fmt(d["span_yr"], "yr")), ("seed", d["seed"])]


def _trace_numbers(r):
    out = [("star", r.star_name), ("samples", r.n_samples), ("favoured", r.favoured or "none")]
    best = r.best()
    if best is not None:
        out.append(("top association", best.get("name")))
        p = _first(best, "probability")
        if isinstance(p, dict):
            p = _first(p, "value", "median", "p")
        p_err = best.get("probability_error")
        if isinstance(p, float) and isinstance(p_err, float) and p_err > 0:
            out.append(("probability", _with_error(p, p_err, "")))
        else:
            out.append(("probability", fmt(p, "", 2) if isinstance(p, float) else None))
        out.append(("encounter fraction", fmt(_first(best, "encounter_fraction"), "", 2)))
        age = _first(best, "age_yr") or {}
        out.append(("kinematic age", _age(age.get("median"))))
    return out


def _age(yr):
    from .report.numbers import fmt_age

    return None if yr is None else fmt_age(yr)


def _ages_numbers(r):
    kin = (r.kinematic or {}).get("interval") or {}
    cool = r.cooling.pooled if r.cooling is not None else {}
    return [("star", r.star), ("kinematic age", _age(kin.get("median"))),
            ("characteristic age", _age(r.values.get("characteristic_age_yr"))),
            ("cooling age", _age(cool.get("median")))]


def _trace_table(r):
    from .orbits.products import association_table

    return association_table(r)


def _ages_table(r):
    import astropy.units as u
    import numpy as np

    rows = r.ladder_rows()
    cols = {"age": [lab for lab, _ in rows]}
    for k in ("median", "lo68", "hi68"):
        cols[k] = np.array([np.nan if (iv is None or iv.get(k) is None) else iv[k] for _, iv in rows]) * u.yr
    return cols


#: result class name -> kind -> drawing function ("module:function" or "adapter:name"); first kind is the default
PLOTS = {
    "ForecastResult": {"baseline": "kinage.timing.plots:forecast_figure", "plan": "kinage.timing.plots:plan_figure",
                       "birthplace": "kinage.campaign.plots:forecast_birthplace_figure"},
    "FitResult": {"residuals": "kinage.timing.plots:residual_figure"},
    "TraceResult": {"sky": "kinage.orbits.trace_figures:plot_sky",
                    "dmin_tau": "kinage.orbits.trace_figures:plot_dmin_tau",
                    "dmin_control": "kinage.orbits.trace_figures:plot_dmin_control",
                    "tau_hist": "kinage.orbits.trace_figures:plot_tau_hist",
                    "plane_crossing": "kinage.orbits.trace_figures:plot_plane_crossing",
                    "birth": "kinage.orbits.trace_figures:plot_birth_xyz"},
    "AgesResult": {"ladder": "adapter:ages_ladder", "cooling": "adapter:ages_cooling"},
}
#: (result class name, kind) -> predicate: the figure needs something the result may lack (plot_kinds leaves it out)
NEEDS = {("AgesResult", "cooling"): lambda r: r.cooling is not None,
         ("ForecastResult", "birthplace"): lambda r: getattr(r, "birthplace", None) is not None}
KEY_NUMBERS = {"ForecastResult": _forecast_numbers, "FitResult": _fit_numbers, "SimulationResult": _simulation_numbers,
               "TraceResult": _trace_numbers, "AgesResult": _ages_numbers}
TABLES = {"ForecastResult": lambda r: r.sweep_table(), "FitResult": lambda r: r.residual_table(),
          "SimulationResult": lambda r: r.table, "TraceResult": _trace_table, "AgesResult": _ages_table}


def _run_numbers(r):
    out = [("star", r.scenario.star.get("name")), ("stages", ", ".join(r.stages) or "none"),
           ("output", str(r.out_dir))]
    if r.failed:
        out.append(("failed", "; ".join(f"{k}: {v}" for k, v in r.failed.items())[:200]))
    return out


KEY_NUMBERS["RunResult"] = _run_numbers


# ------------------------------------------------------------------ scenarios
def _given_text(raw):
    """A value as the user wrote it (a unit string or a scalar Quantity), else None."""
    import astropy.units as u

    from .io.quantities import format_quantity

    if isinstance(raw, u.Quantity) and raw.isscalar and type(raw) is u.Quantity and raw.unit != u.one:
        return format_quantity(raw)
    if isinstance(raw, str) and any(c.isdigit() for c in raw) and any(c.isalpha() or c == ":" for c in raw):
        return raw.strip()  # "63 eV", "17:42:05.6"
    return None


def _scenario_rows(s):
    """(table, 'key=value, ...') rows of the keys given in each table.

    A quantity given with a unit is shown as it was given ("63 eV", "30 pc"), the others as kinage holds them.
    """
    from .io.quantities import format_quantity

    rows = []
    for name in ("star", "campaign", "trace", "ages"):
        sec = getattr(s, name)
        if sec is None:
            continue
        raw = (s.raw or {}).get(name) if isinstance(s.raw, dict) else None
        raw = raw if isinstance(raw, dict) else {}
        parts = []
        for key, value in sec.to_dict().items():
            v = getattr(sec, key, value)
            shown = format_quantity(v) if hasattr(v, "unit") and getattr(v, "isscalar", False) else value
            if key in ("ra", "dec") and hasattr(v, "unit") and getattr(v, "isscalar", False):
                given = raw.get(key) if isinstance(raw.get(key), str) else None
                shown = _given_text(given) or f"{v.to_value('deg'):.6f} deg"  # 6 significant digits: 3.6 arcsec
            elif hasattr(v, "unit"):
                shown = _given_text(raw.get(key)) or shown
            if isinstance(shown, dict):  # an in-memory table
                shown = f"<table of {len(shown.get('associations', []))} rows>"
            parts.append(f"{key}={shown}")
        rows.append((f"[{name}]", ", ".join(parts)))
    return rows


def scenario_repr(s):
    """A short one-line repr of a Scenario: star name, tables present and where it came from."""
    tables = [t for t in ("star", "campaign", "trace", "ages") if getattr(s, t) is not None]
    name = s.star.get("name") if s.star is not None else None
    src = f" from {s.path.name}" if s.path is not None else ""
    return f"<Scenario {name!r}{src}: tables {', '.join(f'[{t}]' for t in tables)}>"


def scenario_html(s):
    """The scenario's given keys as a small HTML table (Jupyter)."""
    from html import escape

    rows = "".join(f"<tr><th style='text-align:left'>{escape(t)}</th><td style='text-align:left'>{escape(v)}</td>"
                   "</tr>" for t, v in _scenario_rows(s))
    return f"<div><strong>{escape(scenario_repr(s))}</strong><table>{rows}</table></div>"
