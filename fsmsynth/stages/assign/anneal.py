"""State assignment by simulated annealing.

Swap two states' codes, or move a state to an unused code; seeded and bounded by a step
budget, started from the cheaper of binary and the ``adjacency`` result.

References
----------
Kirkpatrick, S., Gelatt, C. D. and Vecchi, M. P., "Optimization by simulated annealing",
*Science* 220, 1983.
"""

from __future__ import annotations

import math
import random
import time
from dataclasses import replace

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.model.table import StateTable
from fsmsynth.stages.assign.adjacency import adjacency_search
from fsmsynth.stages.assign.scoring import Scorer, SearchResult, _Progress
from fsmsynth.stages.encode import Encoding, encode
from fsmsynth.stages.one_hot import ONE_HOT_STRUCTURE_ABOVE, built_from_structure


def anneal_search(score: Scorer, table: StateTable, width: int, seed: int,
                  budget: int, *, jobs: int = 1, time_limit: float | None = None,
                  one_hot: bool = False) -> SearchResult:
    """Simulated annealing over assignments, deterministic for a given seed and budget.

    Starts from the cheaper of binary and the ``adjacency`` result (whose scoring ``jobs``
    shares); ``time_limit`` covers both phases and stops with the best found so
    far.  With ``one_hot`` (the caller left the code width open), one-hot codes are scored
    first and kept where they cost less than the best assignment at ``width``: on
    controllers of many states, one-hot logic built from the transitions usually costs
    far less than any minimum-width code, flip-flops included.  Past
    :data:`~fsmsynth.stages.one_hot.ONE_HOT_STRUCTURE_ABOVE` states this needs D storage
    and don't-care unused codes (:func:`_one_hot_is_quick`).
    """
    deadline = None if time_limit is None else time.monotonic() + time_limit
    rng = random.Random(seed)
    n = len(table.states)
    wide: tuple[tuple[float, int], tuple[int, ...]] | None = None
    one_hot_codes = tuple(1 << i for i in range(n))
    if one_hot and n > width and _one_hot_is_quick(score, table, one_hot_codes):
        wide = (score(one_hot_codes, n), one_hot_codes)
        if deadline is not None:
            time_limit = max(0.001, deadline - time.monotonic())
    result = _anneal(score, table, width, rng, budget, jobs, time_limit, deadline)
    if wide is None or not wide[0][0] < result.cost:
        return replace(result, evaluated=result.evaluated + (wide is not None))
    return replace(result, codes=wide[1], width=n, cost=wide[0][0],
                   evaluated=result.evaluated + 1)


def _one_hot_is_quick(score: Scorer, table: StateTable, codes: tuple[int, ...]) -> bool:
    """Whether scoring one-hot takes about as long as one step: its logic comes from the
    transitions (D flip-flops, unused codes free), or the machine is small enough for the
    minimizer.  Otherwise (T, JK or SR storage, or safe unused codes, on a big machine) it
    would minimize as many functions as states over states plus inputs variables, which
    takes minutes at a hundred states, so anneal leaves it out."""
    n = len(table.states)
    encoding = Encoding(method="given", width=n, codes=FrozenMap(dict(zip(table.states, codes))))
    return n <= ONE_HOT_STRUCTURE_ABOVE or built_from_structure(table, encoding,
                                                                score.storages(n), score.unused)


def _anneal(score: Scorer, table: StateTable, width: int, rng: random.Random, budget: int,
            jobs: int, time_limit: float | None, deadline: float | None) -> SearchResult:
    """The search at ``width`` bits (see :func:`anneal_search`)."""
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
    start_temperature = temperature = max(1.0, value(current)[0] * 0.05)
    cooling = (0.01) ** (1.0 / max(1, budget))
    started = time.monotonic()
    interrupted = timed_out = False
    try:
        for step in range(budget):
            now = time.monotonic()
            if deadline is not None and now > deadline:
                timed_out = True
                break
            if deadline is not None and deadline > started:
                # Cool by whichever runs out first, the steps or the time: a time limit
                # with a large budget still ends cold, taking only improvements.
                used = (now - started) / (deadline - started)
                temperature = min(temperature, start_temperature * 0.01 ** used)
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
