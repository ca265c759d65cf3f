"""Session set-up for the whole suite: tests write only under temporary paths, hypothesis is reproducible.

``pytest_configure`` runs before any test module is imported, so the environment set here is inherited by
every subprocess a test starts (``python -m kinage``, dask workers, headless chromium):

- ``HOME``, ``XDG_CACHE_HOME``, ``XDG_CONFIG_HOME``: galpy's ``~/.galpyrc``, astropy's config and cache folders
  and any other per-user file land in a session folder, not in the user's home;
- ``MPLCONFIGDIR``: matplotlib's font cache and config;
- ``DASK_TEMPORARY_DIRECTORY``: dask's ``dask-scratch-space`` (otherwise under ``$TMPDIR``).

The session folder is removed at the end of the run.  Hypothesis runs derandomised (examples derived from each
test, so a run is reproducible) without its example database, so nothing is written to ``.hypothesis/``.
"""

import os
import shutil
import tempfile
from pathlib import Path

from hypothesis import settings
from hypothesis.configuration import set_hypothesis_home_dir

settings.register_profile("kinage", derandomize=True, database=None, print_blob=True)
settings.load_profile("kinage")

ISOLATED = ("HOME", "XDG_CACHE_HOME", "XDG_CONFIG_HOME", "MPLCONFIGDIR", "DASK_TEMPORARY_DIRECTORY")
_SESSION = {}


def pytest_configure(config):
    if hasattr(config, "workerinput"):  # a pytest-xdist worker inherits the controller's folders
        return
    root = Path(tempfile.mkdtemp(prefix="kinage-tests-"))
    _SESSION["root"] = root
    _SESSION["saved"] = {k: os.environ.get(k) for k in ISOLATED}
    folders = {"HOME": root / "home", "XDG_CACHE_HOME": root / "home" / ".cache",
               "XDG_CONFIG_HOME": root / "home" / ".config", "MPLCONFIGDIR": root / "matplotlib",
               "DASK_TEMPORARY_DIRECTORY": root / "dask"}
    for key, folder in folders.items():
        folder.mkdir(parents=True, exist_ok=True)
        os.environ[key] = str(folder)
    set_hypothesis_home_dir(str(root / "hypothesis"))  # hypothesis' own caches (e.g. unicode tables)
    try:  # dask reads its environment when first imported; set it too if a plugin imported it already
        import sys

        if "dask" in sys.modules:
            import dask

            dask.config.set({"temporary-directory": str(folders["DASK_TEMPORARY_DIRECTORY"])})
    except Exception:  # pragma: no cover - dask is a test dependency, but the suite must not fail over it
        pass


def pytest_unconfigure(config):
    root = _SESSION.pop("root", None)
    if root is None:
        return
    for key, value in _SESSION.pop("saved", {}).items():
        if value is None:
            os.environ.pop(key, None)
        else:
            os.environ[key] = value
    shutil.rmtree(root, ignore_errors=True)
