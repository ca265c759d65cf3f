"""Files shipped with kinage, found through :mod:`importlib.resources`.

The demo data lives at the top of the source tree (``data_demo/``) and is
installed inside the package as ``kinage/data_demo`` (see ``pyproject.toml``),
so ``kinage demo`` works from any folder after a wheel install; an editable
or source checkout reads the top-level folder directly.
"""

from importlib import resources
from pathlib import Path

from .errors import InputError

__all__ = ["demo_data_folder"]


def demo_data_folder():
    """The folder of the bundled, invented demo data (a real directory).

    Returns
    -------
    Path

    Raises
    ------
    InputError
        When neither the installed package data nor the source tree's
        ``data_demo/`` holds ``scenario.toml``.
    """
    candidates = []
    try:
        installed = resources.files("kinage").joinpath("data_demo")
        candidates.append(Path(str(installed)))
    except (ModuleNotFoundError, TypeError):  # pragma: no cover
        pass
    here = Path(__file__).resolve().parent
    candidates += [here.parent / "data_demo", here / "data_demo"]
    for cand in candidates:
        if (cand / "scenario.toml").is_file():
            return cand
    raise InputError("demo", "the bundled demo data (data_demo/scenario.toml) was not found; reinstall kinage "
                     "(pip install kinage, or pip install -e . from its source folder)")
