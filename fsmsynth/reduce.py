"""State minimization: the smallest machine that behaves like the table.

Completely specified machines (every reachable state has a next state and every output for
every input) are reduced exactly by Hopcroft's partition refinement.  Incompletely specified
machines need a covering problem: compatible pairs from the implication chart, maximal
compatibles, prime compatibles, and a minimum closed cover found by branch and bound under
a time limit.  In both cases the input space is split only into the classes the rows
actually distinguish, so a machine with many inputs is never expanded to ``2**inputs``
columns.

References
----------
Hopcroft, J. E., "An n log n algorithm for minimizing states in a finite automaton",
*Theory of Machines and Computations*, Academic Press, 1971.
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
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import breadth_first_order

from fsmsynth.errors import OptionError
from fsmsynth.frozen import FrozenMap
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube, bits_of, partition, partition_within
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.regions import StateRegions, completely_specified, state_regions
from fsmsynth.table import Row, StateTable

LOCAL_ABOVE = 64
"""Above this many input classes of the whole table, reduction compares states on their own
rows (:mod:`fsmsynth.regions`) instead of tabulating every state over every class."""


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
    graph = csr_matrix((np.ones(int(given.sum()), dtype=np.int8),
                        (rows.present[given], rows.next[given])), shape=(n, n))
    mask = np.zeros(n, dtype=bool)
    mask[breadth_first_order(graph, start, directed=True, return_predecessors=False)] = True
    return mask


@exclusive
def minimize_states(table: StateTable, reachable_only: bool = True, *,
                    time_limit: float = 10.0) -> StateMinimization:
    """The smallest table that realizes ``table``, with the classes of merged states.

    Parameters
    ----------
    table:
        The machine.
    reachable_only:
        Drop states unreachable from reset first (reported in ``unreachable``).  With
        ``False`` every state is kept and classed, as textbook reductions do.
    time_limit:
        Seconds for the exact closed-cover search of an incompletely specified machine; when
        it runs out the best closed cover found is returned with ``proven=False``.

    Returns
    -------
    StateMinimization

    Notes
    -----
    Completely specified: partition refinement in O(k n log n) for n states and k input
    classes (see :func:`_refine`).  Incompletely specified: exponential in the worst case
    (the problem is NP-hard), bounded by ``time_limit``.

    Examples
    --------
    >>> t = StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], reset="a", rows=[
    ...     ("a", "0", "b", "0"), ("a", "1", "c", "0"), ("b", "-", "a", "1"),
    ...     ("c", "-", "a", "1")])
    >>> r = minimize_states(t)
    >>> r.table.states, sorted(r.classes["b"])
    (('a', 'b'), ['b', 'c'])
    """
    rows = _RowArrays.of(table)
    kept = np.ones(len(table.states), dtype=bool)
    if reachable_only:
        kept = _reachable(rows, len(table.states), table.states.index(table.reset))
    unreachable = tuple(s for s, k in zip(table.states, kept.tolist()) if not k)
    if not (isinstance(time_limit, (int, float)) and math.isfinite(time_limit)
            and time_limit > 0):
        raise OptionError(f"time limit {time_limit!r}: give a finite number of seconds > 0")
    tab = _tabulate(table, rows, kept, LOCAL_ABOVE)
    if tab is None:
        return _minimize_local(table, rows, kept, unreachable, time_limit)
    if tab.complete:
        # States start together when their outputs agree under every input class (there
        # is always at least one class; Moore outputs are the same in all of them).
        initial = _dense(tab.output_id[:, 0])
        if table.kind == "mealy":
            for a in range(1, tab.output_id.shape[1]):
                initial = _pair_rank(initial, tab.output_id[:, a])
        return _from_partition(table, rows, tab.states, tab.kept,
                               _refine(tab.next_state, initial), unreachable,
                               len(tab.classes), "hopcroft")
    beh = _Behaviour.of(tab)
    cover, proven = _closed_cover(beh, time_limit)
    return _from_cover(table, beh, cover, proven, unreachable)


# --- completely specified: Moore rounds, then Hopcroft ------------------------------------

def _dense(values: np.ndarray) -> np.ndarray:
    """Renumber ``values`` 0, 1, ... in increasing order of value."""
    return np.unique(values, return_inverse=True)[1].reshape(-1).astype(np.int64)


def _pair_rank(first: np.ndarray, second: np.ndarray) -> np.ndarray:
    """Dense numbers of the pairs (first[i], second[i]), both non-negative."""
    return _dense(first * (int(second.max(initial=0)) + 1) + second)


def _refine(next_state: np.ndarray, initial: np.ndarray) -> np.ndarray:
    """Block of each state in the coarsest partition that refines ``initial`` and is closed
    under the moves (the state-equivalence classes when ``initial`` groups equal outputs).

    Two phases with one result.  Moore's rounds (each block splits by the blocks of its
    next states) run as whole-array operations while they split many blocks; on a typical
    machine they reach the fixed point in a few rounds.  When two rounds in a row split
    little (a chain-like machine, where rounds would go on n times), or after a bounded
    number of rounds, Hopcroft's worklist refinement takes over from the partition reached,
    so the whole stays O(k n log n).

    References
    ----------
    Moore, E. F., "Gedanken-experiments on sequential machines", *Automata Studies*,
    Princeton, 1956.  Hopcroft, J. E., "An n log n algorithm for minimizing states in a
    finite automaton", *Theory of Machines and Computations*, Academic Press, 1971.
    """
    n, k = next_state.shape
    block = initial
    count = int(block.max(initial=-1)) + 1
    small_rounds = 0
    for _ in range(_MOORE_ROUNDS):
        key = block
        for a in range(k):
            key = _pair_rank(key, block[next_state[:, a]])
        new_count = int(key.max(initial=-1)) + 1
        if new_count == count:
            return block
        small_rounds = small_rounds + 1 if new_count - count <= n // 1000 + 1 else 0
        block, count = key, new_count
        if small_rounds == 2:
            break
    return np.array(_hopcroft(next_state, block.tolist(), count), dtype=np.int64)


_MOORE_ROUNDS = 24


def _hopcroft(next_state: np.ndarray, initial: list[int], count: int) -> list[int]:
    """Hopcroft's refinement of the partition ``initial`` (blocks 0 .. count-1).

    Array-based: the states of a block are contiguous in ``elems``; marking a state moves
    it to the front of its block, and a block with some but not all states marked splits in
    two.  Splitters are processed with the smaller-half rule, which gives the O(k n log n)
    bound.  Every initial block but the largest starts on the worklist, which is correct
    for any starting partition coarser than the result.
    """
    n, k = next_state.shape
    elems = sorted(range(n), key=initial.__getitem__)
    loc = [0] * n
    for i, s in enumerate(elems):
        loc[s] = i
    block_of = initial[:]
    start = [0] * count
    end = [0] * count
    for i, s in enumerate(elems):
        b = block_of[s]
        if i == 0 or b != block_of[elems[i - 1]]:
            start[b] = i
        end[b] = i + 1
    # Predecessors of t under class a: pred[a][offset[a][t]:offset[a][t + 1]].
    pred: list[list[int]] = []
    offset: list[list[int]] = []
    for a in range(k):
        column = next_state[:, a]
        pred.append(np.argsort(column, kind="stable").tolist())
        offset.append(np.concatenate(([0], np.cumsum(np.bincount(column, minlength=n)))).tolist())
    marked = [0] * count
    # Splitter (block b, input class c) is waiting when waiting_flag[b * k + c] is set.
    waiting: list[int] = []
    waiting_flag: list[bool] = [False] * (count * k)
    largest = max(range(count), key=lambda b: end[b] - start[b], default=0)
    for b in range(count):
        if b != largest:
            for a in range(k):
                waiting.append(b * k + a)
                waiting_flag[b * k + a] = True
    while waiting:
        key = waiting.pop()
        waiting_flag[key] = False
        splitter, a = divmod(key, k)
        pred_a, offset_a = pred[a], offset[a]
        touched: list[int] = []
        for t in elems[start[splitter]:end[splitter]]:
            for s in pred_a[offset_a[t]:offset_a[t + 1]]:
                b = block_of[s]
                i = loc[s]
                j = start[b] + marked[b]
                if i < j:
                    continue
                other = elems[j]
                elems[j] = s
                elems[i] = other
                loc[s] = j
                loc[other] = i
                if not marked[b]:
                    touched.append(b)
                marked[b] += 1
        for b in touched:
            m = marked[b]
            marked[b] = 0
            if m == end[b] - start[b]:
                continue
            new = len(start)
            first_new = start[b]
            start.append(first_new)
            end.append(first_new + m)
            marked.append(0)
            start[b] = first_new + m
            for i in range(first_new, first_new + m):
                block_of[elems[i]] = new
            waiting_flag.extend([False] * k)
            small = new if m <= end[b] - start[b] else b
            for c in range(k):
                pick = new * k + c if waiting_flag[b * k + c] else small * k + c
                if not waiting_flag[pick]:
                    waiting_flag[pick] = True
                    waiting.append(pick)
    return block_of


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


def _from_partition(table: StateTable, rows: _RowArrays, states: tuple[str, ...],
                    kept: np.ndarray, block: np.ndarray, unreachable: tuple[str, ...],
                    input_classes: int, method: str) -> StateMinimization:
    """Reduced table of a completely specified machine: each class keeps its first member's
    rows (first in declaration order), named after that member; the reset's class first.
    ``states`` are the kept states in declaration order, ``block`` their classes."""
    n = len(states)
    count = int(block.max(initial=-1)) + 1
    # states are in declaration order, so a class's first member has its lowest index.
    first = np.full(count, n, dtype=np.int64)
    np.minimum.at(first, block, np.arange(n, dtype=np.int64))
    reset = states.index(table.reset)
    order = [int(block[reset])] + [g for g in np.argsort(first, kind="stable").tolist()
                                    if g != block[reset]]
    first_of = first.tolist()
    names = [states[first_of[g]] for g in range(count)]
    by_block = np.argsort(block, kind="stable").tolist()
    bounds = np.concatenate(([0], np.cumsum(np.bincount(block, minlength=count)))).tolist()
    member_names = [states[i] for i in by_block]
    classes = {names[g]: frozenset(member_names[bounds[g]:bounds[g + 1]]) for g in order}
    if count == len(table.states) and table.states[0] == table.reset:
        # Nothing merged or dropped and the reset already first: the table is its own reduction.
        reduced = table
    else:
        # States that are not their class's first member, renamed to it.
        renamed = {states[i]: names[g]
                   for i, g in enumerate(block.tolist()) if first_of[g] != i}
        # The rows of each class's first member, classes in order, rows in table order.
        position = np.empty(count, dtype=np.int64)
        position[order] = np.arange(count)
        in_tab = np.where(kept, np.cumsum(kept) - 1, -1)
        present = in_tab[rows.present]
        first_row = present >= 0
        first_row[first_row] = first[block[present[first_row]]] == present[first_row]
        chosen = np.nonzero(first_row)[0]
        chosen = chosen[np.argsort(position[block[present[chosen]]], kind="stable")]
        rows_out = [r if r[2] not in renamed else (r[0], r[1], renamed[r[2]], r[3])
                    for r in map(table.rows.__getitem__, chosen.tolist())]
        state_outputs = None
        if table.kind == "moore":
            state_outputs = {names[g]: table.output_cube_of(names[g]) for g in order}
        reduced = StateTable._derived(table, rows=rows_out, reset=names[order[0]],
                                      states=[names[g] for g in order],
                                      state_outputs=state_outputs)
    return StateMinimization(table=reduced, classes=FrozenMap(classes), proven=True,
                             method=method, unreachable=unreachable,
                             input_classes=input_classes)


# --- incompletely specified: compatibles and a minimum closed cover -----------------------

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


def _from_cover(table: StateTable, beh: _Behaviour, cover: list[int], proven: bool,
                unreachable: tuple[str, ...]) -> StateMinimization:
    """The reduced table of a closed cover: one state per compatible."""
    groups, order, names = _cover_states(table, beh, cover)
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


# --- many inputs: each state on its own rows --------------------------------------------

class _LocalBehaviour:
    """The kept states of a table compared on their own rows (see :mod:`fsmsynth.regions`).

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


