"""Output folders own only what kinage wrote: a manifest of the files, and nothing else replaced.

Every folder kinage writes results into holds a manifest, :data:`MANIFEST`
(JSON): for each file kinage wrote, its path inside the folder, its SHA-256
and the verb that wrote it.  A later run may replace or delete a file only
when the manifest lists it for the same verb with the same content; every
other entry (a user's ``notes.txt`` or ``my_analysis/``, another verb's
results, a file kinage wrote and the user edited since, the run's own input
tables) is *foreign* and is never deleted.

Folders written by kinage 0.2 hold no manifest, only the marker file
``.kinage-run`` (or, older still, just ``results.json``); there the names
``kinage run`` writes (``results.json``, the reports and the stage folders)
count as its own and everything else as foreign.
"""

import json
import os
from pathlib import Path

from ..errors import InputError

__all__ = ["MANIFEST", "LEGACY_MARKER", "read_manifest", "write_manifest", "manifest_entries", "foreign_entries",
           "refuse_foreign", "same_file", "inside", "shown_names"]

#: the manifest file in every folder kinage writes results into
MANIFEST = ".kinage-manifest.json"
#: the marker file of folders written by ``kinage run`` before manifests existed
LEGACY_MARKER = ".kinage-run"
#: top-level names ``kinage run`` writes (used only for folders without a manifest)
_LEGACY_RUN_NAMES = {"results.json", "report.html", "report.md", "forecast", "fit", "trace", "ages", LEGACY_MARKER,
                     "figures", "report_files"}


def _sha256(path):
    from .readonce import file_sha256

    return file_sha256(path)


def read_manifest(folder):
    """``{relative path: {"sha256": hex or None, "verb": str}}`` of the files kinage wrote in ``folder``.

    An unreadable or malformed manifest lists nothing (so nothing is replaced).
    """
    folder = Path(folder)
    path = folder / MANIFEST
    if path.is_file() and not path.is_symlink():
        try:
            data = json.loads(path.read_text(encoding="utf-8"))
            files = data.get("files") if isinstance(data, dict) else None
            if isinstance(files, dict):
                return {str(k): dict(v) for k, v in files.items() if isinstance(v, dict)}
        except (OSError, ValueError):
            pass
        return {}
    if (folder / LEGACY_MARKER).is_file() or (folder / "results.json").is_file():  # written before manifests
        out = {}
        for p in _walk(folder):
            rel = p.relative_to(folder)
            if rel.parts[0] in _LEGACY_RUN_NAMES and not p.is_symlink():
                out[rel.as_posix()] = {"sha256": None, "verb": "run"}
        return out
    return {}


def manifest_entries(folder, verb, files=None):
    """Manifest entries for ``files`` (default: every file under ``folder``) written by ``verb``."""
    folder = Path(folder)
    files = _walk(folder) if files is None else [Path(f) for f in files]
    out = {}
    for p in files:
        rel = Path(p).relative_to(folder).as_posix()
        if rel == MANIFEST or not Path(p).is_file() or Path(p).is_symlink():
            continue
        out[rel] = {"sha256": _sha256(p), "verb": verb}
    return out


def write_manifest(folder, entries):
    """Write the manifest of ``folder`` (atomically); ``entries`` as from :func:`manifest_entries`."""
    from .atomic import atomic_write

    text = json.dumps({"about": "files kinage wrote in this folder; kinage replaces or deletes only these",
                       "files": dict(sorted(entries.items()))}, indent=1) + "\n"
    return atomic_write(Path(folder) / MANIFEST, text)


def _walk(folder):
    """Every file, symbolic link and empty folder under ``folder`` (links are not followed)."""
    out = []
    for root, dirs, files in os.walk(folder, followlinks=False):
        r = Path(root)
        for d in list(dirs):
            if os.path.islink(r / d):
                out.append(r / d)
                dirs.remove(d)
        if not dirs and not files and r != Path(folder):
            out.append(r)
        out.extend(r / f for f in files)
    return sorted(out)


def same_file(a, b):
    """True when ``a`` and ``b`` are the same file once links are resolved (hard links included)."""
    try:
        if os.path.realpath(a) == os.path.realpath(b):
            return True
        return os.path.exists(a) and os.path.exists(b) and os.path.samefile(a, b)
    except OSError:
        return False


def inside(path, folder):
    """True when ``path`` (links resolved) lies inside ``folder`` (links resolved)."""
    p, f = os.path.realpath(path), os.path.realpath(folder)
    return p != f and p.startswith(f.rstrip(os.sep) + os.sep)


def foreign_entries(folder, verb, inputs=()):
    """Paths under ``folder`` (relative, sorted) that a ``verb`` run must not replace or delete.

    Everything but the files the manifest lists for ``verb`` with unchanged
    content; ``inputs`` (files the run reads) are foreign wherever they are.
    """
    folder = Path(folder)
    if not folder.is_dir():
        return []
    owned = read_manifest(folder)
    inputs = [os.path.realpath(i) for i in inputs if i is not None]
    out = []
    for p in _walk(folder):
        rel = p.relative_to(folder).as_posix()
        if rel == MANIFEST:
            continue
        entry = owned.get(rel)
        mine = (entry is not None and entry.get("verb") == verb and p.is_file() and not p.is_symlink()
                and os.path.realpath(p) not in inputs
                and (entry.get("sha256") is None or entry.get("sha256") == _sha256(p)))
        if not mine:
            out.append(rel)
    return out


def shown_names(rels, limit=4):
    """A short list of top-level names (``notes.txt, my_analysis/, ...``) for a message."""
    tops = []
    for rel in rels:
        parts = rel.split("/")
        name = parts[0] + ("/" if len(parts) > 1 else "")
        if name not in tops:
            tops.append(name)
    return ", ".join(tops[:limit]) + (", ..." if len(tops) > limit else "")


def refuse_foreign(folder, verb, inputs=(), where="--out", force_hint=True):
    """Raise InputError when ``folder`` holds anything a ``verb`` run did not write (see :func:`foreign_entries`)."""
    foreign = foreign_entries(folder, verb, inputs)
    if not foreign:
        return []
    own_inputs = [i for i in inputs if i is not None and inside(i, folder)]
    what = "the run's own inputs and files" if own_inputs else "files"
    hint = "choose another folder or --force (which keeps them and writes the results beside them)" \
        if force_hint else "choose another folder"
    raise InputError(where, f"{folder} holds {what} kinage did not write: {shown_names(foreign)}; {hint}")
