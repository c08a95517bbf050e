"""Timing analysis on hand-built netlists with known path delays."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from fsmsynth import synthesize
from fsmsynth.checks.timing import Delays, GateDelay, timing
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.model.storage import STORAGES
from fsmsynth.stages.netlist import FlipFlop, Gate, Netlist

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def harris_delays() -> Delays:
    # Harris and Harris, Digital Design and Computer Architecture, 2nd ed., 2013,
    # section 3.5.2, Example 3.10 (timing analysis): flip-flops t_ccq = 30 ps,
    # t_pcq = 80 ps, t_setup = 50 ps, t_hold = 60 ps; every gate t_pd = 40 ps,
    # t_cd = 25 ps (from memory).
    gate = GateDelay(40.0, base_min=25.0)
    return Delays(gates={"and": gate, "or": gate, "not": gate, "buf": gate}, clock_to_q=80.0,
                  clock_to_q_min=30.0, setup=50.0, hold=60.0, input_delay=80.0,
                  input_delay_min=30.0)


def circuit(short_path_buffers: int) -> Netlist:
    """Three gates on the longest register-to-register path and one (plus buffers) on the
    shortest, the shape of the example; every other path has at least two gates."""
    d = STORAGES["d"]
    gates = [Gate("g1", "and", ("qa", "qb"), "n1"), Gate("g2", "or", ("n1", "qb"), "n2"),
             Gate("g3", "and", ("n2", "n1"), "n3"), Gate("g4", "not", ("qb",), "n4")]
    last = "n4"
    for i in range(short_path_buffers):
        gates.append(Gate(f"b{i}", "buf", (last,), f"m{i}"))
        last = f"m{i}"
    ffs = (FlipFlop("ffa", d, 0, (("D", "n3"),), "qa", 0),
           FlipFlop("ffb", d, 1, (("D", last),), "qb", 0))
    return Netlist(name="ex", inputs=(), outputs=(), gates=tuple(gates), flip_flops=ffs)


def test_setup_constraint_matches_the_worked_example() -> None:
    # Same example: T_c >= t_pcq + 3 t_pd + t_setup = 80 + 120 + 50 = 250 ps, 4 GHz.
    report = timing(circuit(0), harris_delays())
    assert report.min_period == 250.0
    assert report.max_frequency == pytest.approx(4000.0)
    assert [s.kind for s in report.critical_path] == ["d ff", "and", "or", "and", "setup"]


def test_hold_violation_of_the_worked_example_and_its_fix() -> None:
    # Same example: t_ccq + t_cd = 30 + 25 = 55 ps < t_hold = 60 ps, a hold violation;
    # Example 3.11 fixes it by delaying the short path: with one buffer, 30 + 50 = 80 ps,
    # slack +20 ps (from memory).
    violated = timing(circuit(0), harris_delays())
    assert violated.worst_hold_slack == -5.0 and not violated.hold_met
    assert [s.element for s in violated.hold_path] == ["ffb", "g4", "ffb.d"]
    # The path starts with the shortest clock-to-Q, t_ccq, as its arrival does.
    assert [s.delay for s in violated.hold_path] == [30.0, 25.0, 60.0]
    assert [s.arrival for s in violated.hold_path[:2]] == [30.0, 55.0]
    fixed = timing(circuit(1), harris_delays())
    assert fixed.worst_hold_slack == 20.0 and fixed.hold_met


def test_fan_in_adds_delay() -> None:
    model = GateDelay(25.0, 8.0, base_min=12.0, per_input_min=3.0)
    assert model.longest(2) == 33.0 and model.longest(4) == 49.0 and model.shortest(3) == 18.0


def test_mealy_input_to_output_paths_are_reported_apart() -> None:
    design = synthesize(read_table(EXAMPLES / "parcel_locker.toml"), "d")
    report = timing(design)
    assert report.input_to_output is not None and report.input_to_output > 60.0
    moore = timing(synthesize(read_table(EXAMPLES / "greenhouse_vent.toml"), "d"))
    assert moore.input_to_output is None


def test_timing_cli(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    delays = tmp_path / "d.toml"
    delays.write_text("clock_to_q = 100\nsetup = 20\n[gate.and]\nbase = 50\n")
    spec = str(EXAMPLES / "greenhouse_vent.toml")
    assert main(["timing", spec, "--storage", "jk", "--delays", str(delays), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    path = data["critical_path"]
    assert path[0]["delay"] == 100.0 and path[-1]["kind"] == "setup"
    assert data["min_period_ps"] == sum(s["delay"] for s in data["critical_path"])
    assert main(["timing", spec]) == 0
    assert "minimum clock period" in capsys.readouterr().out


def test_falling_edge_reaches_the_verilog_and_json() -> None:
    design = synthesize(read_table(EXAMPLES / "parcel_locker.toml"), "jk", clock_edge="falling")
    assert "always @(negedge clk or posedge rst)" in design.verilog
    assert "posedge clk" not in design.verilog
    assert all(ff["edge"] == "falling" for ff in json.loads(design.json)["flip_flops"])
    assert timing(design).edge == "falling"


@pytest.mark.parametrize(("changes", "message"), [
    ({"setup": float("nan")}, "delay setup must be a finite number >= 0, not nan"),
    ({"hold": float("inf")}, "delay hold must be a finite number >= 0, not inf"),
    ({"clock_to_q": -1.0}, "delay clock_to_q must be a finite number >= 0, not -1.0"),
    ({"clock_to_q_min": 70.0}, "delay clock_to_q_min (70 ps) exceeds clock_to_q (60 ps): the "
                               "shortest delay cannot be longer than the longest"),
])
def test_impossible_delays_are_rejected(changes: dict[str, float], message: str) -> None:
    import dataclasses

    from fsmsynth.base.errors import OptionError

    with pytest.raises(OptionError) as info:
        dataclasses.replace(Delays(), **changes)
    assert str(info.value) == message


def test_impossible_delays_in_a_file_name_the_file(tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    delays = tmp_path / "d.toml"
    for text, message in [
            ("setup = nan\n", "1: setup must be a finite number >= 0, not nan"),
            ("clock_to_q_min = 90\n", " delay clock_to_q_min (90 ps) exceeds clock_to_q (60 ps): "
                                      "the shortest delay cannot be longer than the longest"),
            ("[gate.and]\nbase_min = 99\n", "1: [gate.and]: gate delay: the shortest delay "
                                             "(102 ps at 2 inputs) exceeds the longest (33 ps); "
                                             "give base_min <= base and per_input_min <= "
                                             "per_input")]:
        delays.write_text(text)
        assert main(["timing", str(EXAMPLES / "greenhouse_vent.toml"), "--delays",
                     str(delays)]) == 2
        assert capsys.readouterr().err == f"fsmsynth: error: {delays}:{message}\n"


def test_a_path_reads_as_a_time_line_of_nets() -> None:
    """The path report is our own: one line per net, the time it settles first, then the net
    and what drives it; the flip-flop pin's requirement closes the path."""
    import re

    from fsmsynth.formats import read_table
    design = synthesize(read_table(EXAMPLES / "dock_leveler.toml"), "jk")
    lines = timing(design.netlist).lines()
    assert lines[1].startswith("slowest path, ") and lines[1].endswith(
        "(each line: when the signal is there, which net, and how):")
    steps = lines[2:lines.index(next(x for x in lines if x.startswith("hold ")))]
    assert re.fullmatch(r" +\d+ ps  fs_q\d +from fs_ff\d \(jk ff\), \d+ ps after the edge",
                        steps[0])
    assert all(re.fullmatch(r" +\d+ ps  \S+ +through \S+ \((not|and|or)\), \d+ ps", x)
               for x in steps[1:-1])
    assert re.fullmatch(r" +\d+ ps +must be steady at fs_ff\d\.[jk]: setup \d+ ps before "
                        r"the edge", steps[-1])
    assert not any(re.search(r"\+\d+\s+at \d", x) for x in lines)


