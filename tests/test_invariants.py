"""Invariants proven on tables and netlists, against brute force.

The reference for every check here is exhaustive enumeration: breadth-first search over the
states reachable from reset, every input point, every value of the don't-care outputs
(shortest paths by breadth-first search: common practice, no source), and the netlist run
cycle by cycle with :func:`fsmsynth.simulate`.
"""

from __future__ import annotations

import itertools
import json
from collections import deque
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from strategies import state_tables

from fsmsynth import (
    InvariantError,
    StateTable,
    TableError,
    check_invariants,
    constrain_outputs,
    simulate,
    synthesize,
)
from fsmsynth.base.errors import SpecFileError
from fsmsynth.cli import main
from fsmsynth.formats import parse_spec

# --- random invariants, as text and as a Python function ---------------------------------


@dataclass(frozen=True)
class Condition:
    text: str
    holds: Callable[[dict[str, int], str], bool]  # (bit values by name, state) -> bool


@st.composite
def conditions(draw: st.DrawFn, signals: list[str], states: list[str], depth: int = 2
               ) -> Condition:
    if depth == 0 or draw(st.integers(0, 2)) == 0:
        choice = draw(st.integers(0, 3))
        if choice == 0 or not states:
            name = draw(st.sampled_from(signals))
            return Condition(name, lambda v, s, n=name: bool(v[n]))
        if choice == 1:
            state = draw(st.sampled_from(states))
            return Condition(f"state == {state}", lambda v, s, t=state: s == t)
        if choice == 2:
            state = draw(st.sampled_from(states))
            return Condition(f"state != {state}", lambda v, s, t=state: s != t)
        some = draw(st.lists(st.sampled_from(states), min_size=1, max_size=3, unique=True))
        return Condition(f"in(state, {', '.join(some)})", lambda v, s, t=tuple(some): s in t)
    op = draw(st.sampled_from(["~", "&", "|", "^"]))
    a = draw(conditions(signals, states, depth - 1))
    if op == "~":
        return Condition(f"~({a.text})", lambda v, s: not a.holds(v, s))
    b = draw(conditions(signals, states, depth - 1))
    combine = {"&": lambda x, y: x and y, "|": lambda x, y: x or y, "^": lambda x, y: x != y}
    return Condition(f"({a.text}) {op} ({b.text})",
                     lambda v, s: combine[op](a.holds(v, s), b.holds(v, s)))


def points(n: int) -> list[str]:
    return ["".join(bits) for bits in itertools.product("01", repeat=n)]


def completions(word: str) -> list[str]:
    free = [i for i, c in enumerate(word) if c == "-"]
    result = []
    for values in itertools.product("01", repeat=len(free)):
        chars = list(word)
        for i, v in zip(free, values):
            chars[i] = v
        result.append("".join(chars))
    return result


def values(table: StateTable, x: str, y: str) -> dict[str, int]:
    v = {name: int(c) for name, c in zip(table.inputs, x)}
    v.update({name: int(c) for name, c in zip(table.outputs, y)})
    return v


def depths(table: StateTable) -> dict[str, int]:
    """Clock cycles from reset to each state, by specified transitions (brute force)."""
    depth = {table.reset: 0}
    queue = deque([table.reset])
    while queue:
        s = queue.popleft()
        for x in points(len(table.inputs)):
            nxt, _out = table.lookup(s, x)
            if nxt is not None and nxt not in depth:
                depth[nxt] = depth[s] + 1
                queue.append(nxt)
    return depth


def broken_at(table: StateTable, cond: Condition, state: str) -> bool:
    """Whether no value of the don't-care outputs keeps ``cond`` in ``state`` (Moore: no
    one value for every input)."""
    xs = points(len(table.inputs))
    if table.kind == "moore":
        return not any(all(cond.holds(values(table, x, y), state) for x in xs)
                       for y in completions(table.output_cube_of(state)))
    return any(not any(cond.holds(values(table, x, y), state)
                       for y in completions(table.lookup(state, x)[1]))
               for x in xs)


