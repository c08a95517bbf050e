"""Incompletely specified machines: compatible states and a minimum closed cover.

Compatible pairs from the implication chart, maximal and prime compatibles, and a closed
cover found by branch and bound under a time limit (a greedy cover past it); past
``LOCAL_ABOVE`` input classes, the same on each state's own rows
(:class:`_LocalBehaviour`).  :mod:`fsmsynth.stages.reduce.reduced_table` writes the table
a cover gives.

References
----------
Paull, M. C. and Unger, S. H., "Minimizing the number of states in incompletely specified
sequential switching functions", *IRE Trans. Electronic Computers* EC-8, 1959.
Grasselli, A. and Luccio, F., "A method for minimizing the number of internal states in
incompletely specified sequential networks", *IEEE Trans. Electronic Computers* EC-14, 1965.
"""

from __future__ import annotations

import math
import time
from collections import deque
from collections.abc import Mapping, Sequence
from typing import Any

from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube, bits_of
from fsmsynth.model.regions import StateRegions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.reduce.tabulation import _Behaviour


def _conflict(a: str, b: str) -> bool:
    return any(x != y and "-" not in (x, y) for x, y in zip(a, b))


def compatible_pairs(beh: _AnyBehaviour) -> list[int]:
    """Adjacency bit masks of the compatibility graph, by the implication chart.

    A pair is incompatible when the two states give different specified outputs under some
    input class, or when some input class implies an incompatible pair; marking is
    propagated backwards from each incompatible pair through the pairs that imply it.
    """
    if isinstance(beh, _LocalBehaviour):
        return beh.compatible_pairs()
    n, k = len(beh.states), len(beh.classes)
    incompatible: set[tuple[int, int]] = set()
    implied_by: dict[tuple[int, int], list[tuple[int, int]]] = {}
    for p in range(n):
        for q in range(p + 1, n):
            if any(_conflict(beh.outputs[p][a], beh.outputs[q][a]) for a in range(k)):
                incompatible.add((p, q))
                continue
            for a in range(k):
                x, y = beh.next[p][a], beh.next[q][a]
                if x >= 0 and y >= 0 and x != y:
                    implied_by.setdefault((min(x, y), max(x, y)), []).append((p, q))
    return _compatibility_graph(n, incompatible, implied_by)


def _compatibility_graph(n: int, incompatible: set[tuple[int, int]],
                         implied_by: Mapping[tuple[int, int], Sequence[tuple[int, int]]]
                         ) -> list[int]:
    """Adjacency masks once incompatibility is propagated backwards from the pairs marked
    directly through the pairs that imply them (the implication chart's marking)."""
    queue = deque(sorted(incompatible))
    while queue:
        pair = queue.popleft()
        for parent in implied_by.get(pair, ()):
            if parent not in incompatible:
                incompatible.add(parent)
                queue.append(parent)
    adjacency = [0] * n
    for p in range(n):
        for q in range(p + 1, n):
            if (p, q) not in incompatible:
                adjacency[p] |= 1 << q
                adjacency[q] |= 1 << p
    return adjacency


def maximal_compatibles(adjacency: Sequence[int], deadline: float = math.inf) -> list[int]:
    """Maximal cliques of the compatibility graph (Bron-Kerbosch with pivoting), as bit masks.

    Raises ``_OutOfTime`` past ``deadline`` (a :func:`time.monotonic` value).
    """
    result: list[int] = []

    def expand(r: int, p: int, x: int) -> None:
        if time.monotonic() > deadline:
            raise _OutOfTime
        if not p and not x:
            result.append(r)
            return
        pivot_from = p | x
        pivot = max(bits_of(pivot_from), key=lambda u: (adjacency[u] & p).bit_count())
        for v in bits_of(p & ~adjacency[pivot]):
            expand(r | 1 << v, p & adjacency[v], x & adjacency[v])
            p &= ~(1 << v)
            x |= 1 << v

    expand(0, (1 << len(adjacency)) - 1, 0)
    return sorted(result, key=lambda m: (-m.bit_count(), m))


def _implied(beh: _AnyBehaviour, members: int) -> frozenset[int]:
    """Class set: the next-state sets a compatible implies that it does not contain itself."""
    if isinstance(beh, _LocalBehaviour):
        return beh.implied(members)
    out = set()
    for a in range(len(beh.classes)):
        nxt = 0
        for s in bits_of(members):
            if beh.next[s][a] >= 0:
                nxt |= 1 << beh.next[s][a]
        if nxt.bit_count() >= 2 and nxt & ~members:
            out.add(nxt)
    return frozenset(out)