def _delay_file(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "d.toml"
    path.write_text(text)
    return path


@pytest.mark.parametrize("text, message", [
    ('[gate.mux]\nbase = 10\n', ":1: [gate.mux]: unknown gate kind; use and, buf, nand, nor, "
     "not, or, xnor, xor (a target's cells go in [cell.NAME])"),
    ('unit = "us"\n', ":1: unit 'us': use ps or ns"),
    ('setup = 3\n[cell.AOI99]\ndelay = 20\n', ":2: [cell.AOI99]: the target has no cell "
     "'AOI99' (cells: AOI21, AOI22, INV, MUX2, NAND2, NAND3, NAND4, NOR2, NOR3, NOR4, OAI21, "
     "OAI22, XOR2)"),
    ('[cell.AOI21]\nwait = 20\n', ":1: [cell.AOI21] takes delay, delay_min, not wait"),
])
def test_a_delay_file_mistake_is_an_error_at_its_line(
        tmp_path: Path, capsys: pytest.CaptureFixture[str], text: str, message: str) -> None:
    """An unknown gate kind was silently ignored; every mistake is now located."""
    path = _delay_file(tmp_path, text)
    assert main(["timing", str(EXAMPLES / "grain_dryer.toml"), "--target", "cmos",
                 "--delays", str(path)]) == 2
    assert capsys.readouterr().err == f"fsmsynth: error: {path}{message}\n"


def test_a_delay_file_states_its_unit_and_every_value_is_in_it(tmp_path: Path) -> None:
    from fsmsynth.formats.delays_toml import read_delays
    delays = read_delays(_delay_file(tmp_path, (
        'unit = "ns"\nclock_to_q = 0.1\nclock_to_q_min = 0.05\n'
        '[gate.and]\nbase = 0.03\nbase_min = 0.01\n[cell.LUT4]\ndelay = 0.2\n'
        'delay_min = 0.12\n')))
    assert (delays.clock_to_q, delays.clock_to_q_min) == (100, 50)
    assert (delays.gates["and"].base, delays.gates["and"].base_min) == (30, 10)
    assert (delays.cells["LUT4"].longest(1), delays.cells["LUT4"].shortest(1)) == (200, 120)


def test_cell_delays_from_the_file_replace_the_targets_own(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """Every LUT at 500 ps: the slowest path is clock-to-Q plus a multiple of 500 ps plus
    setup, and the note says the delays came from the file."""
    path = _delay_file(tmp_path, "clock_to_q = 60\nsetup = 30\n[cell.LUT4]\ndelay = 500\n"
                                 "[cell.LUT3]\ndelay = 500\n[cell.LUT2]\ndelay = 500\n")
    assert main(["timing", str(EXAMPLES / "parcel_locker.toml"), "--target", "lut4",
                 "--delays", str(path)]) == 0
    out = capsys.readouterr().out
    period = float(out.split("minimum clock period ")[1].split(" ps")[0])
    assert (period - 90) % 500 == 0 and period > 90
    assert "illustrative" not in out and f"Delays from {path}" in out


def test_timing_times_the_netlist_build_writes(capsys: pytest.CaptureFixture[str]) -> None:
    """timing takes the options that change the netlist (here unused codes and registered
    outputs), so its report is that of the design build writes with them."""
    from fsmsynth.flows.build_options import BuildOptions
    from fsmsynth.flows.project import synthesize_with
    spec = EXAMPLES / "rail_crossing.csv"
    options = BuildOptions(unused="safe", outputs="registered", target="nand2")
    expected = timing(synthesize_with(read_table(spec), options))
    assert main(["timing", str(spec), "--unused", "safe", "--outputs", "registered",
                 "--target", "nand2", "--json"]) == 0
    report = json.loads(capsys.readouterr().out)
    assert report["min_period_ps"] == expected.min_period
    plain = timing(synthesize_with(read_table(spec), BuildOptions(target="nand2")))
    assert plain.min_period != expected.min_period  # the options do change the netlist
