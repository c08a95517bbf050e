"""Exact two-level minimization: all prime implicants, then a minimum cover.

Multi-output functions share product terms: each prime carries the set of outputs whose
on-set-plus-don't-care contains it (its tag), and may serve any of them.  The cover is
minimum in the number of distinct product terms, then in their literals.

* Primes: the tabular method of Quine (1952) and McCluskey (1956), extended to several
  outputs with tags (Bartee, Lebow and Reed, *Theory and Design of Digital Machines*,
  McGraw-Hill, 1962, multiple-output prime implicants).
* Cover: :func:`fsmsynth.logic.covering.minimum_cover` (essential primes, dominance, then
  branch and bound priced by the linear relaxation, or 0-1 integer programs), with a time
  limit; past it, Espresso's cover is kept when it is smaller.  Petrick's method (Petrick
  1956) is kept as the small-case reference.

Points are ints with bit ``i`` = variable ``i``.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass, replace

from fsmsynth.logic.covering import minimum_cover, petrick
from fsmsynth.logic.cube import CUBE_ORDER, Cube
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


def _irredundant(points: set[int], candidates: list[Cube]) -> tuple[Cube, ...]:
    """Drop terms not needed to cover ``points``, trying the costliest first."""
    kept = list(candidates)
    for t in sorted(candidates, key=lambda c: (-c.literal_count, c.care, c.value)):
        rest = [c for c in kept if c != t]
        if all(any(c.contains_point(m) for c in rest) for m in points if t.contains_point(m)):
            kept = rest
    return tuple(sorted(kept, key=CUBE_ORDER))


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
    chosen, proven, lower = minimum_cover(rows, [c.literal_count for c, _t in primes],
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
