"""State assignment searches: exhaustive, adjacency, anneal; safe unused codes."""

from __future__ import annotations

import itertools
import math
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import step
from strategies import state_tables

from fsmsynth import StateTable, synthesize
from fsmsynth.base.errors import OptionError
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.stages.assign.adjacency import (
    adjacency_codes,
    adjacency_embeddings,
    adjacency_weights,
)
from fsmsynth.stages.assign.exhaustive import count_assignments, exhaustive_assignments

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
METHODS = ["binary", "gray", "one-hot", "adjacency", "anneal"]


@pytest.mark.parametrize("n", range(3, 9))
def test_count_of_distinct_assignments_matches_the_formula(n: int) -> None:
    # McCluskey and Unger (1959): (2^k - 1)! / ((2^k - n)! k!) distinct assignments of n
    # states in k bits up to permuting and complementing bits.
    k = max(1, (n - 1).bit_length())
    formula = math.factorial(2**k - 1) // (math.factorial(2**k - n) * math.factorial(k))
    assert count_assignments(n, k) == formula


@pytest.mark.parametrize("n", range(3, 9))
def test_exhaustive_enumerates_one_assignment_per_bit_permutation_class(n: int) -> None:
    k = max(1, (n - 1).bit_length())
    found = list(exhaustive_assignments(n, k))
    assert len(found) == len(set(found)) == math.perm(2**k, n) // math.factorial(k)


@settings(max_examples=12)
@given(table=state_tables(min_states=3, max_states=6, max_inputs=2, max_outputs=2),
       storage=st.sampled_from(["d", "jk"]))
def test_exhaustive_is_no_worse_than_any_other_method(table: StateTable, storage: str) -> None:
    best = synthesize(table, storage, "exhaustive", check=False)
    assert best.assignment is not None and best.assignment.proven
    for method in METHODS:
        assert best.cost.total <= synthesize(table, storage, method, check=False).cost.total


@settings(max_examples=10)
@given(table=state_tables(min_states=3, max_states=4, max_inputs=2, max_outputs=2),
       storage=st.sampled_from(["d", "t", "jk"]))
def test_exhaustive_equals_brute_force_over_raw_assignments(table: StateTable,
                                                             storage: str) -> None:
    # Up to 4 states in 2 bits there are 24 raw assignments: all are scored.
    exhaustive = synthesize(table, storage, "exhaustive", minimize=False, check=False,
                            logic="exact")
    k = max(1, (len(table.states) - 1).bit_length())
    raw = min(synthesize(table, storage, dict(zip(table.states, codes)), minimize=False,
                         check=False, logic="exact").cost.total
              for codes in itertools.permutations(range(1 << k), len(table.states)))
    one_hot = synthesize(table, storage, "one-hot", minimize=False, check=False,
                         logic="exact").cost.total
    assert exhaustive.cost.total == min(raw, one_hot)


@settings(max_examples=15)
@given(table=state_tables(min_states=3, max_states=8, max_inputs=2),
       seed=st.integers(0, 100))
def test_same_seed_same_codes_and_every_method_verifies(table: StateTable, seed: int) -> None:
    first = synthesize(table, "jk", "anneal", seed=seed, budget=60)
    again = synthesize(table, "jk", "anneal", seed=seed, budget=60)
    assert first.encoding.codes == again.encoding.codes and first.verification
    for method in ("adjacency", "binary", "one-hot"):
        assert synthesize(table, "jk", method).verification


def spread(table: StateTable, codes: tuple[int, ...]) -> int:
    return sum(w * (codes[a] ^ codes[b]).bit_count()
               for (a, b), w in adjacency_weights(table).items())


