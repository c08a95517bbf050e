"""Guarded transitions: guards compiled by BDDs agree with evaluating them directly.

The reference semantics are plain Boolean algebra and unsigned binary comparison (common
practice, no source), evaluated here by Python on every input combination, and the priority
order of an if/elif chain (Python language reference, section 8.1, "The if statement").
"""

from __future__ import annotations

import itertools
from typing import Any

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from fsmsynth import STORAGES, StateTable, synthesize
from fsmsynth.base.errors import TableError
from fsmsynth.language.guards import compile_guard
from fsmsynth.logic import bdd

# A guard as a tree over ports of given widths: ("in", p) a 1-bit port | ("bit", p, i) bit i
# of a vector | ("cmp", p, op, c) a vector compared with c | ("const", b) | ("not", g) |
# (op, g, h) with op in & | ^.  An input point is a tuple of port values (unsigned ints).
Guard = tuple[Any, ...]
_COMPARE = {"==": lambda a, c: a == c, "!=": lambda a, c: a != c, "<": lambda a, c: a < c,
            "<=": lambda a, c: a <= c, ">": lambda a, c: a > c, ">=": lambda a, c: a >= c}


def guards(widths: list[int]) -> st.SearchStrategy[Guard]:
    ports = range(len(widths))
    leaf = [st.tuples(st.just("const"), st.integers(0, 1))]
    bits = [p for p in ports if widths[p] == 1]
    vectors = [p for p in ports if widths[p] > 1]
    if bits:
        leaf.append(st.tuples(st.just("in"), st.sampled_from(bits)))
    if vectors:
        leaf.append(st.sampled_from(vectors).flatmap(lambda p: st.tuples(
            st.just("bit"), st.just(p), st.integers(0, widths[p] - 1))))
        leaf.append(st.sampled_from(vectors).flatmap(lambda p: st.tuples(
            st.just("cmp"), st.just(p), st.sampled_from(sorted(_COMPARE)),
            st.integers(0, (1 << widths[p]) - 1))))
    return st.recursive(st.one_of(leaf), lambda inner: st.one_of(
        st.tuples(st.just("not"), inner),
        st.tuples(st.sampled_from("&|^"), inner, inner)), max_leaves=5)


def text_of(g: Guard, names: list[str]) -> str:
    if g[0] == "in":
        return names[g[1]]
    if g[0] == "bit":
        return f"{names[g[1]]}[{g[2]}]"
    if g[0] == "cmp":
        return f"{names[g[1]]} {g[2]} {g[3]}"
    if g[0] == "const":
        return str(g[1])
    if g[0] == "not":
        return f"~({text_of(g[1], names)})" if len(g[1]) >= 3 else f"!{text_of(g[1], names)}"
    return f"({text_of(g[1], names)} {g[0]} {text_of(g[2], names)})"


def holds(g: Guard, point: tuple[int, ...]) -> bool:
    if g[0] == "in":
        return bool(point[g[1]])
    if g[0] == "bit":
        return bool(point[g[1]] >> g[2] & 1)
    if g[0] == "cmp":
        return bool(_COMPARE[g[2]](point[g[1]], g[3]))
    if g[0] == "const":
        return bool(g[1])
    if g[0] == "not":
        return not holds(g[1], point)
    a, b = holds(g[1], point), holds(g[2], point)
    return {"&": a and b, "|": a or b, "^": a != b}[g[0]]


def points_of(widths: list[int]) -> list[tuple[int, ...]]:
    return list(itertools.product(*(range(1 << w) for w in widths)))


def word_of(point: tuple[int, ...], widths: list[int]) -> str:
    """The table's input word: each port's bits, most significant first."""
    return "".join(format(v, f"0{w}b") for v, w in zip(point, widths))


Machine = tuple[list[str], list[int], list[str], list[tuple[Any, ...]], str]


