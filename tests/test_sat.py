"""The SAT questions of verification: answered like pyeda's own PicoSAT wrapper, and safe to
ask from several threads at once."""

from __future__ import annotations

import threading
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

from hypothesis import given, settings
from hypothesis import strategies as st
from pyeda.boolalg import picosat

from fsmsynth import synthesize
from fsmsynth.formats import read_table
from fsmsynth.logic.sat import Solver

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@st.composite
def _cnf(draw: st.DrawFn) -> tuple[int, list[tuple[int, ...]]]:
    n = draw(st.integers(1, 12))
    literal = st.integers(1, n).flatmap(lambda v: st.sampled_from((v, -v)))
    clauses = draw(st.lists(st.lists(literal, min_size=1, max_size=4).map(tuple),
                            max_size=60))
    return n, clauses


@settings(max_examples=200, deadline=None)
@given(_cnf(), st.lists(st.integers(1, 12), max_size=3))
def test_answers_agree_with_pyedas_wrapper(cnf: tuple[int, list[tuple[int, ...]]],
                                           assumed: list[int]) -> None:
    # Reference: pyeda.boolalg.picosat.satisfy_one (the same solver through pyeda's own
    # interface) decides satisfiability; a model must satisfy every clause.
    n, clauses = cnf
    units = [v for v in assumed if v <= n]
    with Solver() as solver:
        solver.add(clauses[: len(clauses) // 2])
        solver.solve([], n)  # an earlier question must not leave its assumptions behind
        solver.add(clauses[len(clauses) // 2:])
        found = solver.solve(units, n)
    expected = picosat.satisfy_one(n, [*clauses, *((u,) for u in units)])
    assert (found is None) == (expected is None)
    if found is not None:
        assert len(found) == n and all(abs(lit) == v for v, lit in enumerate(found, 1))
        assert all(any(lit in found for lit in clause) for clause in [*clauses,
                                                                       *((u,) for u in units)])


def test_designs_checked_by_sat_on_threads_match_the_serial_ones() -> None:
    # SR storage asks "S and R both 1 anywhere?", safe unused codes ask where each unused
    # code goes: both by SAT, run here from four threads at once while others minimize.
    # pyeda's own wrapper released the interpreter lock while allocating through Python's
    # allocator, which crashed such runs.
    table = read_table(EXAMPLES / "greenhouse_vent.toml")
    jobs = [(storage, encoding) for storage in ("sr", "jk", "d")
            for encoding in ("binary", "one-hot", "gray")] * 2

    def build(job: tuple[str, str]) -> str:
        design = synthesize(table, job[0], job[1], unused="safe")
        assert design.verification
        return design.verilog + design.json

    serial = [build(job) for job in jobs]
    with ThreadPoolExecutor(4) as pool:
        threaded = list(pool.map(build, jobs))
    assert threaded == serial
    assert threading.active_count() >= 1
