"""The import direction of STYLE.md: model <- stages <- writers <- pipeline <- cli."""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parent.parent / "fsmsynth"

RANK = {
    "fsmsynth.version": 0, "fsmsynth.frozen": 0, "fsmsynth.errors": 0, "fsmsynth.names": 0,
    "fsmsynth.logic.cube": 0, "fsmsynth.logic.engine_lock": 0,
    "fsmsynth.table": 1, "fsmsynth.storage": 1, "fsmsynth.cost": 1,
    "fsmsynth.pipeline": 4, "fsmsynth.compare": 4, "fsmsynth.convert": 4,
    "fsmsynth.project": 4, "fsmsynth.sweep": 4,
    "fsmsynth.cli": 5, "fsmsynth": 6,
}


# The one import against the direction: StateTable.from_transitions is the model's second
# constructor and hands its work to the guarded-transition front end (a lazy import inside
# the method, so the model still loads without it).
ALLOWED = {("fsmsynth.table", "fsmsynth.transitions"), ("fsmsynth.table", "fsmsynth.invariants")}


def rank(module: str) -> int:
    if module in RANK:
        return RANK[module]
    if module.startswith("fsmsynth.writers"):
        return 3
    return 2  # a pipeline stage


def module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def test_nothing_imports_upward() -> None:
    problems = []
    for path in sorted(PACKAGE.rglob("*.py")):
        me = module_name(path)
        for node in ast.walk(ast.parse(path.read_text())):
            if (isinstance(node, ast.ImportFrom) and node.module
                    and node.module.startswith("fsmsynth")):
                target = node.module
                if rank(target) > rank(me) and (me, target) not in ALLOWED:
                    problems.append(f"{me} imports {target}")
    assert problems == []


def test_logic_knows_nothing_of_machines() -> None:
    """Two-level minimization works on plain functions: fsmsynth/logic/ imports no module
    about tables, encodings, storage or netlists."""
    machine = ("fsmsynth.table", "fsmsynth.excite", "fsmsynth.encode", "fsmsynth.storage",
               "fsmsynth.netlist", "fsmsynth.transitions")
    problems = []
    for path in sorted((PACKAGE / "logic").rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.ImportFrom) and node.module in machine:
                problems.append(f"{path.name} imports {node.module}")
    assert problems == []
