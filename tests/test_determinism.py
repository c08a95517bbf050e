"""Results depend only on the input: not on what ran before in the process, nor on the
process itself (hash seed), nor on the order in which a comparison visits its options."""

from __future__ import annotations

import os
import random
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from strategies import state_tables

from fsmsynth import StateTable, compare, synthesize
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.espresso import espresso_cover

ROOT = Path(__file__).resolve().parent.parent


def _random_functions(rng: random.Random, n: int, m: int) -> tuple[list[list[Cube]],
                                                                   list[list[Cube]]]:
    on: list[list[Cube]] = [[] for _ in range(m)]
    off: list[list[Cube]] = [[] for _ in range(m)]
    for point in range(1 << n):
        for f in range(m):
            r = rng.random()
            if r < 0.4:
                on[f].append(Cube.minterm(point, n))
            elif r < 0.8:
                off[f].append(Cube.minterm(point, n))
    return on, off


def test_espresso_results_do_not_depend_on_earlier_calls() -> None:
    # Before the fix, 33 of these 120 repeated calls gave another cover than the first time.
    rng = random.Random(1)
    functions = [_random_functions(rng, 6, 3) for _ in range(40)]
    first = [espresso_cover(6, on, off) for on, off in functions]
    for _round in range(3):
        order = list(range(len(functions)))
        rng.shuffle(order)
        for i in order:
            assert espresso_cover(6, *functions[i]) == first[i]


_FRESH = """
import sys
from fsmsynth.formats import read_table
from fsmsynth import synthesize
designs = [synthesize(read_table(sys.argv[1]), s, "binary") for s in sys.argv[2:]]
print(designs[-1].verilog)
"""


@pytest.mark.parametrize("spec", ["greenhouse_vent.toml", "conveyor_sorter.toml"])
def test_same_verilog_in_a_fresh_process_after_other_work_and_any_hash_seed(
        spec: str) -> None:
    path = str(ROOT / "examples" / spec)
    outputs = []
    for seed, storages in (("0", ["de"]), ("1", ["d", "jk", "sr", "t", "de"])):
        env = {**os.environ, "PYTHONHASHSEED": seed}
        run = subprocess.run([sys.executable, "-c", _FRESH, path, *storages], env=env,
                             capture_output=True, text=True, check=True)
        outputs.append(run.stdout)
    assert outputs[0] == outputs[1]


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(table=state_tables(min_states=5, max_states=10, min_inputs=3, max_inputs=4))
def test_designs_repeat_after_other_syntheses(table: StateTable) -> None:
    # The case the issue reported: "de" costs differently after a "d" synthesis.
    first = synthesize(table, "de", "binary", check=False).verilog
    synthesize(table, "d", "binary", check=False)
    assert synthesize(table, "de", "binary", check=False).verilog == first


@settings(max_examples=8, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(table=state_tables(min_states=3, max_states=6, max_inputs=3))
def test_search_reports_the_cost_of_the_design_it_returns(table: StateTable) -> None:
    for method in ("adjacency", "exhaustive", "anneal"):
        design = synthesize(table, "jk", method, minimize=False,
                            budget=40 if method == "anneal" else None)
        assert design.assignment is not None
        assert design.assignment.cost == design.cost.total, method


def test_comparison_does_not_depend_on_option_order() -> None:
    from fsmsynth.formats import read_table

    table = read_table(ROOT / "examples" / "greenhouse_vent.toml")
    one = compare(table, storages=["jk", "d"], encodings=["anneal", "binary"])
    two = compare(table, storages=["d", "jk"], encodings=["binary", "anneal"])

    def costs(c: object) -> dict[tuple[str, str], float]:
        return {(r.storage, r.encoding): r.total for r in c.rows}  # type: ignore[attr-defined]

    assert costs(one) == costs(two)
