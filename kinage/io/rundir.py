"""Keep runs apart: one run at a time per output folder, and results replaced only when complete.

:func:`output_lock` takes an exclusive lock (``fcntl.flock``, released by the
operating system when the process ends, so a killed run never leaves a stale
lock) on a small file beside the folder; a second run into the same folder
stops at once with a one-line :class:`~kinage.errors.InputError`.

:func:`staged_folder` gives a run a fresh, hidden staging folder beside the
target.  When the run completes (a failed stage counts as complete: its
``results.json`` says which stage failed) the staging folder replaces the
previous results; when it is interrupted the staging folder is deleted and the
previous results stay untouched.  Only what kinage wrote is ever replaced
(a manifest in the folder lists it, :mod:`kinage.io.ownership`): a folder
holding anything else is refused, or with ``force`` the results are written
beside it.  The swap keeps the old folder until the new one is in place, and
:func:`recover` (run at the next start) restores it if a crash left it hidden
and removes staging folders left by a killed process.  Paths are resolved
(links followed) before locking and replacing: a symlinked folder stays a link.
"""

import contextlib
import errno
import os
import shutil
import uuid
from pathlib import Path

from ..errors import InputError

__all__ = ["output_lock", "staged_folder", "staged_files", "check_replaceable", "recover", "LOCK_SUFFIX", "MARKER"]

LOCK_SUFFIX = ".kinage-lock"
#: marker file of folders written by ``kinage run`` before manifests (:mod:`kinage.io.ownership`) existed
MARKER = ".kinage-run"


def _lock_path(folder):
    folder = Path(os.path.realpath(folder))
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

    folder = Path(os.path.realpath(folder))  # --out c2 and a link to c2 take the same lock
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
        with contextlib.suppress(OSError):  # the holder's id is for messages only (a full disk refuses it)
            os.ftruncate(fd, 0)
            os.write(fd, f"{os.getpid()}\n".encode())
        yield folder
    finally:
        with contextlib.suppress(OSError):
            os.unlink(path)
        os.close(fd)  # releases the lock


def check_replaceable(folder, where="--out", *, verb="run", inputs=(), force=False):
    """A ``verb`` run may replace ``folder`` only if it is absent or holds only what such a run wrote.

    Anything else in it (a user's files, another verb's results, the run's
    own ``inputs``) is refused with one line naming it, unless ``force``: then
    the new results are written beside it and it is kept (see
    :func:`staged_folder`).  Links in ``folder`` are resolved first.
    """
    from .ownership import refuse_foreign

    folder = Path(os.path.realpath(folder))
    if not folder.exists():
        return []
    if not folder.is_dir():
        raise InputError(where, f"expected a folder, got an existing file: {folder}")
    if force:
        return []
    return refuse_foreign(folder, verb, inputs, where=where)


def recover(folder):
    """Put back what a killed swap left hidden, then remove the leftovers of earlier runs into ``folder``.

    A swap renames the old folder to ``.NAME.old-*`` and the new one into
    place; if the process died between the two renames, ``folder`` is missing
    and the newest ``.old-*`` (the previous complete results) is restored.
    """
    folder = Path(folder)
    olds = sorted(folder.parent.glob(f".{folder.name}.old-*"), key=lambda p: p.stat().st_mtime)
    if not os.path.lexists(folder) and olds:
        os.replace(olds.pop(), folder)
    for stale in folder.parent.glob(f".{folder.name}.staging-*"):
        shutil.rmtree(stale, ignore_errors=True)
    for stale in olds:
        shutil.rmtree(stale, ignore_errors=True)


_remove_stale = recover  # the name used before recovery existed


def _swap(staging, folder):
    """Replace ``folder`` by ``staging``; the old folder is kept until the new one is in place.

    Interrupted between the two renames (a signal raised in Python), the old
    folder is put back at once; killed there, :func:`recover` puts it back on
    the next start.
    """
    old = None
    try:
        if os.path.lexists(folder):
            old = folder.parent / f".{folder.name}.old-{uuid.uuid4().hex[:8]}"
            os.replace(folder, old)
        os.replace(staging, folder)
    except BaseException:
        if old is not None and not os.path.lexists(folder):
            os.replace(old, folder)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def _merge(staging, folder, verb, inputs):
    """Move the new files into ``folder`` beside what kinage did not write; delete only the old owned files.

    A foreign file at the very path of a new result is renamed ``NAME.kept-N``
    first (never deleted).
    """
    from .ownership import foreign_entries, read_manifest, write_manifest

    old_manifest = read_manifest(folder)
    foreign = set(foreign_entries(folder, verb, inputs))
    new = {k: v for k, v in read_manifest(staging).items()}
    for rel in sorted(new):
        dst = folder / rel
        if rel in foreign and os.path.lexists(dst):
            n = 1
            while os.path.lexists(folder / f"{rel}.kept-{n}"):
                n += 1
            os.replace(dst, folder / f"{rel}.kept-{n}")
        dst.parent.mkdir(parents=True, exist_ok=True)
        os.replace(staging / rel, dst)
    for rel, entry in old_manifest.items():  # the previous run's own files that this run did not write again
        if rel in new or rel in foreign or entry.get("verb") != verb:
            continue
        with contextlib.suppress(OSError):
            os.unlink(folder / rel)
        parent = (folder / rel).parent
        while parent != folder:
            try:
                parent.rmdir()  # only when empty
            except OSError:
                break
            parent = parent.parent
    kept = {rel: e for rel, e in old_manifest.items() if e.get("verb") != verb and (folder / rel).exists()}
    write_manifest(folder, {**kept, **new})
    shutil.rmtree(staging, ignore_errors=True)


