"""Two-level minimization figures (run: python benchmarks/logic.py).

Random incompletely specified single-output functions (a third of the points on, a third
don't care, fixed seeds) with 6, 8, 10 and 12 inputs.  For the exact minimizer, Espresso
(pyeda) and sympy's SOPform, run here in the same process: median time, terms and literals,
and the ratios.  SOPform is skipped where it would take minutes (12 inputs).  Goals: exact
proven minimum at 10 inputs in under 1 s median; at least 20x faster than SOPform at 8 and
10 inputs with no more terms.
"""

from __future__ import annotations

import random
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import sympy
from sympy.logic import SOPform

from fsmsynth.logic.sop import minimize_sop

SAMPLES = {6: 7, 8: 7, 10: 5, 12: 3}
SOPFORM_LIMIT = 10


def function(n: int, seed: int) -> tuple[list[int], list[int]]:
    rng = random.Random(seed)
    points = list(range(1 << n))
    rng.shuffle(points)
    third = len(points) // 3
    return sorted(points[:third]), sorted(points[third:2 * third])


def sopform_terms(n: int, on: list[int], dc: list[int]) -> int:
    names = sympy.symbols(f"v0:{n}")
    expr = SOPform(names, [list(map(int, format(m, f"0{n}b"))) for m in on],
                   [list(map(int, format(m, f"0{n}b"))) for m in dc])
    return len(expr.args) if isinstance(expr, sympy.Or) else 1


def timed(run: object) -> tuple[float, object]:
    start = time.perf_counter()
    result = run()  # type: ignore[operator]
    return time.perf_counter() - start, result


def main() -> None:
    print(f"{'inputs':>6} {'method':>10} {'median s':>9} {'terms':>6} {'literals':>8} "
          f"{'proven':>7} {'time ratio':>11}")
    for n, count in SAMPLES.items():
        rows: dict[str, list[tuple[float, int, int, bool]]] = {"exact": [], "espresso": [],
                                                               "sopform": []}
        for seed in range(count):
            on, dc = function(n, seed)
            t, r = timed(lambda n=n, on=on, dc=dc: minimize_sop(n, on, dc, time_limit=20.0))
            rows["exact"].append((t, len(r.terms), r.literals, r.proven))  # type: ignore[attr-defined]
            t, r = timed(lambda n=n, on=on, dc=dc: minimize_sop(n, on, dc, method="heuristic"))
            rows["espresso"].append((t, len(r.terms), r.literals, False))  # type: ignore[attr-defined]
            if n <= SOPFORM_LIMIT:
                t, terms = timed(lambda n=n, on=on, dc=dc: sopform_terms(n, on, dc))
                rows["sopform"].append((t, terms, 0, False))  # type: ignore[arg-type]
        exact_time = statistics.median(r[0] for r in rows["exact"])
        for method, results in rows.items():
            if not results:
                print(f"{n:>6} {method:>10} {'skipped':>9}")
                continue
            median = statistics.median(r[0] for r in results)
            lits = statistics.median(r[2] for r in results) if method != "sopform" else "-"
            terms = statistics.median(r[1] for r in results)
            print(f"{n:>6} {method:>10} {median:>9.3f} {terms:>6} "
                  f"{lits!s:>8} {sum(r[3] for r in results):>3}/{len(results):<3} "
                  f"{median / exact_time:>10.2f}x")
        excess = [e[1] - x[1] for e, x in zip(rows["espresso"], rows["exact"])]
        print(f"{n:>6} Espresso excess terms over exact: mean {statistics.mean(excess):.2f}, "
              f"max {max(excess)}")
        if rows["sopform"]:
            worse = sum(x[1] > s[1] for x, s in zip(rows["exact"], rows["sopform"]))
            print(f"{n:>6} exact has more terms than SOPform in {worse} of {len(rows['sopform'])}")


if __name__ == "__main__":
    main()
