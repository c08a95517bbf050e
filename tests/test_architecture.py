"""The layers of DEVELOPERS.md: each folder imports only the folders below it, and no import
cycle exists among fsmsynth's modules.  Both are computed from the source (every import
statement, those inside functions included; only imports made for type checkers alone are
left out), not from a list of known modules."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "fsmsynth"

# Lowest first.  A module may import modules of its own layer or of a lower one.
LAYERS = {
    "base": 0, "version": 0,
    "logic": 1,
    "language": 2,
    "model": 3,
    "stages": 4, "map": 4,
    "checks": 5,
    "writers": 6, "formats": 6,
    "flows": 7,
    "cli": 8,
    "": 9, "__main__": 9,  # the package's front page: fsmsynth/__init__.py re-exports the API
}


def module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


MODULES = {module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}


def layer(module: str) -> int:
    parts = module.split(".")
    return LAYERS[parts[1] if len(parts) > 1 else ""]


def _type_checking_only(node: ast.If) -> bool:
    test = node.test
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING")


def imports_of(path: Path) -> set[str]:
    """The fsmsynth modules a source file imports (``from fsmsynth.logic import bdd`` is the
    module ``fsmsynth.logic.bdd``)."""
    found: set[str] = set()

    def visit(node: ast.AST) -> None:
        if isinstance(node, ast.If) and _type_checking_only(node):
            for child in node.orelse:
                visit(child)
            return
        if isinstance(node, ast.ImportFrom) and node.module and (
                node.module == "fsmsynth" or node.module.startswith("fsmsynth.")):
            for alias in node.names:
                sub = f"{node.module}.{alias.name}"
                found.add(sub if sub in MODULES else node.module)
        elif isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name.startswith("fsmsynth"))
        for child in ast.iter_child_nodes(node):
            visit(child)

    visit(ast.parse(path.read_text()))
    return found


GRAPH = {m: imports_of(p) for m, p in MODULES.items()}


def test_every_module_is_in_a_layer() -> None:
    unknown = [m for m in MODULES if (m.split(".") + [""])[1] not in LAYERS]
    assert unknown == []


def test_nothing_imports_upward() -> None:
    problems = [f"{me} imports {target}" for me, targets in sorted(GRAPH.items())
                for target in sorted(targets)
                if target in MODULES and layer(target) > layer(me)]
    assert problems == []


def test_no_import_cycle() -> None:
    """Tarjan's strongly connected components over the import graph: every one is a single
    module that does not import itself."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles: list[list[str]] = []

    def connect(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(GRAPH.get(v, ())):
            if w not in MODULES:
                continue
            if w not in index:
                connect(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1 or v in GRAPH[v]:
                cycles.append(sorted(component))

    for module in sorted(MODULES):
        if module not in index:
            connect(module)
    assert cycles == []


def test_the_cycle_finder_finds_a_cycle(monkeypatch: pytest.MonkeyPatch) -> None:
    """The check above can fail: a graph with a planted cycle is reported."""
    graph = dict(GRAPH)
    graph["fsmsynth.base.errors"] = {"fsmsynth.cli"}
    monkeypatch.setitem(globals(), "GRAPH", graph)
    with pytest.raises(AssertionError):
        test_no_import_cycle()


def test_logic_and_language_know_no_machine() -> None:
    """Two-level minimization and the guard language work on plain functions and names:
    nothing in fsmsynth/logic/ or fsmsynth/language/ imports the model or a stage."""
    problems = [f"{me} imports {target}" for me, targets in sorted(GRAPH.items())
                if me.split(".")[1:2] in (["logic"], ["language"])
                for target in sorted(targets) if layer(target) >= LAYERS["model"]]
    assert problems == []
