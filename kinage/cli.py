"""The ``kinage`` command line.

Each verb reads a scenario (or a table), runs one stage or all of them, prints a
short summary and, with ``--json PATH``, writes the numbers with provenance.
Input mistakes are printed as one-line errors with exit status 2; a failing
stage exits with status 1 and names the stage.
"""

import argparse
import sys
import textwrap
from pathlib import Path

from ._version import __version__

__all__ = ["main", "build_parser"]

_EXAMPLES = {
    "forecast": "kinage forecast star.toml --json forecast.json --out forecast/",
    "simulate": "kinage simulate star.toml --output toas.ecsv --seed 7",
    "fit": "kinage fit toas.ecsv --scenario star.toml --json fit.json --out fit/",
    "trace": "kinage trace star.toml --samples 5000 --json trace.json --out trace/",
    "ages": "kinage ages star.toml --trace-json trace.json --json ages.json --out ages/",
    "run": "kinage run star.toml --out results/",
    "demo": "kinage demo --case radio --out kinage-demo/",
    "batch": "kinage batch stars.ecsv --scenario template.toml --out population/ --workers 2",
    "keys": "kinage keys trace",
    "parameter-sets": "kinage parameter-sets velocity_prior",
}

_HELP = {
    "forecast": "predict how well a timing campaign measures position, proper motion and parallax",
    "simulate": "draw a table of pulse arrival times (TOAs) for the campaign, with noise",
    "fit": "fit a TOA table for position, proper motion and parallax",
    "trace": "trace the star and candidate birth associations back in time",
    "ages": "compare kinematic, spin-down and cooling ages",
    "run": "run every stage the scenario asks for and write a report",
    "demo": "copy a bundled invented demo case to a folder and run it end to end (--list shows the cases)",
    "batch": "run many stars from a table with one scenario template",
    "keys": "list the scenario keys of a table with units and defaults",
    "parameter-sets": "list the named parameter sets and their references",
}


def _common(p, *, json=True, out=True, seed=True, out_help=None):
    g = p.add_argument_group("common options")
    if json:
        g.add_argument("--json", metavar="PATH", type=Path, help="write the numbers (with provenance) to this JSON file")
    if out:
        g.add_argument("--out", metavar="DIR", type=Path,
                       help=out_help or "folder for tables and figures (without --out or --json nothing is written: "
                                        "the summary is printed only)")
    if seed:
        g.add_argument("--seed", type=int, metavar="N",
                       help="random seed (overrides the scenario's; recorded in the results; verbs without "
                            "randomness record it only)")
    g.add_argument("--quiet", action="store_true", help="no progress display, only errors")
    g.add_argument("--debug", action="store_true", help="show the full traceback of an unexpected error")


class _Parser(argparse.ArgumentParser):
    """An argument parser whose usage errors are one line (exit status 2), like every other input error."""

    def error(self, message):
        self.exit(2, f"{self.prog}: error: {' '.join(str(message).split())} (see '{self.prog} --help')\n")