def _minimize_local(table: StateTable, rows: _RowArrays, kept: np.ndarray,
                    unreachable: tuple[str, ...], time_limit: float) -> StateMinimization:
    """:func:`minimize_states` for tables whose rows distinguish many input classes."""
    states = tuple(s for s, k in zip(table.states, kept.tolist()) if k)
    regions = state_regions(table)
    widest = max((len(table.rows_of(s)) for s in states), default=0)
    if all(completely_specified(regions[s]) for s in states):
        block = _refine_local(table, states, regions)
        return replace(_from_partition(table, rows, states, kept, block, unreachable, widest,
                                       "moore rounds"), input_partition="local")
    beh = _LocalBehaviour(table, states, regions)
    cover, proven = _closed_cover(beh, time_limit)
    return _from_local_cover(table, beh, cover, proven, unreachable, widest)


def _refine_local(table: StateTable, states: tuple[str, ...],
                  regions: Mapping[str, StateRegions]) -> np.ndarray:
    """State-equivalence classes of a completely specified machine, by Moore's rounds on
    symbolic signatures: a state's signature is its output functions and, for each block,
    the BDD of the inputs that lead into that block.  BDDs are canonical, so equal
    signatures are equal objects.  Rounds until no block splits (at most n of them).

    References
    ----------
    Moore, E. F., "Gedanken-experiments on sequential machines", *Automata Studies*,
    Princeton, 1956.
    """
    index = {s: i for i, s in enumerate(states)}

    def dense(keys: Sequence[object]) -> list[int]:
        ids: dict[object, int] = {}
        return [ids.setdefault(k, len(ids)) for k in keys]

    block = dense([regions[s].out_on for s in states])
    count = max(block, default=-1) + 1
    while True:
        signatures = []
        for i, s in enumerate(states):
            into: dict[int, Any] = {}
            for t, points in regions[s].next:
                b = block[index[t]]
                into[b] = into.get(b, bdd.ZERO) | points
            signatures.append((block[i], tuple(sorted(into.items(), key=lambda kv: kv[0]))))
        new = dense(signatures)
        new_count = max(new, default=-1) + 1
        if new_count == count:
            return np.array(block, dtype=np.int64)
        block, count = new, new_count


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


