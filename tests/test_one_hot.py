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
