"""The house rules of the package: every module imports on its own, and imports form no cycle.

Data flows one way (case -> geometry -> solve -> comparison -> analyses -> output): a cycle
in the import graph is a stage reaching back into an earlier one, and it is how the
self-registering stages of an earlier version hid what a run did.
"""
import ast
import graphlib
import os
import subprocess
import sys
from pathlib import Path

import pytest

import clutchfe

PACKAGE = Path(clutchfe.__file__).resolve().parent.parent / "clutchfe"


def _modules() -> dict[str, Path]:
    """Every module of the package (the linked fem/ and geometry/ included), by dotted name."""
    out = {}
    for folder, dirs, files in os.walk(PACKAGE, followlinks=True):
        dirs[:] = [d for d in dirs if d != "__pycache__"]
        for name in files:
            if name.endswith(".py"):
                path = Path(folder) / name
                parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
                if parts[-1] == "__init__":
                    parts = parts[:-1]
                out[".".join(parts)] = path
    return out


MODULES = _modules()


def _absolute(module: str, is_package: bool, node: ast.ImportFrom) -> str:
    if not node.level:
        return node.module or ""
    base = module.split(".") if is_package else module.split(".")[:-1]
    base = base[:len(base) - node.level + 1]
    return ".".join(base + ([node.module] if node.module else []))


def _imports(module: str, path: Path) -> set[str]:
    """clutchfe modules that ``module`` imports, anywhere in its body (function-local imports too)."""
    is_package = path.name == "__init__.py"
    targets = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = _absolute(module, is_package, node)
            names = [f"{base}.{a.name}" for a in node.names]
            if any(n not in MODULES for n in names):      # a name defined in the package's __init__
                names.append(base)
        else:
            continue
        for name in names:
            if name in MODULES:
                targets.add(name)
            # importing a.b.c runs the __init__ of a.b too, unless the importer lives inside a.b
            parts = name.split(".")
            for k in range(2, len(parts)):
                parent = ".".join(parts[:k])
                if parent in MODULES and not module.startswith(parent + ".") and module != parent:
                    targets.add(parent)
    targets.discard(module)
    return targets


def test_the_import_graph_has_no_cycle():
    graph = {m: _imports(m, p) for m, p in MODULES.items()}
    # the root package gathers the public API from everything: it may import all, nobody imports it
    importers_of_root = sorted(m for m, deps in graph.items() if "clutchfe" in deps and m != "clutchfe")
    assert importers_of_root == []
    try:
        order = list(graphlib.TopologicalSorter(graph).static_order())
    except graphlib.CycleError as exc:
        pytest.fail(f"import cycle: {' -> '.join(exc.args[1])}")
    assert set(order) == set(MODULES)
    assert len(MODULES) > 60            # the walk found the whole package, linked stages included


def test_stages_do_not_reach_back():
    """The earlier stages never import the later ones."""
    later = {"clutchfe.geometry": ("clutchfe.fem", "clutchfe.solve", "clutchfe.comparison", "clutchfe.analyses",
                                   "clutchfe.output", "clutchfe.plan", "clutchfe.study"),
             "clutchfe.fem": ("clutchfe.solve", "clutchfe.comparison", "clutchfe.analyses", "clutchfe.output",
                              "clutchfe.plan", "clutchfe.study", "clutchfe.case"),
             "clutchfe.comparison": ("clutchfe.solve", "clutchfe.analyses", "clutchfe.output", "clutchfe.plan",
                                     "clutchfe.study"),
             "clutchfe.solve": ("clutchfe.analyses", "clutchfe.output", "clutchfe.plan", "clutchfe.study"),
             "clutchfe.analyses": ("clutchfe.plan", "clutchfe.study")}
    found = []
    for module, path in MODULES.items():
        for stage, forbidden in later.items():
            if module == stage or module.startswith(stage + "."):
                found += [(module, t) for t in _imports(module, path)
                          if any(t == f or t.startswith(f + ".") for f in forbidden)]
    assert found == []


def test_no_library_module_sets_global_state():
    """The matplotlib backend and the environment are the caller's (the command line sets them)."""
    offenders = []
    for module, path in MODULES.items():
        text = path.read_text(encoding="utf-8")
        if module != "clutchfe._cli" and ("matplotlib.use(" in text or "os.environ[" in text
                                          or "os.environ.setdefault(" in text or "import matplotlib.pyplot" in text
                                          or "from matplotlib import pyplot" in text):
            offenders.append(module)
    assert offenders == []


@pytest.mark.slow
def test_every_module_imports_alone_in_a_fresh_interpreter():
    # one interpreter per module, two at a time (the machine has two cores)
    names = sorted(MODULES)
    failures = []
    for k in range(0, len(names), 2):
        procs = [(n, subprocess.Popen([sys.executable, "-c", f"import {n}"], stdout=subprocess.PIPE,
                                      stderr=subprocess.PIPE, text=True)) for n in names[k:k + 2]]
        for name, proc in procs:
            _, err = proc.communicate()
            if proc.returncode:
                failures.append(f"{name}: {err.strip().splitlines()[-1] if err.strip() else proc.returncode}")
    assert failures == []
