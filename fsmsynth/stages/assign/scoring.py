"""Scoring candidate state assignments by the true cost of their logic.

:class:`Scorer` synthesizes a candidate exactly as the final design will be built (excitation,
two-level minimization, mapping when a target is given) and returns its cost; one scoring loop
(:func:`_score_all`) serves every search, in this process or in worker processes, with
deadlines and Ctrl-C that ends the workers.
"""

from __future__ import annotations

import itertools
import math
import signal
import sys
import time
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import Future, ProcessPoolExecutor
from concurrent.futures import TimeoutError as FutureTimeout
from dataclasses import dataclass, field
from typing import Any

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic.cost import CostWeights, cost_of, logic_shape
from fsmsynth.logic.cover import minimize_logic
from fsmsynth.logic.cube import Cube
from fsmsynth.map.realize import mapped_area
from fsmsynth.map.targets import Target
from fsmsynth.model.storage import Storage
from fsmsynth.model.table import StateTable
from fsmsynth.stages.encode import Encoding
from fsmsynth.stages.excite import excite, logic_variables
from fsmsynth.stages.one_hot import built_from_structure, one_hot_cover

SEARCHES = ("adjacency", "exhaustive", "anneal")


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
        if built_from_structure(self.table, encoding, kinds, self.unused):
            cover = one_hot_cover(self.table, encoding, logic_variables(self.table, width))
        else:
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
            area = mapped_area(self.table.inputs, self.table.outputs, cover, kinds,
                               self.target, self.map_for)
            return round(area + penalty, 6), cost.gate_inputs
        return cost.total + penalty, cost.gate_inputs


UNIT_DISTANCE_PENALTY = 1000.0


def transitions(table: StateTable) -> list[tuple[str, str]]:
    """Distinct (state, next state) pairs of the table's rows, the state changing."""
    return list(dict.fromkeys((s, n) for s, _c, n, _o in table.rows if n is not None and n != s))


class _Progress:
    """A one-line progress bar on a terminal's stderr, with the time left estimated from the
    rate so far (and the time limit, when it comes first); when stderr is not a terminal (a
    build log), one line every :data:`LOG_EVERY` seconds instead."""

    def __init__(self, label: str, total: int | None, deadline: float | None = None) -> None:
        self.label, self.total, self.deadline = label, total, deadline
        self.live = sys.stderr.isatty()
        self.started = self.last = time.monotonic()

    def update(self, done: int, best: float) -> None:
        now = time.monotonic()
        if now - self.last < (0.2 if self.live else LOG_EVERY):
            return
        self.last = now
        left = None
        if self.total and done:
            left = (now - self.started) * (self.total - done) / done
        if self.deadline is not None:
            left = min(left if left is not None else math.inf, self.deadline - now)
        eta = f", about {left:.0f} s left" if left is not None and math.isfinite(left) else ""
        if not self.live:
            of = f"/{self.total}" if self.total else " steps"
            sys.stderr.write(f"{self.label}: {done}{of}, best {best:g}{eta}, "
                             f"{now - self.started:.0f} s so far\n")
        elif self.total:
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


LOG_EVERY = 5.0
"""Seconds between progress lines of a search whose stderr is not a terminal."""


def min_width(n_states: int) -> int:
    """Fewest bits that give every state its own code."""
    return max(1, (n_states - 1).bit_length())


"""Up to this many whole-table input classes, the rules are counted per class; past it, per
pair of states on their own rows (see :func:`adjacency_weights`)."""


"""``adjacency`` scores at most this many assignments: rule-optimal embeddings (eight with
three state bits, fewer with more), each in all 2**width polarities."""


"""Seeded random placements descended beside the greedy one to find those embeddings
(fewer for machines of more than 16 states, where one descent costs more)."""


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


def _pool(jobs: int, score: Scorer) -> ProcessPoolExecutor | None:
    """A pool of ``jobs`` scoring processes, or ``None`` where processes cannot start."""
    try:
        return ProcessPoolExecutor(max_workers=jobs, initializer=_start_worker,
                                   initargs=(score,))
    except (OSError, NotImplementedError):
        return None


"""Up to this code width ``adjacency`` scores every polarity of each embedding; wider codes
have 2**width of them, and a descent over single-bit complements finds a cheap one."""


"""Embeddings ``adjacency`` scores (by polarity descent) for codes wider than
:data:`ALL_POLARITIES_UP_TO` bits; half as many past 16 states, where each costs more.
Measured on 8 controllers of 9-16 states: 0.2% dearer than scoring every polarity of
2**(6 - width) embeddings, in half the time."""


def plain_codes_if_cheaper(result: SearchResult, score: Callable[[Sequence[int], int],
                                                                 tuple[float, int]],
                           n: int) -> SearchResult:
    """``result``, or the binary or Gray codes at its width where they score lower: a
    search is never dearer than the plain codes it could have started from (a heuristic
    search can end in a local minimum above them).  A proven search needs no check.  The
    two extra scorings count in ``evaluated``.  A one-hot result is compared with the plain
    codes in the fewest bits (at its own width they would be absurdly wide)."""
    if result.proven or result.width == 0 or n > 1 << result.width:
        return result
    width = result.width
    if n > 2 and width == n and sorted(result.codes) == [1 << b for b in range(n)]:
        width = min_width(n)
    best = result
    for codes in (tuple(range(n)), tuple(i ^ (i >> 1) for i in range(n))):
        cost = score(codes, width)[0]
        if cost < best.cost:
            best = SearchResult(codes=codes, width=width, cost=cost,
                                evaluated=best.evaluated, proven=False,
                                interrupted=result.interrupted, timed_out=result.timed_out)
    return SearchResult(codes=best.codes, width=best.width, cost=best.cost,
                        evaluated=result.evaluated + 2, proven=False,
                        interrupted=result.interrupted, timed_out=result.timed_out)