def _is_cwd(folder):
    try:
        return os.path.samefile(folder, os.getcwd())
    except OSError:
        return False


@contextlib.contextmanager
def staged_folder(folder, *, verb="run", inputs=(), force=False, where="--out"):
    """Yield a fresh staging folder whose results replace ``folder``'s when the block ends normally.

    Hold :func:`output_lock` on ``folder`` around this.  On any exception
    (including KeyboardInterrupt) the staging folder is removed and ``folder``
    is left as it was.  The staging folder gets a manifest of its files
    (:mod:`kinage.io.ownership`).  A folder holding only an earlier ``verb``
    run's files is replaced as a whole (the old folder kept until the new one
    is in place); one holding anything else is refused, or with ``force`` the
    new files are moved in beside it and only the earlier run's own files are
    deleted.
    """
    from .ownership import foreign_entries, manifest_entries, write_manifest

    folder = Path(os.path.realpath(folder))  # a symlinked folder stays a link: its target is replaced
    folder.parent.mkdir(parents=True, exist_ok=True)
    recover(folder)
    if os.path.lexists(folder) and not folder.is_dir():
        raise InputError(where, f"expected a folder, got an existing file: {folder}")
    if not force:
        check_replaceable(folder, where, verb=verb, inputs=inputs)
    staging = folder.parent / f".{folder.name}.staging-{os.getpid()}-{uuid.uuid4().hex[:8]}"
    staging.mkdir()
    try:
        yield staging
        write_manifest(staging, manifest_entries(staging, verb))
        if folder.is_dir() and (foreign_entries(folder, verb, inputs) or _is_cwd(folder)):
            _merge(staging, folder, verb, inputs)  # (the working folder itself is never renamed away)
        else:
            _swap(staging, folder)
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise


@contextlib.contextmanager
def staged_files(folder, *, verb=None, inputs=(), where="--out"):
    """Yield a staging folder whose files move into ``folder`` (file by file) when the block ends normally.

    For single-stage verbs whose ``--out`` may be shared with other verbs: an
    interrupted stage leaves ``folder`` untouched.  A new file may replace only
    a file the manifest lists for the same ``verb`` with unchanged content;
    any other file in the way (a user's, another verb's, an input) stops the
    move before anything is moved, with an InputError naming it.  The folder's
    manifest gains the new files.
    """
    from .ownership import foreign_entries, manifest_entries, read_manifest, shown_names, write_manifest

    folder = Path(os.path.realpath(folder))
    folder.parent.mkdir(parents=True, exist_ok=True)
    recover(folder)
    staging = folder.parent / f".{folder.name}.staging-{os.getpid()}-{uuid.uuid4().hex[:8]}"
    staging.mkdir()
    try:
        yield staging
        new = manifest_entries(staging, verb or "kinage")
        foreign = set(foreign_entries(folder, verb or "kinage", inputs)) if folder.is_dir() else set()
        clash = sorted(rel for rel in new if rel in foreign and os.path.lexists(folder / rel))
        clash += sorted(rel for rel in new if any(os.path.realpath(folder / rel) == os.path.realpath(i)
                                                  for i in inputs if i is not None) and rel not in clash)
        if clash:
            raise InputError(where, f"{folder} holds files kinage did not write where its results go: "
                                    f"{shown_names(clash)}; choose another folder")
        old = read_manifest(folder) if folder.is_dir() else {}
        for rel in sorted(new):
            dst = folder / rel
            dst.parent.mkdir(parents=True, exist_ok=True)
            os.replace(staging / rel, dst)
        write_manifest(folder, {**{k: v for k, v in old.items() if (folder / k).exists()}, **new})
    finally:
        shutil.rmtree(staging, ignore_errors=True)
