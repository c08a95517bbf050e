"""The reduced table of a closed cover: one state per compatible, named after its first
member, the reset's compatible first; rows per input class of the whole table, or per
region of the members' own rows (:class:`~fsmsynth.stages.reduce.incomplete._LocalBehaviour`).
A cover that keeps every state alone gives the table back as written.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import bits_of, partition
from fsmsynth.model.table import Row, StateTable
from fsmsynth.stages.reduce.incomplete import _AnyBehaviour, _LocalBehaviour
from fsmsynth.stages.reduce.tabulation import StateMinimization, _Behaviour, _merge


def _ordered(table: StateTable, beh: _AnyBehaviour, groups: Sequence[frozenset[int]],
             reset_group: int) -> list[int]:
    """Group indices: the reset's first, then by the declaration order of first members."""
    rank = {s: i for i, s in enumerate(table.states)}
    def first(g: frozenset[int]) -> int:
        return min(rank[beh.states[i]] for i in g)
    rest = sorted((g for g in range(len(groups)) if g != reset_group),
                  key=lambda g: first(groups[g]))
    return [reset_group, *rest]


def _names(table: StateTable, beh: _AnyBehaviour, groups: Sequence[frozenset[int]],
           order: Sequence[int]) -> dict[int, str]:
    rank = {s: i for i, s in enumerate(table.states)}
    names: dict[int, str] = {}
    used: set[str] = set()
    for g in order:
        members = sorted((beh.states[i] for i in groups[g]), key=rank.__getitem__)
        name = members[0] if members[0] not in used else "+".join(members)
        # A joined name can be a user's state name too ("b+d"): number it apart.
        base, k = name, 2
        while name in used or (name in rank and name not in members):
            name, k = f"{base}#{k}", k + 1
        names[g] = name
        used.add(name)
    return names


def _from_cover(table: StateTable, beh: _Behaviour, cover: list[int], proven: bool,
                unreachable: tuple[str, ...]) -> StateMinimization:
    """The reduced table of a closed cover: one state per compatible."""
    groups, order, names = _cover_states(table, beh, cover)
    if _unchanged(table, groups, order, names):
        return _cover_minimization(table, beh, groups, order, names, table.rows, {}, proven,
                                   unreachable, len(beh.classes), "whole table", same=True)
    rows = []
    state_outputs: dict[str, str] = {}
    n_in = len(table.inputs)
    for g in order:
        members = sorted(groups[g])
        for a, cls in enumerate(beh.classes):
            nxt = 0
            for s in members:
                if beh.next[s][a] >= 0:
                    nxt |= 1 << beh.next[s][a]
            target = None
            if nxt:
                target = names[next(h for h in order if nxt & ~cover[h] == 0)]
            out = _merge([beh.outputs[s][a] for s in members])
            if table.kind == "moore":
                state_outputs[names[g]] = out
                out_cell: str | None = None
            else:
                out_cell = out
            if target is None and (out_cell is None or set(out_cell) <= {"-"}):
                continue
            rows.append((names[g], cls.to_string(n_in), target, out_cell))
    return _cover_minimization(table, beh, groups, order, names, rows, state_outputs, proven,
                               unreachable, len(beh.classes), "whole table")


def _state_labels(beh: _LocalBehaviour, s: int) -> list[tuple[Any, int, str]]:
    """State ``s``'s own input partition: (points, next state or -1, merged output cube)."""
    table = beh.table
    rows = beh.rows[s]
    var = bdd.variables(len(table.inputs))
    labels = []
    for cls in partition(cube for cube, _n, _o in rows):
        inside = [(nxt, out) for cube, nxt, out in rows if cube.contains(cls)]
        nxt = next((x for x, _o in inside if x >= 0), -1)
        out = _merge([o for _x, o in inside if o]) if table.kind == "mealy" else ""
        labels.append((bdd.cube_bdd(cls, var), nxt, out))
    return labels


