"""The documentation sources: the scenario-key tables come from the schema, and every page in the toctree exists."""

import re
import sys
from pathlib import Path

DOCS = Path(__file__).resolve().parents[2] / "docs"


def test_scenario_key_tables_list_every_key():
    sys.path.insert(0, str(DOCS))
    try:
        from scenario_keys import keys_rst
    finally:
        sys.path.remove(str(DOCS))
    from kinage.io.schema import SCHEMA

    text = keys_rst()
    for table, keys in SCHEMA.items():
        assert f"[{table}]" in text
        for name in keys:
            assert f"``{name}``" in text, f"[{table}] {name} missing from the user guide"


def test_toctree_pages_exist_and_docs_extra_is_declared():
    index = (DOCS / "index.rst").read_text()
    block = index.split(".. toctree::")[1]
    pages = re.findall(r"^\s{3}(\w[\w/]*)\s*$", block, flags=re.M)
    assert {"guide", "python", "example", "api"} <= set(pages)
    for page in pages:
        assert (DOCS / f"{page}.rst").is_file(), page
    conf = (DOCS / "conf.py").read_text()
    assert "numpydoc" in conf and "sphinx.ext.autodoc" in conf
    assert "literalinclude:: examples/notebook_tour.py" in (DOCS / "example.rst").read_text()