def build_parser():
    """The argument parser with all verbs."""
    parser = _Parser(
        prog="kinage",
        description=textwrap.dedent("""\
            Timing astrometry, birthplace tracing and age comparison for isolated neutron stars.
            A scenario file (TOML) describes the star and what to do; each verb runs one stage."""),
        epilog="examples:\n" + "\n".join(f"  {v:<15} {e}" for v, e in _EXAMPLES.items()),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"kinage {__version__}")
    sub = parser.add_subparsers(dest="verb", metavar="VERB")

    def verb(name, **kw):
        return sub.add_parser(name, help=_HELP[name], description=_HELP[name][0].upper() + _HELP[name][1:] + ".",
                              epilog=f"example:\n  {_EXAMPLES[name]}",
                              formatter_class=argparse.RawDescriptionHelpFormatter, **kw)

    p = verb("forecast")
    p.add_argument("scenario", type=Path, help="scenario file with [star] and [campaign]")
    p.add_argument("--compare-schedules", action="store_true",
                   help="also print the parallax and proper-motion errors of the 'even', 'parallax' and 'motion' "
                        "schedules with the same visits")
    p.add_argument("--birthplace", action="store_true",
                   help="also forecast the birthplace probabilities after the campaign (needs [trace] associations)")
    p.add_argument("--outcomes", type=int, metavar="N",
                   help="simulated campaign outcomes for --birthplace (overrides [campaign] outcomes; 20 to 100000)")
    p.add_argument("--samples", type=int, metavar="N",
                   help="Monte Carlo draws of the star for --birthplace (overrides [trace] samples)")
    _common(p)

    p = verb("simulate")
    p.add_argument("scenario", type=Path, help="scenario file with [star] and [campaign]")
    p.add_argument("--output", "-o", type=Path, metavar="TOAS",
                   help="TOA table to write (ECSV; default: toas.ecsv in --out)")
    _common(p)

    p = verb("fit")
    p.add_argument("toas", type=Path, metavar="TOAS", help="TOA table (ECSV or CSV with columns mjd, error), or the scenario "
                                           "alone when its [campaign] toas names the table")
    p.add_argument("--scenario", type=Path, help="scenario with the star's starting values")
    _common(p)

    p = verb("trace")
    p.add_argument("scenario", type=Path, help="scenario file with [star] and [trace]")
    p.add_argument("--samples", type=int, metavar="N", help="Monte Carlo draws of the star (overrides [trace] samples)")
    p.add_argument("--potential", metavar="NAME", help="Galactic potential parameter set, or 'none' for straight lines")
    _common(p)

    p = verb("ages")
    p.add_argument("scenario", type=Path, help="scenario file with [star] (spin, temperature) and [ages]")
    p.add_argument("--trace-json", type=Path, metavar="PATH",
                   help="kinematic age from a 'kinage trace' JSON result instead of [ages] kinematic_age")
    _common(p)

    p = verb("run")
    p.add_argument("scenario", type=Path, help="scenario file")
    p.add_argument("--samples", type=int, metavar="N", help="Monte Carlo draws of the star for tracing")
    p.add_argument("--force", action="store_true",
                   help="--out may hold files kinage did not write: keep them and write the results beside them "
                        "(only an earlier run's own files are replaced; nothing else is deleted)")
    _common(p, out_help="folder for results.json, tables, figures and the report (default: the scenario's "
                        "name + '-results' in the current folder, e.g. star-results/ for star.toml)")

    p = verb("demo")
    p.add_argument("--list", action="store_true", help="list the demo cases, one line each, name first")
    p.add_argument("--case", metavar="NAME", help="which demo case to run (default: xray; see --list)")
    p.add_argument("--samples", type=int, metavar="N", help="Monte Carlo draws of the star (default: the demo's)")
    _common(p)

    p = verb("batch")
    p.add_argument("stars", type=Path, help="table of stars, one row each (ECSV or CSV; columns named like [star] keys)")
    p.add_argument("--scenario", type=Path, required=True, help="template scenario: campaign, trace and ages settings")
    p.add_argument("--scheduler", metavar="ADDRESS", help="dask scheduler address (default: local processes)")
    p.add_argument("--workers", type=int, default=2, metavar="N", help="local worker processes (default 2)")
    p.add_argument("--force", action="store_true", help="redo stars whose results exist")
    p.add_argument("--samples", type=int, metavar="N", help="Monte Carlo draws per star (overrides the template)")
    p.add_argument("--no-figures", action="store_true",
                   help="skip the population figure (stars never draw figures in a batch; saves matplotlib's start-up)")
    _common(p)

    p = verb("keys")
    p.add_argument("table", nargs="?", choices=["star", "campaign", "trace", "ages"], help="one table (default: all)")

    from .params.registry import KINDS

    p = verb("parameter-sets")
    p.add_argument("kind", nargs="?", choices=KINDS, metavar="KIND",
                   help=f"one kind: {', '.join(KINDS)} (default: all)")
    return parser