def shortest_break(table: StateTable, cond: Condition) -> int | None:
    depth = depths(table)
    found = [d + 1 for s, d in depth.items() if broken_at(table, cond, s)]
    return min(found) if found else None


def netlist_keeps(table: StateTable, design: object, cond: Condition) -> bool:
    """Brute force over (table state, code) reachable from reset, every input."""
    netlist = design.netlist  # type: ignore[attr-defined]
    start = (table.reset, netlist.reset_code)
    seen, queue = {start}, deque([start])
    while queue:
        state, code = queue.popleft()
        for x in points(len(table.inputs)):
            trace = simulate(netlist, [x, x], start_code=code)
            if not cond.holds(values(table, x, trace[0][1]), state):
                return False
            nxt, _out = table.lookup(state, x)
            if nxt is not None and (nxt, trace[1][0]) not in seen:
                seen.add((nxt, trace[1][0]))
                queue.append((nxt, trace[1][0]))
    return True


@st.composite
def guarded_tables(draw: st.DrawFn) -> tuple[StateTable, Condition]:
    table = draw(state_tables(max_states=5, max_inputs=3, max_outputs=3))
    cond = draw(conditions([*table.inputs, *table.outputs], list(table.states)))
    return StateTable.from_rows(name=table.name, kind=table.kind, inputs=table.inputs,
                                outputs=table.outputs, rows=table.rows, reset=table.reset,
                                states=table.states, state_outputs=table.state_outputs or None,
                                invariants=[cond.text]), cond


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(guarded_tables())
def test_table_check_finds_the_shortest_break(case: tuple[StateTable, Condition]) -> None:
    table, cond = case
    result = check_invariants(table)
    expected = shortest_break(table, cond)
    if expected is None:
        assert result and result.violation is None
        return
    assert not result and result.violation is not None
    broken = result.violation
    assert broken.invariant == cond.text and len(broken.inputs) == expected
    # Replay: the inputs lead through the states given, and the last state breaks it there.
    state = table.reset
    for i, x in enumerate(broken.inputs):
        assert broken.states[i] == state
        nxt, _out = table.lookup(state, x)
        if i < len(broken.inputs) - 1:
            assert nxt is not None
            state = nxt
    assert broken_at(table, cond, state)
    if table.kind == "mealy":
        x = broken.inputs[-1]
        assert not any(cond.holds(values(table, x, y), state)
                       for y in completions(table.lookup(state, x)[1]))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(guarded_tables(), st.sampled_from(["d", "t", "jk", "sr"]))
def test_synthesis_keeps_every_invariant_the_table_allows(
        case: tuple[StateTable, Condition], storage: str) -> None:
    table, cond = case
    if not check_invariants(table):
        with pytest.raises(InvariantError):
            synthesize(table, storage)
        return
    design = synthesize(table, storage)
    assert design.verification and design.invariants
    assert netlist_keeps(table, design, cond)


# --- worked cases -------------------------------------------------------------------------

def tank(fill_when_draining: str) -> StateTable:
    """Fill and drain valves: draining, the fill valve is a don't care in the table."""
    return StateTable.from_rows(
        name="tank", inputs=["go", "low"], outputs=["fill", "drain"], reset="idle",
        rows=[("idle", "1-", "filling", "10"), ("idle", "0-", "idle", "10"),
              ("filling", "-0", "draining", "10"), ("filling", "-1", "filling", "10"),
              ("draining", "-1", "idle", f"{fill_when_draining}1"),
              ("draining", "-0", "draining", f"{fill_when_draining}1")],
        invariants=["~(fill & drain)"])


