"""The subject graph: a network of 2-input NANDs and inverters that mapping covers.

Factored forms are decomposed with De Morgan's laws, ``a b = ((a b)')'`` and ``a + b =
(a' b')'``, n-input ANDs and ORs as balanced trees; nodes are hashed, so equal
sub-expressions of different functions are built once, and double inverters cancel.
Node ``i`` only reads nodes before it, so ids are a topological order.

References
----------
Keutzer, K., "DAGON: technology binding and local optimization by DAG matching", *Proc.
24th Design Automation Conference*, 1987 (the NAND2/inverter subject graph).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from fsmsynth.map.expr import Expr


@dataclass
class SubjectGraph:
    """Nodes are ``("in", name)``, ``("const", 0 or 1)``, ``("inv", a)`` or
    ``("nand", a, b)`` with ``a < b``; ``roots`` names the nodes the circuit needs."""

    nodes: list[tuple[Any, ...]] = field(default_factory=list)
    roots: dict[str, int] = field(default_factory=dict)
    _index: dict[tuple[Any, ...], int] = field(default_factory=dict)

    def _node(self, key: tuple[Any, ...]) -> int:
        found = self._index.get(key)
        if found is None:
            found = len(self.nodes)
            self.nodes.append(key)
            self._index[key] = found
        return found

    def input(self, name: str) -> int:
        return self._node(("in", name))

    def const(self, value: int) -> int:
        return self._node(("const", value))

    def inv(self, a: int) -> int:
        node = self.nodes[a]
        if node[0] == "inv":
            return int(node[1])
        if node[0] == "const":
            return self.const(1 - int(node[1]))
        return self._node(("inv", a))

    def nand(self, a: int, b: int) -> int:
        for x, y in ((a, b), (b, a)):
            if self.nodes[x] == ("const", 0):
                return self.const(1)
            if self.nodes[x] == ("const", 1):
                return self.inv(y)
        if a == b:
            return self.inv(a)
        return self._node(("nand", min(a, b), max(a, b)))

    def and2(self, a: int, b: int) -> int:
        return self.inv(self.nand(a, b))

    def or2(self, a: int, b: int) -> int:
        return self.nand(self.inv(a), self.inv(b))

    def balanced(self, parts: Sequence[int], join: str) -> int:
        """The AND (``join="and"``) or OR of ``parts`` as a balanced tree of 2-input ones."""
        level = list(parts)
        while len(level) > 1:
            nxt = []
            for k in range(0, len(level) - 1, 2):
                a, b = level[k], level[k + 1]
                nxt.append(self.and2(a, b) if join == "and" else self.or2(a, b))
            if len(level) % 2:
                nxt.append(level[-1])
            level = nxt
        return level[0]

    def expression(self, expr: Expr, leaves: Sequence[int]) -> int:
        """Build ``expr`` whose variable ``i`` is node ``leaves[i]``."""
        if expr.kind == "lit":
            node = leaves[expr.var]
            return node if expr.positive else self.inv(node)
        if expr.kind == "const":
            return self.const(1 if expr.positive else 0)
        parts = [self.expression(a, leaves) for a in expr.args]
        return self.balanced(parts, expr.kind)

    def live(self) -> list[bool]:
        """Which nodes some root needs (decomposition leaves dead inverters behind)."""
        needed = [False] * len(self.nodes)
        for r in self.roots.values():
            needed[r] = True
        for n in range(len(self.nodes) - 1, -1, -1):
            node = self.nodes[n]
            if needed[n] and node[0] in ("inv", "nand"):
                for a in node[1:]:
                    needed[int(a)] = True
        return needed

    def fanouts(self) -> list[int]:
        """How many live nodes and roots read each node."""
        count = [0] * len(self.nodes)
        for node, alive in zip(self.nodes, self.live()):
            for a in node[1:] if alive and node[0] in ("inv", "nand") else ():
                count[int(a)] += 1
        for r in self.roots.values():
            count[r] += 1
        return count


def subject_graph(variables: Sequence[str], functions: Mapping[str, Expr],
                  leaves: Mapping[str, int] | None = None) -> SubjectGraph:
    """The subject graph of named factored forms over ``variables`` (inputs by name)."""
    graph = SubjectGraph()
    nodes = [graph.input(v) for v in variables]
    for name, expr in functions.items():
        graph.roots[name] = graph.expression(expr, nodes)
    return graph
