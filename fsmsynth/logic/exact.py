"""Exact two-level minimization: all prime implicants, then a minimum cover.

Multi-output functions share product terms: each prime carries the set of outputs whose
on-set-plus-don't-care contains it (its tag), and may serve any of them.  The cover is
minimum in the number of distinct product terms, then in their literals.

* Primes: the tabular method of Quine (1952) and McCluskey (1956), extended to several
  outputs with tags (Bartee, Lebow and Reed, *Theory and Design of Digital Machines*,
  McGraw-Hill, 1962, multiple-output prime implicants).
* Cover: essential primes first, then the remaining (cyclic) core as a 0-1 integer program
  solved by HiGHS through :func:`scipy.optimize.milp`, with a time limit.  Petrick's
  method (Petrick 1956) is kept as the small-case reference.

Points are ints with bit ``i`` = variable ``i``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import Bounds, LinearConstraint, milp
from scipy.sparse import csr_matrix

from fsmsynth.logic.cube import Cube


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


def points_of(cubes: Iterable[Cube], n: int) -> set[int]:
    """Every point (bit i = variable i) of the union of ``cubes``.  O(size of the union)."""
    out: set[int] = set()
    full = (1 << n) - 1
    for c in cubes:
        free = full & ~c.care
        sub = free
        while True:
            out.add(c.value | sub)
            if sub == 0:
                break
            sub = (sub - 1) & free
    return out


def prime_implicants(n: int, care_sets: Sequence[set[int]]) -> list[tuple[Cube, int]]:
    """Multi-output prime implicants of the given on-plus-don't-care sets.

    Returns ``(cube, tag)`` pairs, ``tag`` having bit ``f`` set when the cube lies inside
    output ``f``'s set.  A pair is kept when no larger cube has a tag including its own.
    Cost: O(p n) dictionary operations per merging level for p implicants at that level.
    """
    full = (1 << n) - 1
    level: dict[tuple[int, int], int] = {}
    for f, points in enumerate(care_sets):
        for m in points:
            level[(full, m)] = level.get((full, m), 0) | 1 << f
    primes: list[tuple[Cube, int]] = []
    while level:
        merged: dict[tuple[int, int], int] = {}
        dominated: set[tuple[int, int]] = set()
        for (care, value), tag in level.items():
            bits = care
            while bits:
                bit = bits & -bits
                bits ^= bit
                if value & bit:
                    continue  # pair each cube with its partner once, from the 0 side
                partner = (care, value | bit)
                other = level.get(partner)
                if other is None:
                    continue
                common = tag & other
                if not common:
                    continue
                key = (care & ~bit, value)
                merged[key] = merged.get(key, 0) | common
                if common == tag:
                    dominated.add((care, value))
                if common == other:
                    dominated.add(partner)
        for key, tag in level.items():
            if key not in dominated:
                primes.append((Cube(care=key[0], value=key[1]), tag))
        level = merged
    # With one output the tabular method yields exactly the primes; with several, a cube
    # can be inside a larger one whose tag grew along another merge chain.
    return _drop_dominated(primes) if len(care_sets) > 1 else sorted(
        primes, key=lambda p: (p[0].care, p[0].value, p[1]))


def _drop_dominated(primes: list[tuple[Cube, int]]) -> list[tuple[Cube, int]]:
    """Remove a pair whose cube and tag are both included in another pair's."""
    by_size = sorted(primes, key=lambda p: (p[0].literal_count, -p[1].bit_count()))
    kept: list[tuple[Cube, int]] = []
    for cube, tag in by_size:
        if any(other.contains(cube) and t & tag == tag and (other, t) != (cube, tag)
               for other, t in kept):
            continue
        kept.append((cube, tag))
    return sorted(kept, key=lambda p: (p[0].care, p[0].value, p[1]))


def _cover_rows(on_sets: Sequence[set[int]],
                primes: Sequence[tuple[Cube, int]]) -> list[list[int]]:
    """For each (point, output) of the on-sets, the primes that can cover it."""
    rows = []
    for f, points in enumerate(on_sets):
        candidates = [j for j, (c, tag) in enumerate(primes) if tag >> f & 1]
        for m in sorted(points):
            rows.append([j for j in candidates if primes[j][0].contains_point(m)])
    return rows


def _reduce(rows: list[list[int]], weights: Sequence[int]) -> tuple[list[list[int]], set[int]]:
    """Cyclic core of a covering table: take essential columns, drop dominated rows and
    columns, repeat until nothing changes (McCluskey 1956).

    A row is dropped when another row's columns are a subset of its own (covering that
    one covers it); a column when another column, no costlier, covers all its rows.
    Returns the remaining rows and the columns taken.
    """
    chosen: set[int] = set()
    table = [frozenset(r) for r in rows]
    while True:
        essential = {next(iter(r)) for r in table if len(r) == 1}
        if essential:
            chosen |= essential
            table = [r for r in table if not r & chosen]
            continue
        # Row dominance: keep only the minimal rows (distinct), smallest first.
        kept: list[frozenset[int]] = []
        for r in sorted(set(table), key=len):
            if not any(k <= r for k in kept):
                kept.append(r)
        # Column dominance.
        rows_of: dict[int, set[int]] = {}
        for i, r in enumerate(kept):
            for j in r:
                rows_of.setdefault(j, set()).add(i)
        columns = sorted(rows_of, key=lambda j: (-len(rows_of[j]), weights[j], j))
        dominated: set[int] = set()
        for a_pos, a in enumerate(columns):
            if a in dominated:
                continue
            for b in columns[a_pos + 1:]:
                if b not in dominated and weights[a] <= weights[b] and rows_of[b] <= rows_of[a]:
                    dominated.add(b)
        reduced = [r - dominated for r in kept] if dominated else kept
        if len(reduced) == len(table) and not dominated:
            return [sorted(r) for r in reduced], chosen
        table = reduced


