"""Packaging metadata: every package listed, licence file matching the SPDX expression, citation file."""

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text())


def test_every_kinage_package_is_listed():
    listed = set(PYPROJECT["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "kinage").rglob("__init__.py")}
    assert found <= listed, f"add to [tool.setuptools] packages: {sorted(found - listed)}"
    assert PYPROJECT["tool"]["setuptools"]["package-dir"]["kinage.data_demo"] == "data_demo"
    assert (ROOT / "data_demo" / "scenario.toml").is_file()


def test_licence_and_citation():
    project = PYPROJECT["project"]
    assert project["license"] == "BSD-3-Clause"  # SPDX identifier (PEP 639)
    text = (ROOT / "LICENSE").read_text()
    # the three clauses of the BSD 3-Clause licence (https://opensource.org/license/bsd-3-clause)
    assert "Redistributions of source code must retain" in text
    assert "Redistributions in binary form must reproduce" in text
    assert "Neither the name of the copyright holder" in text
    cff = (ROOT / "CITATION.cff").read_text()
    assert "cff-version: 1.2.0" in cff and "license: BSD-3-Clause" in cff
    from kinage._version import __version__

    assert f'version: "{__version__}"' in cff


def test_dependencies_and_extras():
    deps = " ".join(PYPROJECT["project"]["dependencies"])
    for name in ("numpy", "scipy", "astropy", "galpy", "matplotlib", "tqdm", "dask[distributed]"):
        assert name in deps  # kinage batch works after the one install command
    extras = PYPROJECT["project"]["optional-dependencies"]
    assert any("sphinx" in d for d in extras["docs"]) and any("numpydoc" in d for d in extras["docs"])
