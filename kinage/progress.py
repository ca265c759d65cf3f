"""Optional progress display: a thin wrapper over tqdm with a silent fallback."""

import contextlib
import sys

__all__ = ["progress_bar", "set_quiet"]

_QUIET = False


def set_quiet(quiet=True):
    """Switch progress display off (or on) for the whole process."""
    global _QUIET
    _QUIET = bool(quiet)


class _Silent:
    def __init__(self, total=None, **_):
        self.total = total
        self.n = 0

    def update(self, n=1):
        self.n += n

    def set_postfix_str(self, *_a, **_k):
        pass

    def close(self):
        pass


@contextlib.contextmanager
def progress_bar(total, desc="", enabled=True):
    """A progress bar context yielding an object with ``update(n)``.

    Shown only when ``enabled``, the process is not quiet, stderr is a
    terminal and tqdm is importable; otherwise a silent counter.
    """
    bar = None
    if enabled and not _QUIET and sys.stderr.isatty():
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
