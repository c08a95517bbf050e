"""Completely specified machines: equivalent states by partition refinement.

Moore's rounds of refinement first, then Hopcroft's algorithm on the arrays of
:mod:`fsmsynth.stages.reduce.tabulation`; past ``LOCAL_ABOVE`` input classes, the same
refinement on each state's own rows (:mod:`fsmsynth.model.regions`).

References
----------
Hopcroft, J. E., "An n log n algorithm for minimizing states in a finite automaton",
*Theory of Machines and Computations*, Academic Press, 1971.
Moore, E. F., "Gedanken-experiments on sequential machines", *Automata Studies*,
Princeton University Press, 1956.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic import bdd
from fsmsynth.model.regions import StateRegions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.reduce.tabulation import StateMinimization, _pair_rank, _RowArrays


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
