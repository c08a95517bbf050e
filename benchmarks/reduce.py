"""State-minimization figures (run: python benchmarks/reduce.py).

Completely specified: random machines of 10^3, 10^4, 10^5 states with 4 input classes (two
inputs, every state a row per combination, one output), and a chain machine whose states
are all distinct but only told apart after n rounds of naive refinement.  Times are wall
clock on this machine; the growth factor per tenfold size is the ratio of successive times
measured in this same process (goal: 10^5 states under 3 s, growth under 14x, chain like
random).  Incompletely specified: random machines of 10, 20 and 30 states with don't
cares, exact closed-cover search with a time limit; time and result size.
"""

from __future__ import annotations

import gc
import random
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from fsmsynth import StateTable
from fsmsynth.stages.reduce import minimize_states

WORDS = ["00", "01", "10", "11"]


def random_complete(n: int, seed: int) -> StateTable:
    rng = random.Random(seed)
    rows = [(f"s{i}", w, f"s{rng.randrange(n)}", str(rng.randrange(2)))
            for i in range(n) for w in WORDS]
    return StateTable.from_rows(name="r", inputs=["a", "b"], outputs=["y"], rows=rows,
                                reset="s0", states=[f"s{i}" for i in range(n)])


def chain(n: int) -> StateTable:
    """s0 -> s1 -> ... -> s(n-1) on every input; only the last state outputs 1."""
    rows = [(f"s{i}", w, f"s{min(i + 1, n - 1)}", "1" if i == n - 1 else "0")
            for i in range(n) for w in WORDS]
    return StateTable.from_rows(name="c", inputs=["a", "b"], outputs=["y"], rows=rows,
                                reset="s0", states=[f"s{i}" for i in range(n)])


def random_incomplete(n: int, seed: int) -> StateTable:
    rng = random.Random(seed)
    rows = []
    for i in range(n):
        for w in WORDS:
            if rng.random() < 0.15:
                continue
            nxt = f"s{rng.randrange(n)}" if rng.random() < 0.8 else None
            out = rng.choice("01-")
            rows.append((f"s{i}", w, nxt, out))
    return StateTable.from_rows(name="i", inputs=["a", "b"], outputs=["y"], rows=rows,
                                reset="s0", states=[f"s{i}" for i in range(n)])


def timed(table: StateTable, repeats: int = 3, **options: object) -> tuple[float, object]:
    """Seconds of a default ``minimize_states`` call (reachability included), best of
    ``repeats``.

    Objects alive before the call (imported libraries, the input table) are frozen out of
    the garbage collector, so a full collection during the call costs what the reduction
    itself allocated, not what earlier runs and imports left on the heap.
    """
    best = float("inf")
    for _ in range(repeats):
        gc.collect()
        gc.freeze()
        try:
            start = time.perf_counter()
            result = minimize_states(table, **options)  # type: ignore[arg-type]
            best = min(best, time.perf_counter() - start)
        finally:
            gc.unfreeze()
    return best, result


def main() -> None:
    print("completely specified (Moore rounds + Hopcroft), 4 input classes, default call")
    print(f"{'states':>8} {'random s':>10} {'growth':>7} {'chain s':>9} {'growth':>7} "
          f"{'classes':>8}")
    previous: tuple[float, float] | None = None
    for n in (10**3, 10**4, 10**5):
        t_random, r = timed(random_complete(n, seed=n))
        t_chain, c = timed(chain(n))
        assert len(c.table.states) == n  # type: ignore[attr-defined]
        growth = (f"{t_random / previous[0]:6.1f}x", f"{t_chain / previous[1]:6.1f}x") \
            if previous else ("", "")
        print(f"{n:>8} {t_random:>10.3f} {growth[0]:>7} {t_chain:>9.3f} {growth[1]:>7} "
              f"{len(r.table.states):>8}")  # type: ignore[attr-defined]
        previous = (t_random, t_chain)
    print()
    print("incompletely specified (closed cover, exact search, 20 s limit)")
    print(f"{'states':>8} {'seconds':>9} {'result':>7} {'proven':>7}")
    for n in (10, 20, 30):
        seconds, r = timed(random_incomplete(n, seed=n), repeats=1, time_limit=20.0)
        print(f"{n:>8} {seconds:>9.3f} {len(r.table.states):>7} "  # type: ignore[attr-defined]
              f"{r.proven!s:>7}")  # type: ignore[attr-defined]


if __name__ == "__main__":
    main()
