"""One-hot at scale (run: python benchmarks/one_hot.py).

Generated controllers (``benchmarks/controllers.py``: each state watching 2-4 of 12
inputs) of 30 to 135 states, built one-hot with D flip-flops and, as the reference in this
same run, binary.  Printed: seconds, literals, literals per transition, and the ratio of
one-hot to binary time.  Goal (issue 31): 135 states under 10 s, with no more literals per
transition than binary needs.  One-hot logic comes from the structure one-hot gives
(``fsmsynth.stages.one_hot``) above 16 states.
"""

from __future__ import annotations

import time

from controllers import controller

from fsmsynth import synthesize


def built(table: object, encoding: str) -> tuple[float, object]:
    started = time.perf_counter()
    design = synthesize(table, "d", encoding)  # type: ignore[arg-type]
    assert design.verification
    return time.perf_counter() - started, design


def main() -> None:
    print(f"{'states':>6} {'one-hot s':>9} {'binary s':>8} {'ratio':>6} {'one-hot lit':>11} "
          f"{'binary lit':>10} {'per transition':>15}")
    for n in (30, 60, 94, 135):
        table = controller(n, 12, seed=n)
        transitions = sum(1 for r in table.rows if r[2] is not None)
        hot_s, hot = built(table, "one-hot")
        bin_s, binary = built(table, "binary")
        hot_l, bin_l = hot.cost.literals, binary.cost.literals  # type: ignore[attr-defined]
        print(f"{n:6} {hot_s:9.2f} {bin_s:8.2f} {hot_s / bin_s:6.1f} {hot_l:11} {bin_l:10} "
              f"{hot_l / transitions:7.2f} {bin_l / transitions:7.2f}")


if __name__ == "__main__":
    main()
