"""Exact two-level minimization: all prime implicants, then a minimum cover.

Multi-output functions share product terms: each prime carries the set of outputs whose
on-set-plus-don't-care contains it (its tag), and may serve any of them.  The cover is
minimum in the number of distinct product terms, then in their literals.

* Primes: the tabular method of Quine (1952) and McCluskey (1956), extended to several
  outputs with tags (Bartee, Lebow and Reed, *Theory and Design of Digital Machines*,
  McGraw-Hill, 1962, multiple-output prime implicants).
* Cover: essential primes first, then the remaining (cyclic) core by branch and bound
  when small, else as 0-1 integer programs solved by HiGHS through
  :func:`scipy.optimize.milp`, with a time limit (past it, Espresso's cover is kept when it
  is smaller).  Petrick's
  method (Petrick 1956) is kept as the small-case reference.

Points are ints with bit ``i`` = variable ``i``.
"""

from __future__ import annotations

import math
import time
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass, replace

import numpy as np
from scipy.optimize import Bounds, LinearConstraint, linprog, milp
from scipy.sparse import csr_matrix, vstack

from fsmsynth.logic.cube import Cube, bits_of
from fsmsynth.logic.espresso import espresso_cover


@dataclass(frozen=True, slots=True)
class ExactCover:
    """A minimum (or best found) multi-output cover.

    Attributes
    ----------
    terms:
        For each output, its product terms.
    proven:
        Whether minimality is proven (False when the time limit stopped the search).
    lower_bound:
        A proven lower bound on the number of distinct product terms.
    """

    terms: tuple[tuple[Cube, ...], ...]
    proven: bool
    lower_bound: int

    @property
    def products(self) -> tuple[Cube, ...]:
        """The distinct product terms."""
        return tuple(sorted({t for f in self.terms for t in f}))

    @property
    def size(self) -> tuple[int, int]:
        """(distinct product terms, their literals): the order covers are ranked in."""
        products = self.products
        return len(products), sum(p.literal_count for p in products)


def points_of(cubes: Iterable[Cube], n: int) -> set[int]:
    """Every point (bit i = variable i) of the union of ``cubes``.  O(size of the union)."""
    out: set[int] = set()
    for c in cubes:
        out.update(_points(c, n))
    return out


def prime_implicants(n: int, care_sets: Sequence[set[int]]) -> list[tuple[Cube, int]]:
    """Multi-output prime implicants of the given on-plus-don't-care sets.

    Returns ``(cube, tag)`` pairs, ``tag`` having bit ``f`` set when the cube lies inside
    output ``f``'s set.  A pair is kept when no larger cube has a tag including its own.
    Cost: O(p n) dictionary operations per merging level for p implicants at that level.
    A cube is one int here, its care mask above its ``n`` value bits.
    """
    full = (1 << n) - 1
    top = full << n
    if len(care_sets) == 1:
        return [(c, 1) for c in _single_output_primes(n, {top | m for m in care_sets[0]})]
    level: dict[int, int] = {}
    for f, points in enumerate(care_sets):
        for m in points:
            level[top | m] = level.get(top | m, 0) | 1 << f
    primes: list[tuple[Cube, int]] = []
    while level:
        merged: dict[int, int] = {}
        dominated: set[int] = set()
        for key, tag in level.items():
            bits = (key >> n) & ~key  # cared-for variables at 0: pair from the 0 side
            while bits:
                bit = bits & -bits
                bits ^= bit
                other = level.get(key | bit)
                if other is None:
                    continue
                common = tag & other
                if not common:
                    continue
                wider = key & ~(bit << n)
                merged[wider] = merged.get(wider, 0) | common
                if common == tag:
                    dominated.add(key)
                if common == other:
                    dominated.add(key | bit)
        primes.extend((Cube(care=key >> n, value=key & full), tag)
                      for key, tag in level.items() if key not in dominated)
        level = merged
    # With several outputs a cube can be inside a larger one whose tag grew along another
    # merge chain.
    return _drop_dominated(primes)


