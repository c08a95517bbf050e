"""Multi-level logic and mapping on targets (run: python benchmarks/targets.py).

On the bundled examples and random controllers (benchmarks/controllers.py) of 6 to 24
states, D flip-flops, binary codes, heuristic logic, this prints, as ratios measured in this
process:

* literals of the factored form / literals of the sum of products of each function
  (goal: at most 0.75 on average, i.e. 25 % fewer);
* NAND2 + inverter cells of the mapped design / cells of the naive mapping of the two-level
  circuit (each AND or OR of fan-in n as n - 1 2-input gates, each costing a NAND2 and an
  inverter, plus one inverter per complemented variable) (goal: at most 0.70);
* LUT4s of the mapped design / the naive packing of one LUT per 2-input gate and inverter;
* seconds of the whole flow per design on nand2 and lut4, verification included (goal: a
  24-state, 8-input machine mapped in under 5 s).
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from controllers import controller

from fsmsynth import synthesize
from fsmsynth.formats import read_table
from fsmsynth.model.timers import TimedMachine

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def machines() -> list[tuple[str, object]]:
    found: list[tuple[str, object]] = []
    for path in sorted(EXAMPLES.glob("*.toml")) + [EXAMPLES / "rail_crossing.csv"]:
        table = read_table(path)
        if path.name.endswith("_cubes.toml") or isinstance(table, TimedMachine):
            continue  # a copy of another example; timers are built on two-level only
        found.append((path.stem, table))
    for k, (n, inputs) in enumerate([(6, 4), (8, 5), (10, 6), (12, 6), (14, 7), (16, 8),
                                     (18, 8), (20, 8), (22, 8), (24, 8), (12, 10), (24, 12),
                                     (9, 5), (15, 6)]):
        found.append((f"random {n}x{inputs}", controller(n, inputs, seed=k)))
    return found


def main() -> None:
    rows = []
    print(f"{'machine':<22} {'lits':>5} {'fact':>5} {'nand naive':>10} {'nand':>5} "
          f"{'lut naive':>9} {'lut4':>5} {'s nand2':>8} {'s lut4':>7}")
    for name, table in machines():
        two = synthesize(table, "d")  # type: ignore[arg-type]
        sop = sum(c.literal_count for n in two.cover.names for c in two.cover.of(n))
        factored = sum(e.literals for e in two.factored.values())
        gates = two.cost.gates
        two_input = two.cost.gate_inputs - gates["not"] - gates["and"] - gates["or"]
        naive_nand = gates["not"] + 2 * two_input
        naive_lut = gates["not"] + two_input
        start = time.perf_counter()
        nand = synthesize(table, "d", target="nand2")  # type: ignore[arg-type]
        t_nand = time.perf_counter() - start
        start = time.perf_counter()
        lut = synthesize(table, "d", target="lut4")  # type: ignore[arg-type]
        t_lut = time.perf_counter() - start
        cells = sum(nand.cost.cells.values())
        luts = sum(lut.cost.cells.values())
        rows.append((sop, factored, naive_nand, cells, naive_lut, luts))
        print(f"{name:<22} {sop:5d} {factored:5d} {naive_nand:10d} {cells:5d} {naive_lut:9d} "
              f"{luts:5d} {t_nand:8.2f} {t_lut:7.2f}")

    def mean(values: list[float]) -> float:
        return sum(values) / len(values)

    live = [r for r in rows if r[0] and r[2] and r[4]]
    print(f"\n{len(rows)} machines; means of per-machine ratios:")
    print(f"  factored / two-level literals:   {mean([r[1] / r[0] for r in live]):.3f} "
          "(goal <= 0.75)")
    print(f"  NAND2 cells / naive mapping:     {mean([r[3] / r[2] for r in live]):.3f} "
          "(goal <= 0.70)")
    print(f"  LUT4s / one LUT per 2-input gate: {mean([r[5] / r[4] for r in live]):.3f}")


if __name__ == "__main__":
    main()
