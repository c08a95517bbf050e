"""A multi-level network of sums of products, restructured across functions.

Node ``i`` is variable ``n_base + i``: a sum of products over the base variables and the
nodes before it.  Two restructurings of MIS-style multi-level optimization, both algebraic
(literals as symbols):

* **common-cube extraction**: a pair of literals that three or more products (of any
  functions) share becomes a node of its own, and those products use it;
* **resubstitution**: a function that another one divides (``f = q g + r`` with ``q`` not
  empty) is rewritten over ``g`` when that saves literals.

References
----------
Brayton, R. K., Rudell, R., Sangiovanni-Vincentelli, A. and Wang, A. R., "MIS: a
multiple-level logic optimization system", *IEEE Trans. CAD* 6(6), 1987 (cube extraction,
resubstitution).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from fsmsynth.logic.cost import normal_terms
from fsmsynth.logic.cube import CUBE_ORDER, Cube
from fsmsynth.map.factor import divide

EXTRACTIONS = 64
"""Common cubes extracted at most (each one a pass over every product)."""


@dataclass(frozen=True, slots=True)
class Network:
    """``nodes[i] = (name, terms)``; ``signals`` maps each function to its node."""

    n_base: int
    nodes: tuple[tuple[str, tuple[Cube, ...]], ...]
    signals: tuple[tuple[str, int], ...]

    @property
    def literals(self) -> int:
        return sum(c.literal_count for _n, terms in self.nodes for c in terms)


def _literal(var: int, positive: bool) -> Cube:
    return Cube(care=1 << var, value=(1 << var) if positive else 0)


def plain_network(names: Sequence[str], covers: Sequence[Sequence[Cube]], n_base: int
                  ) -> Network:
    """One node per function, as given."""
    nodes = tuple((name, normal_terms(terms)) for name, terms in zip(names, covers))
    return Network(n_base, nodes, tuple((name, i) for i, name in enumerate(names)))


def restructured(names: Sequence[str], covers: Sequence[Sequence[Cube]], n_base: int
                 ) -> Network:
    """The network after common-cube extraction, then resubstitution."""
    functions = [list(normal_terms(t)) for t in covers]
    extracted: list[tuple[str, tuple[Cube, ...]]] = []
    for _round in range(EXTRACTIONS):
        counts: dict[tuple[tuple[int, bool], tuple[int, bool]], int] = {}
        for terms in functions:
            for cube in terms:
                lits = list(cube.literals())
                for a in range(len(lits)):
                    for b in range(a + 1, len(lits)):
                        counts[(lits[a], lits[b])] = counts.get((lits[a], lits[b]), 0) + 1
        if not counts:
            break
        pair, times = max(counts.items(), key=lambda kv: (kv[1], [-x for x, _p in kv[0]]))
        if times < 3:
            break
        var = n_base + len(extracted)
        common = Cube(care=_literal(*pair[0]).care | _literal(*pair[1]).care,
                      value=_literal(*pair[0]).value | _literal(*pair[1]).value)
        extracted.append((f"fs_c{len(extracted)}", (common,)))
        for terms in functions:
            for k, cube in enumerate(terms):
                if cube.care & common.care == common.care and \
                        cube.value & common.care == common.value:
                    rest = Cube(care=cube.care & ~common.care, value=cube.value & ~common.care)
                    terms[k] = Cube(care=rest.care | 1 << var, value=rest.value | 1 << var)
    first = len(extracted)
    nodes = list(extracted) + [(name, tuple(sorted(set(t), key=CUBE_ORDER)))
                               for name, t in zip(names, functions)]
    # Resubstitution: rewrite a function over an earlier one that divides it.
    for i in range(first, len(nodes)):
        name, f = nodes[i]
        for j in range(first, i):
            g = nodes[j][1]
            if len(g) < 2 or len(f) < 2:
                continue
            q, r = divide(f, g)
            if not q:
                continue
            var = n_base + j
            rewritten = tuple(sorted({Cube(care=c.care | 1 << var, value=c.value | 1 << var)
                                      for c in q} | set(r), key=CUBE_ORDER))
            if sum(c.literal_count for c in rewritten) < sum(c.literal_count for c in f):
                f = rewritten
        nodes[i] = (name, f)
    return Network(n_base, tuple(nodes),
                   tuple((name, first + k) for k, name in enumerate(names)))
