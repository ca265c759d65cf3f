"""The package's import graph has layers and no circles.

Every module under ``kinage/`` is parsed with :mod:`ast` (imports at module level and inside functions, relative
and absolute); each import of another kinage module is an edge.  Each module belongs to one layer (bottom to top):

    base      units, errors, warnings, rounding, small leaf helpers
    io        reading, writing, atomic files, scenario validation
    params    named parameter sets
    display   the generic result display protocol, figure style, printed numbers (knows no stage)
    stages    timing, astrometry, kinematics, associations, orbits, ages (each owns its result and display)
    report    the report (reads results)
    pipeline  runs the stages
    front     api, commands, batch, demo
    cli       argument parsing, ``python -m kinage``, the lazy package front door

An edge from a lower layer to a higher one fails, and so does any cycle between modules (strongly connected
components by Tarjan's algorithm).  Layering as in the contributors' guide (Architecture); common practice
for layered packages, no outside source.  Run as a script to print the whole list of offending edges.
A last check keeps modules small (at most ``MAX_LINES`` lines unless the module says why).
"""

import ast
import functools
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2] / "kinage"

#: layer name -> module prefixes (a module belongs to the layer of its longest matching prefix)
LAYERS = [
    ("base", ("kinage._units", "kinage.errors", "kinage.warnings", "kinage._rounding", "kinage._version",
              "kinage._resources", "kinage._galpy", "kinage.progress", "kinage.interrupts")),
    ("io", ("kinage.io",)),
    ("params", ("kinage.params",)),
    ("display", ("kinage.display", "kinage._results")),
    ("stages", ("kinage.timing", "kinage.astrometry", "kinage.kinematics", "kinage.associations", "kinage.orbits",
                "kinage.ages")),
    ("campaign", ("kinage.campaign",)),  # joins timing and orbits: what a campaign does to the birthplace answer
    ("report", ("kinage.report",)),
    ("pipeline", ("kinage.pipeline",)),
    ("front", ("kinage.api", "kinage.api_scenario", "kinage.commands", "kinage.batch", "kinage.demo")),
    ("cli", ("kinage.cli", "kinage.__main__", "kinage")),
]


