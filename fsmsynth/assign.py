"""State assignment that looks for cheap logic, judged by the true cost after minimization.

Three searches, all scoring a candidate assignment by synthesizing its logic (excitation,
two-level minimization, cost) exactly as the final design will be built:

* ``adjacency``: the state-assignment rules of Armstrong (1962), in the priority order
  textbooks give them (Katz and Borriello, *Contemporary Logic Design*, 2nd ed., 2005,
  section 9.? "state assignment guidelines", from memory): (1) states with the same next
  state under the same input, (2) next states of one state, (3) states with the same
  output under the same input should get adjacent codes.  The rules give pair weights
  4, 2, 1; codes are placed in the hypercube to minimize the weighted Hamming distance
  (greedily, then improved by swaps, from several seeded starts).  The logic is not
  synthesized during the placement; it only chooses among the few best placements found
  and their bit-complemented forms, which the rules cannot tell apart.
* ``exhaustive``: every assignment (reset anywhere) when there are at most
  :data:`RAW_LIMIT`, otherwise one per class under permuting the state bits; each is
  synthesized, and one-hot is tried too.  Renaming state bits renames the logic, so the
  minimum two-level cost is the same across a class; only the minimizer's choice among
  equally cheap covers can differ, by a gate or so.  Complementing a bit is not a symmetry
  of the true cost (it complements D-input logic and moves inverters), so assignments are
  never merged under it.
* ``anneal``: simulated annealing over assignments (swap two states' codes, or move a
  state to an unused code), seeded and bounded by a step budget, started from the
  cheaper of binary and the ``adjacency`` result.

References
----------
Armstrong, D. B., "A programmed algorithm for assigning internal codes to sequential
machines", *IRE Trans. Electronic Computers* EC-11, 1962.
McCluskey, E. J. and Unger, S. H., "A note on the number of internal variable assignments
for sequential switching circuits", *IRE Trans. Electronic Computers* EC-8, 1959.
Kirkpatrick, S., Gelatt, C. D. and Vecchi, M. P., "Optimization by simulated annealing",
*Science* 220, 1983.
"""

from __future__ import annotations

import itertools
import math
import random
import signal
import sys
import time
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import Future, ProcessPoolExecutor
from concurrent.futures import TimeoutError as FutureTimeout
from dataclasses import dataclass, field, replace
from typing import Any

from fsmsynth.cost import CostWeights, cost_of, logic_shape
from fsmsynth.encode import Encoding, encode
from fsmsynth.errors import OptionError
from fsmsynth.excite import excite
from fsmsynth.frozen import FrozenMap
from fsmsynth.logic import bdd
from fsmsynth.logic.cover import minimize_logic
from fsmsynth.logic.cube import Cube, partition_within
from fsmsynth.map.realize import map_design
from fsmsynth.regions import state_regions
from fsmsynth.storage import Storage
from fsmsynth.table import StateTable
from fsmsynth.targets import Target

SEARCHES = ("adjacency", "exhaustive", "anneal")
RAW_LIMIT = 720
"""Up to this many raw assignments, ``exhaustive`` scores every one of them."""


@dataclass(frozen=True, slots=True)
class Scorer:
    """The true cost of an assignment: synthesize its logic and weigh it, or, with a
    ``target`` other than two-level, map it onto the target and take its area (the cost of
    what will be built)."""

    table: StateTable
    storages: Callable[[int], tuple[Storage, ...]]
    unused: str
    weights: CostWeights
    logic: str
    target: Target | None = None
    map_for: str = "area"
    unit_distance: float = 0.0
    """Added per transition between two states whose codes differ in more than one bit
    (:data:`UNIT_DISTANCE_PENALTY` when asked for: such steps come first, cost second)."""
    memo: dict[object, tuple[tuple[Cube, ...], bool]] = field(default_factory=dict,
                                                              compare=False, repr=False)

    def __call__(self, codes: Sequence[int], width: int) -> tuple[float, int]:
        encoding = Encoding(method="given", width=width,
                            codes=FrozenMap(dict(zip(self.table.states, codes))))
        kinds = self.storages(width)
        cover = minimize_logic(excite(self.table, encoding, kinds, unused=self.unused),
                               self.weights, self.logic, memo=self.memo)
        counts: dict[str, int] = {}
        for s in kinds:
            counts[s.name] = counts.get(s.name, 0) + 1
        cost = cost_of(logic_shape(cover.terms), counts, self.weights)
        penalty = 0.0
        if self.unit_distance:
            code = dict(zip(self.table.states, codes))
            penalty = self.unit_distance * sum(
                1 for a, b in transitions(self.table) if bin(code[a] ^ code[b]).count("1") > 1)
        if self.target is not None and self.target.kind != "two-level":
            reset = codes[self.table.states.index(self.table.reset)]
            mapped = map_design(self.table.name, self.table.inputs, self.table.outputs, cover,
                                kinds, reset, self.target, self.map_for)
            return round(mapped.area + penalty, 6), cost.gate_inputs
        return cost.total + penalty, cost.gate_inputs