def test_adjacency_picks_the_cheapest_polarity_of_the_rule_embeddings() -> None:
    table = read_table(EXAMPLES / "conveyor_sorter.toml")
    rule = adjacency_codes(table, 3)
    embeddings = adjacency_embeddings(table, 3)
    assert rule[table.states.index(table.reset)] == 0 and len(embeddings) == 2
    design = synthesize(table, "d", "adjacency", width=3, minimize=False)
    codes = tuple(design.encoding.codes[s] for s in table.states)
    # One complement of one of the embeddings, the cheapest of all those scored.
    assert any(len({c ^ e for c, e in zip(codes, emb)}) == 1 for emb in embeddings)
    assert design.assignment is not None
    assert design.assignment.evaluated == 8 * len(embeddings) + 2  # and binary and Gray
    assert design.cost.total == design.assignment.cost
    for emb in embeddings:
        for mask in (4, 5, 7):  # reset at a code of 3 bits, so the width stays 3
            given = dict(zip(table.states, (c ^ mask for c in emb)))
            assert design.cost.total <= synthesize(table, "d", given, minimize=False,
                                                   check=False).cost.total
    assert design.verification
    wide = synthesize(table, "d", "anneal", width=3, budget=50)
    assert wide.encoding.width == 3 and wide.verification


@settings(max_examples=40, deadline=None)
@given(table=state_tables(min_states=2, max_states=7, max_inputs=3))
def test_local_weights_link_the_pairs_the_per_class_count_links(table: StateTable) -> None:
    # The two ways of counting rules (1) and (3) must agree on which pairs of states share a
    # next state or a fully specified output word on some input point (rules from the module
    # docstring; the per-class count is the original method, the local one is its scaled form).
    import fsmsynth.stages.assign as assign
    by_class = adjacency_weights(table)
    saved = assign.WEIGHTS_BY_CLASS_UP_TO
    assign.WEIGHTS_BY_CLASS_UP_TO = 0
    try:
        local = adjacency_weights(table)
    finally:
        assign.WEIGHTS_BY_CLASS_UP_TO = saved
    assert set(local) == set(by_class)
    for pair, w in local.items():
        assert w <= by_class[pair]  # one count per shared target, not per class


@settings(max_examples=25, deadline=None)
@given(table=state_tables(min_states=2, max_states=9, max_inputs=2), extra=st.integers(0, 1))
def test_rule_embeddings_are_distinct_local_optima_least_spread_first(table: StateTable,
                                                                      extra: int) -> None:
    width = max(1, (len(table.states) - 1).bit_length()) + extra
    embeddings = adjacency_embeddings(table, width)
    assert embeddings == adjacency_embeddings(table, width)  # seeded: deterministic
    assert 1 <= len(embeddings) <= 8
    reset = table.states.index(table.reset)
    spreads = [spread(table, e) for e in embeddings]
    assert spreads == sorted(spreads) and spreads[0] <= spread(table, adjacency_codes(table, width))
    relabelled = set()
    for e in embeddings:
        assert e[reset] == 0 and len(set(e)) == len(e) and max(e) < 1 << width
        forms = {tuple(sum(1 << p[b] for b in range(width) if c >> b & 1) for c in e)
                 for p in itertools.permutations(range(width))}
        assert not forms & relabelled  # no two are the same up to permuting bits
        relabelled |= forms


def test_width_too_small() -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    with pytest.raises(OptionError, match=r"^width 1 is too small for 4 states: give a whole "
                       r"number of at least 2 bits$"):
        synthesize(table, "d", "anneal", width=1)


@settings(max_examples=15)
@given(table=state_tables(min_states=3, max_states=7, max_inputs=2),
       storage=st.sampled_from(["d", "t", "jk", "sr", "de"]))
def test_safe_mode_returns_every_unused_code_to_reset(table: StateTable, storage: str) -> None:
    design = synthesize(table, storage, "binary", unused="safe")
    assert design.verification is not None
    reset_code = design.netlist.reset_code
    for code in design.encoding.unused_codes():
        for bits in itertools.product("01", repeat=len(table.inputs)):
            nxt, _outs = step(design.netlist, code, "".join(bits))
            assert nxt == reset_code


