"""The machine as arrays for state minimization: its rows, each state's behaviour over the
input classes the rows distinguish, reachability, and the result record with its merged table.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from fsmsynth.logic.cube import Cube, partition_within
from fsmsynth.model.table import StateTable

LOCAL_ABOVE = 64


"""Above this many input classes of the whole table, reduction compares states on their own
rows (:mod:`fsmsynth.model.regions`) instead of tabulating every state over every class."""


@dataclass(frozen=True, slots=True)
class StateMinimization:
    """Outcome of :func:`minimize_states`.

    Attributes
    ----------
    table:
        The reduced table.  The reset state comes first, the other states in the declaration
        order of their classes' first members; each is named after its class's first member.
    classes:
        Reduced state -> the original states it stands for.  For an incompletely specified
        machine classes may overlap.
    proven:
        Whether the state count is proven minimal (False only when the time limit cut the
        exact search short).
    method:
        ``"hopcroft"`` or ``"moore rounds"`` (completely specified) or ``"closed cover"``
        (incompletely specified).
    unreachable:
        Original states dropped because reset never reaches them.
    input_classes:
        How many input classes the algorithms used: those the rows of the whole table
        distinguish, or with ``input_partition == "local"`` the most rows of one state.
    input_partition:
        ``"whole table"``: states were tabulated over the input classes all rows
        distinguish; ``"local"``: there were more than :data:`LOCAL_ABOVE` of them, and
        states were compared on their own rows.  Both give the same classes.
    """

    table: StateTable
    classes: Mapping[str, frozenset[str]]
    proven: bool
    method: str
    unreachable: tuple[str, ...]
    input_classes: int
    input_partition: str = "whole table"

    def class_of(self, state: str) -> str:
        """The reduced state standing for original ``state`` (the first, where classes overlap)."""
        for reduced, members in self.classes.items():
            if state in members:
                return reduced
        raise KeyError(state)

    @property
    def merged(self) -> tuple[tuple[str, ...], ...]:
        """Classes of more than one state, members in declaration order."""
        order = {s: i for i, s in enumerate(self.table.states)}
        return tuple(tuple(sorted(m, key=lambda s: (order.get(s, len(order)), s)))
                     for m in self.classes.values() if len(m) > 1)


@dataclass(frozen=True, slots=True)
class _Tabulation:
    """The machine over the input classes its rows distinguish, as arrays.

    ``next_state[s, a]`` is the next state of state ``s`` under input class ``a`` (-1 where
    unspecified); ``output_id[s, a]`` indexes ``output_texts`` (the output cube, ``-`` where
    unspecified).  Rows are tabulated with array operations, so a machine of 10^5 states
    costs a few passes over its rows.
    """

    states: tuple[str, ...]
    kept: np.ndarray
    classes: tuple[Cube, ...]
    next_state: np.ndarray
    output_id: np.ndarray
    output_texts: tuple[str, ...]

    @property
    def complete(self) -> bool:
        used = np.unique(self.output_id)
        return bool((self.next_state >= 0).all()) and all(
            "-" not in self.output_texts[i] for i in used.tolist())


@dataclass(frozen=True, slots=True)
class _Behaviour:
    """The machine over input classes: next[s][a] (-1 = don't care) and outputs per (s, a)."""

    states: tuple[str, ...]
    classes: tuple[Cube, ...]
    next: tuple[tuple[int, ...], ...]
    outputs: tuple[tuple[str, ...], ...]

    @classmethod
    def of(cls, tab: _Tabulation) -> _Behaviour:
        texts = tab.output_texts
        return cls(states=tab.states, classes=tab.classes,
                   next=tuple(map(tuple, tab.next_state.tolist())),
                   outputs=tuple(tuple(texts[i] for i in row) for row in tab.output_id.tolist()))


@dataclass(frozen=True, slots=True)
class _RowArrays:
    """The rows of a table as arrays: present and next state (index, -1 for none), input cube
    and output cube (indices into ``cubes`` and ``outputs``)."""

    present: np.ndarray
    next: np.ndarray
    cube: np.ndarray
    output: np.ndarray
    cubes: tuple[str, ...]
    outputs: tuple[str, ...]

    @classmethod
    def of(cls, table: StateTable) -> _RowArrays:
        count = len(table.rows)
        index: dict[str | None, int] = {s: i for i, s in enumerate(table.states)}
        index[None] = -1
        present = [r[0] for r in table.rows]
        cube = [r[1] for r in table.rows]
        nxt = [r[2] for r in table.rows]
        out = [r[3] for r in table.rows]
        cube_id = {c: i for i, c in enumerate(dict.fromkeys(cube))}
        blank = "-" * len(table.outputs)
        texts = list(dict.fromkeys(o or blank for o in (blank, *out)))
        output_id: dict[str | None, int] = {o: i for i, o in enumerate(texts)}
        output_id[None] = 0
        def column(values: Sequence[object], ids: Mapping[Any, int]) -> np.ndarray:
            return np.fromiter(map(ids.__getitem__, values), dtype=np.int64, count=count)
        return cls(present=column(present, index), next=column(nxt, index),
                   cube=column(cube, cube_id), output=column(out, output_id),
                   cubes=tuple(cube_id), outputs=tuple(texts))


def _tabulate(table: StateTable, rows: _RowArrays, kept: np.ndarray,
              limit: int | None = None) -> _Tabulation | None:
    """Tabulate the states where ``kept`` is set over the input classes their rows distinguish,
    or ``None`` when they distinguish more than ``limit``.

    ``kept`` must be closed under specified transitions (all states, or the reachable ones).
    """
    states = tuple(s for s, k in zip(table.states, kept.tolist()) if k)
    renumber = np.cumsum(kept) - 1
    chosen = kept[rows.present]
    present = renumber[rows.present[chosen]]
    nxt = rows.next[chosen]
    nxt = np.where(nxt >= 0, renumber[nxt], -1)
    used, row_cube = np.unique(rows.cube[chosen], return_inverse=True)
    row_cube = row_cube.reshape(-1)
    cubes = [Cube.from_string(rows.cubes[c]) for c in used.tolist()]
    found = partition_within(cubes, limit)
    if found is None:
        return None
    classes = found
    inside = [[a for a, cls in enumerate(classes) if cube.contains(cls)] for cube in cubes]
    n, k = len(states), len(classes)
    # Expand every row into the (state, input class) cells it covers.
    sizes = np.array([len(x) for x in inside], dtype=np.int64)
    offsets = np.cumsum(sizes) - sizes
    flat = np.array([a for x in inside for a in x], dtype=np.int64)
    per_row = sizes[row_cube]
    cell_row = np.repeat(np.arange(per_row.size, dtype=np.int64), per_row)
    within = np.arange(cell_row.size, dtype=np.int64) - np.repeat(np.cumsum(per_row) - per_row,
                                                                  per_row)
    cell_class = flat[offsets[row_cube][cell_row] + within]
    cell_state = present[cell_row]
    next_state = np.full((n, k), -1, dtype=np.int64)
    cell_next = nxt[cell_row]
    given = cell_next >= 0
    next_state[cell_state[given], cell_class[given]] = cell_next[given]
    texts = list(rows.outputs)
    out_ids = {t: i for i, t in enumerate(texts)}  # texts are distinct, texts[0] all '-'
    if table.kind == "moore":
        per_state = [out_ids.setdefault(table.output_cube_of(s), len(out_ids)) for s in states]
        output_id = np.repeat(np.array(per_state, dtype=np.int64).reshape(n, 1), k, axis=1)
    else:
        row_out = rows.output[chosen]
        cell = cell_state * k + cell_class
        output_id = np.zeros(n * k, dtype=np.int64)  # 0 is the all-don't-care cube
        output_id[cell] = row_out[cell_row]
        # A cell covered by several rows merges their specified output bits, in row order.
        shared = np.nonzero(np.bincount(cell, minlength=n * k)[cell] > 1)[0]
        merged: dict[int, list[str]] = {}
        for i in shared.tolist():
            merged.setdefault(int(cell[i]), []).append(texts[row_out[cell_row[i]]])
        for c, outs in merged.items():
            output_id[c] = out_ids.setdefault(_merge(outs), len(out_ids))
        output_id = output_id.reshape(n, k)
    return _Tabulation(states=states, kept=kept, classes=tuple(classes), next_state=next_state,
                       output_id=output_id, output_texts=tuple(out_ids))


def _reachable(rows: _RowArrays, n: int, start: int) -> np.ndarray:
    """Mask of the states reachable from ``start`` through specified transitions."""
    given = rows.next >= 0
    successors: list[set[int]] = [set() for _ in range(n)]
    for a, b in zip(rows.present[given].tolist(), rows.next[given].tolist()):
        successors[a].add(b)
    mask = np.zeros(n, dtype=bool)
    mask[start] = True
    frontier = [start]
    while frontier:  # breadth first over the specified transitions
        frontier = [b for a in frontier for b in successors[a] if not mask[b]]
        for b in frontier:
            mask[b] = True
    return mask


def _dense(values: np.ndarray) -> np.ndarray:
    """Renumber ``values`` 0, 1, ... in increasing order of value."""
    return np.unique(values, return_inverse=True)[1].reshape(-1).astype(np.int64)


def _pair_rank(first: np.ndarray, second: np.ndarray) -> np.ndarray:
    """Dense numbers of the pairs (first[i], second[i]), both non-negative."""
    return _dense(first * (int(second.max(initial=0)) + 1) + second)


def _merge(cubes: Sequence[str]) -> str:
    """Merge compatible output cubes: each position takes any specified value."""
    out = list(cubes[0]) if cubes else []
    for cube in cubes[1:]:
        for i, ch in enumerate(cube):
            if ch != "-":
                out[i] = ch
    return "".join(out)
