"""Warning classes and the ``kinage`` logger.

Results keep their warnings as sentences in ``result.warnings`` (they go into
the JSON and the report); the Python front doors in :mod:`kinage.api` also
raise each one as a :class:`KinageWarning` subclass, so a notebook shows it and
``warnings.simplefilter("error", kinage.KinageWarning)`` can stop on it, and
log it on ``logging.getLogger("kinage")``.

Examples
--------
>>> import warnings
>>> from kinage.warnings import ForecastWarning, KinageWarning, emit
>>> with warnings.catch_warnings(record=True) as caught:
...     warnings.simplefilter("always")
...     emit(["the parallax is not constrained"], ForecastWarning)
>>> issubclass(caught[0].category, KinageWarning), str(caught[0].message)
(True, 'the parallax is not constrained')
"""

import logging
import warnings as _warnings

__all__ = ["KinageWarning", "ForecastWarning", "FitWarning", "TraceWarning", "AgesWarning", "logger", "emit"]

#: the package logger; kinage adds no handler (the application decides)
logger = logging.getLogger("kinage")
logger.addHandler(logging.NullHandler())


class KinageWarning(UserWarning):
    """Base class of the warnings kinage raises."""


class ForecastWarning(KinageWarning):
    """A timing forecast's caveat (e.g. an undetectable pulse, a poor schedule)."""


class FitWarning(KinageWarning):
    """A timing fit's caveat."""


class TraceWarning(KinageWarning):
    """A tracing caveat (e.g. orbits that could not be integrated)."""


class AgesWarning(KinageWarning):
    """An age comparison's caveat (e.g. draws outside a cooling curve's range)."""


def emit(messages, category=KinageWarning, stacklevel=3):
    """Raise each message as a warning of ``category`` and log it.

    Parameters
    ----------
    messages : iterable of str
    category : type
        A :class:`KinageWarning` subclass.
    stacklevel : int
        Passed to :func:`warnings.warn`.
    """
    for text in messages or ():
        text = str(text)
        logger.warning(text)
        _warnings.warn(text, category, stacklevel=stacklevel)
