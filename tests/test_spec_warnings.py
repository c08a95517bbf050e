"""Spec warnings, don't cares said rather than implied, and strict builds.

References: what the warnings look for are facts of the trade (common practice, no source):
an unreachable state, a state that can never be left, an input nothing reads, an output
that is constant; the uncovered input combinations of a state are checked against a
brute-force enumeration of every input point, and the guard a warning prints is compiled
back and compared with that enumeration.
"""

from __future__ import annotations

import itertools
import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fsmsynth import StateTable, synthesize
from fsmsynth.base.errors import SpecFileError, TableError, WarningsAsErrors
from fsmsynth.checks.spec_warnings import WARNINGS, spec_warnings, warning_lines
from fsmsynth.cli import main
from fsmsynth.formats.spec_toml import parse_spec
from fsmsynth.language.guards import compile_guard
from fsmsynth.logic import bdd

EVERY_WARNING = """\
name = "press"
inputs = ["go", "stop", "spare"]
outputs = ["ram", "horn", "lamp"]
reset = "idle"
states = ["idle", "pressing", "done", "jammed"]
default_outputs = { lamp = 1 }

[[transition]]
from = "idle"
when = "go & ~stop"
to = "pressing"
set = { ram = 1 }

[[transition]]
from = "pressing"
when = "stop"
to = "-"
set = { ram = "-", horn = "-", lamp = "-" }

[[transition]]
from = "pressing"
when = "else"
to = "done"

[[transition]]
from = "done"
when = "1"
to = "done"

[[transition]]
from = "jammed"
when = "1"
to = "idle"
"""


def test_each_warning_with_its_whole_message() -> None:
    table = parse_spec(EVERY_WARNING, "press.toml")
    assert [w.text() for w in spec_warnings(table)] == [
        "press.toml:8: [uncovered-inputs] state 'idle': no transition covers ~go | stop; the "
        "next state and outputs there are left to the minimizer (write otherwise = \"stay\", "
        "or otherwise = \"dont-care\" to mean it)",
        "press.toml:30: [unreachable-state] state 'jammed' is unreachable from reset 'idle'",
        "press.toml:25: [no-exit] state 'done' is never left: every transition stays in it "
        "(declare it in final if it is meant to be)",
        "press.toml:2: [unread-input] input 'spare' is never read: no transition depends on it",
        "press.toml:3: [output-never-1] output 'horn' is never 1 (0 or free everywhere)",
        "press.toml:3: [output-never-0] output 'lamp' is never 0 (1 or free everywhere)",
        "press.toml:14: [dont-care-transition] state 'pressing': the transition under stop says "
        "nothing (next state \"-\" and every output free)",
    ]
    assert [w.id for w in spec_warnings(table)] == list(WARNINGS)  # one of each, in order


def test_a_spec_accepts_warnings_by_identifier_or_subject_and_declares_final_states() -> None:
    quiet = EVERY_WARNING.replace(
        'reset = "idle"', 'reset = "idle"\notherwise = "stay"\nfinal = ["done"]\n'
        'accept_warnings = ["unread-input:spare", "output-never-0", "dont-care-transition"]')
    table = parse_spec(quiet, "press.toml")
    assert [w.key for w in spec_warnings(table)] == ["unreachable-state:jammed",
                                                     "output-never-1:horn"]
    assert spec_warnings(table, ["unreachable-state", "output-never-1:horn"]) == ()
    assert spec_warnings(table, ["output-never-1:ram"])  # another subject: still warned


def test_an_unknown_warning_or_final_state_is_refused_with_a_suggestion() -> None:
    text = EVERY_WARNING.replace('reset = "idle"',
                                 'reset = "idle"\naccept_warnings = ["unread-inputs"]')
    with pytest.raises(SpecFileError) as caught:
        parse_spec(text, "press.toml")
    assert str(caught.value) == (
        "press.toml:5: accept_warnings: unknown warning 'unread-inputs'; did you mean "
        "'unread-input' or 'uncovered-inputs'? (warnings: uncovered-inputs, "
        "unreachable-state, no-exit, unread-input, output-never-1, output-never-0, "
        "dont-care-transition)")
    text = EVERY_WARNING.replace('reset = "idle"', 'reset = "idle"\nfinal = ["dnoe"]')
    with pytest.raises(SpecFileError) as caught:
        parse_spec(text, "press.toml")
    assert str(caught.value) == ("press.toml:5: final state 'dnoe' is not a state; did you "
                                 "mean 'done'?")


