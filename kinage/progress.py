"""Optional progress display: a thin wrapper over ``tqdm.auto`` with a silent fallback.

``tqdm.auto`` draws a widget in Jupyter and a text bar in a terminal.  A bar
is shown when the caller asks for one (``progress=True``), the process is not
quiet (:func:`set_quiet`), and there is somewhere to show it: a terminal on
stderr, or a running Jupyter/IPython kernel.
"""

import contextlib
import sys

__all__ = ["progress_bar", "set_quiet", "in_notebook"]

_QUIET = False


def set_quiet(quiet=True):
    """Switch progress display off (or on) for the whole process."""
    global _QUIET
    _QUIET = bool(quiet)


def in_notebook():
    """Whether the code runs inside a Jupyter/IPython kernel (a notebook)."""
    if "ipykernel" not in sys.modules:
        return False
    try:
        from IPython import get_ipython
    except ImportError:  # pragma: no cover
        return False
    shell = get_ipython()
    return shell is not None and getattr(shell, "kernel", None) is not None


class _Silent:
    def __init__(self, total=None, **_):
        self.total = total
        self.n = 0

    def update(self, n=1):
        self.n += n

    def close(self):
        pass


def _visible():
    isatty = getattr(sys.stderr, "isatty", None)
    return bool(isatty and isatty()) or in_notebook()


@contextlib.contextmanager
def progress_bar(total, desc="", enabled=True):
    """A progress bar context yielding an object with ``update(n)``.

    Parameters
    ----------
    total : int
    desc : str
    enabled : bool
        The caller's ``progress`` argument.

    Shown only when ``enabled``, the process is not quiet, there is a
    terminal or notebook to show it in and tqdm is importable; otherwise a
    silent counter with the same methods.
    """
    bar = None
    if enabled and not _QUIET and _visible():
        try:
            from tqdm.auto import tqdm

            bar = tqdm(total=total, desc=desc, leave=False, file=sys.stderr)
        except ImportError:  # pragma: no cover
            bar = None
    if bar is None:
        bar = _Silent(total=total)
    try:
        yield bar
    finally:
        bar.close()