def test_a_dont_care_output_is_not_allowed_to_break_an_invariant() -> None:
    table = tank("-")
    # Without the invariant the minimizer makes fill a constant 1, which opens both valves.
    free = StateTable.from_rows(name="tank", inputs=table.inputs, outputs=table.outputs,
                                rows=table.rows, reset=table.reset)
    loose = synthesize(free, "d")
    assert str(loose.equations["fill"]) == "fill = 1"
    kept = synthesize(table, "d")
    assert kept.invariants and "hold in every one of" in kept.invariants.summary()
    trace = simulate(kept.netlist, ["10", "00", "01"])
    assert [out for _code, out in trace] == ["10", "10", "01"]
    # The constrained table fixed exactly that bit.
    fixed = constrain_outputs(table)
    assert {r[3] for r in fixed.rows if r[0] == "draining"} == {"01"}


def test_a_table_that_breaks_its_invariant_gives_the_sequence() -> None:
    table = tank("1")
    result = check_invariants(table)
    assert result.violation is not None
    assert result.violation.describe() == (
        "invariant '~(fill & drain)' breaks in state 'draining', 3 clock cycles from reset "
        "(states idle -> filling -> draining; cycle 1: go=1 low=0; cycle 2: go=0 low=0; "
        "cycle 3: go=0 low=0); the table says fill=1 drain=1")
    with pytest.raises(InvariantError, match=r"^tank: invariant broken: invariant "):
        synthesize(table, "jk")


def test_a_faulty_netlist_is_caught_and_replayed() -> None:
    from dataclasses import replace

    design = synthesize(tank("-"), "d")
    net = dict(design.netlist.outputs)["fill"]
    gates = tuple(replace(g, kind="const1", inputs=()) if g.output == net else g
                  for g in design.netlist.gates)
    if not any(g.output == net for g in design.netlist.gates):
        pytest.skip("fill is driven directly by a flip-flop in this design")
    faulty = replace(design.netlist, gates=gates)
    result = check_invariants(design.table, faulty)
    assert result.violation is not None and result.violation.on == "netlist"
    trace = simulate(faulty, list(result.violation.inputs))
    assert trace[-1][1] == result.violation.outputs == "11"


def test_moore_state_needs_one_value_for_every_input() -> None:
    table = StateTable.from_rows(
        name="hoist", kind="moore", inputs=["up"], outputs=["motor"], reset="rest",
        rows=[("rest", "1", "lift", None), ("rest", "0", "rest", None),
              ("lift", "-", "rest", None)], state_outputs={"rest": "0", "lift": "-"},
        invariants=["~(motor & ~up)", "state != rest | ~motor"])
    # In 'lift' the motor must be 0 whenever up is 0; one value for every input: 0.
    fixed = constrain_outputs(table)
    assert fixed.output_cube_of("lift") == "0"
    assert synthesize(table, "t").invariants
    hard = StateTable.from_rows(
        name="hoist", kind="moore", inputs=["up"], outputs=["motor"], reset="rest",
        rows=[("rest", "-", "lift", None), ("lift", "-", "rest", None)],
        state_outputs={"rest": "0", "lift": "-"}, invariants=["motor ^ up"])
    broken = check_invariants(hard).violation
    assert broken is not None and broken.states == ("rest",)


def test_vectors_and_guarded_transitions() -> None:
    table = StateTable.from_transitions(
        name="mixer", reset="idle", inputs={"start": 1, "mode": 2},
        outputs={"fill": 1, "speed": 3}, default_outputs={"fill": 0},
        transitions=[("idle", "start & mode == 2", "filling", {"fill": 1}),
                     ("idle", "else", "idle", {"speed": 0}),
                     ("filling", "mode != 2", "spinning", {"speed": 5}),
                     ("filling", "else", "filling", {"fill": 1}),
                     ("spinning", "1", "idle", {})],
        invariants=["~(fill & speed != 0)", "state != spinning | speed >= 4"])
    design = synthesize(table, "jk")
    assert design.invariants
    # In 'filling' speed is never set: a don't care that must be 0 while filling.
    trace = simulate(design.netlist, ["110", "110", "100", "000"])
    assert [out for _c, out in trace][:2] == ["1000", "1000"]


