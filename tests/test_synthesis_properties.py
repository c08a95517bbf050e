"""Properties of synthesis on random machines, for every storage kind and encoding."""

from __future__ import annotations

import dataclasses
import importlib
from unittest.mock import patch

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import brute_force_equivalent, step, table_walk
from strategies import state_tables

from fsmsynth import STORAGES, StateTable, synthesize, verify
from fsmsynth.checks.proof import Counterexample
from fsmsynth.checks.simulate import evaluate
from fsmsynth.stages.netlist import Gate, Netlist

ENCODINGS = ["binary", "gray", "one-hot"]


@pytest.mark.parametrize("encoding", ENCODINGS)
@pytest.mark.parametrize("storage", sorted(STORAGES))
@settings(max_examples=25)
@given(table=state_tables())
def test_random_machines_verify(storage: str, encoding: str, table: StateTable) -> None:
    design = synthesize(table, storage, encoding)
    assert design.verification and design.verification.equivalent
    # The covers honour every function's care set.
    for f, terms in zip(design.functions.functions, design.cover.terms):
        for cube in f.on:
            assert _covers(terms, cube), (f.name, "on-set not covered")
        for cube in f.off:
            assert not any(t.intersects(cube) for t in terms), (f.name, "off-set hit")
    # The netlist has exactly the gates the cost summary counts.
    assert design.netlist.gate_counts() == {k: n for k, n in design.cost.gates.items() if n}


def _covers(terms: tuple, cube: object) -> bool:
    """Whether the union of ``terms`` contains ``cube`` (split on free variables)."""
    from fsmsynth.logic.cube import sharp

    left = [cube]
    for t in terms:
        left = [piece for part in left for piece in sharp(part, t)]
    return not left


@settings(max_examples=25)
@given(table=state_tables(max_states=6, max_inputs=3))
def test_small_machines_agree_with_brute_force(table: StateTable) -> None:
    design = synthesize(table, "jk", "binary")
    assert brute_force_equivalent(design.netlist, table)


@settings(max_examples=25)
@given(table=state_tables(max_states=8, max_inputs=3), encoding=st.sampled_from(ENCODINGS))
def test_sr_pins_never_both_high_at_any_code(table: StateTable, encoding: str) -> None:
    """Checked here independently of verify(): every code, reachable or unused, every input."""
    netlist = synthesize(table, "sr", encoding).netlist
    n_points = 1 << (netlist.width + len(netlist.inputs))
    ones = (1 << n_points) - 1
    values = {}
    for ff in netlist.flip_flops:
        values[ff.q] = sum(1 << p for p in range(n_points) if p >> ff.bit & 1)
    for j, name in enumerate(netlist.inputs):
        values[name] = sum(1 << p for p in range(n_points) if p >> (netlist.width + j) & 1)
    env = evaluate(netlist, values, ones)
    for ff in netlist.flip_flops:
        assert env[ff.pin_net("S")] & env[ff.pin_net("R")] == 0


MUTATIONS = {"and": "or", "or": "and", "not": "buf"}


def mutate(netlist: Netlist, index: int) -> Netlist:
    logic = [i for i, g in enumerate(netlist.gates) if g.kind in MUTATIONS]
    i = logic[index % len(logic)]
    g = netlist.gates[i]
    gates = list(netlist.gates)
    gates[i] = Gate(name=g.name, kind=MUTATIONS[g.kind], inputs=g.inputs, output=g.output)
    return dataclasses.replace(netlist, gates=tuple(gates))


@settings(max_examples=60)
@given(table=state_tables(max_states=6, max_inputs=3, dont_cares=False),
       storage=st.sampled_from(sorted(STORAGES)), index=st.integers(0, 1000))
def test_changed_gate_is_judged_exactly_and_counterexample_replays(
        table: StateTable, storage: str, index: int) -> None:
    netlist = synthesize(table, storage).netlist
    if not any(g.kind in MUTATIONS for g in netlist.gates):
        return
    broken = mutate(netlist, index)
    result = verify(broken, table)
    if storage != "sr":
        assert result.equivalent == brute_force_equivalent(broken, table)
    if result.equivalent:
        return
    cex = result.counterexample
    assert cex is not None
    if cex.start_code is not None or "/" in cex.signal:
        return  # an exclusive-pin clash, checked by the SR test above
    assert_replays(broken, table, cex)