def _single_output_primes(n: int, level: set[int]) -> list[Cube]:
    """Quine-McCluskey merging for one output: the cubes that merge with no neighbour."""
    full = (1 << n) - 1
    primes: list[Cube] = []
    while level:
        merged: set[int] = set()
        used: set[int] = set()
        for key in level:
            bits = (key >> n) & ~key
            while bits:
                bit = bits & -bits
                bits ^= bit
                if key | bit in level:
                    merged.add(key & ~(bit << n))
                    used.add(key)
                    used.add(key | bit)
        primes.extend(Cube(care=key >> n, value=key & full) for key in level - used)
        level = merged
    return sorted(primes, key=lambda c: (c.care, c.value))


def _drop_dominated(primes: list[tuple[Cube, int]]) -> list[tuple[Cube, int]]:
    """Remove a pair whose cube and tag are both included in another pair's."""
    by_size = sorted(primes, key=lambda p: (p[0].literal_count, -p[1].bit_count()))
    kept: list[tuple[Cube, int]] = []
    larger: list[tuple[int, int, int]] = []  # (care, value, tag) of the kept pairs
    for cube, tag in by_size:
        care, value = cube.care, cube.value
        if any(oc & ~care == 0 and (value ^ ov) & oc == 0 and ot & tag == tag
               for oc, ov, ot in larger):
            continue  # cubes are distinct, so the including pair is another one
        kept.append((cube, tag))
        larger.append((care, value, tag))
    return sorted(kept, key=lambda p: (p[0].care, p[0].value, p[1]))


def _cover_rows(on_sets: Sequence[set[int]],
                primes: Sequence[tuple[Cube, int]], n: int) -> list[list[int]]:
    """For each (point, output) of the on-sets, the primes that can cover it.

    Walks each prime's own points (a prime of k free variables has 2**k), which is far
    less work than testing every prime against every on-set point.
    """
    rows: list[list[int]] = []
    for f, points in enumerate(on_sets):
        covering: dict[int, list[int]] = {m: [] for m in sorted(points)}
        for j, (cube, tag) in enumerate(primes):
            if tag >> f & 1:
                for m in _points(cube, n):
                    row = covering.get(m)
                    if row is not None:
                        row.append(j)
        rows.extend(covering.values())
    return rows


def _points(cube: Cube, n: int) -> Iterator[int]:
    """Every point of ``cube`` over ``n`` variables."""
    free = ((1 << n) - 1) & ~cube.care
    sub = free
    while True:
        yield cube.value | sub
        if sub == 0:
            return
        sub = (sub - 1) & free


def _reduce(rows: list[list[int]], weights: Sequence[int]) -> tuple[list[list[int]], set[int]]:
    """Cyclic core of a covering table: take essential columns, drop dominated rows and
    columns, repeat until nothing changes (McCluskey 1956).

    A row is dropped when another row's columns are a subset of its own (covering that
    one covers it); a column when another column, no costlier, covers all its rows.
    Returns the remaining rows and the columns taken.  Sets are bit masks, and a column
    is only compared with the columns that share a row with it.
    """
    chosen = 0
    # Each row as its sorted columns and as a mask of them.
    table = {tuple(sorted(r)): sum(1 << j for j in r) for r in rows}
    while True:
        essential = 0
        for cols, mask in table.items():
            if len(cols) == 1:
                essential |= mask
        if essential:
            chosen |= essential
            table = {c: m for c, m in table.items() if not m & essential}
            continue
        # Row dominance: keep only the minimal rows, smallest first.  A kept row inside
        # this one has its lowest column in this one, so only those rows are compared.
        kept: list[tuple[int, ...]] = []
        kept_by_low: dict[int, list[int]] = {}
        for cols in sorted(table, key=lambda c: (len(c), c)):
            mask = table[cols]
            if any(k & ~mask == 0 for j in cols for k in kept_by_low.get(j, ())):
                continue
            kept.append(cols)
            kept_by_low.setdefault(cols[0], []).append(mask)
        # Column dominance.
        rows_of: dict[int, int] = {}
        for i, cols in enumerate(kept):
            for j in cols:
                rows_of[j] = rows_of.get(j, 0) | 1 << i
        order = sorted(rows_of, key=lambda j: (-rows_of[j].bit_count(), weights[j], j))
        rank = {j: i for i, j in enumerate(order)}
        dominated: set[int] = set()
        for a in order:
            if a in dominated:
                continue
            covered = rows_of[a]
            for i in bits_of(covered):
                for b in kept[i]:
                    if (rank[b] > rank[a] and b not in dominated and weights[a] <= weights[b]
                            and rows_of[b] & ~covered == 0):
                        dominated.add(b)
        if not dominated and len(kept) == len(table):
            return [list(c) for c in kept], set(bits_of(chosen))
        table = {}
        for cols in kept:
            rest = tuple(j for j in cols if j not in dominated)
            table[rest] = sum(1 << j for j in rest)


