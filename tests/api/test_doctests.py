"""Run the examples in kinage's docstrings (every module whose docstrings hold ``>>>`` lines)."""

import doctest
import importlib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def _modules():
    out = []
    for path in sorted((ROOT / "kinage").rglob("*.py")):
        if ">>>" not in path.read_text(encoding="utf-8"):
            continue
        parts = path.relative_to(ROOT).with_suffix("").parts
        out.append(".".join(parts[:-1] if parts[-1] == "__init__" else parts))
    return out


MODULES = _modules()


def test_the_front_doors_have_examples():
    for name in ("kinage.api", "kinage._units", "kinage.warnings", "kinage.associations.table"):
        assert name in MODULES


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE, verbose=False)
    assert result.failed == 0, f"{result.failed} of {result.attempted} docstring examples failed in {name}"