UNIT_DISTANCE_PENALTY = 1000.0


def transitions(table: StateTable) -> list[tuple[str, str]]:
    """Distinct (state, next state) pairs of the table's rows, the state changing."""
    return list(dict.fromkeys((s, n) for s, _c, n, _o in table.rows if n is not None and n != s))


class _Progress:
    """A one-line progress bar on a terminal's stderr, with the time left estimated from the
    rate so far (and the time limit, when it comes first); silent when stderr is not a
    terminal."""

    def __init__(self, label: str, total: int | None, deadline: float | None = None) -> None:
        self.label, self.total, self.deadline = label, total, deadline
        self.live = sys.stderr.isatty()
        self.started = self.last = time.monotonic()

    def update(self, done: int, best: float) -> None:
        now = time.monotonic()
        if not self.live or now - self.last < 0.2:
            return
        self.last = now
        left = None
        if self.total and done:
            left = (now - self.started) * (self.total - done) / done
        if self.deadline is not None:
            left = min(left if left is not None else math.inf, self.deadline - now)
        eta = f", about {left:.0f} s left" if left is not None and math.isfinite(left) else ""
        if self.total:
            filled = int(30 * done / self.total)
            bar = "#" * filled + "." * (30 - filled)
            sys.stderr.write(f"\r{self.label} [{bar}] {done}/{self.total} best {best:g}{eta}")
        else:
            sys.stderr.write(f"\r{self.label} {done} steps, best {best:g}{eta}")
        sys.stderr.flush()

    def close(self) -> None:
        if self.live:
            sys.stderr.write("\r" + " " * 79 + "\r")
            sys.stderr.flush()


def min_width(n_states: int) -> int:
    """Fewest bits that give every state its own code."""
    return max(1, (n_states - 1).bit_length())


def count_assignments(n: int, k: int) -> int:
    """Assignments of n states to k-bit codes up to permuting and complementing bits, counted
    by enumeration.  Equals (2^k - 1)! / ((2^k - n)! k!) (McCluskey and Unger 1959) whenever
    no assignment is left fixed by a bit permutation, as for n = 3..8 in the fewest bits.

    Complementing bits can bring the first state to code 0, so each class has members with
    the first state at 0, and among those only bit permutations remain.
    """
    perms = [p for p in itertools.permutations(range(k)) if p != tuple(range(k))]
    return sum(1 for rest in itertools.permutations(range(1, 1 << k), n - 1)
               if all(tuple(_permute(c, p) for c in (0, *rest)) >= (0, *rest) for p in perms))


def _permute(code: int, perm: tuple[int, ...]) -> int:
    return sum(1 << perm[b] for b in range(len(perm)) if code >> b & 1)


def exhaustive_assignments(n: int, k: int) -> Iterator[tuple[int, ...]]:
    """Every injective assignment of n states to k-bit codes, one per class under bit
    permutations (the lexicographically smallest member)."""
    perms = [p for p in itertools.permutations(range(k)) if p != tuple(range(k))]
    renamed = [[_permute(c, p) for c in range(1 << k)] for p in perms]
    for codes in itertools.permutations(range(1 << k), n):
        if all(tuple(map(r.__getitem__, codes)) >= codes for r in renamed):
            yield codes


WEIGHTS_BY_CLASS_UP_TO = 64
"""Up to this many whole-table input classes, the rules are counted per class; past it, per
pair of states on their own rows (see :func:`adjacency_weights`)."""


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
"""``adjacency`` scores at most this many assignments: rule-optimal embeddings (eight with
three state bits, fewer with more), each in all 2**width polarities."""
RULE_STARTS = 20
"""Seeded random placements descended beside the greedy one to find those embeddings
(fewer for machines of more than 16 states, where one descent costs more)."""


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


@dataclass(frozen=True, slots=True)
class SearchResult:
    """Codes found by a search, what they cost, and how the search ended.

    ``interrupted`` is set when Ctrl-C stopped it and ``timed_out`` when its time limit
    did; either way ``codes`` are the best found so far and ``proven`` is False.
    """

    codes: tuple[int, ...]
    width: int
    cost: float
    evaluated: int
    proven: bool
    interrupted: bool
    timed_out: bool = False
    seconds: float = field(default=0.0, compare=False)
    """Wall-clock time of the search (not compared: equal searches take different times)."""
    scored_on: str = "two-level"
    """The target whose cost scored the candidates."""


EXHAUSTIVE_LIMIT = 20_000
"""``exhaustive`` refuses more assignments than this (about 40 s here) unless forced."""