def main(argv=None):
    """Entry point of the ``kinage`` command; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not args.verb:
        parser.print_help()
        return 0
    from .progress import set_quiet

    set_quiet(getattr(args, "quiet", False) or not sys.stderr.isatty())
    from .interrupts import interrupt_guard

    with interrupt_guard(f"kinage {args.verb}") as guard, _closed_pipe_is_a_normal_end():
        return _dispatch(args, guard)  # SIGINT / SIGTERM: a message, complete files only


class _PipeSafe:
    """Standard output that turns quiet when the reader goes away (``kinage run ... | head -1``).

    A closed pipe is a normal end for the reader, not a fault of the run: the
    run goes on writing its results, and what it would have printed is dropped.
    """

    def __init__(self, stream):
        self._stream = stream
        self.closed_pipe = False

    def _drop(self):
        import os

        self.closed_pipe = True
        try:  # later writes, and Python's own flush at exit, go nowhere instead of failing again
            fd = os.open(os.devnull, os.O_WRONLY)
            os.dup2(fd, self._stream.fileno())
            os.close(fd)
        except (OSError, ValueError, AttributeError):
            pass

    def write(self, text):
        if self.closed_pipe:
            return len(text)
        try:
            return self._stream.write(text)
        except BrokenPipeError:
            self._drop()
            return len(text)

    def flush(self):
        if self.closed_pipe:
            return
        try:
            self._stream.flush()
        except BrokenPipeError:
            self._drop()

    def __getattr__(self, name):
        return getattr(self._stream, name)


class _closed_pipe_is_a_normal_end:
    """Context manager installing :class:`_PipeSafe` as ``sys.stdout`` while a verb runs."""

    def __enter__(self):
        self._saved = sys.stdout
        if sys.stdout is not None and not isinstance(sys.stdout, _PipeSafe):
            sys.stdout = _PipeSafe(sys.stdout)
        return sys.stdout

    def __exit__(self, *exc):
        current = sys.stdout
        if isinstance(current, _PipeSafe):
            current.flush()
        sys.stdout = self._saved
        return False


def _dispatch(args, guard):
    from .errors import ConvergenceError, InputError, KinageError, OutputError, StageError
    from .interrupts import EXIT_SIGINT, EXIT_SIGTERM, Terminated

    try:
        from . import commands
        from .io.options import check_arguments

        check_arguments(args)  # every option checked before anything is read, created or run
        return getattr(commands, "cmd_" + args.verb.replace("-", "_"))(args) or 0
    except InputError as exc:
        for line in _problem_lines(exc):
            print(f"kinage {args.verb}: error: {line}", file=sys.stderr)
        return 2
    except OutputError as exc:  # full disk, quota, read-only file system: the folder and what to do
        print(f"kinage {args.verb}: error: {' '.join(str(exc).split())}", file=sys.stderr)
        return 1
    except (ConvergenceError, StageError, KinageError) as exc:
        print(f"kinage {args.verb}: failed: {exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt as exc:
        guard.settle()  # a further signal now only ends the process at once (the watchdog)
        how = "terminated (SIGTERM)" if isinstance(exc, Terminated) else "interrupted"
        print(f"kinage {args.verb}: {how}; every file written is complete (unfinished work is discarded)",
              file=sys.stderr)
        return EXIT_SIGTERM if isinstance(exc, Terminated) else EXIT_SIGINT
    except OSError as exc:
        from .io.faults import is_disk_fault, output_error

        if getattr(args, "debug", False) or not is_disk_fault(exc):
            return _unexpected(args, exc)
        print(f"kinage {args.verb}: error: {' '.join(str(output_error(exc)).split())}", file=sys.stderr)
        return 1
    except Exception as exc:  # noqa: BLE001
        return _unexpected(args, exc)


def _unexpected(args, exc):
    """An error kinage did not foresee: one line asking for a report (the traceback with --debug)."""
    if getattr(args, "debug", False):
        raise exc
    print(f"kinage {args.verb}: unexpected error ({type(exc).__name__}: {exc}); "
          "rerun with --debug for the traceback and please report it", file=sys.stderr)
    return 1


def _problem_lines(exc):
    """One line per problem, each naming the file (if any) and the field."""
    problems = getattr(exc, "problems", None)
    if not problems:
        return [" ".join(str(exc).split())]
    head = f"{exc.source}: " if getattr(exc, "source", None) else ""
    return [head + " ".join(str(p).split()) for p in problems]


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