@pytest.mark.parametrize(("text", "message"), [
    ("fill & pump", "invariant 1 ('fill & pump'): unknown signal 'pump' at column 8 (signals: "
                    "go, low, fill, drain; or state == NAME, in(state, A, B))"),
    ("state == dry", "invariant 1 ('state == dry'): unknown state 'dry' at column 10 (states: "
                     "idle, filling, draining)"),
    ("state < idle", "invariant 1 ('state < idle'): expected '==' or '!=' after 'state' at "
                     "column 7, found '<'"),
    ("in(state)", "invariant 1 ('in(state)'): in(state) at column 4 names no state: write "
                  "in(state, A, B)"),
    ("in(go, idle)", "invariant 1 ('in(go, idle)'): expected 'state' at column 4, found "
                     "'go'"),
    ("fill &", "invariant 1 ('fill &'): unexpected end of guard at column 7"),
])
def test_invariant_errors(text: str, message: str) -> None:
    with pytest.raises(TableError) as info:
        StateTable.from_rows(name="tank", inputs=["go", "low"], outputs=["fill", "drain"],
                             reset="idle", rows=tank("-").rows, invariants=[text])
    assert info.value.message == message


def test_invariants_must_be_a_list() -> None:
    with pytest.raises(TableError, match=r"^invariants must be a list of conditions, not "
                                         r"'fill'$"):
        StateTable.from_rows(name="t", inputs=["a"], outputs=["fill"], reset="s",
                             rows=[("s", "-", "s", "0")], invariants="fill")


SPEC = """name = "tank"
inputs = ["go", "low"]
outputs = ["fill", "drain"]
reset = "idle"
invariants = [
  "~(fill & drain)",
  "state != nowhere",
]
transition = [
  { from = "idle", when = "go", to = "filling", set = { fill = 1, drain = 0 } },
  { from = "idle", when = "else", to = "idle", set = { fill = 0, drain = 0 } },
  { from = "filling", when = "~low", to = "draining", set = { fill = 1, drain = 0 } },
  { from = "filling", when = "else", to = "filling", set = { fill = 1, drain = 0 } },
  { from = "draining", when = "1", to = "idle", set = { drain = 1 } },
]
"""


def test_spec_file_invariant_error_names_its_line() -> None:
    with pytest.raises(SpecFileError) as info:
        parse_spec(SPEC, "tank.toml")
    assert str(info.value) == ("tank.toml:7: invariant 2 ('state != nowhere'): unknown state "
                               "'nowhere' at column 10 (states: idle, filling, draining)")


