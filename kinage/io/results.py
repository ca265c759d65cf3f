"""One way to write results: atomic files and JSON with provenance.

Every file kinage writes goes through :func:`atomic_write`: the content is
written to a temporary file in the target folder, flushed to disk and then
renamed over the target, so an interrupted or failed run never leaves a
half-written result behind.
"""

import datetime
import hashlib
import json
import math
import os
import platform
import sys
from pathlib import Path

import numpy as np

from .._version import __version__
from .atomic import atomic_path, atomic_write

#: in-memory input tables up to this many rows are recorded in full in the provenance
MAX_RECORDED_ROWS = 1000

__all__ = ["atomic_write", "atomic_path", "write_json", "provenance", "to_jsonable", "interval", "versions",
           "command_line", "VERSIONED"]


def to_jsonable(obj):
    """Convert numpy scalars/arrays, Quantities, Paths, dataclasses to JSON data.

    Non-finite floats become ``None`` (JSON has no NaN).
    """
    import astropy.units as u
    from astropy.time import Time

    if hasattr(obj, "to_dict") and callable(obj.to_dict):
        return to_jsonable(obj.to_dict())
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, u.Quantity):
        return to_jsonable(obj.value)
    if isinstance(obj, Time):
        return obj.isot if obj.isscalar else list(obj.isot)
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist())
    if isinstance(obj, (np.bool_, bool)):
        return bool(obj)
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        x = float(obj)
        return x if math.isfinite(x) else None
    if isinstance(obj, Path):
        return str(obj)
    return obj


def interval(samples, weights=None):
    """Median and 68% / 95% central intervals of 1-D samples.

    Returns
    -------
    dict
        ``median``, ``lo68``, ``hi68``, ``lo95``, ``hi95``, ``n`` (None values
        when there are no finite samples).
    """
    x = np.asarray(samples, float)
    x = x[np.isfinite(x)]
    if x.size == 0:
        return {"median": None, "lo68": None, "hi68": None, "lo95": None, "hi95": None, "n": 0}
    q = np.percentile(x, [50, 15.865525393145708, 84.13447460685429, 2.2750131948179195, 97.72498680518208])
    return {"median": float(q[0]), "lo68": float(q[1]), "hi68": float(q[2]),
            "lo95": float(q[3]), "hi95": float(q[4]), "n": int(x.size)}


#: distributions whose versions every result records
VERSIONED = ("kinage", "numpy", "astropy", "galpy", "scipy", "matplotlib", "dask", "distributed")


def versions():
    """Versions of Python, kinage and the libraries results depend on (read without importing them).

    Returns
    -------
    dict
        ``python``, ``kinage``, ``numpy``, ``astropy``, ``galpy``, ``scipy``, ...;
        ``None`` for a library that is not installed.
    """
    from importlib import metadata

    out = {"python": platform.python_version(), "platform": platform.platform(terse=True)}
    for name in VERSIONED:
        try:
            out[name] = __version__ if name == "kinage" else metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = None
    return out


def command_line():
    """The command line of this process (``sys.argv`` joined with shell quoting)."""
    import shlex

    argv = list(sys.argv) or [""]
    argv[0] = os.path.basename(argv[0]) or "python"
    return shlex.join(argv)


def provenance(*, scenario=None, seed=None, parameter_sets=(), input_files=(), command=None):
    """The provenance block recorded in every JSON result.

    Parameters
    ----------
    scenario : Scenario, optional
        Its input files are hashed.
    seed : int or None
    parameter_sets : iterable of ParameterSet
        Recorded with their names and references.
    input_files : iterable of path
        Further files to hash.
    command : str, optional
        The command line verb.

    Returns
    -------
    dict
        ``kinage_version``, ``command``, ``command_line`` (this process's
        ``sys.argv``, shell-quoted) and ``argv`` (as a list), ``seed``,
        ``created_utc``, ``python``, ``versions`` (:func:`versions`) and
        ``numpy_version``, ``astropy_version``, ``galpy_version``,
        ``scipy_version``, ``parameter_sets``, ``input_sha256`` and ``input_tables``
        (tables given in memory: their SHA-256 over canonical JSON, row count and,
        up to :data:`MAX_RECORDED_ROWS` rows, the rows themselves, so a notebook run
        can be reproduced from its outputs).
    """
    from .readonce import recorded_sha256
    from .scenario import file_sha256

    files = list(scenario.input_files()) if scenario is not None else []
    files += [Path(f) for f in input_files]
    hashes = {}
    for f in files:  # the hash of the bytes the run read, not of what the file holds now
        if f is None:
            continue
        if scenario is not None and getattr(scenario, "sha256", None) and f == scenario.path:
            hashes[str(f)] = scenario.sha256
        elif recorded_sha256(f) is not None:
            hashes[str(f)] = recorded_sha256(f)
        elif Path(f).is_file():
            hashes[str(f)] = file_sha256(f)
    tables = {}
    if scenario is not None and hasattr(scenario, "input_tables"):
        for where, obj in scenario.input_tables().items():
            content = to_jsonable(obj.to_dict())
            text = json.dumps(content, sort_keys=True, separators=(",", ":"))
            rows = len(obj) if hasattr(obj, "__len__") else None
            tables[where] = {"sha256": hashlib.sha256(text.encode()).hexdigest(), "rows": rows,
                             "content": content if rows is not None and rows <= MAX_RECORDED_ROWS else None}
    vers = versions()
    seen = {}
    for p in parameter_sets:
        if p is not None:
            seen[(p.kind, p.name)] = p.summary()
    return {
        "kinage_version": __version__,
        "command": command,
        "command_line": command_line(),
        "argv": list(sys.argv),
        "seed": seed,
        "created_utc": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
        "python": platform.python_version(),
        "versions": vers,
        **{f"{name}_version": vers[name] for name in ("numpy", "astropy", "galpy", "scipy")},
        "parameter_sets": list(seen.values()),
        "input_sha256": hashes,
        "input_tables": tables,
    }


def write_json(path, payload, provenance_block=None):
    """Write ``payload`` (plus ``provenance``) as pretty JSON, atomically.

    Parameters
    ----------
    path : str or Path
    payload : dict
    provenance_block : dict, optional
        From :func:`provenance`; stored under the key ``provenance``.
    """
    data = dict(to_jsonable(payload))
    if provenance_block is not None:
        data["provenance"] = to_jsonable(provenance_block)
    text = json.dumps(data, indent=2, sort_keys=False, allow_nan=False) + "\n"
    return atomic_write(path, text)
