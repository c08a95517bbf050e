"""Spec files: TOML and CSV reading, errors with file and line, round trip."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from hypothesis import given, settings
from strategies import state_tables

from fsmsynth import SpecFileError
from fsmsynth.formats import parse_csv, parse_spec, read_table
from fsmsynth.writers.spec_toml import write_spec

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"

GOOD = """\
# a comment
name = "lamp"
kind = "mealy"
inputs = ["go", "stop"]
outputs = ["on"]
reset = "idle"

rows = [
  ["idle", "1-", "lit",  "0"],   # start
  ["idle", "0-", "idle", "0"],
  ["lit",  "-1", "idle", "1"],
  ["lit",  "-0", "-",    "1"],
]
"""


def error_of(text: str) -> str:
    with pytest.raises(SpecFileError) as info:
        parse_spec(text, "lamp.toml")
    return str(info.value)


def test_reads_rows_and_dont_care_next_state() -> None:
    t = parse_spec(GOOD)
    assert t.rows[3] == ("lit", "-0", None, "1")
    assert t.states == ("idle", "lit")


def test_bad_row_reports_its_line() -> None:
    text = GOOD.replace('["lit",  "-1", "idle", "1"]', '["lit",  "-1", "gone", "1"]')
    assert error_of(text) == ("lamp.toml:11: row 3 (state 'lit'): next state 'gone' is unknown; "
                              "give it rows of its own or declare it in states")


def test_bad_cube_reports_its_line() -> None:
    text = GOOD.replace('"0-", "idle"', '"0-1", "idle"')
    assert error_of(text) == ("lamp.toml:10: input cube '0-1' in row 2 (state 'idle'): use only "
                              "0, 1 or - and exactly 2 characters, one per input")


def test_row_of_wrong_shape_reports_its_line() -> None:
    text = GOOD.replace('["idle", "0-", "idle", "0"]', '["idle", "0-", "idle"]')
    assert error_of(text) == ('lamp.toml:10: row 2: write it as ["state", "input cube", '
                              '"next state", "output cube"] (strings; next state "-" for a '
                              "don't care)")


def test_toml_syntax_error_reports_its_line() -> None:
    text = GOOD.replace('reset = "idle"', "reset = idle")
    assert re.fullmatch(r"lamp\.toml:6: not valid TOML: .+", error_of(text))


def test_unknown_key() -> None:
    text = GOOD.replace('kind = "mealy"', 'knd = "mealy"')
    assert error_of(text) == ("lamp.toml:3: unknown key 'knd': the keys are name, kind, inputs, "
                              "outputs, reset, states, rows, state_outputs, transition, "
                              "default_outputs, otherwise")


def test_guarded_form_keys_are_refused_beside_cube_rows() -> None:
    text = GOOD.replace('kind = "mealy"', 'kind = "mealy"\notherwise = "stay"')
    assert error_of(text) == ("lamp.toml:4: 'otherwise' belongs to the [[transition]] form; "
                              "cube rows say it row by row")


def test_bad_name_reports_the_line_of_inputs() -> None:
    text = GOOD.replace('"stop"]', '"end"]').replace('"end"', '"always"')
    assert error_of(text) == ("lamp.toml:4: input name 'always' is a Verilog keyword: "
                              "choose another name")


def test_unknown_reset_reports_its_line() -> None:
    text = GOOD.replace('reset = "idle"', 'reset = "off"')
    assert error_of(text) == "lamp.toml:6: reset state 'off' is unknown; use one of idle, lit"


def test_missing_key() -> None:
    assert error_of(GOOD.replace('reset = "idle"\n', "")) == "lamp.toml: missing key 'reset'"


def test_missing_file_is_a_spec_error(tmp_path: Path) -> None:
    with pytest.raises(SpecFileError, match=r"nope\.toml: cannot read the file: No such file"):
        read_table(tmp_path / "nope.toml")


def test_moore_state_outputs_error_points_at_the_entry() -> None:
    text = """\
name = "m"
kind = "moore"
inputs = ["a"]
outputs = ["y"]
reset = "s"
rows = [["s", "-", "s"]]

[state_outputs]
s = "10"
"""
    assert error_of(text) == ("lamp.toml:9: output cube '10' of state 's': use only 0, 1 or - and "
                              "exactly 1 character, one per output")


def test_csv_import() -> None:
    t = read_table(EXAMPLES / "rail_crossing.csv")
    assert t.name == "rail_crossing" and t.reset == "clear"
    assert t.inputs == ("train_near", "barrier_down") and t.outputs == ("lights", "lower")
    assert t.rows[1] == ("clear", "1-", "warning", "10")


def test_csv_error_reports_its_line() -> None:
    text = "state,a,next,y\ns0,1,s1,0\ns0,-,s0,0\ns1,-,s0,0\n"
    with pytest.raises(SpecFileError) as info:
        parse_csv(text, "t.csv")
    assert str(info.value) == ("t.csv:3: rows 1 and 2 of state 's0' overlap (inputs '1' and '-') "
                               "but go to different next states 's1' and 's0': make the input "
                               "cubes disjoint or the next states equal")


def test_csv_moore() -> None:
    text = "# kind: moore\nstate,a,next,y\ns0,1,s1,0\ns0,0,s0,0\ns1,-,s0,1\n"
    t = parse_csv(text, "m.csv")
    assert t.kind == "moore" and dict(t.state_outputs) == {"s0": "0", "s1": "1"}


@pytest.mark.parametrize("path", sorted(EXAMPLES.glob("*.toml")), ids=lambda p: p.name)
def test_examples_read(path: Path) -> None:
    assert read_table(path).states


@settings(max_examples=60)
@given(state_tables(max_states=6))
def test_round_trip(table: object) -> None:
    """Writing a table and reading it back gives an equal table."""
    assert parse_spec(write_spec(table)) == table  # type: ignore[arg-type]


def test_rows_must_be_an_array() -> None:
    text = GOOD.split("rows = [")[0] + 'rows = "none"\n'
    assert error_of(text) == "lamp.toml:8: 'rows' must be an array of rows"


def test_inputs_must_be_strings() -> None:
    assert error_of(GOOD.replace('["go", "stop"]', '["go", 3]')) == (
        "lamp.toml:4: 'inputs' must be an array of strings")


def test_csv_header_must_name_state_and_next() -> None:
    with pytest.raises(SpecFileError) as info:
        parse_csv("# a table\nstate,a,y\ns0,1,0\n", "t.csv")
    assert str(info.value) == ("t.csv:2: the header must start with 'state' and have a 'next' "
                               "column between the inputs and the outputs")


def test_csv_row_with_wrong_cell_count() -> None:
    with pytest.raises(SpecFileError) as info:
        parse_csv("state,a,next,y\ns0,1,s0\n", "t.csv")
    assert str(info.value) == "t.csv:2: expected 4 cells like the header, found 3"


def test_non_utf8_file(tmp_path: Path) -> None:
    bad = tmp_path / "bad.toml"
    bad.write_bytes(b"name = \"\xff\"\n")
    with pytest.raises(SpecFileError, match=r"bad\.toml: the file is not UTF-8 text$"):
        read_table(bad)
