"""State-assignment figures (run: python benchmarks/encode.py).

A fixed suite of 30 random completely specified machines of 5 to 8 states (two inputs, two
outputs, seeds 0..29), for D and JK storage: the excess cost of binary, one-hot, the
adjacency heuristic and the annealing search over the exhaustive optimum (mean and worst,
in percent of the optimum's cost.total), and the time of each method.  Goals: heuristic
within 10% and search within 3% of the optimum on average; exhaustive for an 8-state
machine under 10 s (timed in one process, and with jobs=2 for the 8-state machines).

Then (issue 31, goal 6) the exhaustive search of a generated 8-state controller with 8
inputs (benchmarks/controllers.py), D flip-flops: seconds, candidates, milliseconds per
candidate (goal: under 10 s in all).  ``--eight`` runs only that.
"""

from __future__ import annotations

import random
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from controllers import controller

from fsmsynth import StateTable, synthesize

METHODS = ("binary", "one-hot", "adjacency", "anneal")
WORDS = ("00", "01", "10", "11")


def machine(seed: int) -> StateTable:
    rng = random.Random(seed)
    n = 5 + seed % 4
    rows = [(f"s{i}", w, f"s{rng.randrange(n)}", f"{rng.randrange(2)}{rng.randrange(2)}")
            for i in range(n) for w in WORDS]
    return StateTable.from_rows(name="m", inputs=["a", "b"], outputs=["y", "z"], rows=rows,
                                reset="s0", states=[f"s{i}" for i in range(n)])


def eight_by_eight() -> None:
    table = controller(8, 8)
    start = time.perf_counter()
    design = synthesize(table, "d", "exhaustive", check=False)
    seconds = time.perf_counter() - start
    assert design.assignment is not None
    n = design.assignment.evaluated
    print(f"exhaustive, 8 states x 8 inputs: {seconds:.1f} s, {n} candidates, "
          f"{1000 * seconds / n:.1f} ms each (goal under 10 s: "
          f"{'met' if seconds < 10 else 'NOT met'})")


def main() -> None:
    if "--eight" in sys.argv:
        eight_by_eight()
        return
    for storage in ("d", "jk"):
        excess: dict[str, list[float]] = {m: [] for m in METHODS}
        times: dict[str, list[float]] = {m: [] for m in (*METHODS, "exhaustive")}
        eight: list[float] = []
        eight_jobs: list[float] = []
        for seed in range(30):
            table = machine(seed)
            start = time.perf_counter()
            best = synthesize(table, storage, "exhaustive", minimize=False, check=False)
            elapsed = time.perf_counter() - start
            times["exhaustive"].append(elapsed)
            if len(table.states) == 8:
                eight.append(elapsed)
                start = time.perf_counter()
                shared = synthesize(table, storage, "exhaustive", minimize=False, check=False,
                                    jobs=2)
                eight_jobs.append(time.perf_counter() - start)
                assert shared.cost.total == best.cost.total
            for method in METHODS:
                start = time.perf_counter()
                d = synthesize(table, storage, method, minimize=False, check=False,
                               seed=seed if method == "anneal" else 0)
                times[method].append(time.perf_counter() - start)
                excess[method].append(100 * (d.cost.total - best.cost.total) / best.cost.total)
        print(f"storage {storage.upper()}: excess cost over the exhaustive optimum, 30 machines")
        print(f"  {'method':<11} {'mean %':>7} {'worst %':>8} {'mean s':>8}")
        for method in METHODS:
            print(f"  {method:<11} {statistics.mean(excess[method]):>7.1f} "
                  f"{max(excess[method]):>8.1f} {statistics.mean(times[method]):>8.3f}")
        print(f"  {'exhaustive':<11} {0.0:>7.1f} {0.0:>8.1f} "
              f"{statistics.mean(times['exhaustive']):>8.3f}"
              f"   (8 states: median {statistics.median(eight):.1f} s, "
              f"{statistics.median(eight_jobs):.1f} s with jobs=2)")
    eight_by_eight()


if __name__ == "__main__":
    main()