def assert_replays(netlist: Netlist, table: StateTable, cex: Counterexample) -> None:
    """The netlist really shows ``actual`` and the table really asks for ``expected``."""
    code = netlist.reset_code
    for word in cex.inputs[:-1]:
        code, _outs = step(netlist, code, word)
    _next, outs = step(netlist, code, cex.inputs[-1])
    state, want = table_walk(table, cex.inputs)
    o = table.outputs.index(cex.signal)
    assert outs[o] == cex.actual and want[o] == cex.expected
    assert state == cex.states[-1]


def test_counterexample_is_shortest_on_a_known_fault() -> None:
    # A Mealy detector of two 1s in a row: y = 1 when the input has been 1 twice.
    table = StateTable.from_rows(
        name="twice", inputs=["x"], outputs=["y"], reset="a",
        rows=[("a", "0", "a", "0"), ("a", "1", "b", "0"), ("b", "0", "a", "0"),
              ("b", "1", "b", "1")])
    design = synthesize(table, "d")
    out_net = dict(design.netlist.outputs)["y"]
    gates = tuple(Gate(g.name, "const0", (), g.output) if g.output == out_net else g
                  for g in design.netlist.gates)
    if out_net not in {g.output for g in gates}:  # y is a wire: tie it to 0 directly
        gates += (Gate("fs_gx", "const0", (), "y"),)
        broken = dataclasses.replace(design.netlist, gates=gates, outputs=(("y", "y"),))
    else:
        broken = dataclasses.replace(design.netlist, gates=gates)
    result = verify(broken, table)
    assert not result
    assert result.counterexample is not None
    assert result.counterexample.inputs == ("1", "1")
    assert result.counterexample.states == ("a", "b")
    assert (result.counterexample.expected, result.counterexample.actual) == ("1", "0")


def test_same_input_gives_byte_identical_output() -> None:
    table = StateTable.from_rows(
        name="twice", inputs=["x"], outputs=["y"], reset="a",
        rows=[("a", "0", "a", "0"), ("a", "1", "b", "0"), ("b", "0", "a", "0"),
              ("b", "1", "b", "1")])
    first = synthesize(table, "jk", "one-hot")
    again = synthesize(table, "jk", "one-hot")
    assert first.verilog == again.verilog and first.json == again.json


def test_verify_takes_a_design_or_either_argument_order() -> None:
    table = StateTable.from_rows(
        name="twice", inputs=["x"], outputs=["y"], reset="a",
        rows=[("a", "0", "a", "0"), ("a", "1", "b", "0"), ("b", "-", "a", "1")])
    design = synthesize(table, "t", unused="safe")
    assert verify(design).safe_unused is None  # two states in one bit: no unused code
    assert verify(design.netlist, table) and verify(table, design.netlist)


def test_safe_unused_codes_return_to_reset_in_one_clock() -> None:
    table = StateTable.from_rows(
        name="three", inputs=["x"], outputs=["y"], reset="a",
        rows=[("a", "1", "b", "0"), ("a", "0", "a", "0"), ("b", "-", "c", "0"),
              ("c", "-", "a", "1")])
    for storage in sorted(STORAGES):
        design = synthesize(table, storage, "binary", unused="safe")
        assert design.verification is not None and design.verification.safe_unused
        (unused,) = design.encoding.unused_codes()
        for word in ("0", "1"):
            nxt, _outs = step(design.netlist, unused, word)
            assert nxt == design.encoding.codes["a"]


@settings(max_examples=60)
@given(table=state_tables(max_states=6, max_inputs=4), storage=st.sampled_from(sorted(STORAGES)),
       index=st.integers(0, 1000), broken=st.booleans())
def test_symbolic_walk_agrees_with_the_class_walk(table: StateTable, storage: str, index: int,
                                                  broken: bool) -> None:
    """The many-input walk (BDDs per product node), forced on small machines, against the
    walk over input classes: same verdict, same reachable product, counterexamples of the
    same length that replay."""
    verify_module = importlib.import_module("fsmsynth.checks.verify")
    netlist = synthesize(table, storage, unused="safe").netlist
    if broken and any(g.kind in MUTATIONS for g in netlist.gates):
        netlist = mutate(netlist, index)
    by_classes = verify(netlist, table)
    with patch.object(verify_module, "LOCAL_ABOVE", 0):
        symbolic = verify(netlist, table)
    assert symbolic.symbolic and not by_classes.symbolic
    assert symbolic.equivalent == by_classes.equivalent
    if symbolic.equivalent:
        assert symbolic.product_states == by_classes.product_states
        return
    a, b = symbolic.counterexample, by_classes.counterexample
    assert a is not None and b is not None
    assert len(a.inputs) == len(b.inputs) and a.start_code == b.start_code
    if a.start_code is not None or "/" in a.signal:
        return
    assert_replays(netlist, table, a)
