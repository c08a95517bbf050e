"""Technology mapping onto a cell library by dynamic programming over trees.

The subject graph (2-input NANDs and inverters) is cut into trees at every node read more
than once; each cell's function, decomposed the same way, is a pattern; at every node the
cheapest way to cover it is the cheapest cell matching there plus the cheapest covers of the
nodes under the match's pins (Keutzer 1987).  Patterns match NAND inputs in either order.
``goal="area"`` minimizes the summed cell area of each tree; ``goal="delay"`` the arrival
time (a cell's delay plus the latest arrival at its pins), with area breaking ties.  An
inverter of a primary signal may sit inside a match even where other nodes read it too (a
cell with an inverted pin absorbs it).  Fan-in limits are those of the cells: a 5-input AND on
a library of 2-input cells is a tree of them.

References
----------
Keutzer, K., "DAGON: technology binding and local optimization by DAG matching", *Proc.
24th Design Automation Conference*, 1987.
Aho, A. V. and Johnson, S. C., "Optimal code generation for expression trees", *J. ACM*
23(3), 1976 (tree covering by dynamic programming).
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass

from fsmsynth.map.expr import Expr
from fsmsynth.map.subject import SubjectGraph
from fsmsynth.map.targets import Cell

GOALS = ("area", "delay")


@dataclass(frozen=True, slots=True)
class Choice:
    """The cell covering a node and the subject nodes on its pins (in pin order)."""

    cell: Cell
    leaves: tuple[int, ...]
    area: float
    arrival: float


@dataclass(frozen=True, slots=True)
class _Pattern:
    cell: Cell
    graph: SubjectGraph
    root: int


def _shapes(expr: Expr) -> list[Expr]:
    """``expr`` and, for ANDs and ORs of three or more, a left-deep variant."""
    if expr.kind in ("lit", "const") or len(expr.args) <= 2:
        return [expr]
    chain = expr.args[0]
    for a in expr.args[1:]:
        chain = Expr(expr.kind, args=(chain, a))
    return [expr, chain]


def patterns(cells: Sequence[Cell]) -> list[_Pattern]:
    """Every cell's patterns: its function and its complement's, in two tree shapes."""
    found = []
    for cell in cells:
        for expr, inverted in cell.patterns():
            for shape in _shapes(expr):
                graph = SubjectGraph()
                pins = [graph.input(p) for p in cell.pins]
                root = graph.expression(shape, pins)
                if inverted:
                    root = graph.inv(root)
                found.append(_Pattern(cell, graph, root))
    return found


def _matches(pattern: _Pattern, subject: SubjectGraph, node: int, internal_ok: Sequence[bool]
             ) -> Iterator[dict[str, int]]:
    """Pin bindings under which ``pattern`` covers ``node`` exactly."""
    pg = pattern.graph

    def walk(p: int, s: int, binding: dict[str, int], top: bool) -> Iterator[dict[str, int]]:
        pn, sn = pg.nodes[p], subject.nodes[s]
        if pn[0] == "in":
            pin = str(pn[1])
            if pin in binding:
                if binding[pin] == s:
                    yield binding
                return
            yield {**binding, pin: s}
            return
        if pn[0] == "const":
            if sn == pn:
                yield binding
            return
        if pn[0] != sn[0] or (not top and not internal_ok[s]):
            return
        if pn[0] == "inv":
            yield from walk(int(pn[1]), int(sn[1]), binding, False)
            return
        pa, pb = int(pn[1]), int(pn[2])
        sa, sb = int(sn[1]), int(sn[2])
        for x, y in ((sa, sb), (sb, sa)):
            for first in walk(pa, x, binding, False):
                yield from walk(pb, y, first, False)

    yield from walk(pattern.root, node, {}, True)


def cover(subject: SubjectGraph, cells: Sequence[Cell], goal: str = "area"
          ) -> dict[int, Choice]:
    """The best :class:`Choice` at every node of ``subject`` that is neither an input nor a
    constant, by dynamic programming in topological order."""
    assert goal in GOALS
    fanout = subject.fanouts()
    internal_ok = [fanout[i] <= 1 or (node[0] == "inv" and subject.nodes[int(node[1])][0]
                                      == "in")
                   for i, node in enumerate(subject.nodes)]
    by_top: dict[str, list[_Pattern]] = {}
    for pattern in patterns(cells):
        top = pattern.graph.nodes[pattern.root][0]
        by_top.setdefault(str(top), []).append(pattern)
    best: dict[int, Choice] = {}

    def own_area(leaf: int) -> float:
        kind = subject.nodes[leaf][0]
        if kind in ("in", "const") or fanout[leaf] > 1:
            return 0.0  # a primary signal, or the root of a tree of its own
        return best[leaf].area

    def arrival(leaf: int) -> float:
        return 0.0 if subject.nodes[leaf][0] in ("in", "const") else best[leaf].arrival

    for node, key in enumerate(subject.nodes):
        if key[0] in ("in", "const"):
            continue
        chosen: Choice | None = None
        for pattern in by_top.get(str(key[0]), ()):
            for binding in _matches(pattern, subject, node, internal_ok):
                if len(binding) != len(pattern.cell.pins):
                    continue
                leaves = tuple(binding[p] for p in pattern.cell.pins)
                area = pattern.cell.area + sum(own_area(leaf) for leaf in leaves)
                time = pattern.cell.delay + max(arrival(leaf) for leaf in leaves)
                option = Choice(pattern.cell, leaves, area, time)
                if chosen is None or _better(option, chosen, goal):
                    chosen = option
        assert chosen is not None, "an inverter and a NAND2 cover every node"
        best[node] = chosen
    return best


def _better(a: Choice, b: Choice, goal: str) -> bool:
    if goal == "area":
        return (round(a.area, 9), a.arrival, a.cell.name) < (round(b.area, 9), b.arrival,
                                                            b.cell.name)
    return (round(a.arrival, 9), a.area, a.cell.name) < (round(b.arrival, 9), b.area,
                                                        b.cell.name)
