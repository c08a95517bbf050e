"""Controllers with many inputs, each state watching a few (run: python benchmarks/many_inputs.py).

Machines from benchmarks/controllers.py (states watch 2-4 of N inputs, rows partition what
they watch, don't-care outputs, self-loops).  Times are wall clock of one run on this
machine, d and jk flip-flops, binary encoding, heuristic logic, verification included.
Goals: 20 states x 16 inputs under 3 s; 64 x 24 under 20 s; 128 x 32 completes; 25 states x
9 inputs x 10 outputs: adjacency under 10 s, compare under 60 s; and growth with inputs at
fixed states polynomial, not doubling per input (the ratios printed are time(N) / time(8)
measured in this process, next to 2**(N-8)).
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path
from typing import Any

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from controllers import controller

from fsmsynth import compare, synthesize


def timed(call: Callable[..., Any], *args: Any, **options: Any) -> tuple[float, Any]:
    start = time.perf_counter()
    result = call(*args, **options)
    return time.perf_counter() - start, result


def main() -> None:
    quick = "--quick" in sys.argv
    print("synthesize (binary, verified), seconds:")
    for n, k in [(20, 16), (64, 24)] + ([] if quick else [(128, 32)]):
        table = controller(n, k)
        for storage in ("d", "jk"):
            seconds, design = timed(synthesize, table, storage, "binary")
            print(f"  {n:3d} states x {k:2d} inputs, {storage:2s}: {seconds:6.2f} s, "
                  f"cost {design.cost.total:g}, {design.verification.summary()}")
    print("growth with inputs at 16 states (d, binary):")
    base = None
    for k in (8, 12, 16, 24, 32):
        table = controller(16, k, seed=1)
        seconds, _design = timed(synthesize, table, "d", "binary")
        base = base or seconds
        print(f"  {k:2d} inputs: {seconds:6.2f} s, ratio to 8 inputs {seconds / base:5.2f} "
              f"(doubling per input would be {2 ** (k - 8):g})")
    bus = controller(25, 9, n_outputs=10)
    seconds, design = timed(synthesize, bus, "d", "adjacency")
    print(f"25 states x 9 inputs x 10 outputs, adjacency: {seconds:.2f} s, "
          f"cost {design.cost.total:g}")
    if not quick:
        seconds, result = timed(compare, bus)
        print(f"25 states x 9 inputs x 10 outputs, compare (18 designs): {seconds:.2f} s, best "
              f"{result.best.storage} {result.best.encoding} {result.best.total:g}")
        with ProcessPoolExecutor(max_workers=2) as pool:
            seconds, result = timed(compare, bus, executor=pool)
        print(f"  the same on 2 worker processes: {seconds:.2f} s")


if __name__ == "__main__":
    main()