SMALL_CORE = 40
"""Cyclic cores with at most this many columns are solved by branch and bound here;
larger ones go to the integer-programming solver."""


def _branch_and_bound(rows: list[list[int]], weights: Sequence[int],
                      node_limit: int = 20000) -> set[int] | None:
    """Exact minimum-weight cover of a small core, or ``None`` past ``node_limit`` nodes.

    Rows and columns are bit masks.  Branches on the uncovered row with the fewest
    columns, trying its columns by weight per newly covered row; bounds with a greedy set
    of rows that pairwise share no column, each needing at least its cheapest column.
    """
    columns = sorted({j for r in rows for j in r})
    local = {j: i for i, j in enumerate(columns)}
    weight = [weights[j] for j in columns]
    row_cols = [sum(1 << local[j] for j in r) for r in rows]
    col_rows = [0] * len(columns)
    for i, r in enumerate(rows):
        for j in r:
            col_rows[local[j]] |= 1 << i
    row_min = [min(weight[c] for c in bits_of(m)) for m in row_cols]
    by_length = sorted(range(len(rows)), key=lambda i: row_cols[i].bit_count())
    best_cost = math.inf
    best: list[int] = []
    nodes = 0

    def bound(uncovered: int) -> float:
        blocked = 0
        total = 0.0
        for i in by_length:
            if uncovered >> i & 1 and not row_cols[i] & blocked:
                blocked |= row_cols[i]
                total += row_min[i]
        return total

    def search(uncovered: int, chosen: list[int], cost: float) -> bool:
        nonlocal best_cost, best, nodes
        nodes += 1
        if nodes > node_limit:
            return False
        if not uncovered:
            if cost < best_cost:
                best_cost, best = cost, list(chosen)
            return True
        if cost + bound(uncovered) >= best_cost:
            return True
        row = min(bits_of(uncovered), key=lambda i: row_cols[i].bit_count())
        options = sorted(bits_of(row_cols[row]), key=lambda c: (
            weight[c] / (col_rows[c] & uncovered).bit_count(), c))
        for c in options:
            chosen.append(c)
            ok = search(uncovered & ~col_rows[c], chosen, cost + weight[c])
            chosen.pop()
            if not ok:
                return False
        return True

    if not search((1 << len(rows)) - 1, [], 0.0):
        return None
    return {columns[c] for c in best}


def _solve_cover(rows: list[list[int]], literals: Sequence[int],
                 time_limit: float) -> tuple[set[int], bool, int]:
    """Fewest columns hitting every row, then fewest literals among those.

    Returns ``(chosen, proven, lower)``: ``lower`` is a proven lower bound on the number of
    columns (equal to ``len(chosen)`` when proven).
    """
    big = sum(literals) + 1
    weights = [big + lit for lit in literals]  # one column outweighs all literals together
    rows, chosen = _reduce(rows, weights)
    if not rows:
        return chosen, True, len(chosen)
    if len({j for r in rows for j in r}) <= SMALL_CORE:
        picked = _branch_and_bound(rows, weights)
        if picked is not None:
            return chosen | picked, True, len(chosen | picked)
    picked, proven, lower = _lexicographic_ilp(rows, literals, weights, time_limit)
    return chosen | picked, proven, len(chosen) + lower


