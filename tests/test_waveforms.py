"""Waveforms and cycle tables: the benches' value change dumps, read back, follow the table;
counterexamples as cycle tables and as value change dumps.

References: IEEE 1364-2005, section 18 (the VCD format), as Icarus Verilog writes it and
as pyvcd (a library outside the project) reads it; the state sequence in the dump is
checked against the table's own next-state function at every clock edge.
"""

from __future__ import annotations

import io
import subprocess
from pathlib import Path

import pytest
from test_verilog_tools import need
from vcd.reader import TokenKind, tokenize

from fsmsynth import StateTable, read_table, synthesize
from fsmsynth.base.names import ports_of
from fsmsynth.checks.invariants import check_invariants
from fsmsynth.checks.trace import replay, violation_trace, write_trace_vcd
from fsmsynth.cli import main
from fsmsynth.writers.testbench import write_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def read_vcd(data: bytes) -> tuple[dict[str, str], list[tuple[int, str, object]]]:
    """``scope.name -> id code`` and the changes ``(time, id code, value)`` in order."""
    ids: dict[str, str] = {}
    scopes: list[str] = []
    changes: list[tuple[int, str, object]] = []
    now = 0
    for token in tokenize(io.BytesIO(data)):
        if token.kind is TokenKind.SCOPE:
            scopes.append(token.data.ident)
        elif token.kind is TokenKind.UPSCOPE:
            scopes.pop()
        elif token.kind is TokenKind.VAR:
            ids[".".join([*scopes, token.data.reference])] = token.data.id_code
        elif token.kind is TokenKind.CHANGE_TIME:
            now = token.data
        elif token.kind in (TokenKind.CHANGE_SCALAR, TokenKind.CHANGE_VECTOR,
                            TokenKind.CHANGE_STRING):
            changes.append((now, token.data.id_code, token.data.value))
    return ids, changes


def _text(value: object) -> str:
    """A Verilog string register's value as text."""
    number = int(value)  # type: ignore[call-overload]
    return number.to_bytes(max(1, (number.bit_length() + 7) // 8), "big").decode().strip("\0")


@pytest.mark.parametrize(("spec", "form"), [("parcel_locker.toml", "rtl"),
                                            ("parcel_locker.toml", "structural"),
                                            ("glass_kiln.toml", "rtl"),
                                            ("greenhouse_vent.toml", "structural")])
def test_the_state_sequence_icarus_dumps_follows_the_table(spec: str, form: str,
                                                           tmp_path: Path) -> None:
    iverilog, vvp = need("iverilog"), need("vvp")
    table = read_table(EXAMPLES / spec)
    design = synthesize(table, "jk")
    (tmp_path / "d.v").write_text(design.rtl_verilog if form == "rtl" else design.verilog)
    (tmp_path / "tb.v").write_text(write_testbench(design.reference, vcd="run.vcd"))
    subprocess.run([iverilog, "-g2005", "-o", "sim", "tb.v", "d.v"], cwd=tmp_path, check=True)
    run = subprocess.run([vvp, "-N", "sim"], cwd=tmp_path, capture_output=True, text=True)
    assert "PASS" in run.stdout
    ids, changes = read_vcd((tmp_path / "run.vcd").read_bytes())
    tb = f"{table.name}_tb"
    name_id, clk, rst = ids[f"{tb}.dut.state_name"], ids[f"{tb}.clk"], ids[f"{tb}.rst"]
    inputs = {ids[f"{tb}.{p}"]: (p, w) for p, w in ports_of(table.inputs)}
    values: dict[str, object] = {}
    edges = 0
    seen: set[str] = set()
    pending: tuple[str, str | None] | None = None
    settled: dict[str, object] = {}  # the values before the present time step
    now = -1
    for time, code, value in changes:
        if time != now:
            settled, now = dict(values), time
        if code == clk and value == "1" and settled.get(rst) == "0" and name_id in settled:
            before = _text(settled[name_id])
            word = "".join(format(int(settled[c]), f"0{w or 1}b")  # type: ignore[call-overload]
                           for c, (_p, w) in inputs.items())
            pending = (before, table.lookup(before, word)[0])
            edges += 1
        elif code == clk and value == "0" and pending is not None:
            # half a period after the edge: the state the edge loaded
            before, expected = pending
            if expected is not None:
                assert _text(values[name_id]) == expected, (before, expected)
            pending = None
        values[code] = value
        if code == name_id:
            seen.add(_text(value))
    assert edges > 10 and seen == set(table.states)


INVARIANT = StateTable.from_transitions(
    name="valve", reset="s", inputs={"a": 1, "level": 2}, outputs=["y"], otherwise="stay",
    invariants=["~(a & level == 3) | ~y"],
    transitions=[("s", "a", "t", {"y": 0}), ("t", "level == 3", "t", {"y": 1})])


def test_a_broken_invariant_as_a_cycle_table() -> None:
    trace = violation_trace(INVARIANT, check_invariants(INVARIANT))
    assert trace is not None
    assert trace.table_text(note=False) == (
        "cycle  state  a  level  y\n"
        "1      s      1  0      0\n"
        "2      t      1  3      1\n")


def test_a_trace_as_a_value_change_dump_reads_back() -> None:
    trace = replay(INVARIANT, ["100", "111", "001"])
    text = write_trace_vcd(trace, "valve")
    assert text == write_trace_vcd(trace, "valve")  # no date: the same file every time
    ids, changes = read_vcd(text.encode())
    state = [v for _t, c, v in changes if c == ids["valve.state"]]
    assert state == ["s", "t"]  # a dump records changes only
    level = [int(v) for t, c, v in changes if c == ids["valve.level"]]  # type: ignore[call-overload]
    assert level[0] == 0 and 3 in level


def test_the_cli_prints_the_failing_run_and_writes_its_waveform(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "valve.toml"
    spec.write_text('name = "valve"\ninputs = ["a", "b"]\noutputs = ["y"]\nreset = "s"\n'
                    'otherwise = "stay"\ninvariants = ["~(a & b) | ~y"]\ntransition = [\n'
                    '  { from = "s", when = "a", to = "t" },\n'
                    '  { from = "t", when = "b", to = "t", set = { y = 1 } },\n]\n')
    assert main(["check", str(spec), "--vcd", str(tmp_path / "fail.vcd")]) == 2
    out = capsys.readouterr().out
    assert ("    cycle  state  a  b  y\n    1      s      1  0  0\n"
            "    2      t      1  1  1\n") in out
    ids, _changes = read_vcd((tmp_path / "fail.vcd").read_bytes())
    assert {"valve.state", "valve.a", "valve.y", "valve.clk"} <= set(ids)
    assert main(["build", str(spec), "-o", str(tmp_path / "b")]) == 2
    assert "  cycle  state  a  b  y\n" in capsys.readouterr().err
