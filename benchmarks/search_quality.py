"""Search quality on big controllers (run: python benchmarks/search_quality.py [--quick]).

Controllers of 16 to 120 states from benchmarks/controllers.py (each state watches 2-4 of
10-20 inputs, rows partition what it watches, self-loops, don't-care outputs), D
flip-flops, heuristic logic.  For each: the cost (cost.total) of the rule-based
``adjacency`` encoding, and of ``anneal`` with a 10 s time limit (a step budget too large
to end first), both measured in this process; the figure is how much cheaper anneal is, in
percent of the adjacency cost.  Goal (issue 31): at least 8 % on average.

Anneal left to choose the width also scores one-hot codes (and keeps them where cheaper);
the last columns give anneal held to the fewest bits (``width`` given), to show what the
search at that width adds by itself.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from controllers import controller

from fsmsynth import synthesize
from fsmsynth.stages.assign import min_width

MACHINES = [(16, 10), (24, 12), (32, 12), (48, 14), (64, 16), (96, 18), (120, 20)]
TIME_LIMIT = 10.0


def main() -> None:
    quick = "--quick" in sys.argv
    machines = MACHINES[:3] if quick else MACHINES
    gains, narrow_gains = [], []
    print(f"{'states':>6} {'inputs':>6} {'adjacency':>10} {'s':>6} {'anneal':>8} {'s':>6} "
          f"{'bits':>5} {'gain %':>7} {'fewest bits':>11} {'steps':>6} {'gain %':>7}")
    for n, k in machines:
        table = controller(n, k, seed=n)
        start = time.perf_counter()
        rule = synthesize(table, "d", "adjacency", check=False)
        rule_s = time.perf_counter() - start
        start = time.perf_counter()
        searched = synthesize(table, "d", "anneal", check=False, budget=1_000_000,
                              time_limit=TIME_LIMIT)
        anneal_s = time.perf_counter() - start
        assert searched.assignment is not None
        gain = 100 * (rule.cost.total - searched.cost.total) / rule.cost.total
        gains.append(gain)
        narrow = synthesize(table, "d", "anneal", check=False, budget=1_000_000,
                            time_limit=TIME_LIMIT, width=min_width(n))
        assert narrow.assignment is not None
        narrow_gain = 100 * (rule.cost.total - narrow.cost.total) / rule.cost.total
        narrow_gains.append(narrow_gain)
        print(f"{n:>6} {k:>6} {rule.cost.total:>10.0f} {rule_s:>6.1f} "
              f"{searched.cost.total:>8.0f} {anneal_s:>6.1f} {searched.encoding.width:>5} "
              f"{gain:>7.1f} {narrow.cost.total:>11.0f} {narrow.assignment.evaluated:>6} "
              f"{narrow_gain:>7.1f}")
    print(f"mean gain of anneal over adjacency: {statistics.mean(gains):.1f} % "
          f"(median {statistics.median(gains):.1f} %; goal at least 8 %); held to the fewest "
          f"bits: {statistics.mean(narrow_gains):.1f} %")


if __name__ == "__main__":
    main()
