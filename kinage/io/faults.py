"""Ordinary faults of writing in words: full disk, quota, read-only file system, closed pipe.

:func:`output_error` turns the operating system's error into an
:class:`~kinage.errors.OutputError` naming the folder and what to do;
:func:`check_free_space` compares the free space of the output folder's
device with an estimate of what a run writes, before any stage runs.
"""

import errno
import os
import shutil
from pathlib import Path

from ..errors import OutputError

__all__ = ["DISK_ERRNOS", "is_disk_fault", "output_error", "check_free_space", "run_output_bytes"]

#: errno -> (what happened, what to do)
DISK_ERRNOS = {
    errno.ENOSPC: ("no space left on the device", "free some space or choose a folder on another disk"),
    errno.EDQUOT: ("disk quota exceeded", "free some of your space or choose a folder outside your quota"),
    errno.EROFS: ("the file system is read-only", "choose a writable folder"),
    errno.EFBIG: ("file too large for this file system", "choose a folder on another file system"),
}


def is_disk_fault(exc):
    """True for an OSError of a full disk, an exceeded quota or a read-only file system."""
    return isinstance(exc, OSError) and getattr(exc, "errno", None) in DISK_ERRNOS


def output_error(exc, where=None):
    """An :class:`OutputError` for ``exc`` (see :data:`DISK_ERRNOS`), naming the folder of the file it hit."""
    what, todo = DISK_ERRNOS.get(exc.errno, (os.strerror(exc.errno) if exc.errno else str(exc), "check the folder"))
    target = getattr(exc, "filename", None) or where
    if target is not None:
        p = Path(os.fsdecode(target))
        folder = p if p.is_dir() else p.parent
        # name the user's folder, not kinage's hidden staging or temporary names inside it
        folder = Path(*[part.split(".staging-")[0].lstrip(".") if ".staging-" in part else part
                        for part in folder.parts]) if folder.parts else folder
        place = f"cannot write in {folder}"
    else:
        place = "cannot write the results"
    return OutputError(place, f"{what}; {todo} (nothing incomplete was kept)", errno=exc.errno)


#: what a run of four stages writes besides the trace's draws, bytes (an upper bound: forecast + trace with 2,000
#: draws x 8 associations + ages, with the report, measured 2.2 MB in all on 2026-12-05)
_BASE_BYTES = 10e6
#: per draw and association in the trace's tables (float64 columns: distance, time, flags), bytes
_TRACE_BYTES_PER_DRAW_ASSOC = 40


def run_output_bytes(n_stages=4, samples=0, n_associations=0):
    """Rough size of a run's outputs, bytes (an upper estimate, for the free-space check)."""
    return _BASE_BYTES * max(1, n_stages) / 4 + _TRACE_BYTES_PER_DRAW_ASSOC * samples * max(1, n_associations)


def check_free_space(folder, need_bytes, where="--out"):
    """Raise OutputError when the device of ``folder`` (or its nearest existing parent) has less free space
    than twice ``need_bytes`` (the staging copy and the previous results live side by side)."""
    p = Path(os.path.abspath(folder))
    while not p.exists() and p != p.parent:
        p = p.parent
    try:
        free = shutil.disk_usage(p).free
    except OSError:
        return
    if free < 2 * need_bytes:
        raise OutputError(f"{where} {folder}", f"only {free / 1e6:.3g} MB free on its disk and the results need "
                                               f"about {need_bytes / 1e6:.3g} MB (twice that while the previous "
                                               "results are kept); free some space or choose another folder",
                          errno=errno.ENOSPC)
