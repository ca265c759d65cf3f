"""Import galpy without its online version check.

When galpy is imported it may, once a day, check PyPI for a newer version
(a network connection with a 5 s timeout and a ``pip`` subprocess).  The
machines kinage runs on may be offline, so this module switches the check
off in memory before galpy's package body reads its configuration.  galpy may
still write a default ``~/.galpyrc`` the first time; if the home folder is not
writable that only produces a warning, which is silenced here.
"""

import importlib
import importlib.abc
import importlib.util
import sys
import warnings

__all__ = ["import_galpy"]


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
