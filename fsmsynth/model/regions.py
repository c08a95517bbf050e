"""Each state's rows as sets of input points (BDDs): local input partitions.

A controller whose states each watch a few of many inputs has rows whose common refinement
grows towards ``2**inputs`` classes.  State reduction and verification then work on one
state, or one pair of states, at a time: the points where a state goes to each next state
and where each output is 1 or 0 are BDDs over the inputs, and two states are compared by
intersecting their rows.  The common refinement is never built.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.model.table import StateTable


@dataclass(frozen=True, slots=True)
class StateRegions:
    """Where one state goes and what it outputs, as BDDs over the inputs.

    Attributes
    ----------
    rows:
        ``(points, next state or None, output cube or None)`` for each of the state's rows.
    next:
        ``(next state, points)`` for every next state some row names, in declaration order.
    specified:
        The points where the next state is specified.
    out_on, out_off:
        Per output, the points where the table says 1 and where it says 0.
    """

    rows: tuple[tuple[Any, str | None, str | None], ...]
    next: tuple[tuple[str, Any], ...]
    specified: Any
    out_on: tuple[Any, ...]
    out_off: tuple[Any, ...]


def state_regions(table: StateTable, var: Sequence[Any] | None = None
                  ) -> dict[str, StateRegions]:
    """The :class:`StateRegions` of every state, over BDD variables ``var`` (one per input;
    by default :func:`fsmsynth.logic.bdd.variables`).  Cost: one BDD per row, plus unions."""
    if var is None:
        var = bdd.variables(len(table.inputs))
    order = {s: i for i, s in enumerate(table.states)}
    result = {}
    for state in table.states:
        rows = tuple((bdd.cube_bdd(Cube.from_string(c), var), nxt, out)
                     for _s, c, nxt, out in table.rows_of(state))
        to: dict[str, Any] = {}
        specified = bdd.ZERO
        on = [bdd.ZERO] * len(table.outputs)
        off = [bdd.ZERO] * len(table.outputs)
        for points, nxt, out in rows:
            if nxt is not None:
                to[nxt] = to.get(nxt, bdd.ZERO) | points
                specified |= points
            for o, ch in enumerate(out or ""):
                if ch == "1":
                    on[o] |= points
                elif ch == "0":
                    off[o] |= points
        if table.kind == "moore":
            cube = table.output_cube_of(state)
            on = [bdd.ONE if ch == "1" else bdd.ZERO for ch in cube]
            off = [bdd.ONE if ch == "0" else bdd.ZERO for ch in cube]
        result[state] = StateRegions(
            rows=rows, next=tuple(sorted(to.items(), key=lambda item: order[item[0]])),
            specified=specified, out_on=tuple(on), out_off=tuple(off))
    return result


def completely_specified(regions: StateRegions) -> bool:
    """Whether the state has a next state and every output under every input."""
    return (regions.specified.is_one()
            and all((a | b).is_one() for a, b in zip(regions.out_on, regions.out_off)))


def pieces(here: StateRegions, n_out: int) -> list[tuple[Any, str | None, str]]:
    """A state's input points split by what the table says there: (points, next state or
    ``None``, output word of the first ``n_out`` outputs with ``-`` for a don't care)."""
    found: list[tuple[Any, str | None, str]] = [(bdd.ONE, None, "")]
    for nxt, points in here.next:
        split = []
        for p, n, w in found:
            for part, to in ((p & points, nxt), (p & ~points, n)):
                if not part.is_zero():
                    split.append((part, to, w))
        found = split
    for o in range(n_out):
        split = []
        for p, n, w in found:
            free = p & ~here.out_on[o] & ~here.out_off[o]
            for part, ch in ((p & here.out_on[o], "1"), (p & here.out_off[o], "0"), (free, "-")):
                if not part.is_zero():
                    split.append((part, n, w + ch))
        found = split
    return found
