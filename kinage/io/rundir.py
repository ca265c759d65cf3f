"""Keep runs apart: one run at a time per output folder, and results replaced only when complete.

:func:`output_lock` takes an exclusive lock (``fcntl.flock``, released by the
operating system when the process ends, so a killed run never leaves a stale
lock) on a small file beside the folder; a second run into the same folder
stops at once with a one-line :class:`~kinage.errors.InputError`.

:func:`staged_folder` gives a run a fresh, hidden staging folder beside the
target.  When the run completes (a failed stage counts as complete: its
``results.json`` says which stage failed) the staging folder replaces the
previous results as a whole; when it is interrupted the staging folder is
deleted and the previous results stay untouched.  Staging folders left by a
killed process are removed by the next run into the same folder.
"""

import contextlib
import errno
import os
import shutil
import uuid
from pathlib import Path

from ..errors import InputError

__all__ = ["output_lock", "staged_folder", "staged_files", "check_replaceable", "LOCK_SUFFIX", "MARKER"]

LOCK_SUFFIX = ".kinage-lock"
#: file in every folder written by ``kinage run``; such a folder may be replaced by the next run
MARKER = ".kinage-run"


def _lock_path(folder):
    folder = Path(os.path.abspath(folder))
    return folder.parent / f".{folder.name}{LOCK_SUFFIX}"


@contextlib.contextmanager
def output_lock(folder, where="--out"):
    """Hold an exclusive lock on ``folder`` (which need not exist) while the block runs.

    Raises
    ------
    InputError
        When another process holds the lock.
    """
    import fcntl

    from .paths import _os_problem

    folder = Path(os.path.abspath(folder))
    path = _lock_path(folder)
    try:  # a parent the operating system will not write in (a read-only or virtual file system, say)
        folder.parent.mkdir(parents=True, exist_ok=True)
        os.close(os.open(path, os.O_RDWR | os.O_CREAT, 0o644))
    except OSError as exc:
        why = _os_problem(exc, folder.parent) if exc.errno in (errno.ELOOP, errno.EACCES, errno.EPERM,
                                                                errno.ENOTDIR) else os.strerror(exc.errno or 0)
        raise InputError(where, f"cannot create files in {folder.parent} ({why}); choose another folder") from None
    while True:
        fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o644)
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError as exc:
            try:
                holder = os.read(fd, 32).decode(errors="replace").strip() or "?"
            finally:
                os.close(fd)
            if exc.errno in (errno.EAGAIN, errno.EACCES, errno.EWOULDBLOCK):
                raise InputError(where, f"another kinage run (process {holder}) is writing into {folder}; wait "
                                        "for it to finish or choose another folder") from None
            raise
        try:  # the file may have been removed by the previous holder between open and lock: retry
            same = os.fstat(fd).st_ino == os.stat(path).st_ino
        except FileNotFoundError:
            same = False
        if same:
            break
        os.close(fd)
    try:
        os.ftruncate(fd, 0)
        os.write(fd, f"{os.getpid()}\n".encode())
        yield folder
    finally:
        with contextlib.suppress(OSError):
            os.unlink(path)
        os.close(fd)  # releases the lock


def check_replaceable(folder, where="--out"):
    """A run may replace ``folder`` only if it is absent, empty or an earlier run's results."""
    folder = Path(folder)
    if not folder.exists():
        return
    if not folder.is_dir():
        raise InputError(where, f"expected a folder, got an existing file: {folder}")
    entries = [p.name for p in folder.iterdir()]
    if not entries or MARKER in entries or "results.json" in entries:
        return
    shown = ", ".join(sorted(entries)[:3]) + (", ..." if len(entries) > 3 else "")
    raise InputError(where, f"{folder} holds files that are not an earlier kinage run's results ({shown}); a run "
                            "replaces its whole output folder, so give a new or empty folder")


def _remove_stale(folder):
    for stale in folder.parent.glob(f".{folder.name}.staging-*"):
        shutil.rmtree(stale, ignore_errors=True)
    for stale in folder.parent.glob(f".{folder.name}.old-*"):
        shutil.rmtree(stale, ignore_errors=True)


@contextlib.contextmanager
def staged_folder(folder):
    """Yield a fresh staging folder that replaces ``folder`` when the block ends normally.

    Hold :func:`output_lock` on ``folder`` around this.  On any exception
    (including KeyboardInterrupt) the staging folder is removed and ``folder``
    is left as it was.
    """
    folder = Path(os.path.abspath(folder))
    folder.parent.mkdir(parents=True, exist_ok=True)
    _remove_stale(folder)
    staging = folder.parent / f".{folder.name}.staging-{os.getpid()}-{uuid.uuid4().hex[:8]}"
    staging.mkdir()
    try:
        (staging / MARKER).write_text("written by kinage run; the folder is replaced as a whole by the next run\n")
        yield staging
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    old = None
    if folder.exists():
        old = folder.parent / f".{folder.name}.old-{uuid.uuid4().hex[:8]}"
        os.replace(folder, old)
    os.replace(staging, folder)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


@contextlib.contextmanager
def staged_files(folder):
    """Yield a staging folder whose files move into ``folder`` (file by file) when the block ends normally.

    For single-stage verbs whose ``--out`` may be shared with other verbs: an
    interrupted stage leaves ``folder`` untouched.
    """
    folder = Path(os.path.abspath(folder))
    folder.parent.mkdir(parents=True, exist_ok=True)
    _remove_stale(folder)
    staging = folder.parent / f".{folder.name}.staging-{os.getpid()}-{uuid.uuid4().hex[:8]}"
    staging.mkdir()
    try:
        yield staging
        for src in sorted(staging.rglob("*")):
            if src.is_file():
                dst = folder / src.relative_to(staging)
                dst.parent.mkdir(parents=True, exist_ok=True)
                os.replace(src, dst)
    finally:
        shutil.rmtree(staging, ignore_errors=True)