def _within(small: frozenset[int], big: frozenset[int]) -> bool:
    """Every implied set of ``small`` lies inside some implied set of ``big``."""
    return all(any(i & ~j == 0 for j in big) for i in small)


class _OutOfTime(Exception):
    pass


def prime_compatibles(beh: _AnyBehaviour, adjacency: Sequence[int],
                      deadline: float) -> list[tuple[int, frozenset[int]]]:
    """Prime compatibles with their class sets (Grasselli and Luccio 1965).

    A compatible is dropped when a larger compatible contains it and implies nothing its
    own class set does not already imply: using the larger one instead keeps any closed
    cover closed.  Every compatible is a subset of a maximal one, so all are generated from
    those, largest first.
    """
    maximal = maximal_compatibles(adjacency, deadline)
    compatibles: set[int] = set()
    for m in maximal:
        if not _implied(beh, m):
            # It implies nothing, so it dominates each of its subsets: none is prime.
            compatibles.add(m)
            continue
        members = list(bits_of(m))
        stack = [0]
        # every subset of a clique is a clique
        for v in members:
            grown = []
            for s in stack:
                grown.append(s | 1 << v)
                if len(grown) & 0xFFF == 0 and time.monotonic() > deadline:
                    raise _OutOfTime
            stack += grown
            if time.monotonic() > deadline:
                raise _OutOfTime
        compatibles.update(s for s in stack if s)
    primes: list[tuple[int, frozenset[int]]] = []
    for c in sorted(compatibles, key=lambda m: (-m.bit_count(), m)):
        gamma = _implied(beh, c)
        if not any(p & c == c and p != c and _within(g, gamma) for p, g in primes):
            primes.append((c, gamma))
        if time.monotonic() > deadline:
            raise _OutOfTime
    return primes


def _closed_cover(beh: _AnyBehaviour, time_limit: float) -> tuple[list[int], bool]:
    """A minimum closed cover of the states by compatibles (exact unless out of time).

    Moore and Mealy machines alike: ``beh`` tabulates outputs per state and input class.
    """
    n = len(beh.states)
    deadline = time.monotonic() + time_limit
    adjacency = compatible_pairs(beh)
    try:
        primes = prime_compatibles(beh, adjacency, deadline)
    except _OutOfTime:
        return _quick_closed_cover(beh, adjacency), False
    everyone = (1 << n) - 1
    best: list[list[int]] = [_greedy_cover(beh, primes, everyone)]
    by_state = [[i for i, (c, _g) in enumerate(primes) if c >> s & 1] for s in range(n)]
    proven = True

    def lower_bound(uncovered: int) -> int:
        # States pairwise incompatible need distinct compatibles.
        chosen = 0
        count = 0
        for s in bits_of(uncovered):
            if adjacency[s] & chosen == 0:
                chosen |= 1 << s
                count += 1
        return count

    def search(chosen: list[int], covered: int) -> None:
        nonlocal proven
        if time.monotonic() > deadline:
            proven = False
            raise _OutOfTime
        uncovered = everyone & ~covered
        if len(chosen) + lower_bound(uncovered) >= len(best[0]):
            return
        if uncovered:
            s = min(bits_of(uncovered), key=lambda v: len(by_state[v]))
            options = by_state[s]
        else:
            need = next((i for p in chosen for i in primes[p][1]
                         if not any(i & ~primes[q][0] == 0 for q in chosen)), None)
            if need is None:
                best[0] = [primes[p][0] for p in chosen]
                return
            options = [i for i, (c, _g) in enumerate(primes) if need & ~c == 0]
        for option in sorted(options, key=lambda i: -(primes[i][0] & ~covered).bit_count()):
            if option in chosen:
                continue
            search([*chosen, option], covered | primes[option][0])

    try:
        search([], 0)
    except _OutOfTime:
        proven = False
    return best[0], proven