SMALL_CORE = 40
"""Cyclic cores with at most this many columns are solved by branch and bound here;
larger ones go to the integer-programming solver."""


def _branch_and_bound(rows: list[list[int]], weights: Sequence[int],
                      node_limit: int = 20000) -> set[int] | None:
    """Exact minimum-weight cover of a small core, or ``None`` past ``node_limit`` nodes.

    Branches on the row with the fewest columns; bounds with a greedy set of pairwise
    disjoint rows, each needing at least its cheapest column.
    """
    best_cost = [math.inf]
    best_cover: list[list[int]] = []
    nodes = [0]

    def bound(left: list[frozenset[int]]) -> float:
        used: set[int] = set()
        total = 0.0
        for r in sorted(left, key=len):
            if not r & used:
                used |= r
                total += min(weights[j] for j in r)
        return total

    def search(left: list[frozenset[int]], chosen: list[int], cost: float) -> bool:
        nodes[0] += 1
        if nodes[0] > node_limit:
            return False
        if not left:
            if cost < best_cost[0]:
                best_cost[0] = cost
                best_cover[:] = [list(chosen)]
            return True
        if cost + bound(left) >= best_cost[0]:
            return True
        row = min(left, key=len)
        for j in sorted(row, key=lambda c: (weights[c], c)):
            rest = [r for r in left if j not in r]
            if not search(rest, [*chosen, j], cost + weights[j]):
                return False
        return True

    if not search([frozenset(r) for r in rows], [], 0.0):
        return None
    assert best_cover
    return set(best_cover[0])


def _solve_cover(rows: list[list[int]], weights: Sequence[int],
                 time_limit: float) -> tuple[set[int], bool, float]:
    """Minimum-weight set of columns hitting every row: (chosen, proven, lower bound)."""
    rows, chosen = _reduce(rows, weights)
    if not rows:
        return chosen, True, float(sum(weights[j] for j in chosen))
    if len({j for r in rows for j in r}) <= SMALL_CORE:
        picked = _branch_and_bound(rows, weights)
        if picked is not None:
            total = float(sum(weights[j] for j in chosen | picked))
            return chosen | picked, True, total
    columns = sorted({j for r in rows for j in r})
    index = {j: i for i, j in enumerate(columns)}
    data, row_ix, col_ix = [], [], []
    for i, r in enumerate(rows):
        for j in r:
            data.append(1.0)
            row_ix.append(i)
            col_ix.append(index[j])
    matrix = csr_matrix((data, (row_ix, col_ix)), shape=(len(rows), len(columns)))
    cost = np.array([weights[j] for j in columns], dtype=float)
    result = milp(cost, constraints=LinearConstraint(matrix, lb=1.0, ub=np.inf),
                  integrality=np.ones(len(columns)), bounds=Bounds(0, 1),
                  options={"time_limit": max(time_limit, 0.01), "disp": False})
    base = float(sum(weights[j] for j in chosen))
    if result.x is None:
        picked = _greedy(rows, weights)
        bound = getattr(result, "mip_dual_bound", None)
        return chosen | picked, False, base + float(bound or 0.0)
    picked = {columns[i] for i, v in enumerate(result.x) if v > 0.5}
    proven = result.status == 0
    bound = float(result.fun) if proven else float(getattr(result, "mip_dual_bound", 0.0) or 0.0)
    return chosen | picked, proven, base + bound


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
        Seconds for the covering solver; past it the best cover found is returned with
        ``proven=False`` and the lower bound reached.
    """
    care = [on | dc for on, dc in zip(on_sets, dc_sets)]
    primes = prime_implicants(n, care)
    total_literals = sum(c.literal_count for c, _t in primes)
    big = total_literals + 1
    weights = [big + c.literal_count for c, _t in primes]
    rows = _cover_rows(on_sets, primes)
    chosen, proven, bound = _solve_cover(rows, weights, time_limit)
    terms = []
    for f, on in enumerate(on_sets):
        usable = [primes[j][0] for j in sorted(chosen) if primes[j][1] >> f & 1
                  and any(primes[j][0].contains_point(m) for m in on)]
        terms.append(_irredundant(on, usable))
    lower = max(0, int(bound // big)) if not proven else len({t for f in terms for t in f})
    return ExactCover(terms=tuple(terms), proven=proven, lower_bound=lower)


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
    chosen = petrick(_cover_rows(on_sets, primes), weights)
    terms = []
    for f, on in enumerate(on_sets):
        usable = [primes[j][0] for j in sorted(chosen) if primes[j][1] >> f & 1]
        terms.append(_irredundant(on, usable))
    distinct = len({t for f in terms for t in f})
    return ExactCover(terms=tuple(terms), proven=True, lower_bound=distinct)
