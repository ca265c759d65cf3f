"""The bundled, invented demo cases behind ``kinage demo``.

Each case is a folder of invented data (made by ``scripts/make_demo.py``;
``data_demo/README.md`` says how each file was made) and one way to run it:

``xray`` (default)
    a slow, thermally emitting X-ray star: tracing and cooling; timing says in
    words that its motion needs imaging.
``radio``
    a radio pulsar with microsecond arrival times from an invented site: the
    timing fit measures proper motion and parallax, and the trace uses them.
``population``
    a table of invented stars run by ``kinage batch`` with one template.
"""

from dataclasses import dataclass
from pathlib import Path

from .errors import InputError

__all__ = ["DemoCase", "DEMO_CASES", "DEFAULT_CASE", "demo_folder", "get_case", "copy_case", "list_lines"]


@dataclass(frozen=True)
class DemoCase:
    """One demo case.

    Attributes
    ----------
    name : str
        Used by ``kinage demo --case NAME``.
    description : str
        One line for ``kinage demo --list``.
    folder : str
        Sub-folder of the demo data ('' for its top level).
    files : tuple of str
        Files of that folder (or the top level) the case needs.
    kind : {'run', 'batch'}
        ``run``: one scenario through every stage; ``batch``: a star table with a template.
    """

    name: str
    description: str
    folder: str
    files: tuple
    kind: str = "run"


DEMO_CASES = (
    DemoCase("xray", "slow thermally emitting X-ray star: tracing and cooling; timing says imaging is needed",
             "", ("scenario.toml", "associations.ecsv", "toas.ecsv")),
    DemoCase("radio", "radio pulsar, 0.4 us TOAs from an invented site: timing measures proper motion and parallax, "
                      "which trace it to its birth association",
             "radio", ("scenario.toml", "associations.ecsv", "toas.ecsv")),
    DemoCase("population", "14 invented stars through kinage batch: birth associations and ages of a population",
             "", ("population.ecsv", "population_template.toml", "associations.ecsv"), kind="batch"),
)
DEFAULT_CASE = "xray"


def demo_folder():
    """The bundled demo data folder (``data_demo/``: beside the package, or inside it when installed)."""
    from ._resources import demo_data_folder

    return demo_data_folder()  # importlib.resources (wheel), else the source tree's data_demo/


def get_case(name=None):
    """The :class:`DemoCase` called ``name`` (None: the default case)."""
    name = DEFAULT_CASE if name is None else str(name)
    for c in DEMO_CASES:
        if c.name == name:
            return c
    raise InputError("--case", f"unknown demo case {name!r}; choose one of: {', '.join(c.name for c in DEMO_CASES)}")


def list_lines():
    """One line per case, beginning with its name (``kinage demo --list``)."""
    width = max(len(c.name) for c in DEMO_CASES)
    return [f"{c.name:<{width}}  {c.description}" + ("  [default]" if c.name == DEFAULT_CASE else "")
            for c in DEMO_CASES]


def copy_case(case, out_dir):
    """Copy a case's files (plus the demo README) into ``out_dir``; returns the folder.

    A file of the same name that kinage did not put there (``out_dir``'s
    manifest, :mod:`kinage.io.ownership`) and that differs from the demo's is
    never overwritten: InputError naming it, before anything is copied.
    """
    from .io.ownership import foreign_entries, manifest_entries, read_manifest, shown_names, write_manifest
    from .io.results import atomic_write

    src = demo_folder()
    out = Path(out_dir)
    sources = {name: src / case.folder / name for name in case.files}
    if (src / "README.md").is_file():
        sources["README.md"] = src / "README.md"
    foreign = set(foreign_entries(out, "demo")) if out.is_dir() else set()
    clash = [name for name, f in sources.items()
             if name in foreign and (out / name).exists() and (out / name).read_bytes() != f.read_bytes()]
    if clash:
        raise InputError("--out", f"{out} holds files kinage did not write where the demo's go: "
                                  f"{shown_names(clash)}; choose another folder")
    out.mkdir(parents=True, exist_ok=True)
    for name, f in sources.items():
        atomic_write(out / name, f.read_bytes())
    write_manifest(out, {**read_manifest(out), **manifest_entries(out, "demo", [out / n for n in sources])})
    return out
