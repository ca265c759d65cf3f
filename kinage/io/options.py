"""Check the command-line values of every verb before anything runs or is created.

Paths (inputs readable files, ``--out`` a folder or a new name, ``--json`` /
``--output`` a file name, never a folder), counts (``--samples``,
``--workers``), seeds and scheduler addresses.  Each problem is an
:class:`~kinage.errors.InputError` naming the option.
"""

import os
import re

from ..errors import InputError
from .paths import check_input_file, check_output_dir, check_output_file

__all__ = ["check_arguments", "check_outputs_not_inputs", "check_scheduler_address", "max_workers", "SCHEDULER_SCHEMES"]

#: address schemes dask distributed understands
SCHEDULER_SCHEMES = ("tcp", "tls", "inproc", "ucx", "ws", "wss")

_INPUTS = {  # attribute -> (option name in messages, what)
    "scenario": ("scenario", "scenario file"),
    "toas": ("toas", "TOA table"),
    "stars": ("stars", "star table"),
    "trace_json": ("--trace-json", "JSON file"),
}
_SCENARIO_OPTION = {"fit": "--scenario", "batch": "--scenario"}


def max_workers():
    """Most local worker processes ``kinage batch`` starts: 4 per CPU core, at least 8."""
    return max(8, 4 * (os.cpu_count() or 1))


def check_arguments(args):
    """Validate the parsed arguments of one verb; raises InputError naming the option.

    Parameters
    ----------
    args : argparse.Namespace
        From :func:`kinage.cli.build_parser`.
    """
    verb = getattr(args, "verb", "")
    for attr, (name, what) in _INPUTS.items():
        value = getattr(args, attr, None)
        if value is None:
            continue
        if attr == "scenario":
            name = _SCENARIO_OPTION.get(verb, name)
        setattr(args, attr, check_input_file(value, name, what=what))
    if getattr(args, "out", None) is not None:
        args.out = check_output_dir(args.out, "--out")
    for attr, name in (("json", "--json"), ("output", "--output")):
        if getattr(args, attr, None) is not None:
            setattr(args, attr, check_output_file(getattr(args, attr), name))
    _no_overwrite(args)
    samples = getattr(args, "samples", None)
    if samples is not None:
        from .schema import SCHEMA

        cap = SCHEMA["trace"]["samples"].upper or 10**6
        if not 1 <= samples <= cap:
            raise InputError("--samples", f"must be a whole number from 1 to {cap:,} "
                                          f"({SCHEMA['trace']['samples'].reason or 'the limit on draws'}; got {samples})")
    seed = getattr(args, "seed", None)
    if seed is not None and not 0 <= seed < 2**63:
        raise InputError("--seed", f"must be a whole number from 0 to 2**63 - 1 (got {seed})")
    if verb == "batch":
        workers = getattr(args, "workers", None)
        if workers is not None and not 1 <= workers <= max_workers():
            raise InputError("--workers", f"must be from 1 to {max_workers()} (4 local processes per CPU core on "
                                          f"this machine; got {workers})")
        if getattr(args, "scheduler", None) is not None:
            args.scheduler = check_scheduler_address(args.scheduler)
    potential = getattr(args, "potential", None)
    if potential is not None:
        from .choices import names as _names

        names = _names("param", "potential")
        if potential.lower() not in {n.lower() for n in names}:
            raise InputError("--potential", f"expected one of {', '.join(names)} (got {potential!r})")
    return args


def _no_overwrite(args):
    """An output file must not be one of the inputs (``--json star.toml`` would destroy the scenario)."""
    inputs = {}
    for attr in ("scenario", "toas", "stars", "trace_json"):
        if getattr(args, attr, None) is not None:
            inputs[os.path.realpath(getattr(args, attr))] = _INPUTS[attr][0]
    for attr, name in (("json", "--json"), ("output", "--output")):
        value = getattr(args, attr, None)
        if value is not None and os.path.realpath(value) in inputs:
            raise InputError(name, f"{value} is also the input {inputs[os.path.realpath(value)]}; writing there "
                                   "would destroy it")


def check_outputs_not_inputs(args, inputs):
    """``--json`` and ``--output`` must not be any of ``inputs`` (``{name: path}``), links resolved.

    The files a scenario names (association table, TOA table, pulse shape) are
    only known once it is read, so the verbs call this after reading it.
    """
    from .ownership import same_file

    for attr, name in (("json", "--json"), ("output", "--output")):
        value = getattr(args, attr, None)
        if value is None:
            continue
        for what, path in inputs.items():
            if path is not None and same_file(value, path):
                raise InputError(name, f"{value} is also the input {what} ({path}); writing there would destroy "
                                       "it: choose another file name")


_HOST = re.compile(r"^(\[[0-9A-Fa-f:.]+\]|[A-Za-z0-9]([A-Za-z0-9.-]{0,251}[A-Za-z0-9])?)$")


def check_scheduler_address(address):
    """A dask scheduler address ``[scheme://]host:port``; returns it with a scheme.

    Raises
    ------
    InputError
        For an unknown scheme, a missing or malformed host, or a port outside 1-65535.
    """
    text = str(address).strip()
    where = "--scheduler"
    form = "expected an address like tcp://host:8786 or host:8786"
    if not text or len(text) > 300 or any(c.isspace() for c in text):
        raise InputError(where, f"{form} (got {address[:60]!r})")
    scheme, sep, rest = text.partition("://")
    if not sep:
        scheme, rest = "tcp", text
    scheme = scheme.lower()
    if scheme not in SCHEDULER_SCHEMES:
        raise InputError(where, f"unknown scheme {scheme!r}; {form} (schemes: {', '.join(SCHEDULER_SCHEMES)})")
    if scheme == "inproc":
        return f"{scheme}://{rest}"
    host, colon, port = rest.rpartition(":")
    if not colon or not host or not port.isdigit():
        raise InputError(where, f"{form} (got {text!r}: no port)")
    if not 1 <= int(port) <= 65535:
        raise InputError(where, f"port must be from 1 to 65535 (got {port})")
    if not _HOST.match(host):
        raise InputError(where, f"{form} (got host {host[:60]!r})")
    return f"{scheme}://{host}:{int(port)}"
