"""Input files read once: the bytes read are the bytes parsed and the bytes hashed.

:func:`read_input` reads a file into memory in one pass, counting its data
rows while it streams (so an oversized table is refused after reading about
``max_rows`` lines, before any parsing), and records the SHA-256 of exactly
those bytes.  :func:`recorded_sha256` gives that hash back to the provenance
block, so a file changed on disk during a run cannot be recorded in place of
the content the run used.
"""

import hashlib
import io
import os
import re
import threading

from ..errors import InputError

__all__ = ["file_sha256", "read_input", "recorded_sha256", "record_sha256", "table_source", "shown_columns", "parse_problem"]

_BLOCK = 1 << 20
_LOCK = threading.Lock()
#: real path -> SHA-256 of the bytes this process last read from it
_HASHES = {}


def file_sha256(path):
    """SHA-256 hex digest of a file's bytes (read in blocks, not kept)."""
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(_BLOCK), b""):
            h.update(block)
    return h.hexdigest()


def record_sha256(path, digest):
    """Remember ``digest`` as the hash of the content of ``path`` this process used."""
    with _LOCK:
        _HASHES[os.path.realpath(path)] = digest


def recorded_sha256(path):
    """The SHA-256 of the bytes last read from ``path`` by :func:`read_input` (None when never read)."""
    with _LOCK:
        return _HASHES.get(os.path.realpath(path))


def read_input(path, where, *, max_rows=None, what="table"):
    """The bytes of ``path``, read once; their SHA-256 is recorded.

    Parameters
    ----------
    path : str or Path
    where : str
        The key, option or file name for messages.
    max_rows : int, optional
        Most data rows accepted: lines that are neither empty nor ``#``
        comments (ECSV header), less one for the column names.  Counted while
        reading, so a huge file is refused after about ``max_rows`` lines.
    what : str
        Word for the rows in messages (``"associations"``, ``"TOAs"``).

    Returns
    -------
    bytes

    Raises
    ------
    InputError
        For an unreadable file or too many rows.
    """
    h = hashlib.sha256()
    parts = []
    lines = 0
    at_line_start = True
    try:
        with open(path, "rb") as fh:
            for block in iter(lambda: fh.read(_BLOCK), b""):
                h.update(block)
                parts.append(block)
                if max_rows is not None:
                    lines += _data_lines(block, at_line_start)
                    at_line_start = block.endswith(b"\n")
                    if lines - 1 > max_rows:
                        raise InputError(where, f"more than {max_rows:,} rows (stopped reading at "
                                                f"{sum(map(len, parts)) / 1e6:.3g} MB), above the limit of "
                                                f"{max_rows:,} {what}")
    except OSError as exc:
        raise InputError(where, f"cannot read {path} ({exc.strerror or exc})") from None
    record_sha256(path, h.hexdigest())
    return b"".join(parts)


def _data_lines(block, at_line_start):
    """Lines starting in ``block`` that are neither blank nor comments (close enough for a limit)."""
    n = block.count(b"\n") + (0 if block.endswith(b"\n") else 1)
    n -= block.count(b"\n#") + block.count(b"\n\n") + block.count(b"\n\r\n")
    if at_line_start and block[:1] in (b"#", b"\n", b"\r"):
        n -= 1
    return n


def table_source(data):
    """A binary stream over ``data`` for astropy's table readers (``Table.read(table_source(data), format=...)``)."""
    return io.BytesIO(data)


_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_ .()/-]{0,40}$")


def shown_columns(names, limit=12):
    """Column names for a message, or words saying they are not shown.

    A file that is not a table at all (a link to some other file) must not have
    its first line echoed into a message: names are shown only when every one
    looks like a column name.
    """
    names = [str(n) for n in names]
    if not names:
        return "none"
    if not all(_NAME.match(n) for n in names):
        return "the first line does not look like column names; not shown"
    return ", ".join(names[:limit]) + (", ..." if len(names) > limit else "")


def parse_problem(exc, limit=160):
    """A table reader's complaint without the file's content.

    astropy's messages may append the offending lines (``Header values: [...]
    Data values: [...]``); only the complaint itself is kept, cut at ``limit``
    characters.
    """
    text = " ".join(str(exc).split())
    for marker in (" Header values:", " Data values:", " Line:", " line:"):
        if marker in text:
            text = text.split(marker)[0]
    text = re.sub(r"'[^']{40,}'|\"[^\"]{40,}\"", "'...'", text)
    return text if len(text) <= limit else text[:limit].rstrip() + " ..."
