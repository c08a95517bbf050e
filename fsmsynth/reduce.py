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

import time
from collections import deque
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass

from fsmsynth.check import reachable_states
from fsmsynth.frozen import FrozenMap
from fsmsynth.logic.cube import Cube, partition
from fsmsynth.table import StateTable


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
        ``"hopcroft"`` (completely specified) or ``"closed cover"`` (incompletely specified).
    unreachable:
        Original states dropped because reset never reaches them.
    input_classes:
        How many input classes the rows distinguish (the columns the algorithms used).
    """

    table: StateTable
    classes: Mapping[str, frozenset[str]]
    proven: bool
    method: str
    unreachable: tuple[str, ...]
    input_classes: int

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
class _Behaviour:
    """The machine over input classes: next[s][a] (-1 = don't care) and outputs per (s, a)."""

    states: tuple[str, ...]
    classes: tuple[Cube, ...]
    next: tuple[tuple[int, ...], ...]
    outputs: tuple[tuple[str, ...], ...]

    @property
    def complete(self) -> bool:
        return all(n >= 0 for row in self.next for n in row) and all(
            "-" not in o for row in self.outputs for o in row)


def _behaviour(table: StateTable, states: Sequence[str]) -> _Behaviour:
    """Tabulate the states over the input classes the rows distinguish."""
    index = {s: i for i, s in enumerate(states)}
    classes = partition(Cube.from_string(r[1]) for r in table.rows if r[0] in index)
    n_out = len(table.outputs)
    nxt = [[-1] * len(classes) for _ in states]
    outs = [[["-"] * n_out for _ in classes] for _ in states]
    inside: dict[str, list[int]] = {}
    for state, cube_text, row_next, row_out in table.rows:
        s = index.get(state)
        if s is None:
            continue
        if cube_text not in inside:
            cube = Cube.from_string(cube_text)
            inside[cube_text] = [a for a, cls in enumerate(classes) if cube.contains(cls)]
        specified = [(o, ch) for o, ch in enumerate(row_out or "") if ch != "-"]
        for a in inside[cube_text]:
            if row_next is not None:
                nxt[s][a] = index[row_next]
            for o, ch in specified:
                outs[s][a][o] = ch
    if table.kind == "moore":
        for state in states:
            outs[index[state]] = [list(table.output_cube_of(state)) for _ in classes]
    return _Behaviour(states=tuple(states), classes=tuple(classes),
                      next=tuple(tuple(r) for r in nxt),
                      outputs=tuple(tuple("".join(o) for o in row) for row in outs))


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
    Completely specified: Hopcroft's refinement, O(k n log n) for n states and k input
    classes.  Incompletely specified: exponential in the worst case (the problem is
    NP-hard), bounded by ``time_limit``.

    Examples
    --------
    >>> t = StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], reset="a", rows=[
    ...     ("a", "0", "b", "0"), ("a", "1", "c", "0"), ("b", "-", "a", "1"),
    ...     ("c", "-", "a", "1")])
    >>> r = minimize_states(t)
    >>> r.table.states, sorted(r.classes["b"])
    (('a', 'b'), ['b', 'c'])
    """
    states = reachable_states(table) if reachable_only else table.states
    kept = set(states)
    unreachable = tuple(s for s in table.states if s not in kept)
    beh = _behaviour(table, states)
    if beh.complete:
        members: dict[int, list[int]] = {}
        for state, block in enumerate(_hopcroft(beh, table.kind == "moore")):
            members.setdefault(block, []).append(state)
        groups = [frozenset(m) for m in members.values()]
        return _from_partition(table, beh, groups, unreachable)
    cover, proven = _closed_cover(beh, time_limit)
    return _from_cover(table, beh, cover, proven, unreachable)


# --- completely specified: Hopcroft -------------------------------------------------------

def _hopcroft(beh: _Behaviour, moore: bool) -> list[int]:
    """Block number of each state in the coarsest partition compatible with outputs and moves.

    Array-based refinement: the states of a block are contiguous in ``elems``; marking a
    state moves it to the front of its block, and a block with some but not all states
    marked splits in two.  Splitters are processed with the smaller-half rule, which
    gives the O(k n log n) bound.
    """
    n, k = len(beh.states), len(beh.classes)
    signature: dict[tuple[str, ...], int] = {}
    # Moore outputs are the same under every input class: the first one is the signature.
    first = [signature.setdefault(beh.outputs[s][:1] if moore else beh.outputs[s], len(signature))
             for s in range(n)]
    elems = sorted(range(n), key=lambda s: first[s])
    loc = [0] * n
    for i, s in enumerate(elems):
        loc[s] = i
    block_of = first[:]
    start: list[int] = []
    end: list[int] = []
    for i, s in enumerate(elems):
        if i == 0 or block_of[s] != block_of[elems[i - 1]]:
            start.append(i)
            end.append(i)
        end[-1] = i + 1
    inverse = [[[] for _ in range(n)] for _ in range(k)]  # type: list[list[list[int]]]
    for s in range(n):
        for a in range(k):
            inverse[a][beh.next[s][a]].append(s)
    marked = [0] * len(start)
    # Splitter (block b, input class c) is waiting when waiting_flag[b * k + c] is set.
    waiting: list[int] = []
    waiting_flag: list[bool] = [False] * (len(start) * k)
    largest = max(range(len(start)), key=lambda b: end[b] - start[b], default=0)
    for b in range(len(start)):
        if b != largest:
            for a in range(k):
                waiting.append(b * k + a)
                waiting_flag[b * k + a] = True
    while waiting:
        key = waiting.pop()
        waiting_flag[key] = False
        splitter, a = divmod(key, k)
        inv = inverse[a]
        touched: list[int] = []
        for t in elems[start[splitter]:end[splitter]]:
            for s in inv[t]:
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


def _ordered(table: StateTable, beh: _Behaviour, groups: Sequence[frozenset[int]],
             reset_group: int) -> list[int]:
    """Group indices: the reset's first, then by the declaration order of first members."""
    rank = {s: i for i, s in enumerate(table.states)}
    def first(g: frozenset[int]) -> int:
        return min(rank[beh.states[i]] for i in g)
    rest = sorted((g for g in range(len(groups)) if g != reset_group),
                  key=lambda g: first(groups[g]))
    return [reset_group, *rest]