def _from_local_cover(table: StateTable, beh: _LocalBehaviour, cover: list[int], proven: bool,
                      unreachable: tuple[str, ...], widest: int) -> StateMinimization:
    """:func:`_from_cover` on local partitions: a reduced state's rows are the regions of its
    members' combined behaviour, written as disjoint cubes."""
    groups, order, names = _cover_states(table, beh, cover)
    if _unchanged(table, groups, order, names):
        return _cover_minimization(table, beh, groups, order, names, table.rows, {}, proven,
                                   unreachable, widest, "local", same=True)
    var = bdd.variables(len(table.inputs))
    n_in, blank = len(table.inputs), "-" * len(table.outputs)
    labels = {s: _state_labels(beh, s) for g in groups for s in g}
    rows: list[tuple[str, str, str | None, str | None]] = []
    state_outputs: dict[str, str] = {}
    for g in order:
        members = sorted(groups[g])
        if table.kind == "moore":
            state_outputs[names[g]] = _merge([table.output_cube_of(beh.states[s])
                                              for s in members])
        regions: dict[tuple[int, str], Any] = {(0, blank if table.kind == "mealy" else ""):
                                               bdd.ONE}
        for s in members:
            split: dict[tuple[int, str], Any] = {}
            for (mask, out), points in regions.items():
                for region, nxt, own in labels[s]:
                    both = points & region
                    if both.is_zero():
                        continue
                    key = (mask | (1 << nxt if nxt >= 0 else 0), _merge([out, own]) if own
                           else out)
                    split[key] = split.get(key, bdd.ZERO) | both
            regions = split
        by_row: dict[tuple[str | None, str | None], Any] = {}
        for (mask, out), points in regions.items():
            target = (names[next(h for h in order if mask & ~cover[h] == 0)] if mask
                      else None)
            cell = out if table.kind == "mealy" else None
            if target is None and (cell is None or set(cell) <= {"-"}):
                continue
            by_row[(target, cell)] = by_row.get((target, cell), bdd.ZERO) | points
        for (target, cell), points in sorted(by_row.items(), key=lambda kv: (
                kv[0][0] or "", kv[0][1] or "")):
            rows += [(names[g], cube.to_string(n_in), target, cell)
                     for cube in bdd.cubes_of(points, var)]
    return _cover_minimization(table, beh, groups, order, names, rows, state_outputs, proven,
                               unreachable, widest, "local")


def _cover_states(table: StateTable, beh: _AnyBehaviour, cover: Sequence[int]) -> tuple[
        list[frozenset[int]], list[int], dict[int, str]]:
    """The compatibles of a closed cover as member sets, their order (the reset's first)
    and their names."""
    groups = [frozenset(bits_of(c)) for c in cover]
    reset = beh.states.index(table.reset)
    reset_group = next(g for g, members in enumerate(groups) if reset in members)
    order = _ordered(table, beh, groups, reset_group)
    return groups, order, _names(table, beh, groups, order)


def _unchanged(table: StateTable, groups: Sequence[frozenset[int]], order: Sequence[int],
               names: Mapping[int, str]) -> bool:
    """Whether a closed cover keeps every state on its own, under its name and in its
    place (the reset first): then the table is its own reduction, and its rows are kept as
    written rather than split into the input classes the comparison used (which for a
    machine of many inputs can be many times as many rows)."""
    return (all(len(g) == 1 for g in groups)
            and [names[g] for g in order] == list(table.states))


def _cover_minimization(table: StateTable, beh: _AnyBehaviour,
                        groups: Sequence[frozenset[int]], order: Sequence[int],
                        names: Mapping[int, str], rows: Sequence[Row],
                        state_outputs: Mapping[str, str], proven: bool,
                        unreachable: tuple[str, ...], input_classes: int,
                        input_partition: str, same: bool = False) -> StateMinimization:
    """The reduced table of a closed cover, from its rows, and what produced it (``table``
    itself with ``same``)."""
    reduced = table if same else StateTable.from_rows(
        name=table.name, kind=table.kind, inputs=table.inputs, outputs=table.outputs, rows=rows,
        reset=names[order[0]], states=[names[g] for g in order],
        state_outputs=state_outputs if table.kind == "moore" else None)
    classes = {names[g]: frozenset(beh.states[i] for i in groups[g]) for g in order}
    return StateMinimization(table=reduced, classes=FrozenMap(classes), proven=proven,
                             method="closed cover", unreachable=unreachable,
                             input_classes=input_classes, input_partition=input_partition)