_CHUNK = 200
_worker_score: Scorer | None = None


def _start_worker(score: Scorer) -> None:
    """Process-pool initializer: keep one scorer (and its memo) per worker; leave Ctrl-C
    to the parent, which stops the search and keeps the best found so far."""
    global _worker_score
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    _worker_score = score


def _score_chunk(chunk: Sequence[tuple[int, ...]], width: int) -> list[tuple[float, int]]:
    assert _worker_score is not None
    return [_worker_score(codes, width) for codes in chunk]


class _OutOfTime(Exception):
    pass


def _score_all(score: Scorer, candidates: Iterator[tuple[int, ...]], width: int, jobs: int,
               deadline: float | None, progress: _Progress,
               consider: Callable[[tuple[int, ...], tuple[float, int]], float]) -> None:
    """Score every candidate, in this process or on ``jobs`` worker processes, passing each
    result to ``consider`` (which returns the best cost so far) in candidate order.

    Workers get chunks of candidates, at most two per worker in flight, so memory stays
    flat however many candidates there are, and Ctrl-C or the deadline stops the workers at
    once (KeyboardInterrupt, or ``_OutOfTime``, propagates after they are gone).
    """
    chunks = iter(lambda: tuple(itertools.islice(candidates, _CHUNK)), ())
    done = 0
    pool = _pool(jobs, score) if jobs > 1 else None
    if pool is None:
        for chunk in chunks:
            for codes in chunk:
                if deadline is not None and done and time.monotonic() > deadline:
                    raise _OutOfTime
                best = consider(codes, score(codes, width))
                done += 1
                progress.update(done, best)
        return
    pending: deque[tuple[tuple[tuple[int, ...], ...], Future[list[tuple[float, int]]]]] = deque()
    try:
        for step in itertools.chain(chunks, [None]):
            if step is not None:
                pending.append((step, pool.submit(_score_chunk, step, width)))
                if len(pending) < 2 * jobs:
                    continue
            while pending and (step is None or len(pending) >= 2 * jobs):
                if deadline is not None and done and time.monotonic() > deadline:
                    raise _OutOfTime
                first, future = pending.popleft()
                timeout = None if deadline is None else max(0.05, deadline - time.monotonic())
                try:
                    values = future.result(timeout=timeout if done else None)
                except FutureTimeout:
                    raise _OutOfTime from None
                for codes, value in zip(first, values):
                    best = consider(codes, value)
                    done += 1
                progress.update(done, best)
    except BaseException:
        _stop_pool(pool)
        raise
    pool.shutdown(wait=True)


def _stop_pool(pool: ProcessPoolExecutor) -> None:
    """Cancel what is queued and end the worker processes now, leaving none behind."""
    # shutdown() drops the pool's references to its workers and to the manager thread that
    # starts them, so both are taken first: the dict is the one the pool keeps filling.
    processes: dict[int, Any] = getattr(pool, "_processes", None) or {}
    manager = getattr(pool, "_executor_manager_thread", None)
    pool.shutdown(wait=False, cancel_futures=True)

    def stop_alive() -> list[Any]:
        alive = [p for p in list(processes.values()) if p.is_alive()]
        for process in alive:
            process.terminate()
        for process in alive:
            process.join(timeout=5)
            if process.is_alive():
                process.kill()
                process.join(timeout=5)
        return alive

    for _round in range(3):
        if not stop_alive():
            break
    # Once the manager thread has ended, no worker can appear.
    if manager is not None:
        manager.join(timeout=5)
    stop_alive()