def module_files():
    """module name -> path of every module under kinage/."""
    out = {}
    for path in sorted(ROOT.rglob("*.py")):
        parts = list(path.relative_to(ROOT.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = path
    return out


def layer_of(module):
    """Index of the layer a module belongs to (longest matching prefix)."""
    best, index = -1, None
    for i, (_, prefixes) in enumerate(LAYERS):
        for p in prefixes:
            if (module == p or module.startswith(p + ".")) and len(p) > best:
                best, index = len(p), i
    if index is None:
        raise AssertionError(f"module {module} belongs to no layer: add it to LAYERS")
    return index


def _resolve(base, level, current, is_package):
    """Absolute name of a relative import ``from <level dots><base> import ...`` in module ``current``."""
    if level == 0:
        return base
    pkg = current.split(".") if is_package else current.split(".")[:-1]
    if level > 1:
        pkg = pkg[: len(pkg) - (level - 1)]
    return ".".join(pkg + ([base] if base else []))


def imports_of(module, path, modules):
    """(target module, line) of every import of a kinage module in ``path``, at any depth of the tree."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    is_package = path.name == "__init__.py"
    found = []

    def nearest(name):
        while name and name not in modules:
            name = name.rpartition(".")[0]
        return name or None

    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name == "kinage" or alias.name.startswith("kinage."):
                    target = nearest(alias.name)
                    if target:
                        found.append((target, node.lineno))
        elif isinstance(node, ast.ImportFrom):
            base = _resolve(node.module or "", node.level, module, is_package)
            if not (base == "kinage" or base.startswith("kinage.")):
                continue
            for alias in node.names:
                sub = f"{base}.{alias.name}"
                target = sub if sub in modules else nearest(base)
                if target:
                    found.append((target, node.lineno))
        elif isinstance(node, ast.Call) and _is_dynamic_import(node):
            arg = node.args[0].value
            target = nearest(arg) if arg.startswith("kinage") else None
            if target:
                found.append((target, node.lineno))
    return [(t, line) for t, line in found if t != module]


def _is_dynamic_import(node):
    """``importlib.import_module("kinage.x")`` with a literal name counts as an import too."""
    f = node.func
    name = f.attr if isinstance(f, ast.Attribute) else getattr(f, "id", None)
    return (name == "import_module" and node.args and isinstance(node.args[0], ast.Constant)
            and isinstance(node.args[0].value, str))


@functools.lru_cache(maxsize=1)
def import_graph():
    """module -> {target: first line} over the whole package (read once per session; do not modify)."""
    modules = module_files()
    graph = {}
    for name, path in modules.items():
        edges = {}
        for target, line in imports_of(name, path, modules):
            edges.setdefault(target, line)
        graph[name] = edges
    return graph


def strongly_connected(graph):
    """Tarjan's algorithm (iterative): the components with more than one module."""
    index, low, on_stack, stack, comps = {}, {}, set(), [], []
    counter = [0]
    for root in graph:
        if root in index:
            continue
        work = [(root, iter(graph[root]))]
        index[root] = low[root] = counter[0]
        counter[0] += 1
        stack.append(root)
        on_stack.add(root)
        while work:
            v, children = work[-1]
            advanced = False
            for w in children:
                if w not in graph:
                    continue
                if w not in index:
                    index[w] = low[w] = counter[0]
                    counter[0] += 1
                    stack.append(w)
                    on_stack.add(w)
                    work.append((w, iter(graph[w])))
                    advanced = True
                    break
                if w in on_stack:
                    low[v] = min(low[v], index[w])
            if advanced:
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                comp = []
                while True:
                    w = stack.pop()
                    on_stack.discard(w)
                    comp.append(w)
                    if w == v:
                        break
                if len(comp) > 1:
                    comps.append(sorted(comp))
    return comps


def upward_edges(graph):
    """'a -> b (line n): layer -> layer' for every import from a lower layer to a higher one."""
    out = []
    for mod, edges in sorted(graph.items()):
        for target, line in sorted(edges.items()):
            lo, hi = layer_of(mod), layer_of(target)
            if hi > lo:
                out.append(f"{mod} -> {target} (line {line}): {LAYERS[lo][0]} imports {LAYERS[hi][0]}")
    return out


def cycle_edges(graph):
    """The edges inside each import circle, one line per circle."""
    out = []
    for comp in strongly_connected(graph):
        members = set(comp)
        edges = [f"{a} -> {b} (line {graph[a][b]})" for a in comp for b in sorted(graph[a]) if b in members]
        out.append("circle: " + "; ".join(edges))
    return out


def test_the_graph_is_read():
    # the parser finds what is plainly there: relative, absolute and function-level imports
    graph = import_graph()
    assert "kinage.errors" in graph["kinage._units"]
    assert len(graph) > 50
    assert all(layer_of(m) is not None for m in graph)


def test_tarjan_finds_a_planted_circle():
    # a small known graph: a -> b -> c -> a is one component, d alone is none (Tarjan 1972, SIAM J. Comput. 1, 146)
    g = {"a": {"b": 1}, "b": {"c": 1}, "c": {"a": 1, "d": 1}, "d": {}}
    assert strongly_connected(g) == [["a", "b", "c"]]


def test_no_import_runs_upward():
    bad = upward_edges(import_graph())
    assert not bad, "imports from a lower layer to a higher one:\n" + "\n".join(bad)


def test_no_import_circles():
    bad = cycle_edges(import_graph())
    assert not bad, "import circles:\n" + "\n".join(bad)


def package_graph(graph):
    """The import graph between packages and top-level modules (``kinage.orbits``, ``kinage.astrometry``)."""
    out = {}
    for mod, edges in graph.items():
        a = ".".join(mod.split(".")[:2])
        out.setdefault(a, {})
        for target, line in edges.items():
            b = ".".join(target.split(".")[:2])
            if b != a:
                out[a].setdefault(b, line)
    return out


def test_no_circles_between_packages():
    # read at the level of folders too: no stage (or any other package) imports one that imports it back
    bad = cycle_edges(package_graph(import_graph()))
    assert not bad, "import circles between packages:\n" + "\n".join(bad)


@pytest.mark.parametrize("module", ["kinage.display.protocol", "kinage.display.style", "kinage.display.numbers",
                                    "kinage.display.sentences"])
def test_display_knows_no_stage(module):
    graph = import_graph()
    stages = [i for i, (name, _) in enumerate(LAYERS) if name == "stages"][0]
    assert all(layer_of(t) < stages for t in graph[module]), graph[module]


#: a module longer than this says why at the top of its docstring, in a line starting "Size:" (common practice,
#: no source: modules of 100-400 lines are easy to read and to merge)
MAX_LINES = 450


def test_modules_are_small_rooms():
    long = []
    for name, path in module_files().items():
        text = path.read_text(encoding="utf-8")
        n = text.count("\n")
        doc = ast.get_docstring(ast.parse(text)) or ""
        if n > MAX_LINES and not any(line.startswith("Size:") for line in doc.splitlines()):
            long.append(f"{name}: {n} lines")
    assert not long, f"modules above {MAX_LINES} lines without a reason ('Size: ...' in the docstring):\n" + \
        "\n".join(long)


if __name__ == "__main__":  # print the offending edges
    g = import_graph()
    lines = upward_edges(g) + cycle_edges(g) + cycle_edges(package_graph(g))
    print("\n".join(lines) or "no upward imports, no circles")
    sys.exit(1 if lines else 0)
