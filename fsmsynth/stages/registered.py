"""Registered outputs: every output from a D flip-flop of its own.

A Moore output register is loaded with the output of the next state, so it shows the
present state's output exactly when the decoded output would: the timing is the table's,
and the code of a state simply carries its output word as extra bits.

A Mealy output register is loaded with the output the table gives for the present state and
inputs, so the output appears one clock later.  The circuit is then a Moore machine whose
states are pairs (state, last output word); :func:`delayed_machine` builds that machine from
a table, and the netlist is verified against it (the registers reset to 0, so before the
first clock edge the outputs are 0).  Don't-care output values are taken as 0 in the
registers.  Where the table leaves the next state open, an output it specifies there still
appears one clock later: that next state is completed as the present state.  Where neither
is specified, what the registers load is open too.
"""

from __future__ import annotations

from collections import deque
from typing import Any

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic import bdd
from fsmsynth.model.regions import pieces, state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.encode import Encoding


def _word(out: str | None) -> str:
    return (out or "").replace("-", "0")


def _loads(state: str, here: Any, n_out: int, keep: bool) -> list[tuple[Any, str | None, str]]:
    """What the registers of ``state`` load: (input points, next state, output word).

    Where the table leaves the next state open but specifies an output, the output must
    still appear one clock later, so that next state is completed as ``state`` itself (a
    valid choice for a don't care).  Don't-care output bits become 0, or with ``keep`` stay
    ``-``; pieces that then say the same are joined."""
    joined: dict[tuple[str | None, str], Any] = {}
    for points, nxt, word in pieces(here, n_out):
        if nxt is None and word.strip("-"):
            nxt = state
        key = (nxt, word if keep else _word(word))
        joined[key] = joined[key] | points if key in joined else points
    return [(points, nxt, word) for (nxt, word), points in joined.items()]


def delayed_machine(table: StateTable, keep_dont_cares: bool = False) -> StateTable:
    """The Moore machine a Mealy ``table`` with registered outputs is: states ``s/w`` for
    state ``s`` entered with output word ``w`` (reset: ``w`` all 0), whose outputs are ``w``.
    Only pairs reachable from reset are kept.  Don't-care output bits become 0 (the words
    are then register contents, to be encoded), or with ``keep_dont_cares`` stay
    don't cares (the machine to verify a netlist against).  A specified output is never
    dropped: where the next state is open, the machine stays (see :func:`_loads`)."""
    assert table.kind == "mealy"
    var = bdd.variables(len(table.inputs))
    zero = "0" * len(table.outputs)
    start = (table.reset, zero)
    seen: dict[tuple[str, str], None] = {start: None}
    queue = deque([start])
    rows: list[tuple[str, str, str | None, None]] = []
    regions = state_regions(table, var)
    loads = {s: _loads(s, regions[s], len(table.outputs), keep_dont_cares)
             for s in table.states}
    while queue:
        state, word = queue.popleft()
        for points, nxt, out in loads[state]:
            target = None if nxt is None else (nxt, out)
            if target is not None and target not in seen:
                seen[target] = None
                queue.append(target)
            for cube in bdd.cubes_of(points, var):
                rows.append((f"{state}/{word}", cube.to_string(len(table.inputs)),
                             None if target is None else f"{target[0]}/{target[1]}", None))
    names = [f"{s}/{w}" for s, w in seen]
    return StateTable.from_rows(
        name=table.name, kind="moore", inputs=table.inputs, outputs=table.outputs, rows=rows,
        reset=f"{table.reset}/{zero}", states=names,
        state_outputs={f"{s}/{w}": w for s, w in seen})


def registered_codes(machine: StateTable, base: Encoding, delayed: bool) -> Encoding:
    """``base`` with each state's output word appended as bits ``width .. width + m - 1``;
    for a ``delayed`` machine (states ``s/w``) the base code is that of ``s``."""
    result = {}
    for state in machine.states:
        word = _word(machine.output_cube_of(state))
        own = state.rsplit("/", 1)[0] if delayed else state
        result[state] = base.codes[own] | sum(1 << (base.width + j)
                                              for j, ch in enumerate(word) if ch == "1")
    return Encoding(method=f"{base.method}, outputs registered",
                    width=base.width + len(machine.outputs), codes=FrozenMap(result))
