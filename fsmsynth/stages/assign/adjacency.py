"""State assignment by the adjacency rules, judged by true cost.

The rules of Armstrong (1962) in the priority order textbooks give them (Katz and Borriello,
*Contemporary Logic Design*, 2nd ed., 2005, section 9.? "state assignment guidelines", from
memory): (1) states with the same next state under the same input, (2) next states of one
state, (3) states with the same output under the same input should get adjacent codes.  The
rules give pair weights 4, 2, 1; codes are placed in the hypercube to minimize the weighted
Hamming distance (greedily, then improved by swaps, from several seeded starts).  The logic
is synthesized only to choose among the few best placements found and their bit-complemented
forms, which the rules cannot tell apart.

References
----------
Armstrong, D. B., "A programmed algorithm for assigning internal codes to sequential
machines", *IRE Trans. Electronic Computers* EC-11, 1962.
"""

from __future__ import annotations

import itertools
import random
import time
from collections.abc import Callable, Sequence

from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube, partition_within
from fsmsynth.model.regions import state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.assign.exhaustive import _permute
from fsmsynth.stages.assign.scoring import Scorer, SearchResult, _OutOfTime, _Progress, _score_all

WEIGHTS_BY_CLASS_UP_TO = 64


def adjacency_weights(table: StateTable) -> dict[tuple[int, int], int]:
    """Pair weights from the three assignment rules (see the module docstring).

    Rules (1) and (3) count, for a pair of states, the input classes on which both go to one
    next state (weight 4) or give one fully specified output word (weight 1).  With at most
    :data:`WEIGHTS_BY_CLASS_UP_TO` whole-table input classes they are counted per class;
    past it the whole-table refinement is not built: each pair of states counts, per shared
    next state or output word, one coincidence where their own rows overlap (BDDs), so the
    cost grows with states and rows, not with ``2**inputs``.
    """
    index = {s: i for i, s in enumerate(table.states)}
    weights: dict[tuple[int, int], int] = {}

    def add(a: int, b: int, w: int) -> None:
        if a != b:
            key = (min(a, b), max(a, b))
            weights[key] = weights.get(key, 0) + w

    classes = partition_within((Cube.from_string(r[1]) for r in table.rows),
                               WEIGHTS_BY_CLASS_UP_TO)
    if classes is None:
        _local_weights(table, add)
    else:
        _class_weights(table, classes, index, add)
    for s in table.states:
        targets = sorted({index[r[2]] for r in table.rows_of(s) if r[2] is not None})
        for a, b in itertools.combinations(targets, 2):
            add(a, b, 2)
    return weights


def _class_weights(table: StateTable, classes: Sequence[Cube], index: dict[str, int],
                   add: Callable[[int, int, int], None]) -> None:
    """Rules (1) and (3) counted per whole-table input class."""
    for cls in classes:
        word = "".join("1" if cls.value >> j & 1 else "0" for j in range(len(table.inputs)))
        by_next: dict[str, list[int]] = {}
        by_out: dict[str, list[int]] = {}
        for s in table.states:
            nxt, out = table.lookup(s, word)
            if nxt is not None:
                by_next.setdefault(nxt, []).append(index[s])
            if out and "-" not in out:
                by_out.setdefault(out, []).append(index[s])
        for group in by_next.values():
            for a, b in itertools.combinations(group, 2):
                add(a, b, 4)
        for group in by_out.values():
            for a, b in itertools.combinations(group, 2):
                add(a, b, 1)


def _local_weights(table: StateTable, add: Callable[[int, int, int], None]) -> None:
    """Rules (1) and (3) on each pair of states' own rows: one count per next state both
    reach on a common input point, and per output word both give on one."""
    regions = state_regions(table)
    words: list[dict[str, object]] = []
    for s in table.states:
        by_word: dict[str, object] = {}
        if table.kind == "moore":
            cube = table.output_cube_of(s)
            if "-" not in cube:
                by_word[cube] = bdd.ONE
        else:
            for points, _nxt, out in regions[s].rows:
                if out and "-" not in out:
                    by_word[out] = by_word.get(out, bdd.ZERO) | points
        words.append(by_word)
    reaches = [dict(regions[s].next) for s in table.states]
    for a, b in itertools.combinations(range(len(table.states)), 2):
        for nxt, points in reaches[a].items():
            other = reaches[b].get(nxt)
            if other is not None and not (points & other).is_zero():
                add(a, b, 4)
        for word, points in words[a].items():
            other = words[b].get(word)
            if other is not None and not (points & other).is_zero():  # type: ignore[operator]
                add(a, b, 1)