@st.composite
def guarded_machines(draw: st.DrawFn) -> Machine:
    widths = draw(st.lists(st.integers(1, 3), min_size=1, max_size=4))
    while sum(widths) > 7:  # keep the point-by-point reference check small
        widths.pop()
    names = [f"i{k}" for k in range(len(widths))]
    states = [f"s{k}" for k in range(draw(st.integers(2, 10)))]
    transitions: list[tuple[Any, ...]] = []
    for state in states:
        for _ in range(draw(st.integers(1, 3))):
            guard = draw(st.one_of(guards(widths), st.just(("else",))))
            transitions.append((state, guard, draw(st.sampled_from(states)),
                                draw(st.integers(0, 1))))
    if draw(st.booleans()):
        transitions.insert(0, ("*", draw(guards(widths)), draw(st.sampled_from(states)), 1))
    return names, widths, states, transitions, draw(st.sampled_from(["dont-care", "stay"]))


def expected(state: str, transitions: list[tuple[Any, ...]], point: tuple[int, ...],
             otherwise: str) -> tuple[str | None, str]:
    """Direct evaluation: the first transition (``*`` ones first) whose guard holds."""
    chain = [t for t in transitions if t[0] == "*"] + [t for t in transitions if t[0] == state]
    for _frm, guard, to, out in chain:
        if guard == ("else",) or holds(guard, point):
            return to, str(out)
    return (state, "0") if otherwise == "stay" else (None, "-")


def never_fires(transitions: list[tuple[Any, ...]], widths: list[int]) -> set[int]:
    """Positions (0-based) of transitions no input point fires, in any state's chain."""
    dead = set()
    for k, (frm, _g, _to, _out) in enumerate(transitions):
        states = {t[0] for t in transitions} - {"*"} if frm == "*" else {frm}
        for state in states:
            chain = [j for j, t in enumerate(transitions) if t[0] == "*"] + [
                j for j, t in enumerate(transitions) if t[0] == state]
            if all(next((j for j in chain if transitions[j][1] == ("else",)
                         or holds(transitions[j][1], point)), None) != k
                   for point in points_of(widths)):
                dead.add(k)
    return dead


def written(transitions: list[tuple[Any, ...]], names: list[str]) -> dict[str, Any]:
    """The API's arguments: every-state transitions (``*`` in the model above) on their own
    list, tried first."""
    def entry(g: Guard, to: str, out: int) -> tuple[Any, ...]:
        return ("else" if g == ("else",) else text_of(g, names), to, {"z": out})
    return {"every_state": [entry(g, to, out) for frm, g, to, out in transitions if frm == "*"],
            "transitions": [(frm, *entry(g, to, out)) for frm, g, to, out in transitions
                            if frm != "*"]}


@settings(max_examples=60, deadline=None)
@given(machine=guarded_machines(), storage=st.sampled_from(sorted(STORAGES)))
def test_compiled_rows_agree_with_the_guards_in_priority_order(machine: Machine,
                                                               storage: str) -> None:
    names, widths, states, transitions, otherwise = machine
    dead = never_fires(transitions, widths)
    options: dict[str, Any] = dict(name="m", reset=states[0], inputs=dict(zip(names, widths)),
                                   outputs=["z"], default_outputs={"z": 0},
                                   otherwise=otherwise, states=states)
    if dead:
        # A transition that never fires is refused, and the one named is truly dead.
        with pytest.raises(TableError, match="can never fire") as caught:
            StateTable.from_transitions(**written(transitions, names), **options)
        every = sum(t[0] == "*" for t in transitions)  # listed first in the model
        assert caught.value.row is not None
        assert caught.value.row + (every if caught.value.entry == "transition" else 0) in dead
        transitions = [t for k, t in enumerate(transitions) if k not in dead]
        if not any(t[0] == states[0] for t in transitions):
            return  # the reset state lost all its transitions: nothing left to build
    table = StateTable.from_transitions(**written(transitions, names), **options)
    for state in table.states:
        for point in points_of(widths):
            nxt, out = table.lookup(state, word_of(point, widths))
            assert (nxt, out) == expected(state, transitions, point, otherwise)
    design = synthesize(table, storage, "binary")
    assert design.verification