def test_build_reports_the_search(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = str(EXAMPLES / "greenhouse_vent.toml")
    assert main(["build", spec, "--encoding", "exhaustive", "--storage", "jk", "-o",
                 str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "state assignment (exhaustive): cost " in out and "proven best" in out
    assert main(["build", spec, "--encoding", "anneal", "--seed", "3", "--budget", "40",
                 "-o", str(tmp_path)]) == 0
    assert "state assignment (anneal)" in capsys.readouterr().out


def test_ctrl_c_returns_the_best_found_so_far(capsys: pytest.CaptureFixture[str]) -> None:
    from fsmsynth.stages.assign.anneal import anneal_search
    from fsmsynth.stages.assign.exhaustive import exhaustive_search

    table = read_table(EXAMPLES / "parcel_locker.toml")
    calls = []

    def score(codes: tuple[int, ...], width: int) -> tuple[float, int]:
        calls.append(codes)
        if len(calls) == 6:
            raise KeyboardInterrupt
        return float(sum(codes)), 0

    result = exhaustive_search(score, 4, 2)  # type: ignore[arg-type]
    assert result.interrupted and not result.proven and result.evaluated == 5
    assert result.cost == min(sum(c) for c in calls[:5])
    calls.clear()
    annealed = anneal_search(score, table, 2, seed=1, budget=50)  # type: ignore[arg-type]
    assert annealed.interrupted and annealed.codes in calls[:5]
    assert capsys.readouterr().err == ""  # no progress bar when stderr is not a terminal


def test_exhaustive_on_two_processes_finds_what_one_finds() -> None:
    # Five states in three bits: 1120 assignments, scored in chunks by two workers.
    rows = []
    for i in range(5):
        for x in "01":
            rows.append((f"s{i}", x, f"s{(i * 2 + int(x)) % 5}", str((i + int(x)) % 2)))
    table = StateTable.from_rows(name="five", inputs=["x"], outputs=["y"], rows=rows,
                                 reset="s0")
    one = synthesize(table, "jk", "exhaustive", minimize=False)
    two = synthesize(table, "jk", "exhaustive", minimize=False, jobs=2)
    assert one.assignment is not None and two.assignment is not None
    assert two.assignment.evaluated == one.assignment.evaluated == 1120 + 1
    assert two.cost.total == one.cost.total
    assert two.verification.equivalent


def _ring(n: int, inputs: int = 1) -> StateTable:
    rows = []
    for i in range(n):
        for x in "01":
            cube = x + "-" * (inputs - 1)
            rows.append((f"s{i}", cube, f"s{(i * 3 + int(x)) % n}", str((i + int(x)) % 2)))
    return StateTable.from_rows(name="ring", inputs=[f"x{j}" for j in range(inputs)],
                                outputs=["y"], rows=rows, reset="s0")


def test_exhaustive_refuses_a_search_it_cannot_finish() -> None:
    from fsmsynth.stages.assign.exhaustive import count_candidates

    table = _ring(10, inputs=5)
    # 16!/6! ordered assignments of 10 states to 4-bit codes, up to the 4! bit permutations,
    # plus one-hot (counted directly: common practice, no source).
    assert count_candidates(10, 4) == 29_059_430_400 // 24 + 1
    with pytest.raises(OptionError) as info:
        synthesize(table, "d", "exhaustive", minimize=False)
    assert str(info.value) == (
        "exhaustive search: 1,210,809,601 assignments of 10 states to 4-bit codes is more "
        "than 20,000 (minutes to hours); use encoding 'anneal' or 'adjacency', or force it "
        "(force=True, --force) with a time limit")


def test_time_limit_stops_a_forced_search_on_two_workers_and_leaves_none() -> None:
    import multiprocessing
    import time

    table = _ring(10)
    started = time.monotonic()
    design = synthesize(table, "d", "exhaustive", minimize=False, force=True, jobs=2,
                        time_limit=1.5)
    assert time.monotonic() - started < 15
    a = design.assignment
    assert a is not None and a.timed_out and not a.proven and a.evaluated > 0
    assert design.verification and a.cost == design.cost.total
    assert multiprocessing.active_children() == []


def test_ctrl_c_stops_the_workers_at_once(tmp_path: Path) -> None:
    import signal
    import subprocess
    import sys
    import time

    from fsmsynth.writers.spec_toml import write_spec

    spec = tmp_path / "ring_ctrl_c.toml"
    spec.write_text(write_spec(_ring(10)))
    command = [sys.executable, "-m", "fsmsynth.cli", "build", str(spec), "--encoding",
               "exhaustive", "--force", "--jobs", "2", "--no-minimize", "-o", str(tmp_path)]
    run = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    time.sleep(4)
    run.send_signal(signal.SIGINT)
    out, err = run.communicate(timeout=60)
    assert run.returncode == 0, err
    assert "interrupted: best so far" in out and "verified" in out
    left = subprocess.run(["ps", "-eo", "args"], capture_output=True, text=True).stdout
    assert str(spec) not in left
