"""Searched state assignments inside the pipeline: the width and options checked, the
candidates scored with the storage kind asked for, and the plain codes kept where a search
ends above them (:mod:`fsmsynth.stages.assign` holds the searches themselves)."""

from __future__ import annotations

import math
import time
from collections.abc import Mapping, Sequence
from dataclasses import replace
from functools import partial

from fsmsynth.base.errors import OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic.cost import CostWeights
from fsmsynth.map.targets import Target
from fsmsynth.model.storage import Storage, storage_named
from fsmsynth.model.table import StateTable
from fsmsynth.stages.assign.adjacency import adjacency_search
from fsmsynth.stages.assign.anneal import anneal_search
from fsmsynth.stages.assign.exhaustive import exhaustive_search
from fsmsynth.stages.assign.scoring import (
    UNIT_DISTANCE_PENALTY,
    Scorer,
    SearchResult,
    min_width,
    plain_codes_if_cheaper,
)
from fsmsynth.stages.encode import Encoding

MAX_EXTRA_WIDTH = 3
"""Searched encodings take codes of up to this many bits more than the fewest (or one-hot
width, when that is more)."""


StorageChoice = str | Storage | Sequence[str | Storage] | Mapping[int, str | Storage]


def searched_codes(table: StateTable, method: str, storage: StorageChoice, unused: str,
            weights: CostWeights, logic: str, seed: int, budget: int | None,
            width: int | None, jobs: int, time_limit: float | None,
            force: bool, target: Target, map_for: str, unit_distance: bool = False
            ) -> tuple[Encoding, SearchResult | None]:
    """Codes chosen by one of the searches of :mod:`fsmsynth.stages.assign` (never dearer
    than binary or Gray at the same width), with how the search went."""
    n = len(table.states)
    k = width if width is not None else min_width(n)
    if isinstance(k, bool) or not isinstance(k, int) or k < min_width(n):
        raise OptionError(f"width {k!r} is too small for {n} states: give a whole number "
                          f"of at least {min_width(n)} bits")
    if k > max(min_width(n) + MAX_EXTRA_WIDTH, n):
        raise OptionError(f"width {k} for {n} states: give at most "
                          f"{max(min_width(n) + MAX_EXTRA_WIDTH, n)} bits (wider codes cost "
                          "logic and search time without helping)")
    if isinstance(jobs, bool) or not isinstance(jobs, int) or jobs < 1:
        raise OptionError(f"jobs {jobs!r}: give a whole number of at least 1")
    if budget is not None and (isinstance(budget, bool) or not isinstance(budget, int)
                               or budget < 0):
        raise OptionError(f"budget {budget!r}: give a whole number of steps >= 0")
    if time_limit is not None and not (isinstance(time_limit, (int, float))
                                       and math.isfinite(time_limit) and time_limit > 0):
        raise OptionError(f"time limit {time_limit!r}: give a finite number of seconds > 0")
    # A partial of a module function, not a closure: worker processes receive the scorer.
    kinds = partial(per_bit, "d" if storage in ("best", "per-bit") else storage)
    score = Scorer(table=table, storages=kinds, unused=unused, weights=weights, logic=logic,
                   target=target, map_for=map_for,
                   unit_distance=UNIT_DISTANCE_PENALTY if unit_distance else 0.0)
    started = time.perf_counter()
    if n == 1 and width is None:  # one state needs no code bits: nothing to search
        result = SearchResult(codes=(0,), width=0, cost=score((0,), 0)[0], evaluated=1,
                              proven=True, interrupted=False)
    elif method == "adjacency":
        result = adjacency_search(score, table, k, jobs=jobs, time_limit=time_limit)
    elif method == "exhaustive":
        result = exhaustive_search(score, n, k, jobs, time_limit=time_limit, force=force)
    else:
        result = anneal_search(score, table, k, seed, 400 if budget is None else budget,
                               jobs=jobs, time_limit=time_limit, one_hot=width is None)
    result = plain_codes_if_cheaper(result, score, n)
    result = replace(result, seconds=round(time.perf_counter() - started, 3),
                     scored_on=target.name)
    return Encoding(method=method, width=result.width,
                    codes=FrozenMap(dict(zip(table.states, result.codes)))), result


def per_bit(storage: StorageChoice, width: int) -> tuple[Storage, ...]:
    """The storage kind of each of ``width`` state bits, bit 0 first."""
    if isinstance(storage, (str, Storage)):
        return (storage_named(storage),) * width
    if isinstance(storage, Mapping):
        missing = [b for b in range(width) if b not in storage]
        if missing or set(storage) - set(range(width)):
            raise OptionError(f"storage per bit: give a kind for each of bits 0..{width - 1}")
        return tuple(storage_named(storage[b]) for b in range(width))
    kinds = tuple(storage_named(s) for s in storage)
    if len(kinds) != width:
        raise OptionError(f"storage per bit: {len(kinds)} kinds given for {width} state bits")
    return kinds
