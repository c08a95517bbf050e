"""Brute-force references used to check the fast algorithms (small machines only)."""

from __future__ import annotations

import itertools
from collections import deque

from fsmsynth import Netlist, StateTable, simulate


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
