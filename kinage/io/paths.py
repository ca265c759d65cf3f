"""Check the paths a user names before anything is read or written.

Every problem (missing file, a folder where a file is expected, a file where a
folder is expected, a symbolic-link loop, an unknown user in ``~user``, no
permission) becomes an :class:`~kinage.errors.InputError` naming the option or
key, so the command line prints one line and exits with status 2 before any
work starts.
"""

import errno
import os
from pathlib import Path

from ..errors import InputError

__all__ = ["expand_path", "check_input_file", "check_output_file", "check_output_dir"]

_MAX_PATH = 4096


def expand_path(path, where, base_dir=None):
    """``~`` expanded and relative paths joined to ``base_dir``; never follows links.

    Raises
    ------
    InputError
        For an unknown user (``~nosuchuser/x``), an empty or absurdly long path.
    """
    try:
        text = os.fspath(path)
    except TypeError:
        from .quantities import shown

        raise InputError(where, f"expected a file path (got {type(path).__name__} {shown(path)})") from None
    if isinstance(text, bytes):
        text = os.fsdecode(text)
    if not str(text).strip():
        raise InputError(where, "expected a path (got an empty string)")
    if len(str(text)) > _MAX_PATH or "\x00" in str(text):
        raise InputError(where, f"not a usable path (longer than {_MAX_PATH} characters or containing NUL)")
    p = Path(text)
    if str(text).startswith("~"):
        try:
            p = p.expanduser()
        except RuntimeError:
            user = str(text)[1:].split("/", 1)[0]
            raise InputError(where, f"unknown user '~{user}' in {text}") from None
    if base_dir is not None and not p.is_absolute():
        p = Path(base_dir) / p
    return p


def _os_problem(exc, p):
    if exc.errno == errno.ELOOP:
        return f"symbolic-link loop at {p}"
    if exc.errno == errno.ENAMETOOLONG:
        return f"name too long: {str(p)[:80]}..."
    if exc.errno in (errno.EACCES, errno.EPERM):
        return f"permission denied: {p}"
    if exc.errno == errno.ENOTDIR:
        return f"a part of the path is a file, not a folder: {p}"
    return f"{os.strerror(exc.errno) if exc.errno else exc}: {p}"


def _stat(p):
    """os.stat result, None when the path does not exist; OSError for loops, permissions, ..."""
    try:
        return os.stat(p)
    except FileNotFoundError:
        if os.path.islink(p):  # a dangling link
            raise OSError(errno.ENOENT, "dangling symbolic link") from None
        return None


def check_input_file(path, where, *, what="file", base_dir=None):
    """A readable regular file; returns its absolute Path.

    Parameters
    ----------
    path : str or Path
    where : str
        Key or option for the message (``"[trace] associations"``, ``"--trace-json"``).
    what : str
        Word for the file in messages (``"scenario file"``).
    """
    import stat

    p = expand_path(path, where, base_dir)
    try:
        st = _stat(p)
    except OSError as exc:
        raise InputError(where, _os_problem(exc, p)) from None
    if st is None:
        raise InputError(where, f"{what} not found: {p}")
    if stat.S_ISDIR(st.st_mode):
        raise InputError(where, f"expected a {what}, got a folder: {p}")
    if not stat.S_ISREG(st.st_mode):
        raise InputError(where, f"expected a regular {what}: {p}")
    if not os.access(p, os.R_OK):
        raise InputError(where, f"permission denied: cannot read {p}")
    return Path(os.path.abspath(p))


def _check_parent(p, where):
    import stat

    parent = p.parent
    while True:  # the nearest existing ancestor must be a writable folder
        try:
            st = _stat(parent)
        except OSError as exc:
            raise InputError(where, _os_problem(exc, parent)) from None
        if st is not None:
            break
        if parent == parent.parent:
            raise InputError(where, f"no existing folder above {p}")
        parent = parent.parent
    if not stat.S_ISDIR(st.st_mode):
        raise InputError(where, f"{parent} is a file, not a folder, so {p} cannot be created")
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError(where, f"permission denied: cannot write in {parent}")


def check_output_file(path, where):
    """A path where a file may be written (absent, or an existing regular file); returns it.

    Raises for a folder, a link loop, an unknown user or an unwritable parent.
    Nothing is created.
    """
    import stat

    p = expand_path(path, where)
    try:
        st = _stat(p)
    except OSError as exc:
        raise InputError(where, _os_problem(exc, p)) from None
    if st is not None:
        if stat.S_ISDIR(st.st_mode):
            raise InputError(where, f"expected a file name, got a folder: {p}")
        if not stat.S_ISREG(st.st_mode):
            raise InputError(where, f"expected a regular file: {p}")
        if not os.access(p, os.W_OK) and not os.access(p.parent, os.W_OK):
            raise InputError(where, f"permission denied: cannot write {p}")
    _check_parent(p, where)
    return p


def check_output_dir(path, where):
    """A path where a folder may be written (absent, or an existing folder); returns it.

    Raises for an existing file, a link loop, an unknown user or an unwritable
    parent.  Nothing is created.
    """
    import stat

    p = expand_path(path, where)
    try:
        st = _stat(p)
    except OSError as exc:
        raise InputError(where, _os_problem(exc, p)) from None
    if st is not None:
        if not stat.S_ISDIR(st.st_mode):
            raise InputError(where, f"expected a folder, got an existing file: {p}")
        if not os.access(p, os.W_OK | os.X_OK):
            raise InputError(where, f"permission denied: cannot write in {p}")
        return p
    _check_parent(p, where)
    return p