def _names(table: StateTable, beh: _Behaviour, groups: Sequence[frozenset[int]],
           order: Sequence[int]) -> dict[int, str]:
    rank = {s: i for i, s in enumerate(table.states)}
    names: dict[int, str] = {}
    used: set[str] = set()
    for g in order:
        members = sorted((beh.states[i] for i in groups[g]), key=rank.__getitem__)
        name = members[0] if members[0] not in used else "+".join(members)
        names[g] = name
        used.add(name)
    return names


def _from_partition(table: StateTable, beh: _Behaviour, groups: list[frozenset[int]],
                    unreachable: tuple[str, ...]) -> StateMinimization:
    """Reduced table of a completely specified machine: each class keeps its first member's rows."""
    reset = beh.states.index(table.reset)
    reset_group = next(g for g, members in enumerate(groups) if reset in members)
    order = _ordered(table, beh, groups, reset_group)
    names = _names(table, beh, groups, order)
    group_of = {i: g for g, members in enumerate(groups) for i in members}
    index = {s: i for i, s in enumerate(beh.states)}
    rank = {s: i for i, s in enumerate(table.states)}
    rows = []
    for g in order:
        rep = min((beh.states[i] for i in groups[g]), key=rank.__getitem__)
        for _s, cube, nxt, out in table.rows_of(rep):
            target = names[group_of[index[nxt]]] if nxt is not None else None
            rows.append((names[g], cube, target, out))
    state_outputs = None
    if table.kind == "moore":
        state_outputs = {names[g]: table.output_cube_of(
            min((beh.states[i] for i in groups[g]), key=rank.__getitem__)) for g in order}
    reduced = StateTable._derived(table, rows=rows, reset=names[reset_group],
                                  states=[names[g] for g in order], state_outputs=state_outputs)
    classes = {names[g]: frozenset(beh.states[i] for i in groups[g]) for g in order}
    return StateMinimization(table=reduced, classes=FrozenMap(classes), proven=True,
                             method="hopcroft", unreachable=unreachable,
                             input_classes=len(beh.classes))


# --- incompletely specified: compatibles and a minimum closed cover -----------------------

def _conflict(a: str, b: str) -> bool:
    return any(x != y and "-" not in (x, y) for x, y in zip(a, b))


def compatible_pairs(beh: _Behaviour) -> list[int]:
    """Adjacency bit masks of the compatibility graph, by the implication chart.

    A pair is incompatible when the two states give different specified outputs under some
    input class, or when some input class implies an incompatible pair; marking is
    propagated backwards from each incompatible pair through the pairs that imply it.
    """
    n, k = len(beh.states), len(beh.classes)
    incompatible: set[tuple[int, int]] = set()
    implied_by: dict[tuple[int, int], list[tuple[int, int]]] = {}
    queue: deque[tuple[int, int]] = deque()
    for p in range(n):
        for q in range(p + 1, n):
            if any(_conflict(beh.outputs[p][a], beh.outputs[q][a]) for a in range(k)):
                incompatible.add((p, q))
                queue.append((p, q))
                continue
            for a in range(k):
                x, y = beh.next[p][a], beh.next[q][a]
                if x >= 0 and y >= 0 and x != y:
                    implied_by.setdefault((min(x, y), max(x, y)), []).append((p, q))
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


