"""Allowed names that belong to a higher layer, handed down to the scenario checks.

The scenario checks (:mod:`kinage.io.checks`, :mod:`kinage.io.options`) refuse an unknown parameter-set name
(``[trace] potential = "..."``) with the list of known ones, but the names live in :mod:`kinage.params`, above
io.  So io imports nothing above it: the params package gives its names here when it is imported
(``provide("param", ...)``), and ``kinage/__init__.py`` imports it, so they are there before any scenario is read.
"""

__all__ = ["provide", "names"]

_PROVIDERS = {}


def provide(prefix, func):
    """Give the names of one family: ``func(kind) -> tuple of names`` (None for an unknown kind)."""
    _PROVIDERS[prefix] = func


def names(prefix, kind):
    """The allowed names of ``kind`` in family ``prefix`` (e.g. ``"param"``, ``"potential"``); None if unknown."""
    func = _PROVIDERS.get(prefix)
    return None if func is None else func(kind)