def test_outputs_a_spec_file_does_not_set_are_0_and_free_only_where_written() -> None:
    """In spec files a Mealy output is free only where "-" is written; through the Python
    API an output given nowhere stays a don't care, as documented."""
    text = ('name = "m"\ninputs = ["a"]\noutputs = ["x", "y"]\nreset = "s"\n'
            'otherwise = "stay"\n[[transition]]\nfrom = "s"\nwhen = "a"\nto = "s"\n'
            'set = { x = 1, y = "-" }\n')
    assert parse_spec(text).rows == (("s", "1", "s", "1-"), ("s", "0", "s", "00"))
    api = StateTable.from_transitions(name="m", reset="s", inputs=["a"], outputs=["x", "y"],
                                      transitions=[("s", "a", "s", {"x": 1})])
    assert api.rows == (("s", "1", "s", "1-"),)


def test_written_otherwise_silences_the_uncovered_inputs_warning() -> None:
    for otherwise in ("stay", "dont-care"):
        text = EVERY_WARNING.replace('reset = "idle"',
                                     f'reset = "idle"\notherwise = "{otherwise}"')
        ids = {w.id for w in spec_warnings(parse_spec(text))}
        assert "uncovered-inputs" not in ids and "unread-input" in ids


def test_many_warnings_of_one_kind_are_grouped_with_a_count() -> None:
    inputs = [f"s{k}" for k in range(9)]
    table = StateTable.from_transitions(name="m", reset="a", inputs=inputs, outputs=["y"],
                                        transitions=[("a", "1", "a", {"y": 1}),
                                                     ("a", "1", "a", {"y": 0})][:1],
                                        final=["a"])
    lines = warning_lines(spec_warnings(table))
    assert lines == [*(f"warning: [unread-input] input 's{k}' is never read: no transition "
                       "depends on it" for k in range(4)),
                     "warning: 5 more [unread-input]: s4, s5, s6, s7, s8",
                     "warning: [output-never-0] output 'y' is never 0 (1 everywhere)"]


def test_the_api_returns_warnings_on_designs_and_strict_refuses_before_any_work() -> None:
    table = parse_spec(EVERY_WARNING, "press.toml")
    design = synthesize(table)
    assert [w.id for w in design.warnings] == list(WARNINGS)
    accepted = synthesize(table, accept_warnings=list(WARNINGS))
    assert accepted.warnings == ()
    with pytest.raises(WarningsAsErrors) as caught:
        synthesize(table, strict=True, accept_warnings=["no-exit"])
    assert len(caught.value.warnings) == len(WARNINGS) - 1
    assert str(caught.value).splitlines()[0] == (
        "press: 6 warnings, and strict builds refuse warnings (accept one with "
        "accept_warnings in the spec, or --accept ID):")
    with pytest.raises(TableError, match="unknown warning 'no_exit'; did you mean 'no-exit'"):
        spec_warnings(table, ["no_exit"])


# The four reproductions of the issue, as a new user wrote them (guarded TOML).
REPRODUCTIONS = {
    "misspelled_state": """\
name = "lamp"
inputs = ["press"]
outputs = ["light"]
reset = "off"
transition = [
  { from = "off", when = "press", to = "onn", set = { light = 1 } },
  { from = "on", when = "press", to = "off" },
]
""",
    "moore_state_left_out": """\
name = "dryer"
kind = "moore"
inputs = ["go"]
outputs = ["blower"]
reset = "idle"
transition = [
  { from = "idle", when = "go", to = "drain" },
  { from = "drain", when = "1", to = "idle" },
]
[state_outputs]
idle = { blower = 0 }
""",
    "uncovered_inputs": """\
name = "hoist"
inputs = ["call", "overload"]
outputs = ["brake_off", "horn"]
reset = "standby"
transition = [
  { from = "standby", when = "call & ~overload", to = "lift", set = { brake_off = 1 } },
  { from = "lift", when = "overload", to = "warning", set = { horn = 1 } },
  { from = "lift", when = "else", to = "lift", set = { brake_off = 1 } },
  { from = "warning", when = "~overload", to = "standby" },
  { from = "warning", when = "else", to = "warning", set = { horn = 1 } },
]
""",
    "invariants_in_conflict": """\
name = "valve"
kind = "moore"
inputs = ["a"]
outputs = ["y"]
reset = "s"
otherwise = "stay"
invariants = ["~a | y", "~a | ~y"]
transition = [{ from = "s", when = "a", to = "s" }]
[state_outputs]
s = { y = "-" }
""",
}


