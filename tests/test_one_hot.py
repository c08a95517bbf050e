"""One-hot logic built from the structure (fsmsynth.stages.one_hot): verified on random
machines above the size where it takes over, Mealy and Moore, with don't cares and
unspecified inputs; on generated controllers it needs fewer literals than binary.

The structural form is the one-hot next-state equation: D_s is the sum, over the states p
with a transition into s, of Q_p and that transition's input condition (common practice,
no source; from memory as the one-hot equations of FPGA design notes)."""

from __future__ import annotations

import sys
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from strategies import state_tables

from fsmsynth import synthesize
from fsmsynth.stages.one_hot import ONE_HOT_STRUCTURE_ABOVE

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "benchmarks"))
from controllers import controller


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(min_states=ONE_HOT_STRUCTURE_ABOVE + 1, max_states=24, max_inputs=3))
def test_structural_one_hot_is_verified(table: object) -> None:
    design = synthesize(table, "d", "one-hot", minimize=False)  # type: ignore[arg-type]
    assert design.verification
    # Every product is one state's bit and a condition over the inputs alone.
    k = design.encoding.width
    for terms in design.cover.terms:
        for term in terms:
            state_bits = [v for v, _p in term.literals() if v < k]
            assert len(state_bits) <= 1


def test_each_product_reads_the_state_it_leaves() -> None:
    table = controller(20, 6, seed=3)
    design = synthesize(table, "d", "one-hot", minimize=False)
    k = design.encoding.width
    codes = design.encoding.codes
    for name, terms in zip(design.cover.names, design.cover.terms):
        if not name.startswith("D"):
            continue
        target = next(s for s in table.states if codes[s] == 1 << int(name[1:]))
        sources = {s for s in table.states for t in terms
                   if t.literals() and (codes[s] >> next(v for v, _p in t.literals()) & 1)}
        entering = {s for s, _c, nxt, _o in table.rows if nxt == target}
        assert sources == entering
        # The rest of each product is a condition over the inputs only.
        assert all(bin(t.care & ((1 << k) - 1)).count("1") == 1 for t in terms)


def test_fewer_literals_than_binary_on_controllers() -> None:
    for n, seed in ((20, 1), (40, 2)):
        table = controller(n, 10, seed=seed)
        hot = synthesize(table, "d", "one-hot")
        binary = synthesize(table, "d", "binary")
        assert hot.verification and binary.verification
        assert hot.cost.literals < binary.cost.literals


def test_one_hot_codes_found_by_a_search_get_the_structural_logic() -> None:
    """Anneal with the width left open scores one-hot too; on a controller of 24 states it
    is far cheaper than any 5-bit code, so the search returns it, and the design is built
    from the transitions (one state bit per product) and proven like any other."""
    table = controller(24, 8, seed=5)
    searched = synthesize(table, "d", "anneal", budget=20)
    hot = synthesize(table, "d", "one-hot")
    rule = synthesize(table, "d", "adjacency")
    assert searched.assignment is not None and searched.verification
    assert searched.encoding.width == 24 and searched.cost.total == hot.cost.total
    assert searched.cost.total < rule.cost.total
    assert searched.assignment.cost == searched.cost.total
    k = searched.encoding.width
    assert all(bin(t.care & ((1 << k) - 1)).count("1") == 1
               for terms in searched.cover.terms for t in terms if t.care)
    # Given a width, the search stays at it.
    narrow = synthesize(table, "d", "anneal", budget=20, width=5)
    assert narrow.encoding.width == 5
    # Where one-hot would need the general minimizer on 24 functions of 32 variables (JK
    # storage, or unused codes made safe), anneal leaves it out rather than spend minutes.
    for storage, unused in (("jk", "dont-care"), ("d", "safe")):
        other = synthesize(table, storage, "anneal", budget=5, unused=unused, check=False)
        assert other.encoding.width == 5


def test_a_one_hot_result_is_held_against_plain_codes_in_the_fewest_bits() -> None:
    from fsmsynth.logic.cost import DEFAULT_WEIGHTS
    from fsmsynth.model.storage import D
    from fsmsynth.stages.assign import Scorer, SearchResult
    from fsmsynth.stages.assign.scoring import plain_codes_if_cheaper
    table = controller(20, 6, seed=2)
    score = Scorer(table=table, storages=lambda w: (D,) * w, unused="dont-care",
                   weights=DEFAULT_WEIGHTS, logic="heuristic")
    one_hot = tuple(1 << i for i in range(20))
    dear = SearchResult(codes=one_hot, width=20, cost=10.0 ** 9, evaluated=1, proven=False,
                        interrupted=False)
    kept = plain_codes_if_cheaper(dear, score, 20)
    assert kept.width == 5 and kept.codes in (tuple(range(20)),
                                              tuple(i ^ (i >> 1) for i in range(20)))
    assert kept.cost == score(kept.codes, 5)[0]