RULE_SCORES = 64


RULE_STARTS = 20


def adjacency_codes(table: StateTable, width: int) -> tuple[int, ...]:
    """Codes placing heavily weighted pairs at small Hamming distance; reset gets 0.

    States are placed greedily, most weighted first, each at the free code nearest its
    placed partners; then :func:`_descend` improves the placement.
    """
    neighbours = _neighbours(adjacency_weights(table), len(table.states))
    reset = table.states.index(table.reset)
    return tuple(_descend(_greedy_placement(neighbours, width, reset), neighbours, width,
                          reset)[1])


def _greedy_placement(neighbours: list[list[tuple[int, int]]], width: int,
                      reset: int) -> list[int]:
    n = len(neighbours)
    order = [reset] + sorted((s for s in range(n) if s != reset),
                             key=lambda s: (-sum(v for _t, v in neighbours[s]), s))
    codes = [-1] * n
    codes[reset] = 0
    free = set(range(1, 1 << width))
    for s in order[1:]:
        best = min(sorted(free), key=lambda c: sum(v * (c ^ codes[t]).bit_count()
                                                  for t, v in neighbours[s] if codes[t] >= 0))
        codes[s] = best
        free.discard(best)
    return codes


def adjacency_embeddings(table: StateTable, width: int, count: int = 8,
                         starts: int = RULE_STARTS) -> list[tuple[int, ...]]:
    """Up to ``count`` distinct assignments of least weighted Hamming spread, least first.

    The rules fix only distances, and a weighted embedding in the hypercube has many local
    optima of nearly equal spread whose logic costs differ.  Besides the greedy placement
    of :func:`adjacency_codes`, ``starts`` random placements (seed 0, so the result is
    deterministic) are descended; the local optima are told apart up to permuting bits
    (reset stays at code 0, which removes complementing) and the least spread kept.
    """
    n = len(table.states)
    neighbours = _neighbours(adjacency_weights(table), n)
    reset = table.states.index(table.reset)
    rng = random.Random(0)
    found: dict[tuple[int, ...], tuple[int, tuple[int, ...]]] = {}
    placements = [_greedy_placement(neighbours, width, reset)]
    for _ in range(starts if n <= 16 else min(starts, max(2, 320 // n))):
        others = rng.sample(range(1, 1 << width), n - 1)
        placements.append(others[:reset] + [0] + others[reset:])
    for codes in placements:
        spread, local = _descend(codes, neighbours, width, reset)
        key = _up_to_bit_permutation(tuple(local), width)
        if key not in found or spread < found[key][0]:
            found[key] = (spread, tuple(local))
    ranked = sorted(found.items(), key=lambda item: (item[1][0], item[0]))
    return [codes for _key, (_spread, codes) in ranked[:count]]


def _neighbours(weights: dict[tuple[int, int], int], n: int) -> list[list[tuple[int, int]]]:
    out: list[list[tuple[int, int]]] = [[] for _ in range(n)]
    for (a, b), v in sorted(weights.items()):
        out[a].append((b, v))
        out[b].append((a, v))
    return out


def _descend(codes: list[int], neighbours: list[list[tuple[int, int]]], width: int,
             reset: int) -> tuple[int, list[int]]:
    """First-improvement descent of the weighted spread: swap two states' codes, or move a
    state to an unused code, until neither helps.  Returns ``(spread, codes)``."""
    codes = list(codes)
    n = len(codes)

    def pull(a: int, code: int, skip: int) -> int:
        return sum(v * (code ^ codes[t]).bit_count() for t, v in neighbours[a] if t != skip)

    improved = True
    while improved:
        improved = False
        for a in range(n):
            if a == reset:
                continue
            for b in range(a + 1, n):
                if b == reset:
                    continue
                ca, cb = codes[a], codes[b]
                delta = (pull(a, cb, b) - pull(a, ca, b)) + (pull(b, ca, a) - pull(b, cb, a))
                if delta < 0:
                    codes[a], codes[b] = cb, ca
                    improved = True
            here = pull(a, codes[a], -1)
            for c in sorted(set(range(1 << width)) - set(codes)):
                there = pull(a, c, -1)
                if there < here:
                    codes[a], here = c, there
                    improved = True
    spread = sum(v * (codes[a] ^ codes[t]).bit_count()
                 for a in range(n) for t, v in neighbours[a] if t > a)
    return spread, codes


def _up_to_bit_permutation(codes: tuple[int, ...], width: int) -> tuple[int, ...]:
    """The least relabelling of ``codes`` under permuting bits (``codes`` itself when
    there are too many permutations to try)."""
    if width > 5:
        return codes
    return min(tuple(_permute(c, p) for c in codes)
               for p in itertools.permutations(range(width)))


def adjacency_search(score: Scorer, table: StateTable, width: int, *, jobs: int = 1,
                     time_limit: float | None = None) -> SearchResult:
    """The best by true cost of the rule-based embeddings of :func:`adjacency_embeddings`,
    each in every polarity.

    The rules only fix Hamming distances, and complementing any set of code bits keeps
    every distance: all 2**width such variants are equally good by the rules.  They are
    not equally cheap (complementing a bit complements a D input's logic and moves
    inverters), nor are embeddings of nearly equal spread, so each is scored and the
    cheapest kept; ties keep the earlier (least spread, uncomplemented) one.  Ctrl-C or
    ``time_limit`` returns the best scored so far; ``jobs`` shares the scoring between
    worker processes, with the same result.
    """
    deadline = None if time_limit is None else time.monotonic() + time_limit
    best: tuple[tuple[float, int], tuple[int, ...]] | None = None
    evaluated = 0
    interrupted = timed_out = False

    def consider(codes: tuple[int, ...], value: tuple[float, int]) -> float:
        nonlocal best, evaluated
        evaluated += 1
        if best is None or value < best[0]:
            best = (value, codes)
        return best[0][0]

    if width <= ALL_POLARITIES_UP_TO:
        embeddings = adjacency_embeddings(table, width, max(1, RULE_SCORES >> width))
        variants = (tuple(c ^ mask for c in codes) for codes in embeddings
                    for mask in range(1 << width))
        total = len(embeddings) << width
    else:
        embeddings = adjacency_embeddings(
            table, width, WIDE_EMBEDDINGS if len(table.states) <= 16 else WIDE_EMBEDDINGS // 2)
        total = len(embeddings) * 2 * (width + 1)
    progress = _Progress("adjacency", total, deadline)
    try:
        if width <= ALL_POLARITIES_UP_TO:
            _score_all(score, variants, width, jobs, deadline, progress, consider)
        else:
            for codes in embeddings:
                _polarity_descent(score, codes, width, jobs, deadline, progress, consider)
    except KeyboardInterrupt:
        if best is None:
            raise
        interrupted = True
    except _OutOfTime:
        timed_out = True
    finally:
        progress.close()
    assert best is not None
    return SearchResult(codes=best[1], width=width, cost=best[0][0], evaluated=evaluated,
                        proven=False, interrupted=interrupted, timed_out=timed_out)


ALL_POLARITIES_UP_TO = 3


WIDE_EMBEDDINGS = 4


def _polarity_descent(score: Scorer, codes: tuple[int, ...], width: int, jobs: int,
                      deadline: float | None, progress: _Progress,
                      consider: Callable[[tuple[int, ...], tuple[float, int]], float]) -> None:
    """Complement one code bit at a time while that lowers the true cost (first the
    uncomplemented embedding, then each round's ``width`` single-bit flips, scored
    together so that ``jobs`` workers can share them)."""
    values: dict[int, tuple[float, int]] = {}

    def record(variant: tuple[int, ...], value: tuple[float, int]) -> float:
        values[variant[0] ^ codes[0]] = value
        return consider(variant, value)

    def flipped(mask: int) -> tuple[int, ...]:
        return tuple(c ^ mask for c in codes)

    _score_all(score, iter([codes]), width, 1, deadline, progress, record)
    mask = 0
    while True:
        trials = [mask ^ 1 << b for b in range(width) if mask ^ 1 << b not in values]
        if not trials:
            return
        _score_all(score, iter([flipped(m) for m in trials]), width, jobs, deadline, progress,
                   record)
        best = min(trials, key=lambda m: (values[m], m))
        if not values[best] < values[mask]:
            return
        mask = best
