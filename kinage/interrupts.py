"""SIGINT and SIGTERM for the command line: a message, complete files only, and a prompt second stop.

The first Ctrl-C (SIGINT) or SIGTERM raises :class:`KeyboardInterrupt` in the
main thread (SIGTERM as its subclass :class:`Terminated`), so ``finally``
blocks discard unfinished work: files are written atomically and a run's
staging folder replaces the previous results only when the run completes.

Python runs signal handlers only between bytecodes of the main thread, so a
long call into compiled code (an orbit integration) would delay that first
interruption.  A watchdog thread therefore reads the signal wake-up pipe
(:func:`signal.set_wakeup_fd`, written by the C-level handler at once): on a
second signal it prints one line and ends the process immediately.  Nothing
incomplete is left in a results folder then either, because unfinished
output lives only in the staging folder (removed by the next run).
"""

import contextlib
import os
import signal
import sys
import threading

__all__ = ["Terminated", "interrupt_guard", "EXIT_SIGINT", "EXIT_SIGTERM"]

EXIT_SIGINT = 130  # 128 + SIGINT, the shell convention
EXIT_SIGTERM = 143  # 128 + SIGTERM


class Terminated(KeyboardInterrupt):
    """Raised in the main thread when the process receives SIGTERM."""


def _raise_terminated(signum, frame):
    raise Terminated()


def _ignore(signum, frame):
    pass  # the watchdog sees the signal on the wake-up pipe and ends the process


class _Guard:
    """What :func:`interrupt_guard` yields."""

    def settle(self):
        """After the first interruption: further signals only trigger the watchdog's immediate exit."""
        if threading.current_thread() is threading.main_thread():
            signal.signal(signal.SIGINT, _ignore)
            signal.signal(signal.SIGTERM, _ignore)


@contextlib.contextmanager
def interrupt_guard(label="kinage"):
    """Handle SIGINT / SIGTERM as described in the module docstring while the block runs.

    A no-op outside the main thread (signal handlers can only be set there).
    """
    guard = _Guard()
    if threading.current_thread() is not threading.main_thread():
        yield guard
        return
    r, w = os.pipe()
    os.set_blocking(w, False)
    try:
        old_fd = signal.set_wakeup_fd(w, warn_on_full_buffer=False)
    except ValueError:  # pragma: no cover - not the main interpreter
        os.close(r)
        os.close(w)
        yield guard
        return
    old_term = signal.signal(signal.SIGTERM, _raise_terminated)
    old_int = signal.getsignal(signal.SIGINT)
    if old_int in (signal.SIG_IGN, signal.SIG_DFL, None):
        signal.signal(signal.SIGINT, signal.default_int_handler)
    stop = threading.Event()

    def watch():
        seen = 0
        while not stop.is_set():
            try:
                data = os.read(r, 64)
            except OSError:
                return
            if not data or stop.is_set():
                return
            for b in data:
                if b not in (signal.SIGINT, signal.SIGTERM):
                    continue
                seen += 1
                if seen >= 2:
                    code = EXIT_SIGTERM if b == signal.SIGTERM else EXIT_SIGINT
                    try:
                        sys.stderr.write(f"{label}: interrupted again: stopping now; every file written is "
                                         "complete (unfinished work is discarded)\n")
                        sys.stderr.flush()
                    finally:
                        os._exit(code)

    t = threading.Thread(target=watch, name="kinage-interrupt-watchdog", daemon=True)
    t.start()
    try:
        yield guard
    finally:
        stop.set()
        signal.set_wakeup_fd(old_fd)
        signal.signal(signal.SIGTERM, old_term)
        signal.signal(signal.SIGINT, old_int if old_int is not None else signal.default_int_handler)
        os.close(w)  # the watchdog's read returns b"" and it ends
        t.join(timeout=1.0)
        os.close(r)