def _lexicographic_ilp(rows: list[list[int]], literals: Sequence[int],
                       weights: Sequence[int], time_limit: float) -> tuple[set[int], bool, int]:
    """Minimum cover of a cyclic core by 0-1 integer programs (HiGHS), terms first.

    The linear relaxation bounds the number of terms from below; starting at its ceiling
    ``k``, minimize literals subject to covering every row with at most ``k`` columns,
    and raise ``k`` while that is infeasible.  The first feasible ``k`` is the minimum
    number of terms, and its solution the fewest literals among such covers.  Measured on
    random 10-input cores, this is several times faster than one program with the two
    costs folded into a single weighted objective (the relaxation is usually within one
    term of the optimum, so one or two programs are solved).
    ``weights`` (terms first, as :func:`_solve_cover` folds them) rank the greedy cover
    returned when time runs out.  Returns ``(picked, proven, lower bound on the number of
    terms)``.
    """
    deadline = time.monotonic() + max(time_limit, 0.01)
    columns = sorted({j for r in rows for j in r})
    index = {j: i for i, j in enumerate(columns)}
    data, row_ix, col_ix = [], [], []
    for i, r in enumerate(rows):
        for j in r:
            data.append(1.0)
            row_ix.append(i)
            col_ix.append(index[j])
    n_rows, n_cols = len(rows), len(columns)
    cover = csr_matrix((data, (row_ix, col_ix)), shape=(n_rows, n_cols))
    relaxed = linprog(np.ones(n_cols), A_ub=-cover, b_ub=-np.ones(n_rows), bounds=(0, 1),
                      method="highs")
    k = math.ceil(relaxed.fun - 1e-6) if relaxed.status == 0 else 1
    with_count = vstack([cover, csr_matrix(np.ones((1, n_cols)))]).tocsr()
    cost = np.array([literals[j] for j in columns], dtype=float)
    lower_rows = np.r_[np.ones(n_rows), -np.inf]
    while True:
        left = deadline - time.monotonic()
        if left <= 0:
            break
        result = milp(cost, integrality=np.ones(n_cols), bounds=Bounds(0, 1),
                      constraints=LinearConstraint(with_count, lb=lower_rows,
                                                   ub=np.r_[np.full(n_rows, np.inf), k]),
                      # The objective is integral: a zero gap proves the literal count.
                      options={"time_limit": left, "disp": False, "mip_rel_gap": 0.0})
        if result.status == 2:  # infeasible: k terms cannot cover the core
            k += 1
            continue
        if result.x is not None:
            picked = {columns[i] for i, v in enumerate(result.x) if v > 0.5}
            return picked, result.status == 0, k
        break
    return _greedy(rows, weights), False, k


def _greedy(rows: list[list[int]], weights: Sequence[int]) -> set[int]:
    picked: set[int] = set()
    left = [set(r) for r in rows]
    while left:
        counts: dict[int, int] = {}
        for r in left:
            for j in r:
                counts[j] = counts.get(j, 0) + 1
        best = max(counts, key=lambda j: (counts[j] / weights[j], -j))
        picked.add(best)
        left = [r for r in left if best not in r]
    return picked


def _irredundant(points: set[int], candidates: list[Cube]) -> tuple[Cube, ...]:
    """Drop terms not needed to cover ``points``, trying the costliest first."""
    kept = list(candidates)
    for t in sorted(candidates, key=lambda c: (-c.literal_count, c.care, c.value)):
        rest = [c for c in kept if c != t]
        if all(any(c.contains_point(m) for c in rest) for m in points if t.contains_point(m)):
            kept = rest
    return tuple(sorted(kept))


