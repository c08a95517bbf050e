"""Exhaustive state assignment: every assignment, or one per class under permuting the state bits.

Renaming state bits renames the logic, so the minimum two-level cost is the same across a
class; complementing a bit is not a symmetry of the true cost, so assignments are never
merged under it.

References
----------
McCluskey, E. J. and Unger, S. H., "A note on the number of internal variable assignments
for sequential switching circuits", *IRE Trans. Electronic Computers* EC-8, 1959.
"""

from __future__ import annotations

import itertools
import math
import time
from collections.abc import Iterator

from fsmsynth.base.errors import OptionError
from fsmsynth.stages.assign.scoring import Scorer, SearchResult, _OutOfTime, _Progress, _score_all

RAW_LIMIT = 720


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


EXHAUSTIVE_LIMIT = 20_000


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
    than :data:`EXHAUSTIVE_LIMIT` is refused with an :class:`~fsmsynth.base.errors.OptionError`
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