@given(width=st.integers(1, 4), op=st.sampled_from(["==", "!=", "<", "<=", ">", ">="]),
       data=st.data())
def test_vector_comparisons_are_unsigned_integer_comparisons(width: int, op: str,
                                                             data: st.DataObject) -> None:
    value = data.draw(st.integers(0, (1 << width) - 1))
    var = bdd.variables(width + 1)
    bits = {"v": var[:width], "go": [var[width]]}
    compiled = compile_guard(f"go & v {op} {value}", {"v": width, "go": 1}, bits)
    python = {"==": int.__eq__, "!=": int.__ne__, "<": int.__lt__, "<=": int.__le__,
              ">": int.__gt__, ">=": int.__ge__}[op]
    for number in range(1 << width):
        for go in (0, 1):
            point = {var[i]: number >> i & 1 for i in range(width)} | {var[width]: go}
            assert bool(compiled.restrict(point).is_one()) == (go == 1 and python(number, value))
    bit = data.draw(st.integers(0, width - 1))
    picked = compile_guard(f"v[{bit}]", {"v": width}, bits)
    assert picked is var[bit]


def test_an_every_state_transition_beats_the_states_own_and_stay_fills_the_rest() -> None:
    table = StateTable.from_transitions(
        name="hoist", reset="rest", inputs=["up", "stop"], outputs={"motor": 1},
        default_outputs={"motor": 0},
        every_state=[("stop", "rest", {})],
        transitions=[("rest", "up", "lift", {"motor": 1}),
                     ("lift", "up", "lift", {"motor": 1})],
        otherwise="stay")
    assert table.lookup("lift", "11") == ("rest", "0")  # inputs are up, stop
    assert table.lookup("lift", "10") == ("lift", "1")
    assert table.lookup("lift", "00") == ("lift", "0")
    assert table.lookup("rest", "10") == ("lift", "1")


def test_a_moore_machine_takes_its_outputs_from_its_states() -> None:
    table = StateTable.from_transitions(
        name="lamp", kind="moore", reset="dark", inputs=["press"], outputs=["on"],
        default_outputs={"on": 0}, state_outputs={"lit": {"on": 1}},
        transitions=[("dark", "press", "lit", None), ("dark", "else", "dark", None),
                     ("lit", "press", "dark", None), ("lit", "else", "lit", None)])
    assert table.output_cube_of("lit") == "1" and table.output_cube_of("dark") == "0"
    assert synthesize(table, "t", "binary").verification


def build(transitions: list[tuple[Any, ...]], inputs: Any = None) -> StateTable:
    return StateTable.from_transitions(
        name="m", reset="a", inputs=inputs or ["start", "ok"], outputs={"fill": 1},
        transitions=transitions)