def test_build_fails_with_exit_2_and_the_sequence(tmp_path: Path,
                                                  capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "tank.toml"
    spec.write_text(SPEC.replace('  "state != nowhere",\n', "")
                    .replace("set = { drain = 1 }", "set = { fill = 1, drain = 1 }"))
    assert main(["build", str(spec), "-o", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("fsmsynth: error: tank: invariant broken: invariant '~(fill & drain)' "
                          "breaks in state 'draining', 3 clock cycles from reset")
    assert "Traceback" not in err and not (tmp_path / "out").exists()
    assert main(["check", str(spec), "--json"]) == 2
    report = json.loads(capsys.readouterr().out)
    assert report["invariants"]["hold"] is False
    assert report["invariants"]["broken"]["states"] == ["idle", "filling", "draining"]


def test_build_proves_the_invariants_it_keeps(tmp_path: Path,
                                              capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "tank.toml"
    spec.write_text(SPEC.replace('  "state != nowhere",\n', '  "state != draining | drain",\n'))
    assert main(["build", str(spec), "-o", str(tmp_path / "out"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "2 invariants hold in every one of" in out and "reachable states of the netlist" in out


def test_a_table_without_invariants_gets_an_empty_check_not_none() -> None:
    """``design.invariants.summary()`` works on every verified design (it raised
    AttributeError for tables without invariants)."""
    table = StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], reset="a",
                                 rows=[("a", "1", "b", "1"), ("a", "0", "a", "0"),
                                       ("b", "-", "a", "0")])
    design = synthesize(table, "d")
    assert design.invariants is not None and design.invariants
    assert design.invariants.summary() == "no invariants to prove"
    assert synthesize(table, "d", check=False).invariants is None


# --- invariants checked together (brute force over every output completion) -------------


@st.composite
def tables_with_invariant_sets(draw: st.DrawFn) -> tuple[StateTable, list[Condition]]:
    table = draw(state_tables(max_states=4, max_inputs=2, max_outputs=3))
    signals, states = [*table.inputs, *table.outputs], list(table.states)
    conds = draw(st.lists(conditions(signals, states, depth=1), min_size=2, max_size=3))
    return StateTable.from_rows(name=table.name, kind=table.kind, inputs=table.inputs,
                                outputs=table.outputs, rows=table.rows, reset=table.reset,
                                states=table.states, state_outputs=table.state_outputs or None,
                                invariants=[c.text for c in conds]), conds


def all_of(conds: list[Condition]) -> Condition:
    return Condition(" & ".join(f"({c.text})" for c in conds),
                     lambda v, s: all(c.holds(v, s) for c in conds))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(tables_with_invariant_sets())
def test_invariants_are_proven_together_as_brute_force_says(
        case: tuple[StateTable, list[Condition]]) -> None:
    """A set of invariants holds on a table exactly when, in every reachable state, some
    value of the don't-care outputs satisfies all of them at once; the report names a set
    that cannot hold together, at the shortest depth."""
    table, conds = case
    result = check_invariants(table)
    expected = shortest_break(table, all_of(conds))
    assert bool(result) == (expected is None)
    if expected is None:
        return
    broken = result.violation
    assert broken is not None and len(broken.inputs) == expected
    named = [next(c for c in conds if c.text == t) for t in (broken.invariant, *broken.together)]
    assert broken_at(table, all_of(named), broken.states[-1])  # the set named conflicts there
    if broken.together:  # and each alone could hold there
        assert not any(broken_at(table, c, broken.states[-1]) for c in named)


def test_invariants_that_cannot_hold_together_are_the_tables_fault(
        capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    """The reproduction: each of "~a | y" and "~a | ~y" can hold where y is free, not both.
    They were proven one at a time ("hold") and synthesis then blamed the netlist."""
    table = StateTable.from_rows(name="m", inputs=["a"], outputs=["y"], reset="s",
                                 rows=[("s", "1", "s", "-"), ("s", "0", "s", "0")],
                                 invariants=["~a | y", "~a | ~y"])
    result = check_invariants(table)
    assert not result and result.violation is not None
    assert result.violation.describe() == (
        "invariants '~a | y' and '~a | ~y' cannot hold together in state 's', 1 clock cycle "
        "from reset (states s; cycle 1: a=1): no value of the don't-care outputs satisfies "
        "all of them; the table says y=-")
    with pytest.raises(InvariantError) as caught:
        synthesize(table, "d")
    assert caught.value.result.on == "table"  # type: ignore[attr-defined]
    spec = tmp_path / "m.toml"
    spec.write_text('name = "m"\ninputs = ["a"]\noutputs = ["y"]\nreset = "s"\n'
                    'invariants = ["~a | y", "~a | ~y"]\ntransition = [\n'
                    '  { from = "s", cube = "1", to = "s", set = { y = "-" } },\n'
                    '  { from = "s", cube = "0", to = "s", set = { y = 0 } },\n]\n')
    assert main(["check", str(spec)]) == 2
    assert "cannot hold together" in capsys.readouterr().out
