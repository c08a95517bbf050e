"""Brute-force references used to check the fast algorithms (small machines only)."""

from __future__ import annotations

import itertools
from collections import deque

from fsmsynth import Netlist, StateTable, simulate
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.exact import points_of


def words(n: int) -> list[str]:
    return ["".join(bits) for bits in itertools.product("01", repeat=n)]


def step(netlist: Netlist, code: int, word: str) -> tuple[int, str]:
    """(next code, outputs) of one cycle, by plain simulation."""
    (_c, outs), (nxt, _o) = simulate(netlist, [word, word], start_code=code)
    return nxt, outs


def brute_force_equivalent(netlist: Netlist, table: StateTable) -> bool:
    """Explicit product walk over every input minterm, outputs compared where specified."""
    start = (table.reset, netlist.reset_code)
    seen, queue = {start}, deque([start])
    while queue:
        state, code = queue.popleft()
        for word in words(len(table.inputs)):
            nxt_code, outs = step(netlist, code, word)
            nxt, want = table.lookup(state, word)
            if any(w != "-" and w != o for w, o in zip(want, outs)):
                return False
            if nxt is not None and (nxt, nxt_code) not in seen:
                seen.add((nxt, nxt_code))
                queue.append((nxt, nxt_code))
    return True


def table_walk(table: StateTable, inputs: tuple[str, ...]) -> tuple[str, str]:
    """The table's state and output cube in the last cycle of an input sequence."""
    state = table.reset
    for word in inputs[:-1]:
        nxt, _out = table.lookup(state, word)
        assert nxt is not None, "counterexample walks through an unspecified transition"
        state = nxt
    return state, table.lookup(state, inputs[-1])[1]


def pair_compatible(table: StateTable, p: str, q: str) -> bool:
    """By definition: no input sequence applicable to both gives conflicting outputs."""
    seen, queue = {(p, q)}, deque([(p, q)])
    while queue:
        a, b = queue.popleft()
        for word in words(len(table.inputs)):
            na, oa = table.lookup(a, word)
            nb, ob = table.lookup(b, word)
            if any("-" not in (x, y) and x != y for x, y in zip(oa, ob)):
                return False
            if na is not None and nb is not None and (na, nb) not in seen:
                seen.add((na, nb))
                queue.append((na, nb))
    return True


def is_closed_cover(table: StateTable, states: tuple[str, ...],
                    cover: tuple[frozenset[str], ...]) -> bool:
    if set().union(*cover) != set(states):
        return False
    for c in cover:
        for word in words(len(table.inputs)):
            nxt = {table.lookup(s, word)[0] for s in c} - {None}
            if nxt and not any(nxt <= d for d in cover):
                return False
    return True


def brute_force_minimum_states(table: StateTable, states: tuple[str, ...]) -> int:
    """Fewest compatibles in a closed cover, by trying every collection in increasing size."""
    compatible = {(p, q): pair_compatible(table, p, q) for p in states for q in states}
    sets = [frozenset(c) for k in range(1, len(states) + 1)
            for c in itertools.combinations(states, k)
            if all(compatible[(p, q)] for p, q in itertools.combinations(c, 2))]
    for k in range(1, len(states) + 1):
        for cover in itertools.combinations(sets, k):
            if is_closed_cover(table, states, cover):
                return k
    raise AssertionError("the singletons always form a closed cover")


def realizes(reduced: StateTable, original: StateTable) -> bool:
    """Wherever the original specifies an output, the reduced machine produces it."""
    start = (original.reset, reduced.reset)
    seen, queue = {start}, deque([start])
    while queue:
        o, r = queue.popleft()
        for word in words(len(original.inputs)):
            on, oo = original.lookup(o, word)
            rn, ro = reduced.lookup(r, word)
            if any(x != "-" and x != y for x, y in zip(oo, ro)):
                return False
            if on is not None:
                if rn is None:
                    return False
                if (on, rn) not in seen:
                    seen.add((on, rn))
                    queue.append((on, rn))
    return True


def brute_force_minimum(n: int, on: set[int], dc: set[int]) -> tuple[int, int]:
    """(terms, literals) of the cheapest single-output cover by trying every set of cubes.

    3**n cubes, so n <= 4.
    """
    care = on | dc
    cubes = []
    for text in itertools.product("01-", repeat=n):
        c = Cube.from_string("".join(text))
        if points_of([c], n) <= care:
            cubes.append(c)
    if not on:
        return 0, 0
    for k in range(1, len(cubes) + 1):
        best = None
        for combo in itertools.combinations(cubes, k):
            if points_of(combo, n) >= on:
                lits = sum(c.literal_count for c in combo)
                best = lits if best is None else min(best, lits)
        if best is not None:
            return k, best
    raise AssertionError("unreachable: the on-set's minterms always cover it")