@pytest.mark.parametrize("transitions, message", [
    ([("a", "start & go", "a", {})],
     "transition 1 (a -> a, guard 'start & go'): unknown input 'go' at column 9 (inputs: "
     "start, ok)"),
    ([("a", "start & (ok", "a", {})],
     "transition 1 (a -> a, guard 'start & (ok'): expected ')' at column 12, found end of "
     "guard"),
    ([("a", "start # ok", "a", {})],
     "transition 1 (a -> a, guard 'start # ok'): unexpected character '#' at column 7"),
    ([("a", "start[1]", "a", {})],
     "transition 1 (a -> a, guard 'start[1]'): bit 1 of 'start' at column 7 is out of "
     "range: start has bits 0 down to 0"),
    ([("a", "ok == 2", "a", {})],
     "transition 1 (a -> a, guard 'ok == 2'): constant 2 at column 7 does not fit 'ok' "
     "(1 bit: 0 to 1)"),
    ([("a", "1", "a", {"fill": 2})],
     "transition 1 (a -> a, guard '1'): value 2 does not fit output 'fill' (1 bit: 0 to 1)"),
    ([("a", "1", "a", {"drain": 1})],
     "transition 1 (a -> a, guard '1'): unknown output 'drain' (outputs: fill)"),
    ([("a", "start", "a", {}), ("a", "ok", "a", {}), ("a", "start & ok", "a", {})],
     "transition 3 (a -> a, guard 'start & ok') can never fire: earlier guards of state 'a' "
     "cover it (transition 1, transition 2)"),
    ([("a", "1", "a", {}), ("a", "else", "a", {})],
     "transition 2 (a -> a, guard 'else') can never fire: earlier guards of state 'a' cover "
     "it (transition 1)"),
    # '*' is not a state: every-state transitions have a list of their own.
    ([("*", "start | ok", "a", {}), ("a", "start", "a", {})],
     "transition 1: '*' is not a state; give what every state does as every-state "
     "transitions (every_state=[(guard, to, outputs)], in a spec file [[every_state]] "
     "entries)"),
    ([("a", "start & ~start", "a", {})],
     "transition 1 (a -> a, guard 'start & ~start') can never fire: its guard never holds"),
])
def test_each_error_names_the_transition_and_the_text_at_fault(
        transitions: list[tuple[Any, ...]], message: str) -> None:
    with pytest.raises(TableError) as caught:
        build(transitions)
    assert caught.value.message == message


def test_a_vector_used_as_a_bit_is_refused_by_the_guard_compiler() -> None:
    var = bdd.variables(2)
    with pytest.raises(ValueError, match=r"^'mode' at column 1 is a 2-bit vector, not a "
                                         r"condition: compare it \(mode == 1\) or take a bit "
                                         r"\(mode\[0\]\)$"):
        compile_guard("mode & 1", {"mode": 2}, {"mode": var})


def test_vector_ports_become_msb_first_bits_and_one_port_each() -> None:
    # Bit 0 least significant, as Verilog vectors declared [w-1:0] (IEEE 1364-2005, 4.2.1).
    import json
    table = StateTable.from_transitions(
        name="mixer", reset="idle", inputs={"start": 1, "mode": 2}, outputs={"speed": 3},
        default_outputs={"speed": 0},
        transitions=[("idle", "start & mode == 2", "run", {"speed": 5}),
                     ("idle", "else", "idle", {}), ("run", "mode < 2", "idle", {}),
                     ("run", "else", "run", {"speed": "1-0"})])
    assert table.inputs == ("start", "mode[1]", "mode[0]")
    assert table.outputs == ("speed[2]", "speed[1]", "speed[0]")
    assert table.lookup("idle", "110") == ("run", "101")   # start=1, mode=2
    assert table.lookup("idle", "111") == ("idle", "000")  # mode=3
    assert table.lookup("run", "011") == ("run", "1-0")
    design = synthesize(table, "jk", "binary")
    assert design.verification
    assert "input  wire [1:0] mode" in design.verilog
    assert "output wire [2:0] speed" in design.verilog
    ports = json.loads(design.json)["ports"]
    assert {"name": "mode", "direction": "input", "width": 2,
            "bits": ["mode[1]", "mode[0]"]} in ports
    assert any(str(s) == "mode[1]" for eq in design.equations.values()
               for s in eq.to_sympy().free_symbols)


def test_bits_of_a_vector_must_be_whole_and_in_order() -> None:
    with pytest.raises(TableError) as caught:
        StateTable.from_rows(name="m", inputs=["v[0]", "v[1]"], outputs=[], reset="a",
                             rows=[("a", "--", "a", "")])
    assert caught.value.message == ("inputs: the bits of vector 'v' must be listed together, "
                                    "most significant first: v[1], v[0]")


