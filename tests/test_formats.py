"""Spec files: TOML and CSV reading, errors with file and line, round trip."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from strategies import state_tables

from fsmsynth import SpecFileError, StateTable
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


def error_of(text: str, legacy: bool = True) -> str:
    """The error reading ``text`` gives; the cube-row spec above is the older form, read
    with ``legacy`` (as ``fsmsynth rewrite`` reads it)."""
    with pytest.raises(SpecFileError) as info:
        parse_spec(text, "lamp.toml", legacy=legacy)
    return str(info.value)


def test_cube_rows_are_refused_naming_the_command_that_rewrites_them() -> None:
    assert error_of(GOOD, legacy=False) == (
        "lamp.toml:8: cube rows ('rows') are an older form: `fsmsynth rewrite lamp.toml -o "
        "NEW.toml` writes the same machine as [[transition]] entries, row for row")


def test_a_star_transition_is_refused_naming_every_state_entries() -> None:
    text = ('name = "m"\ninputs = ["a"]\noutputs = []\nreset = "s"\n\n[[transition]]\n'
            'from = "*"\nwhen = "a"\nto = "s"\n')
    assert error_of(text, legacy=False) == (
        "lamp.toml:6: transition 1: from = \"*\" is an older form: write what every state does "
        "as [[every_state]] entries (no 'from'), or run `fsmsynth rewrite lamp.toml -o "
        "NEW.toml`")


def test_rewrite_gives_the_same_table_in_todays_form() -> None:
    from fsmsynth.flows.rewrite import rewrite_spec
    new = rewrite_spec(GOOD, "lamp.toml")
    assert "rows" not in new and 'cube = "-0", to = "-"' in new
    assert parse_spec(new) == parse_spec(GOOD, legacy=True)


def test_reads_rows_and_dont_care_next_state() -> None:
    t = parse_spec(GOOD, legacy=True)
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
                              "outputs, reset, states, state_outputs, transition, "
                              "every_state, default_outputs, otherwise, invariants, final, "
                              "accept_warnings, clocking, timers, counters")


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
    text = "kind\nmoore\nfrom,a,to,y\ns0,1,s1,0\ns0,0,s0,0\ns1,-,s0,1\n"
    t = parse_csv(text, "m.csv")
    assert t.kind == "moore" and dict(t.state_outputs) == {"s0": "0", "s1": "1"}


@pytest.mark.parametrize("path", sorted(EXAMPLES.glob("*.toml")), ids=lambda p: p.name)
def test_examples_read(path: Path) -> None:
    assert read_table(path).states


@settings(max_examples=60)
@given(state_tables(max_states=6))
def test_round_trip(table: object) -> None:
    """Writing a table and reading it back gives an equal table."""
    text = write_spec(table)  # type: ignore[arg-type]
    assert "rows" not in text and parse_spec(text) == table


def test_rows_must_be_an_array() -> None:
    text = GOOD.split("rows = [")[0] + 'rows = "none"\n'
    assert error_of(text) == "lamp.toml:8: 'rows' must be an array of rows"


def test_inputs_must_be_strings() -> None:
    assert error_of(GOOD.replace('["go", "stop"]', '["go", 3]')) == (
        "lamp.toml:4: 'inputs' must be an array of strings")


def test_csv_header_must_name_state_and_next() -> None:
    with pytest.raises(SpecFileError) as info:
        parse_csv("# a table\nstate,a,y\ns0,1,0\n", "t.csv")
    assert str(info.value) == ("t.csv:2: the header must start with 'from' and have a 'to' "
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


# --- the spreadsheet look of CSV tables -----------------------------------------------------

def test_csv_settings_row_and_vector_columns() -> None:
    text = ("name,reset,kind\nsorter,wait,mealy\n\n"
            "from,go,lane[1:0],to,gate[2:0]\n"
            "wait,1,2,push,5\nwait,1,0-,wait,---\nwait,0,-,wait,0\npush,-,-,wait,1-0\n")
    t = parse_csv(text, "s.csv")
    assert (t.name, t.reset) == ("sorter", "wait")
    assert t.inputs == ("go", "lane[1]", "lane[0]")
    assert t.outputs == ("gate[2]", "gate[1]", "gate[0]")
    assert t.rows[0] == ("wait", "110", "push", "101")
    assert t.rows[1] == ("wait", "10-", "wait", "---") and t.rows[3][3] == "1-0"


def test_csv_settings_from_the_caller_override_the_row() -> None:
    text = "name,reset\nsorter,wait\nfrom,go,to,y\nwait,-,push,0\npush,-,wait,1\n"
    t = parse_csv(text, "s.csv", settings={"reset": "push", "name": "other"})
    assert (t.name, t.reset) == ("other", "push")


@pytest.mark.parametrize(("text", "message"), [
    ("# name: x\nfrom,a,to,y\ns,1,s,0\n",
     "t.csv:1: settings go in a settings row, not a comment: a row 'name,reset' above the "
     "table with their values under it (or --name and --reset on the command line)"),
    ("name,colour\nx,red\nfrom,a,to,y\ns,1,s,0\n",
     "t.csv:1: unknown setting 'colour': the settings are name, reset, kind"),
    ("from,m[1:0],to,y\ns,4,s,0\n", "t.csv:2: column 'm[1:0]': value 4 does not fit 2 bits "
                                    "(0 to 3)"),
    ("from,m[1:0],to,y\ns,1x,s,0\n", "t.csv:2: column 'm[1:0]': '1x' is not a value: give a "
                                     "number from 0 to 3, 2 of 0, 1 and -, or -"),
    ("from,a,to,y\ns,2,s,0\n", "t.csv:2: column 'a': '2' is not a value: give one of 0, 1 "
                               "or -"),
    ("from,m[0:0],to,y\ns,1,s,0\n", "t.csv:1: column 'm[0:0]': a vector has at least 2 bits "
                                    "(m[1:0]); write a bit as m"),
])
def test_csv_errors(text: str, message: str) -> None:
    with pytest.raises(SpecFileError) as info:
        parse_csv(text, "t.csv")
    assert str(info.value) == message


def test_cli_settings_for_csv_and_refused_for_toml(tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    from fsmsynth.cli import main
    assert main(["check", str(EXAMPLES / "rail_crossing.csv"), "--reset", "closed",
                 "--name", "level_crossing"]) == 0
    assert "valid mealy table 'level_crossing'" in capsys.readouterr().out
    assert main(["check", str(EXAMPLES / "glass_kiln.toml"), "--reset", "ready"]) == 2
    assert capsys.readouterr().err == (
        f"fsmsynth: error: --reset: these set a CSV table's settings; "
        f"{EXAMPLES / 'glass_kiln.toml'} is a TOML spec, whose keys say them\n")


# --- the spec writer's guarded form ----------------------------------------------------------

@settings(max_examples=80, deadline=None)
@given(st.one_of(state_tables(max_states=6), state_tables(max_states=6, dont_cares=False)))
def test_guarded_writing_says_the_same_machine(table: StateTable) -> None:
    """Written with guards and read back, every state gives the same next state and
    outputs at every input point (checked point by point, by the table's own lookup)."""
    import itertools
    text = write_spec(table, guards=True)
    back = parse_spec(text)
    if "transition = [" not in text:
        assert back == table  # it fell back to cube rows: exactly the same table
        return
    assert back.states == table.states and back.reset == table.reset
    for state in table.states:
        for bits in itertools.product("01", repeat=len(table.inputs)):
            point = "".join(bits)
            assert back.lookup(state, point) == table.lookup(state, point)


def test_guarded_writing_keeps_vectors_and_invariants() -> None:
    table = read_table(EXAMPLES / "grain_dryer.toml")
    text = write_spec(table, guards=True)
    assert "inputs = { start = 1, stop = 1, door_open = 1, flame_ok = 1, purge_done = 1, " \
           "moisture = 3, grain_cool = 1 }" in text
    assert '"~(burner & ~fan)",' in text and "auger = 3" in text
    assert parse_spec(text).invariants == table.invariants


def test_the_rewrite_command_turns_older_files_into_the_same_machines(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """Cube rows become exact entries (the same table, row for row); from = "*" entries
    become [[every_state]] entries, the rest kept as given."""
    from fsmsynth.cli import main
    star = ('name = "hoist"\ninputs = ["up", "stop"]\noutputs = ["motor"]\nreset = "rest"\n'
            'default_outputs = { motor = 0 }\notherwise = "stay"\n\n'
            '[[transition]]\nfrom = "*"\nwhen = "stop"\nto = "rest"\n\n'
            '[[transition]]\nfrom = "rest"\nwhen = "up"\nto = "lift"\nset = { motor = 1 }\n')
    for name, text in (("rows.toml", GOOD), ("star.toml", star)):
        old, new = tmp_path / name, tmp_path / f"new_{name}"
        old.write_text(text)
        assert main(["build", str(old), "-o", str(tmp_path / "out")]) == 2
        assert f"fsmsynth rewrite {old} -o NEW.toml" in capsys.readouterr().err
        assert main(["rewrite", str(old), "-o", str(new)]) == 0
        assert capsys.readouterr().out == f"wrote {new}\n"
        assert parse_spec(new.read_text()) == parse_spec(text, legacy=True)
    assert '[[every_state]]\nwhen = "stop"\nto = "rest"' in (tmp_path / "new_star.toml").read_text()


MOORE_SPEC = """\
name = "dryer"
kind = "moore"
inputs = ["go"]
outputs = ["blower", "heater"]
reset = "idle"
transition = [
  { from = "idle", when = "go", to = "dry" },
  { from = "dry", when = "~go", to = "drain" },
  { from = "drain", when = "1", to = "idle" },
]

[state_outputs]
idle = { blower = 0, heater = 0 }
dry = { blower = 1, heater = 1 }
{drain}
"""


@pytest.mark.parametrize("drain, message", [
    ("", "lamp.toml:12: Moore state 'drain' has no outputs: give them in [state_outputs] "
         "(drain = { blower = 0, heater = 0 }) or in default_outputs; write \"-\" for an "
         "output that may be anything"),
    ("drain = { heater = 0 }", "lamp.toml:15: Moore state 'drain' does not say 'blower': give "
     "them in [state_outputs] (drain = { blower = 0 }) or in default_outputs; write \"-\" "
     "for an output that may be anything"),
])
def test_a_moore_state_left_out_of_state_outputs_is_refused(drain: str, message: str) -> None:
    """The reproduction: a drain state left out of [state_outputs] made every output a don't
    care, and the minimizer turned the blower on there."""
    assert error_of(MOORE_SPEC.replace("{drain}", drain), legacy=False) == message
    said = parse_spec(MOORE_SPEC.replace("{drain}", 'drain = { blower = 0, heater = "-" }'))
    assert said.output_cube_of("drain") == "0-"