def maximal_compatibles(adjacency: Sequence[int]) -> list[int]:
    """Maximal cliques of the compatibility graph (Bron-Kerbosch with pivoting), as bit masks."""
    result: list[int] = []

    def expand(r: int, p: int, x: int) -> None:
        if not p and not x:
            result.append(r)
            return
        pivot_from = p | x
        pivot = max(_bits(pivot_from), key=lambda u: (adjacency[u] & p).bit_count())
        for v in _bits(p & ~adjacency[pivot]):
            expand(r | 1 << v, p & adjacency[v], x & adjacency[v])
            p &= ~(1 << v)
            x |= 1 << v

    expand(0, (1 << len(adjacency)) - 1, 0)
    return sorted(result, key=lambda m: (-m.bit_count(), m))


def _bits(mask: int) -> Iterator[int]:
    while mask:
        low = mask & -mask
        yield low.bit_length() - 1
        mask ^= low


def _implied(beh: _Behaviour, members: int) -> frozenset[int]:
    """Class set: the next-state sets a compatible implies that it does not contain itself."""
    out = set()
    for a in range(len(beh.classes)):
        nxt = 0
        for s in _bits(members):
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


def prime_compatibles(beh: _Behaviour, adjacency: Sequence[int],
                      deadline: float) -> list[tuple[int, frozenset[int]]]:
    """Prime compatibles with their class sets (Grasselli and Luccio 1965).

    A compatible is dropped when a larger compatible contains it and implies nothing its
    own class set does not already imply: using the larger one instead keeps any closed
    cover closed.  Every compatible is a subset of a maximal one, so all are generated from
    those, largest first.
    """
    maximal = maximal_compatibles(adjacency)
    compatibles: set[int] = set()
    for m in maximal:
        members = list(_bits(m))
        stack = [0]
        # every subset of a clique is a clique
        for v in members:
            stack += [s | 1 << v for s in stack]
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


def _closed_cover(beh: _Behaviour, time_limit: float) -> tuple[list[int], bool]:
    """A minimum closed cover of the states by compatibles (exact unless out of time).

    Moore and Mealy machines alike: ``beh`` tabulates outputs per state and input class.
    """
    n = len(beh.states)
    deadline = time.monotonic() + time_limit
    adjacency = compatible_pairs(beh)
    try:
        primes = prime_compatibles(beh, adjacency, deadline)
    except _OutOfTime:
        # The original states themselves always form a closed cover.
        return [1 << s for s in range(n)], False
    everyone = (1 << n) - 1
    best: list[list[int]] = [_greedy_cover(beh, primes, everyone)]
    by_state = [[i for i, (c, _g) in enumerate(primes) if c >> s & 1] for s in range(n)]
    proven = True

    def lower_bound(uncovered: int) -> int:
        # States pairwise incompatible need distinct compatibles.
        chosen = 0
        count = 0
        for s in _bits(uncovered):
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
            s = min(_bits(uncovered), key=lambda v: len(by_state[v]))
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


def _greedy_cover(beh: _Behaviour, primes: Sequence[tuple[int, frozenset[int]]],
                  everyone: int) -> list[int]:
    """A closed cover built greedily: the upper bound the exact search starts from."""
    chosen: list[int] = []
    covered = 0
    while True:
        need = everyone & ~covered
        if need:
            s = next(_bits(need))
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
    groups = [frozenset(_bits(c)) for c in cover]
    reset = beh.states.index(table.reset)
    reset_group = next(g for g, members in enumerate(groups) if reset in members)
    order = _ordered(table, beh, groups, reset_group)
    names = _names(table, beh, groups, order)
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
    reduced = StateTable.from_rows(
        name=table.name, kind=table.kind, inputs=table.inputs, outputs=table.outputs, rows=rows,
        reset=names[reset_group], states=[names[g] for g in order],
        state_outputs=state_outputs if table.kind == "moore" else None)
    classes = {names[g]: frozenset(beh.states[i] for i in groups[g]) for g in order}
    return StateMinimization(table=reduced, classes=FrozenMap(classes), proven=proven,
                             method="closed cover", unreachable=unreachable,
                             input_classes=len(beh.classes))


def _merge(cubes: Sequence[str]) -> str:
    """Merge compatible output cubes: each position takes any specified value."""
    out = list(cubes[0]) if cubes else []
    for cube in cubes[1:]:
        for i, ch in enumerate(cube):
            if ch != "-":
                out[i] = ch
    return "".join(out)