def test_the_documented_example_compiles_and_its_design_verifies() -> None:
    from pathlib import Path
    guide = Path(__file__).resolve().parent.parent / "docs" / "guide" / "python-api.md"
    text = guide.read_text()
    block = text[text.index("table = StateTable.from_transitions("):]
    namespace: dict[str, Any] = {"StateTable": StateTable}
    exec(block[:block.index("```")], namespace)
    table = namespace["table"]
    assert table.lookup("open", "111") == ("shut", "01")  # the abort beats the state's own
    assert table.lookup("open", "110") == ("open", "00")  # otherwise="stay"
    assert synthesize(table, "jk", "binary").verification


GUARDED_SPEC = """\
name = "m"
inputs = ["go", "halt"]
outputs = ["z"]
reset = "a"
default_outputs = { z = 0 }

[[transition]]
from = "a"
when = "go & ~halt"
to = "b"
set = { z = 1 }

[[transition]]
from = "b"
when = "{guard}"
to = "a"
"""


def test_a_guarded_spec_file_reads_as_the_same_table_as_the_api() -> None:
    from fsmsynth.formats.spec_toml import parse_spec
    table = parse_spec(GUARDED_SPEC.replace("{guard}", "halt"), "m.toml")
    assert table == StateTable.from_transitions(
        name="m", reset="a", inputs=["go", "halt"], outputs=["z"], default_outputs={"z": 0},
        transitions=[("a", "go & ~halt", "b", {"z": 1}), ("b", "halt", "a", {})])