@pytest.mark.parametrize("name", sorted(REPRODUCTIONS))
def test_no_reproduction_builds_silently_and_strict_refuses_each(
        name: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / f"{name}.toml"
    spec.write_text(REPRODUCTIONS[name])
    status = main(["build", str(spec), "-o", str(tmp_path / "out"), "-q"])
    err = capsys.readouterr().err
    assert status != 0 or "warning: " in err
    assert "Traceback" not in err
    assert main(["build", str(spec), "-o", str(tmp_path / "strict"), "--strict"]) == 2
    assert main(["check", str(spec), "--strict"]) == 2


def test_uncovered_inputs_are_warned_at_build_named_in_json_and_accepted_per_run(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "hoist.toml"
    spec.write_text(REPRODUCTIONS["uncovered_inputs"])
    assert main(["build", str(spec), "-o", str(tmp_path / "out"), "--json"]) == 0
    captured = capsys.readouterr()
    report = json.loads(captured.out)
    assert [(w["id"], w["subject"], w["line"]) for w in report["warnings"]] == [
        ("uncovered-inputs", "standby", 6)]
    assert captured.err == (
        f"warning: {spec}:6: [uncovered-inputs] state 'standby': no transition covers ~call | "
        "overload; the next state and outputs there are left to the minimizer (write "
        "otherwise = \"stay\", or otherwise = \"dont-care\" to mean it)\n")
    assert main(["build", str(spec), "-o", str(tmp_path / "out"), "--strict", "-q",
                 "--accept", "uncovered-inputs:standby"]) == 0
    assert "warning" not in capsys.readouterr().err
    assert main(["compare", str(spec), "--storages", "d", "--encodings", "binary",
                 "--json", "--strict"]) == 2
    assert main(["check", str(spec), "--accept", "uncovered-inputz"]) == 2
    assert "--accept: unknown warning 'uncovered-inputz'; did you mean 'uncovered-inputs'" in (
        capsys.readouterr().err)


def test_a_strict_project_refuses_the_designs_with_warnings(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    (tmp_path / "hoist.toml").write_text(REPRODUCTIONS["uncovered_inputs"])
    (tmp_path / "quiet.toml").write_text(REPRODUCTIONS["uncovered_inputs"].replace(
        'reset = "standby"', 'reset = "standby"\notherwise = "stay"').replace(
        'name = "hoist"', 'name = "quiet"'))
    project = tmp_path / "fsmsynth.toml"
    project.write_text('specs = ["*.toml"]\n[defaults]\nstrict = true\n')
    assert main(["build-all", str(project), "-q"]) == 2
    out = capsys.readouterr().out
    assert "hoist: REFUSED: hoist: 1 warning, and strict builds refuse" in out
    assert "quiet: rebuilt" in out
    project.write_text('specs = ["*.toml"]\n[defaults]\naccept_warnings = ["uncovered-inputs"]'
                       '\nstrict = true\n')
    assert main(["build-all", str(project), "-q"]) == 0
    project.write_text('specs = ["*.toml"]\n')
    assert main(["build-all", str(project), "-q"]) == 0
    assert "    warning: " in capsys.readouterr().out
    assert main(["build-all", str(project), "-q", "--strict", "--rebuild"]) == 2


@st.composite
def guarded_machines(draw: st.DrawFn) -> StateTable:
    """Guarded machines over 3 inputs (one a 2-bit vector) whose states may leave input
    combinations uncovered, without ``otherwise``."""
    states = [f"s{k}" for k in range(draw(st.integers(1, 4)))]
    atoms = ["a", "~a", "b", "~b", "mode == 1", "mode != 2", "mode[1]", "a & ~b",
             "b | mode == 3"]
    transitions = []
    for state in states:
        for _ in range(draw(st.integers(0, 3))):
            transitions.append((state, draw(st.sampled_from(atoms)),
                                draw(st.sampled_from(states)), {}))
    try:
        return StateTable.from_transitions(name="m", reset=states[0],
                                           inputs={"a": 1, "b": 1, "mode": 2}, outputs=[],
                                           transitions=transitions, states=states)
    except TableError:  # a guard shadowed by earlier ones
        return draw(st.nothing())


@settings(max_examples=60, deadline=None)
@given(guarded_machines())
def test_uncovered_guards_say_exactly_the_points_nothing_covers(table: StateTable) -> None:
    """Brute force over all 16 input points of every reachable state: the warning's guard,
    compiled back, holds on exactly the points no row covers."""
    found = {w.subject: w.message for w in spec_warnings(table) if w.id == "uncovered-inputs"}
    var = bdd.variables(4)
    bits = {"a": [var[0]], "b": [var[1]], "mode": [var[3], var[2]]}
    widths = {"a": 1, "b": 1, "mode": 2}
    reachable = {w.subject for w in spec_warnings(table) if w.id == "unreachable-state"}
    for state in table.states:
        gaps = {"".join(p) for p in itertools.product("01", repeat=4)
                if table.lookup(state, "".join(p))[0] is None}
        if state in reachable:
            continue
        assert (state in found) == bool(gaps)
        if gaps:
            guard = found[state].split("no transition covers ")[1].split(";")[0]
            points = compile_guard(guard, widths, bits)
            said = {"".join(p) for p in itertools.product("01", repeat=4)
                    if points.restrict({v: int(c) for v, c in zip(var, p)}).is_one()}
            assert said == gaps