def count_candidates(n: int, width: int) -> int:
    """How many assignments :func:`exhaustive_search` scores for n states in ``width`` bits
    (one-hot included)."""
    raw = math.perm(1 << width, n)
    return (raw if raw <= RAW_LIMIT else raw // math.factorial(width)) + 1


def exhaustive_search(score: Scorer, n: int, width: int, jobs: int = 1, *,
                      time_limit: float | None = None, force: bool = False) -> SearchResult:
    """Score every assignment (or class, see the module docstring) and one-hot.

    With ``jobs`` > 1, that many worker processes share the scoring, in chunks of
    assignments; ties go to the assignment met first in the enumeration order, as in one
    process, so the result is the same.  The count of assignments is computed first: more
    than :data:`EXHAUSTIVE_LIMIT` is refused with an :class:`~fsmsynth.errors.OptionError`
    naming it, unless ``force``.  ``time_limit`` (seconds) stops the search with the best
    found so far (``timed_out``).
    """
    total = count_candidates(n, width)
    if total > EXHAUSTIVE_LIMIT and not force:
        raise OptionError(
            f"exhaustive search: {total:,} assignments of {n} states to {width}-bit codes is "
            f"more than {EXHAUSTIVE_LIMIT:,} (minutes to hours); use encoding 'anneal' or "
            "'adjacency', or force it (force=True, --force) with a time limit")
    candidates: Iterator[tuple[int, ...]]
    if math.perm(1 << width, n) <= RAW_LIMIT:
        candidates = itertools.permutations(range(1 << width), n)
    else:
        candidates = exhaustive_assignments(n, width)
    deadline = None if time_limit is None else time.monotonic() + time_limit
    progress = _Progress("exhaustive", total, deadline)
    best: tuple[tuple[float, int], tuple[int, ...], int] | None = None
    evaluated = 0
    interrupted = timed_out = False

    def consider(codes: tuple[int, ...], value: tuple[float, int], bits: int = width) -> float:
        nonlocal best, evaluated
        evaluated += 1
        if best is None or value < best[0]:
            best = (value, codes, bits)
        return best[0][0]

    try:
        _score_all(score, candidates, width, jobs, deadline, progress, consider)
        one_hot = tuple(1 << i for i in range(n))
        consider(one_hot, score(one_hot, n), n)
    except KeyboardInterrupt:
        interrupted = True
    except _OutOfTime:
        timed_out = True
    finally:
        progress.close()
    assert best is not None, "interrupted before the first assignment was scored"
    return SearchResult(codes=best[1], width=best[2], cost=best[0][0], evaluated=evaluated,
                        proven=not (interrupted or timed_out), interrupted=interrupted,
                        timed_out=timed_out)


def _pool(jobs: int, score: Scorer) -> ProcessPoolExecutor | None:
    """A pool of ``jobs`` scoring processes, or ``None`` where processes cannot start."""
    try:
        return ProcessPoolExecutor(max_workers=jobs, initializer=_start_worker,
                                   initargs=(score,))
    except (OSError, NotImplementedError):
        return None


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
"""Up to this code width ``adjacency`` scores every polarity of each embedding; wider codes
have 2**width of them, and a descent over single-bit complements finds a cheap one."""
WIDE_EMBEDDINGS = 4
"""Embeddings ``adjacency`` scores (by polarity descent) for codes wider than
:data:`ALL_POLARITIES_UP_TO` bits; half as many past 16 states, where each costs more.
Measured on 8 controllers of 9-16 states: 0.2% dearer than scoring every polarity of
2**(6 - width) embeddings, in half the time."""


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


def anneal_search(score: Scorer, table: StateTable, width: int, seed: int,
                  budget: int, *, jobs: int = 1,
                  time_limit: float | None = None) -> SearchResult:
    """Simulated annealing over assignments, deterministic for a given seed and budget.

    Starts from the cheaper of binary and the ``adjacency`` result (whose scoring ``jobs``
    shares); ``time_limit`` covers both phases and stops with the best found so far.
    """
    deadline = None if time_limit is None else time.monotonic() + time_limit
    rng = random.Random(seed)
    n = len(table.states)
    cache: dict[tuple[int, ...], tuple[float, int]] = {}

    def value(codes: tuple[int, ...]) -> tuple[float, int]:
        if codes not in cache:
            cache[codes] = score(codes, width)
        return cache[codes]

    rule = adjacency_search(score, table, width, jobs=jobs, time_limit=time_limit)
    if rule.interrupted or rule.timed_out:
        return rule
    binary = encode(table, "binary")
    starts = [tuple(binary.codes[s] for s in table.states)] if binary.width == width else []
    try:
        current = min([rule.codes, *starts], key=value)
    except KeyboardInterrupt:
        return replace(rule, interrupted=True)
    best = current
    progress = _Progress("anneal", budget, deadline)
    temperature = max(1.0, value(current)[0] * 0.05)
    cooling = (0.01) ** (1.0 / max(1, budget))
    interrupted = timed_out = False
    try:
        for step in range(budget):
            if deadline is not None and time.monotonic() > deadline:
                timed_out = True
                break
            trial = list(current)
            unused = sorted(set(range(1 << width)) - set(trial))
            if unused and rng.random() < 0.5:
                trial[rng.randrange(n)] = rng.choice(unused)
            else:
                a, b = rng.sample(range(n), 2) if n > 1 else (0, 0)
                trial[a], trial[b] = trial[b], trial[a]
            candidate = tuple(trial)
            delta = value(candidate)[0] - value(current)[0]
            if delta <= 0 or rng.random() < math.exp(-delta / temperature):
                current = candidate
                if value(current) < value(best):
                    best = current
            temperature *= cooling
            progress.update(step + 1, value(best)[0])
    except KeyboardInterrupt:
        interrupted = True
    finally:
        progress.close()
    return SearchResult(codes=best, width=width, cost=value(best)[0],
                        evaluated=len(cache) + rule.evaluated, proven=False,
                        interrupted=interrupted, timed_out=timed_out)
