"""The API reference documents the public surface only, with every result class and the figures it draws."""

import re
from pathlib import Path

import kinage
from kinage.display.protocol import ResultDisplay


def _plots():
    """Result class name -> its PLOTS (kind -> drawing function), for every result the front doors return."""
    import kinage.ages.compare  # noqa: F401 - the modules that define the result classes
    import kinage.orbits.result  # noqa: F401
    import kinage.pipeline  # noqa: F401
    import kinage.timing.fit_result  # noqa: F401
    import kinage.timing.forecast_result  # noqa: F401
    import kinage.timing.simulate  # noqa: F401

    out, todo = {}, list(ResultDisplay.__subclasses__())
    while todo:
        cls = todo.pop()
        todo += cls.__subclasses__()
        if cls.__module__.startswith("kinage.") and not cls.__name__.startswith("_"):
            out[cls.__name__] = dict(cls.PLOTS)
    return out

API = Path(__file__).resolve().parents[2] / "docs" / "api.rst"


def _blocks(text):
    """autoclass target -> the text of its block (up to the next directive or heading)."""
    out = {}
    for m in re.finditer(r"^\.\. autoclass:: ([\w.]+)\n(.*?)(?=^\.\. |^\S[^\n]*\n-{3,})", text, flags=re.M | re.S):
        out[m.group(1).rsplit(".", 1)[1]] = m.group(2)
    return out


def test_api_reference_lists_public_names_only():
    text = API.read_text()
    # PEP 8, "Public and internal interfaces": a leading underscore marks an internal module or name
    assert not re.search(r"^\.\. auto\w+:: [\w.]*\._\w", text, flags=re.M), "a private module is documented"
    for helper in ("as_scenario", "scenario_html", "scenario_repr", "_results.draw", "ResultDisplay"):
        assert helper not in text, helper
    assert "automodule:: kinage.api" not in text  # its module-level helpers are not the public surface
    for name in kinage.__all__:
        if callable(getattr(kinage, name)) and name[0].islower():
            assert f"autofunction:: kinage.{name}\n" in text, name


def test_every_result_class_is_documented_with_its_plot_kinds():
    blocks = _blocks(API.read_text())
    PLOTS = _plots()
    for cls in set(PLOTS) | {"SimulationResult", "RunResult"}:
        assert cls in blocks, cls
        assert "Plot kinds:" in blocks[cls], cls
        for kind in PLOTS.get(cls, {}):
            assert f"``{kind}``" in blocks[cls], (cls, kind)
