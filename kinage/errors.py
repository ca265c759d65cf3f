"""Exception classes used across kinage.

Every error that a user can cause with an input file is a :class:`InputError`
(a ``ValueError``) whose message names the place (``[star] parallax_error``,
``associations.ecsv row 4, column 'distance'``), what was expected and what was
found.  The command line prints these as one line and exits with status 2.
"""

import re

__all__ = [
    "plain_text",
    "KinageError",
    "InputError",
    "ScenarioError",
    "ModelRangeError",
    "ConvergenceError",
    "StageError",
    "OutputError",
]


_NUMPY_REPR = re.compile(r"\bnp\.(?:float|int|uint|complex|str_|bytes_|bool_?|longdouble|datetime64)\w*\(([^()]*)\)")


def plain_text(text):
    """``text`` with numpy scalar reprs made plain: ``np.float64(0.0)`` -> ``0.0``, ``np.str_('a')`` -> ``'a'``.

    numpy 2 shows its scalars' type in ``repr``; a user reading a message wants the value only.
    """
    if not isinstance(text, str):
        return text
    return _NUMPY_REPR.sub(r"\1", text)


class KinageError(Exception):
    """Base class of all kinage errors."""


class InputError(KinageError, ValueError):
    """A bad value in a scenario, a table or a function argument.

    Parameters
    ----------
    where : str
        The field, e.g. ``"[star] parallax_error"``.
    problem : str
        What is wrong and what was expected, e.g.
        ``"must be positive (got -0.3 mas)"``.
    """

    def __init__(self, where, problem):
        self.where = plain_text(where)
        self.problem = plain_text(problem)
        super().__init__(f"{self.where}: {self.problem}" if self.where else self.problem)


class ScenarioError(InputError):
    """One or more problems found while validating an input file.

    Parameters
    ----------
    problems : list of InputError
        Every problem found; the message lists them one per line.
    source : str, optional
        The file that was read.
    """

    def __init__(self, problems, source=None):
        self.problems = list(problems)
        self.source = source
        head = f"{source}: " if source else ""
        lines = [str(p) for p in self.problems]
        KinageError.__init__(self, head + ("\n" + " " * len(head)).join(lines))
        self.where = source or ""
        self.problem = "; ".join(lines)


class ModelRangeError(InputError):
    """A calibrated relation was called outside its declared validity range."""


class ConvergenceError(KinageError, RuntimeError):
    """An iterative fit did not converge.

    Attributes
    ----------
    last_result : object or None
        The last good solution, kept so the caller can inspect it.
    """

    def __init__(self, message, last_result=None):
        super().__init__(message)
        self.last_result = last_result


class StageError(KinageError, RuntimeError):
    """A pipeline stage failed; names the stage."""

    def __init__(self, stage, cause):
        self.stage = stage
        self.cause = cause
        super().__init__(f"stage '{stage}' failed: {cause}")


class OutputError(KinageError, OSError):
    """Results could not be written: a full disk, a quota, a read-only file system, a closed stream.

    Parameters
    ----------
    where : str
        The folder, file or stream (``"--out /data/run1"``, ``"standard output"``).
    problem : str
        What happened and what to do.
    errno : int, optional
        The operating system's error number.
    """

    def __init__(self, where, problem, errno=None):
        self.where = plain_text(where)
        self.problem = plain_text(problem)
        super().__init__(f"{self.where}: {self.problem}")
        self.errno = errno
