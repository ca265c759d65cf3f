"""Sphinx configuration of the kinage documentation (``pip install -e '.[docs]'``, then
``sphinx-build -b html docs docs/_build/html``)."""

import os
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
sys.path.insert(0, str(HERE))

from kinage import __version__  # noqa: E402
from scenario_keys import write_keys_page  # noqa: E402

project = "kinage"
author = "The kinage developers"
copyright = "2026, The kinage developers"
release = version = __version__

extensions = [
    "sphinx.ext.autodoc",
    "sphinx.ext.autosummary",
    "sphinx.ext.mathjax",
    "sphinx.ext.viewcode",
    "numpydoc",
]
autosummary_generate = True
autodoc_default_options = {"members": True, "undoc-members": False, "show-inheritance": True}
numpydoc_show_class_members = False
numpydoc_class_members_toctree = False
if os.environ.get("KINAGE_DOCS_ONLINE"):  # cross-links need the network; builds are offline by default
    extensions.append("sphinx.ext.intersphinx")
    intersphinx_mapping = {
        "python": ("https://docs.python.org/3", None),
        "numpy": ("https://numpy.org/doc/stable", None),
        "astropy": ("https://docs.astropy.org/en/stable", None),
    }
exclude_patterns = ["_build"]
html_theme = "alabaster"
html_static_path = []

# the scenario-key tables of the user guide come from kinage.io.schema, so they never drift
write_keys_page(HERE / "_generated" / "scenario_keys.rst")
