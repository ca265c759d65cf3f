"""Atomic files: a leaf utility that every writer in kinage uses (it imports nothing from kinage).

The content is written to a temporary file in the target folder, flushed to disk and then renamed over the
target, so an interrupted or failed run never leaves a half-written file behind.
"""

import contextlib
import os
import tempfile
from pathlib import Path

__all__ = ["atomic_path", "atomic_write"]


@contextlib.contextmanager
def atomic_path(path):
    """Context manager yielding a temporary path that replaces ``path`` on success.

    Use for writers that want a file name (matplotlib, astropy tables)::

        with atomic_path("fig.png") as tmp:
            fig.savefig(tmp, format="png")
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        yield Path(tmp)
        with open(tmp, "rb") as fh:
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; results get the usual permissions
        os.replace(tmp, path)
    except BaseException as exc:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        if isinstance(exc, OSError) and exc.filename is None:
            exc.filename = str(path)  # a full disk names the file (and so the folder) it hit
        raise


def _umask():
    mask = os.umask(0)
    os.umask(mask)
    return mask


def atomic_write(path, data):
    """Write ``data`` (str or bytes) to ``path`` atomically."""
    mode = "w" if isinstance(data, str) else "wb"
    with atomic_path(path) as tmp:
        with open(tmp, mode, **({"encoding": "utf-8"} if mode == "w" else {})) as fh:
            fh.write(data)
    return Path(path)
