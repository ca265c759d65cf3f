"""The display protocol of result objects: ``plot(kind=None, ax=None)``, a short ``repr``, ``_repr_html_``,
``table()``.

Result classes inherit :class:`ResultDisplay` (with ``@dataclass(repr=False)``) and declare, as class
attributes, what they show: ``PLOTS`` (kind -> ``"module:function"`` of a drawing function owned by the stage,
or the function itself; the first kind is the default), ``PLOT_NEEDS`` (kind -> predicate: the figure needs
something the result may lack, so ``plot_kinds`` leaves it out), ``KEY_NUMBERS`` (a function of the result
giving (label, text) pairs for the repr) and ``TABLE`` (a function of the result giving its main table's
columns).  This module knows no stage.

Drawing functions follow one contract: ``func(result, ..., ax=None)`` draws into ``ax`` when given
(otherwise into a new figure) and returns the Figure; a multi-panel figure may take ``fig=`` instead
(a figure or subfigure to fill).  They never save: file writing stays in ``write_products``.  Nothing
here selects a matplotlib backend.
"""

import importlib
import inspect

__all__ = ["ResultDisplay", "draw", "adapter", "fmt"]


def _table(self):
    """The result's main table as an astropy QTable (columns with units), from the class's ``TABLE``."""
    from astropy.table import QTable

    from ..errors import InputError

    func = type(self).TABLE
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
    """Mixin: ``plot``, ``__repr__``, ``_repr_html_`` and ``table()`` from the class attributes below."""

    #: kind -> "module:function" or a drawing function (first kind is the default)
    PLOTS = {}
    #: kind -> predicate: the figure needs something the result may lack (plot_kinds leaves it out)
    PLOT_NEEDS = {}
    #: function of the result -> [(label, text)]: the few numbers that describe it (repr, HTML)
    KEY_NUMBERS = None
    #: function of the result -> its main table (columns or Table); ``table()`` gives it as a QTable
    TABLE = None

    def _kinds(self):
        return type(self).PLOTS

    def _key_numbers(self):
        """(label, text) pairs of the few numbers that describe the result."""
        func = type(self).KEY_NUMBERS
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
        from ..errors import InputError

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
    """Whether this result has what figure ``kind`` shows (see ``PLOT_NEEDS``)."""
    need = type(result).PLOT_NEEDS.get(kind)
    try:
        return need is None or bool(need(result))
    except Exception:  # noqa: BLE001 - a listing must never fail; plot() then says what is missing
        return True


def _resolve(spec):
    if callable(spec):
        return spec
    mod, _, name = spec.partition(":")
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
                from ..errors import InputError

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
def adapter(func):
    """Mark a drawing function that calls :func:`draw` itself (it gets ``ax`` as given and returns a Figure)."""
    func._kinage_adapter = True
    return func


# ------------------------------------------------------------------ key-number helpers
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


def _with_error(value, error, unit):
    """``value +/- error unit``, the value rounded to the error's precision (the report's rule)."""
    from .numbers import value_error

    return value_error(value, error, unit).replace("±", "+/-")


def _age(yr):
    from .numbers import fmt_age

    return None if yr is None else fmt_age(yr)
