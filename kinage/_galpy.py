"""Import galpy without its online version check.

When galpy is imported it may, once a day, check PyPI for a newer version
(a network connection with a 5 s timeout and a ``pip`` subprocess).  The
machines kinage runs on may be offline, so this module switches the check
off in memory before galpy's package body reads its configuration.  galpy may
still write a default ``~/.galpyrc`` the first time; if the home folder is not
writable that only produces a warning, which is silenced here.
"""

import contextlib
import ctypes
import importlib
import importlib.abc
import importlib.util
import signal
import sys
import threading
import warnings

__all__ = ["import_galpy", "sigint_preserved", "clear_galpy_interrupt"]


class _ConfigPatch(importlib.abc.MetaPathFinder):
    """Turn off the version check right after ``galpy.util.config`` runs."""

    def find_spec(self, fullname, path, target=None):
        if fullname != "galpy.util.config":
            return None
        sys.meta_path.remove(self)
        spec = importlib.util.find_spec(fullname)
        loader = spec.loader
        original_exec = loader.exec_module

        def exec_module(module):
            original_exec(module)
            try:
                module.__config__.set("version-check", "do-check", "False")
            except Exception:  # pragma: no cover - configuration layout changed
                pass

        loader.exec_module = exec_module
        return spec


class _LazyPlot(importlib.abc.MetaPathFinder):
    """Load ``galpy.util.plot`` lazily: galpy's potentials import it (and so matplotlib) at import time,
    though only plotting methods use it; the module runs on first attribute access."""

    def find_spec(self, fullname, path, target=None):
        if fullname != "galpy.util.plot":
            return None
        sys.meta_path.remove(self)
        spec = importlib.util.find_spec(fullname)
        if spec is not None and spec.loader is not None:
            spec.loader = importlib.util.LazyLoader(spec.loader)
        return spec


def import_galpy():
    """Import and return the ``galpy`` package with the version check off (and its plotting module lazy)."""
    if "galpy" not in sys.modules:
        import importlib.util  # noqa: F401

        sys.meta_path.insert(0, _ConfigPatch())
        sys.meta_path.insert(0, _LazyPlot())
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", message=".*galpy configuration.*")
            import galpy  # noqa: F401
    return sys.modules["galpy"]


# --- SIGINT around galpy's C integrators -------------------------------------------------------------------
# galpy's C integrators install their own SIGINT handler with sigaction (it sets a C flag, `interrupted`, that
# the integration loop polls) and never put the previous one back: after any integration Python's handler is
# gone at the C level, so Ctrl-C no longer raises KeyboardInterrupt (signal.getsignal still names Python's
# handler, which is never called).  :func:`sigint_preserved` saves the process's C-level SIGINT action before
# the first concurrent integration and restores it after the last, and clears galpy's flag on the way in and out.

_SIG_LOCK = threading.Lock()
_SIG_STATE = {"depth": 0, "saved": None}
_SIGACTION_BYTES = 512  # larger than struct sigaction on every Linux / macOS ABI; kept opaque


def _libc_sigaction():
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        f = libc.sigaction
    except (OSError, AttributeError):  # pragma: no cover - not POSIX
        return None
    f.argtypes = [ctypes.c_int, ctypes.c_void_p, ctypes.c_void_p]
    f.restype = ctypes.c_int
    return f


def _galpy_flag():
    """galpy's C ``interrupted`` flag as a ctypes int (None when galpy's C library is not loaded)."""
    if "galpy" not in sys.modules:
        return None
    try:
        from galpy.util._load_extension_libs import load_libgalpy

        lib, loaded = load_libgalpy()
        if not loaded or lib is None:
            return None
        return ctypes.c_int.in_dll(lib, "interrupted")
    except (ImportError, OSError, ValueError, AttributeError):  # pragma: no cover - another galpy layout
        return None


def clear_galpy_interrupt():
    """Clear galpy's C ``interrupted`` flag; returns True when it was set (a Ctrl-C galpy caught but did not act on)."""
    flag = _galpy_flag()
    if flag is None or not flag.value:
        return False
    flag.value = 0
    return True


@contextlib.contextmanager
def sigint_preserved():
    """Keep the process's SIGINT handler across galpy integrations (safe to nest and to use from threads).

    The outermost entry saves the C-level SIGINT action and clears a stale galpy
    interrupt flag; the last exit restores the action.  A Ctrl-C that galpy's
    handler caught after its integration loop last looked (so galpy never raised)
    is delivered again to the restored handler, so it is not lost.
    """
    sigaction = _libc_sigaction()
    if sigaction is None:  # pragma: no cover - not POSIX
        yield
        return
    with _SIG_LOCK:
        if _SIG_STATE["depth"] == 0:
            buf = ctypes.create_string_buffer(_SIGACTION_BYTES)
            _SIG_STATE["saved"] = buf if sigaction(signal.SIGINT, None, buf) == 0 else None
            clear_galpy_interrupt()
        _SIG_STATE["depth"] += 1
    lost = False
    try:
        yield
    finally:
        with _SIG_LOCK:
            _SIG_STATE["depth"] -= 1
            if _SIG_STATE["depth"] == 0:
                saved, _SIG_STATE["saved"] = _SIG_STATE["saved"], None
                if saved is not None:
                    sigaction(signal.SIGINT, saved, None)
                lost = clear_galpy_interrupt()
        if lost:
            signal.raise_signal(signal.SIGINT)  # to the handler just restored (Python's: KeyboardInterrupt)
