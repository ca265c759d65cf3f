"""The result display protocol now lives in :mod:`kinage.display.protocol`; this name is kept so code written
against ``kinage._results`` (result classes inheriting ``ResultDisplay``, pickled result tables) keeps working."""

from .display.protocol import ResultDisplay, draw

__all__ = ["ResultDisplay", "draw"]


def __getattr__(name):  # pickled ResultTables made under this module name find their class
    if name == "ResultTable":
        from .display.protocol import _result_table_class

        return _result_table_class()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
