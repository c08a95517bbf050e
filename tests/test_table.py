"""Validation: every TableError message, matched whole."""

from __future__ import annotations

import re

import pytest

from fsmsynth import StateTable, TableError
from fsmsynth.checks.table_check import check_table


def make(**overrides: object) -> StateTable:
    args: dict[str, object] = dict(
        name="lamp", inputs=["go", "stop"], outputs=["on"], reset="idle",
        rows=[("idle", "1-", "lit", "0"), ("idle", "0-", "idle", "0"), ("lit", "-1", "idle", "1"),
              ("lit", "-0", "lit", "1")])
    args.update(overrides)
    return StateTable.from_rows(**args)  # type: ignore[arg-type]


def fails(message: str, **overrides: object) -> TableError:
    with pytest.raises(TableError, match="^" + re.escape(message) + "$") as info:
        make(**overrides)
    return info.value


def test_valid_table_exposes_the_specification() -> None:
    t = make()
    assert t.name == "lamp" and t.kind == "mealy" and t.reset == "idle"
    assert t.states == ("idle", "lit")
    assert t.inputs == ("go", "stop") and t.outputs == ("on",)
    assert t.rows[0] == ("idle", "1-", "lit", "0")


def test_states_order_can_be_fixed() -> None:
    assert make(states=["lit", "idle"]).states == ("lit", "idle")


def test_unknown_next_state() -> None:
    err = fails("row 1 (state 'idle'): next state 'lti' is unknown; give it rows of its own "
                "or declare it in states",
                rows=[("idle", "1-", "lti", "0")])
    assert err.row == 0 and err.state == "lti"


def test_unknown_present_state_with_declared_states() -> None:
    fails("row 2: unknown state 'gone'; declare it in states",
          states=["idle"], rows=[("idle", "--", "idle", "0"), ("gone", "--", "idle", "0")])


def test_input_cube_of_wrong_width() -> None:
    fails("input cube '1' in row 1 (state 'idle'): use only 0, 1 or - and exactly 2 "
          "characters, one per input", rows=[("idle", "1", "idle", "0")])


def test_input_cube_with_wrong_alphabet() -> None:
    fails("input cube '1x' in row 1 (state 'idle'): use only 0, 1 or - and exactly 2 "
          "characters, one per input", rows=[("idle", "1x", "idle", "0")])


def test_output_cube_of_wrong_width() -> None:
    fails("output cube '01' in row 1 (state 'idle'): use only 0, 1 or - and exactly 1 "
          "character, one per output", rows=[("idle", "--", "idle", "01")])


def test_overlapping_rows_with_different_next_states() -> None:
    err = fails("rows 1 and 2 of state 'idle' overlap (inputs '1-' and '-1') but go to "
                "different next states 'lit' and 'idle': make the input cubes disjoint or "
                "the next states equal",
                rows=[("idle", "1-", "lit", "0"), ("idle", "-1", "idle", "0"),
                      ("lit", "--", "lit", "1")])
    assert err.state == "idle" and err.row == 1


def test_overlapping_rows_with_different_outputs() -> None:
    fails("rows 1 and 2 of state 'idle' overlap (inputs '1-' and '-1') but give output 'on' "
          "the values 0 and 1: make the input cubes disjoint or the outputs agree",
          rows=[("idle", "1-", "idle", "0"), ("idle", "-1", "idle", "1")])


def test_overlapping_rows_that_agree_are_fine() -> None:
    t = make(rows=[("idle", "1-", "idle", "0"), ("idle", "-1", None, "-")])
    assert t.lookup("idle", "11") == ("idle", "0")


def test_moore_output_given_on_a_row() -> None:
    fails("row 1 (state 'idle'): a Moore machine's outputs belong to states, not rows: give "
          "them in state_outputs and leave the row's output None",
          kind="moore", rows=[("idle", "--", "idle", "1")])


def test_mealy_with_state_outputs() -> None:
    fails("state_outputs given for a Mealy machine: put outputs on the rows, or use "
          "kind='moore'", state_outputs={"idle": "1"})


def test_moore_state_outputs_unknown_state() -> None:
    fails("state_outputs: unknown state 'nope'", kind="moore",
          rows=[("idle", "--", "idle", None)], state_outputs={"nope": "1"})


def test_missing_reset() -> None:
    fails("missing reset state: name the state the machine starts in", reset=None)


def test_unknown_reset() -> None:
    fails("reset state 'off' is unknown; use one of idle, lit", reset="off")


def test_unknown_kind() -> None:
    fails("kind 'mealie': use 'mealy' or 'moore'", kind="mealie")


@pytest.mark.parametrize(("name", "reason"), [
    ("2fast", "is not a legal Verilog identifier: start with a letter or _, then use letters, "
              "digits, _ or $"),
    ("module", "is a Verilog keyword: choose another name"),
    ("clk", "is the name of the clock or reset port of every generated module: rename it"),
    ("fs_x", "starts with 'fs_', which is reserved for generated nets: rename it"),
    ("Q3", "looks like a state variable or flip-flop input in the equations (Q0, D1, J2, ...): "
           "rename it"),
])
def test_bad_input_names(name: str, reason: str) -> None:
    err = fails(f"input name {name!r} {reason}", inputs=[name, "stop"])
    assert err.name == name


def test_bad_machine_name() -> None:
    fails("machine name 'wire' is a Verilog keyword: choose another name", name="wire")


def test_duplicate_names() -> None:
    fails("output name 'go' is already used as an input: names must be unique", outputs=["go"])


def test_row_of_wrong_shape() -> None:
    fails("row 1: expected (state, input_cube, next_state, output_cube), got ('idle', '--')",
          rows=[("idle", "--")])


def test_zero_input_machine_is_normal() -> None:
    t = StateTable.from_rows(name="tick", inputs=[], outputs=["y"], reset="a",
                             rows=[("a", "", "b", "0"), ("b", "", "a", "1")])
    assert t.lookup("b", "") == ("a", "1")


def test_report_lists_unreachable_states_and_missing_inputs() -> None:
    t = make(rows=[("idle", "1-", "idle", "0"), ("lit", "--", None, "1")], states=["idle", "lit"])
    report = check_table(t)
    assert report.unreachable == ("lit",)
    assert report.unspecified == (("idle", ("0-",)),)
    assert report.dont_care_next == (("lit", "--"),)
    assert report.lines() == [
        "unreachable from reset: lit",
        "state 'idle': nothing covers ~go (next state and outputs are don't cares there)",
        "state 'lit': next state is a don't care for inputs '--'",
    ]


def test_empty_state_name() -> None:
    fails("row 1: state '' must be a non-empty name other than '-'", rows=[("", "--", None, "0")])


def test_next_state_of_wrong_type() -> None:
    fails("row 1 (state 'idle'): next state 3 must be a state name, or None for a don't care",
          rows=[("idle", "--", 3, "0")])


def test_state_declared_twice() -> None:
    fails("state 'idle' is declared twice in states", states=["idle", "lit", "idle"])


def test_input_named_like_the_machine() -> None:
    fails("input name 'lamp' is the machine name too: rename one of them", inputs=["lamp", "b"])