def exact_cover(n: int, on_sets: Sequence[set[int]], dc_sets: Sequence[set[int]],
                time_limit: float = 10.0) -> ExactCover:
    """Minimum multi-output sum of products: fewest distinct terms, then fewest literals.

    Parameters
    ----------
    n:
        Number of variables.
    on_sets, dc_sets:
        Per output, the points where it is 1 and where it is free.
    time_limit:
        Seconds for the covering solver; past it the better of the best cover found and
        Espresso's is returned, with ``proven=False`` and the lower bound reached.
    """
    care = [on | dc for on, dc in zip(on_sets, dc_sets)]
    primes = prime_implicants(n, care)
    rows = _cover_rows(on_sets, primes, n)
    chosen, proven, lower = _solve_cover(rows, [c.literal_count for c, _t in primes],
                                         time_limit)
    terms = []
    for f, on in enumerate(on_sets):
        usable = [primes[j][0] for j in sorted(chosen) if primes[j][1] >> f & 1
                  and any(primes[j][0].contains_point(m) for m in on)]
        terms.append(_irredundant(on, usable))
    if proven:
        return ExactCover(terms=tuple(terms), proven=True,
                          lower_bound=len({t for f in terms for t in f}))
    found = ExactCover(terms=tuple(terms), proven=False, lower_bound=lower)
    # Stopped by the time limit: the best found is never worse than Espresso's.
    heuristic = heuristic_cover(n, on_sets, dc_sets)
    return replace(heuristic, lower_bound=lower) if heuristic.size < found.size else found


def heuristic_cover(n: int, on_sets: Sequence[set[int]],
                    dc_sets: Sequence[set[int]]) -> ExactCover:
    """Espresso's cover of the same points (``proven=False``, no lower bound)."""
    full = (1 << n) - 1
    if n == 0:
        return ExactCover(terms=tuple((Cube.universe(),) if on else () for on in on_sets),
                          proven=False, lower_bound=0)
    on_cubes = [[Cube.minterm(m, n) for m in sorted(s)] for s in on_sets]
    off_cubes = [[Cube.minterm(m, n) for m in range(full + 1) if m not in on and m not in dc]
                 for on, dc in zip(on_sets, dc_sets)]
    return ExactCover(terms=tuple(espresso_cover(n, on_cubes, off_cubes)), proven=False,
                      lower_bound=0)


def petrick(rows: Sequence[Sequence[int]], weights: Sequence[int]) -> set[int]:
    """Petrick's method: multiply out the product of sums of covering columns and keep the
    cheapest product.  Exponential; the reference for small covering problems.

    References
    ----------
    Petrick, S. R., "A direct determination of the irredundant forms of a Boolean
    function from the set of prime implicants", AFCRC-TR-56-110, 1956.
    """
    products: set[frozenset[int]] = {frozenset()}
    for row in rows:
        products = {p | {j} for p in products for j in row}
        # absorption: drop products that contain another
        products = {p for p in products if not any(q < p for q in products)}
    best = min(products, key=lambda p: (sum(weights[j] for j in p), sorted(p)))
    return set(best)


def petrick_cover(n: int, on_sets: Sequence[set[int]], dc_sets: Sequence[set[int]]) -> ExactCover:
    """The same minimum as :func:`exact_cover`, by Petrick's method (small problems only)."""
    care = [on | dc for on, dc in zip(on_sets, dc_sets)]
    primes = prime_implicants(n, care)
    big = sum(c.literal_count for c, _t in primes) + 1
    weights = [big + c.literal_count for c, _t in primes]
    chosen = petrick(_cover_rows(on_sets, primes, n), weights)
    terms = []
    for f, on in enumerate(on_sets):
        usable = [primes[j][0] for j in sorted(chosen) if primes[j][1] >> f & 1]
        terms.append(_irredundant(on, usable))
    distinct = len({t for f in terms for t in f})
    return ExactCover(terms=tuple(terms), proven=True, lower_bound=distinct)