def test_a_bad_guard_in_a_spec_file_names_the_file_and_the_transitions_line(
        tmp_path: Any, capsys: pytest.CaptureFixture[str]) -> None:
    from fsmsynth.cli import main
    spec = tmp_path / "m.toml"
    spec.write_text(GUARDED_SPEC.replace("{guard}", "halt | stop"))
    assert main(["build", str(spec), "-o", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert err == (f"fsmsynth: error: {spec}:13: transition 2 (b -> a, guard 'halt | stop'): "
                   "unknown input 'stop' at column 8 (inputs: go, halt)\n")
    assert not (tmp_path / "out").exists()


def test_an_output_value_too_wide_in_a_spec_file_names_the_transitions_line() -> None:
    from fsmsynth.base.errors import SpecFileError
    from fsmsynth.formats.spec_toml import parse_spec
    with pytest.raises(SpecFileError) as caught:
        parse_spec(GUARDED_SPEC.replace("{guard}", "halt").replace("z = 1", "z = 2"),
                   "m.toml")
    assert str(caught.value) == ("m.toml:7: transition 1 (a -> b, guard 'go & ~halt'): "
                                 "value 2 does not fit output 'z' (1 bit: 0 to 1)")


def test_the_bundled_guarded_example_builds_and_verifies() -> None:
    from pathlib import Path

    from fsmsynth.formats import read_table
    table = read_table(Path(__file__).resolve().parent.parent / "examples" / "dock_leveler.toml")
    # stop_btn or curtain beats every state's own transitions (inputs in declared order).
    for state in table.states:
        assert table.lookup(state, "1100010") == ("hold", "0001")
    for storage in sorted(STORAGES):
        assert synthesize(table, storage, "binary").verification


def test_check_lists_what_no_guard_covers_as_guards() -> None:
    from fsmsynth.checks.table_check import check_table
    table = StateTable.from_transitions(
        name="m", reset="a", inputs={"start": 1, "mode": 2}, outputs=[],
        transitions=[("a", "start & mode != 3", "a", {}), ("a", "~start & mode[1]", "a", {})])
    # Left open: start=1 with mode=3, and start=0 with mode[1]=0.
    assert check_table(table).lines() == [
        "state 'a': nothing covers (~start & ~mode[1]) | (start & mode == 3) (next state and "
        "outputs are don't cares there)"]


def test_the_ten_input_kiln_written_both_ways_gives_one_design() -> None:
    from pathlib import Path

    from fsmsynth.formats import read_table
    examples = Path(__file__).resolve().parent.parent / "examples"
    guarded, cubes = examples / "glass_kiln.toml", examples / "glass_kiln_cubes.toml"
    table = read_table(guarded)
    assert len(table.inputs) == 10 and read_table(cubes) == table
    for storage in ("d", "jk"):
        a, b = synthesize(table, storage, "binary"), synthesize(read_table(cubes), storage,
                                                                "binary")
        assert a.verilog == b.verilog and a.verification

    def lines(path: Path) -> int:
        return sum(1 for line in path.read_text().splitlines()
                   if line.strip() and not line.lstrip().startswith("#"))
    assert 2.5 * lines(guarded) <= lines(cubes)


def test_an_inline_transition_array_reports_the_line_of_the_entry() -> None:
    from fsmsynth.formats.spec_toml import parse_spec
    text = ('name = "m"\ninputs = { go = 1, level = 2 }\noutputs = []\nreset = "a"\n'
            'transition = [\n  { from = "a", when = "go", to = "a" },\n'
            '  { from = "a", when = "level == 4", to = "a" },\n]\n')
    with pytest.raises(TableError) as caught:
        parse_spec(text, "m.toml")
    assert str(caught.value) == ("m.toml:7: transition 2 (a -> a, guard 'level == 4'): "
                                 "constant 4 at column 10 does not fit 'level' (2 bits: 0 to 3)")


def test_a_vector_bit_and_an_input_named_like_it_get_different_nets() -> None:
    """``mode[1]`` and an input ``mode_1`` once shared the net of their complement (a
    NetlistError on a legal spec)."""
    table = StateTable.from_transitions(
        name="m", reset="a", inputs={"mode": 2, "mode_1": 1}, outputs=["y"],
        default_outputs={"y": 0},
        transitions=[("a", "~mode[1] & ~mode_1", "b", {"y": 1}), ("a", "else", "a", {}),
                     ("b", "~mode[0]", "a", {}), ("b", "else", "b", {"y": 1})])
    assert synthesize(table, "d").verification


@given(st.lists(st.tuples(st.from_regex(r"[a-z][a-z0-9_]{0,5}", fullmatch=True),
                          st.integers(1, 3)),
                min_size=1, max_size=6, unique_by=lambda p: p[0]))
def test_complement_nets_are_one_to_one_over_legal_port_names(
        ports: list[tuple[str, int]]) -> None:
    from fsmsynth.base.names import port_bits
    from fsmsynth.stages.netlist import complement_net

    bits = [b for name, width in ports for b in port_bits(name, width if width > 1 else None)]
    nets = [complement_net(b) for b in bits]
    assert len(set(nets)) == len(nets)
    assert not set(nets) & {f"fs_nq{k}" for k in range(8)} and not set(nets) & set(bits)


def test_an_every_state_transition_that_covers_a_states_own_is_named() -> None:
    with pytest.raises(TableError) as caught:
        StateTable.from_transitions(name="m", reset="a", inputs=["start", "ok"],
                                    outputs={"fill": 1}, every_state=[("start | ok", "a", {})],
                                    transitions=[("a", "start", "a", {})])
    assert caught.value.message == ("transition 1 (a -> a, guard 'start') can never fire: "
                                    "earlier guards of state 'a' cover it (every-state "
                                    "transition 1)")
    assert (caught.value.entry, caught.value.row) == ("transition", 0)


def test_exact_cubes_and_open_next_states_say_a_table_row_for_row() -> None:
    """Rows of a cube-row table written as exact entries give back the same table: cubes
    as they stand (rows of a state may overlap where they agree), None for an open next
    state, and a declared state without transitions."""
    from fsmsynth.language.transitions import ExactCube
    rows = [("a", "1-", "b", "1"), ("a", "-1", "b", "-"), ("a", "00", None, "0"),
            ("b", "--", "a", "-")]
    exact = StateTable.from_transitions(
        name="m", reset="a", inputs=["x", "y"], outputs=["z"], states=["a", "b", "c"],
        transitions=[(s, ExactCube(c), n, {} if o == "-" else {"z": int(o)})
                     for s, c, n, o in rows])
    assert exact == StateTable.from_rows(name="m", reset="a", inputs=["x", "y"], outputs=["z"],
                                         rows=rows, states=["a", "b", "c"])
    with pytest.raises(TableError, match=r"^transition 1: to state 'd' is not declared in "
                                         r"states \(a, b, c\)$"):
        StateTable.from_transitions(name="m", reset="a", inputs=["x"], outputs=["z"],
                                    states=["a", "b", "c"], transitions=[("a", "x", "d", {})])


ONOFF = """\
name = "lamp"
inputs = ["press"]
outputs = ["light"]
reset = "off"
default_outputs = { light = 0 }
{states}
[[transition]]
from = "off"
when = "press"
to = "{target}"
set = { light = 1 }

[[transition]]
from = "on"
when = "press"
to = "off"
"""


@pytest.mark.parametrize("states, message", [
    ("", "transition 1: to state 'onn' has no transitions of its own; did you mean 'on'? "
         "(a state meant to have none is declared in states)"),
    ('states = ["off", "on"]\n', "transition 1: to state 'onn' is not declared in states; "
                                 "did you mean 'on'? (off, on)"),
])
def test_a_misspelled_target_state_is_refused_with_a_suggestion(states: str,
                                                                 message: str) -> None:
    """The reproduction: `to = "onn"` once built a machine stuck in a new state 'onn'."""
    from fsmsynth.base.errors import SpecFileError
    from fsmsynth.formats.spec_toml import parse_spec
    text = ONOFF.replace("{states}", states).replace("{target}", "onn")
    line = 8 if states else 7
    with pytest.raises(SpecFileError) as caught:
        parse_spec(text, "lamp.toml")
    assert str(caught.value) == f"lamp.toml:{line}: {message}"
    assert parse_spec(ONOFF.replace("{states}", states).replace("{target}", "on"), "lamp.toml")


def test_an_unknown_input_in_a_guard_gets_the_closest_names() -> None:
    with pytest.raises(TableError) as caught:
        build([("a", "strat & ok", "a", {})])
    assert caught.value.message == (
        "transition 1 (a -> a, guard 'strat & ok'): unknown input 'strat' at column 1; did "
        "you mean 'start'? (inputs: start, ok)")


NAMES = ["idle", "fill", "drain", "heat", "cool", "open", "shut", "wait", "purge", "alarm"]


def _one_edit(draw: st.DrawFn, word: str) -> str:
    at = draw(st.integers(0, len(word) - 1))
    letter = draw(st.sampled_from("abcdefghijklmnopqrstuvwxyz"))
    kind = draw(st.sampled_from(["swap", "drop", "add"]))
    if kind == "swap":
        return word[:at] + letter + word[at + 1:]
    if kind == "drop":
        return word[:at] + word[at + 1:]
    return word[:at] + letter + word[at:]


@settings(max_examples=100, deadline=None)
@given(st.data())
def test_a_target_mutated_by_one_character_is_refused_naming_the_original(
        data: st.DataObject) -> None:
    states = data.draw(st.lists(st.sampled_from(NAMES), min_size=2, max_size=6, unique=True))
    transitions = [(s, "go" if k % 2 else "else", data.draw(st.sampled_from(states)), {})
                   for s in states for k in range(1, 3)]
    k = data.draw(st.integers(0, len(transitions) - 1))
    frm, guard, to, out = transitions[k]
    typo = _one_edit(data.draw, to)
    assume(typo not in states and typo)
    transitions[k] = (frm, guard, typo, out)
    with pytest.raises(TableError) as caught:
        StateTable.from_transitions(name="m", reset=states[0], inputs=["go"], outputs=[],
                                    transitions=transitions)
    assert caught.value.message.startswith(f"transition {k + 1}: to state {typo!r}")
    assert repr(to) in caught.value.message.split("did you mean ")[1].split("?")[0]