def _quick_closed_cover(beh: _AnyBehaviour, adjacency: Sequence[int]) -> list[int]:
    """A closed cover found fast, for when the exact search has no time.

    States are covered greedily by cliques of the compatibility graph grown from each
    uncovered state (most compatible neighbours first); then every implied set that no
    chosen class contains is added as a class of its own (an implied set of a compatible is
    itself a compatible, by the implication chart), until the cover is closed.  Each
    class is a compatible, so the result is valid; it is not minimal in general.
    """
    n = len(beh.states)
    chosen: list[int] = []
    covered = 0
    for s in range(n):
        if covered >> s & 1:
            continue
        clique = 1 << s
        common = adjacency[s]
        for v in sorted(bits_of(common), key=lambda v: (-(adjacency[v] & common).bit_count(), v)):
            if common >> v & 1:
                clique |= 1 << v
                common &= adjacency[v]
        chosen.append(clique)
        covered |= clique
    pending = list(chosen)
    while pending:
        for need in sorted(_implied(beh, pending.pop())):
            if not any(need & ~c == 0 for c in chosen):
                chosen.append(need)
                pending.append(need)
    return chosen


def _greedy_cover(beh: _AnyBehaviour, primes: Sequence[tuple[int, frozenset[int]]],
                  everyone: int) -> list[int]:
    """A closed cover built greedily: the upper bound the exact search starts from."""
    chosen: list[int] = []
    covered = 0
    while True:
        need = everyone & ~covered
        if need:
            s = next(bits_of(need))
            target = 1 << s
        else:
            target = next((i for c in chosen for i in _implied(beh, c)
                           if not any(i & ~d == 0 for d in chosen)), 0)
            if not target:
                return chosen
        pick = max((c for c, _g in primes if target & ~c == 0),
                   key=lambda c: ((c & ~covered).bit_count(), -len(_implied(beh, c))))
        chosen.append(pick)
        covered |= pick


class _LocalBehaviour:
    """The kept states of a table compared on their own rows (see :mod:`fsmsynth.model.regions`).

    Gives what the closed-cover search needs (the compatibility graph and the class set of
    a compatible) without input classes of the whole table: a pair of states is compared
    on the intersections of its rows, and a compatible's next-state sets come from
    intersecting its members' next-state regions.
    """

    def __init__(self, table: StateTable, states: tuple[str, ...],
                 regions: Mapping[str, StateRegions]) -> None:
        self.table = table
        self.states = states
        self.index = {s: i for i, s in enumerate(states)}
        self.regions = [regions[s] for s in states]
        self.rows = [[(Cube.from_string(c), -1 if nxt is None else self.index[nxt], out or "")
                      for _s, c, nxt, out in table.rows_of(s)] for s in states]
        self._implied: dict[int, frozenset[int]] = {}

    def compatible_pairs(self) -> list[int]:
        """As :func:`compatible_pairs`, pair by pair on intersecting rows."""
        n = len(self.states)
        moore = self.table.kind == "moore"
        state_out = [self.table.output_cube_of(s) if moore else "" for s in self.states]
        incompatible: set[tuple[int, int]] = set()
        implied_by: dict[tuple[int, int], list[tuple[int, int]]] = {}
        for p in range(n):
            for q in range(p + 1, n):
                clash = moore and _conflict(state_out[p], state_out[q])
                implies: list[tuple[int, int]] = []
                for cube_p, x, out_p in ([] if clash else self.rows[p]):
                    for cube_q, y, out_q in self.rows[q]:
                        if not cube_p.intersects(cube_q):
                            continue
                        if _conflict(out_p, out_q):
                            clash = True
                            break
                        if x >= 0 and y >= 0 and x != y:
                            implies.append((min(x, y), max(x, y)))
                    if clash:
                        break
                if clash:
                    incompatible.add((p, q))
                    continue
                for pair in dict.fromkeys(implies):
                    implied_by.setdefault(pair, []).append((p, q))
        return _compatibility_graph(n, incompatible, implied_by)

    def next_sets(self, members: int) -> dict[int, Any]:
        """The input points, as BDDs, keyed by the set of next states the members go to there
        (a bit mask; 0 where none of them has a next state)."""
        regions = {0: bdd.ONE}
        for s in bits_of(members):
            state = self.regions[s]
            split: dict[int, Any] = {}
            for mask, points in regions.items():
                rest = points & ~state.specified
                if not rest.is_zero():
                    split[mask] = split.get(mask, bdd.ZERO) | rest
                for t, to in state.next:
                    both = points & to
                    if not both.is_zero():
                        key = mask | 1 << self.index[t]
                        split[key] = split.get(key, bdd.ZERO) | both
            regions = split
        return regions

    def implied(self, members: int) -> frozenset[int]:
        """As :func:`_implied`."""
        if members not in self._implied:
            self._implied[members] = frozenset(
                m for m in self.next_sets(members) if m.bit_count() >= 2 and m & ~members)
        return self._implied[members]


_AnyBehaviour = _Behaviour | _LocalBehaviour