_AnyBehaviour = _Behaviour | _LocalBehaviour


def _cover_states(table: StateTable, beh: _AnyBehaviour, cover: Sequence[int]) -> tuple[
        list[frozenset[int]], list[int], dict[int, str]]:
    """The compatibles of a closed cover as member sets, their order (the reset's first)
    and their names."""
    groups = [frozenset(bits_of(c)) for c in cover]
    reset = beh.states.index(table.reset)
    reset_group = next(g for g, members in enumerate(groups) if reset in members)
    order = _ordered(table, beh, groups, reset_group)
    return groups, order, _names(table, beh, groups, order)


def _cover_minimization(table: StateTable, beh: _AnyBehaviour,
                        groups: Sequence[frozenset[int]], order: Sequence[int],
                        names: Mapping[int, str], rows: Sequence[Row],
                        state_outputs: Mapping[str, str], proven: bool,
                        unreachable: tuple[str, ...], input_classes: int,
                        input_partition: str) -> StateMinimization:
    """The reduced table of a closed cover, from its rows, and what produced it."""
    reduced = StateTable.from_rows(
        name=table.name, kind=table.kind, inputs=table.inputs, outputs=table.outputs, rows=rows,
        reset=names[order[0]], states=[names[g] for g in order],
        state_outputs=state_outputs if table.kind == "moore" else None)
    classes = {names[g]: frozenset(beh.states[i] for i in groups[g]) for g in order}
    return StateMinimization(table=reduced, classes=FrozenMap(classes), proven=proven,
                             method="closed cover", unreachable=unreachable,
                             input_classes=input_classes, input_partition=input_partition)


def _merge(cubes: Sequence[str]) -> str:
    """Merge compatible output cubes: each position takes any specified value."""
    out = list(cubes[0]) if cubes else []
    for cube in cubes[1:]:
        for i, ch in enumerate(cube):
            if ch != "-":
                out[i] = ch
    return "".join(out)
