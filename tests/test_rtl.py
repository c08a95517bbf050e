"""Register-transfer-level Verilog and VHDL: simulated against the table in Icarus Verilog
and GHDL with the project's testbenches (which check every specified output of every row of
every reachable state), linted by Verilator, and shown to fail when a line is changed.

References: IEEE 1364-2005 (Verilog) and IEEE 1076-2008 (VHDL) through the simulators that
implement them; the testbenches are built from the table alone.  The coding style (state
register in one clocked block, outputs' defaults first in one combinational block, a case
over the state) is common practice, no source.
"""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from strategies import state_tables
from test_verilog_tools import need
from test_vhdl import run_ghdl

from fsmsynth import STORAGES, StateTable, synthesize
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.writers.testbench import write_testbench
from fsmsynth.writers.vhdl import write_vhdl_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def run_icarus(design_v: str, bench_v: str, folder: Path) -> subprocess.CompletedProcess[str]:
    iverilog, vvp = need("iverilog"), need("vvp")
    (folder / "design.v").write_text(design_v)
    (folder / "bench.v").write_text(bench_v)
    compiled = subprocess.run([iverilog, "-g2005", "-o", str(folder / "sim"),
                               str(folder / "bench.v"), str(folder / "design.v")],
                              capture_output=True, text=True, timeout=120)
    assert compiled.returncode == 0, compiled.stderr
    return subprocess.run([vvp, "-N", str(folder / "sim")], capture_output=True,
                          text=True, timeout=120)


def with_vectors(table: StateTable) -> StateTable:
    """The same machine with its first two inputs and outputs as 2-bit vectors."""
    def names(old: tuple[str, ...], base: str) -> list[str]:
        if len(old) < 2:
            return list(old)
        return [f"{base}[1]", f"{base}[0]", *old[2:]]
    return StateTable.from_rows(
        name=table.name, kind=table.kind, inputs=names(table.inputs, "mode"),
        outputs=names(table.outputs, "level"), rows=table.rows, reset=table.reset,
        states=table.states, state_outputs=dict(table.state_outputs) or None)


machines = st.tuples(state_tables(max_states=7, max_inputs=4),
                     st.sampled_from(sorted(STORAGES)), st.booleans(),
                     st.sampled_from(["combinational", "registered"]),
                     st.sampled_from(["dont-care", "safe"]))


def design_of(case: tuple[StateTable, str, bool, str, str]) -> tuple[StateTable, object]:
    table, storage, vectors, outputs, unused = case
    table = with_vectors(table) if vectors else table
    return table, synthesize(table, storage, "binary", outputs=outputs, unused=unused)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=machines)
def test_rtl_verilog_simulates_like_the_table_in_icarus(
        case: tuple[StateTable, str, bool, str, str], tmp_path_factory: pytest.TempPathFactory
) -> None:
    _table, design = design_of(case)
    run = run_icarus(design.rtl_verilog, write_testbench(design.reference),  # type: ignore[attr-defined]
                     tmp_path_factory.mktemp("rtl"))
    assert run.returncode == 0 and "PASS" in run.stdout, run.stdout + run.stderr


@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=machines)
def test_rtl_vhdl_simulates_like_the_table_in_ghdl(
        case: tuple[StateTable, str, bool, str, str], tmp_path_factory: pytest.TempPathFactory
) -> None:
    table, design = design_of(case)
    run = run_ghdl(design.rtl_vhdl, write_vhdl_testbench(design.reference),  # type: ignore[attr-defined]
                   table.name, tmp_path_factory.mktemp("rtl"))
    assert run.returncode == 0 and "PASS" in run.stderr + run.stdout, run.stdout + run.stderr


def _mutant(text: str, assign: str) -> str:
    """The first branch's next state changed to another state's constant: one line."""
    constants = re.findall(r"\bS_[A-Z0-9_]+\b", text)
    states = list(dict.fromkeys(constants))
    line = next(ln for ln in text.splitlines() if ln.strip().startswith(f"state_next {assign} S_")
                and "unused" not in ln)
    current = re.search(r"S_[A-Z0-9_]+", line.split(assign)[1]).group(0)  # type: ignore[union-attr]
    other = next(s for s in states if s != current)
    mutated = text.replace(line, line.replace(current, other), 1)
    assert mutated.count("\n") == text.count("\n") and mutated != text
    return mutated


@pytest.mark.parametrize("spec", ["parcel_locker.toml", "greenhouse_vent.toml",
                                  "glass_kiln.toml"])
def test_a_one_line_mutant_of_the_rtl_fails_its_bench(spec: str, tmp_path: Path) -> None:
    table = read_table(EXAMPLES / spec)
    design = synthesize(table, "d")
    bench_v, bench_vhd = write_testbench(design.reference), write_vhdl_testbench(design.reference)
    (tmp_path / "v").mkdir()
    (tmp_path / "vhd").mkdir()
    good = run_icarus(design.rtl_verilog, bench_v, tmp_path / "v")
    assert good.returncode == 0 and "PASS" in good.stdout
    bad = run_icarus(_mutant(design.rtl_verilog, "="), bench_v, tmp_path / "v")
    assert bad.returncode != 0 and "FAIL" in bad.stdout + bad.stderr
    good = run_ghdl(design.rtl_vhdl, bench_vhd, table.name, tmp_path / "vhd")
    assert good.returncode == 0
    bad = run_ghdl(_mutant(design.rtl_vhdl, "<="), bench_vhd, table.name, tmp_path / "vhd")
    assert bad.returncode != 0 and "FAIL" in bad.stdout + bad.stderr


def _after_header(text: str) -> str:
    return "\n".join(ln for ln in text.splitlines() if not ln.startswith(("// storage:",
                                                                           "-- storage:")))


@pytest.mark.parametrize("spec", ["parcel_locker.toml", "grain_dryer.toml"])
def test_every_storage_kind_and_target_gives_the_same_rtl(spec: str) -> None:
    """The RTL describes the machine; the netlist implements it (only the header differs)."""
    table = read_table(EXAMPLES / spec)
    texts = {_after_header(synthesize(table, kind, "gray", target=target).rtl_verilog)
             for kind in sorted(STORAGES) for target in ("two-level", "lut4")}
    assert len(texts) == 1


@pytest.mark.parametrize("spec", sorted(p.name for p in EXAMPLES.glob("*.toml")))
def test_verilator_lints_the_rtl_clean(spec: str, tmp_path: Path) -> None:
    verilator = need("verilator")
    design = synthesize(read_table(EXAMPLES / spec), "jk", unused="safe")
    source = tmp_path / "design.v"
    source.write_text(design.rtl_verilog)
    run = subprocess.run([verilator, "--lint-only", "-Wall", str(source)], capture_output=True,
                         text=True, timeout=120)
    assert run.returncode == 0, run.stderr


def test_the_rtl_reads_like_the_spec() -> None:
    """Named codes, defaults first, a case over the state, guards over named inputs and
    vectors, the spec line of each state, and the unused-code policy."""
    table = read_table(EXAMPLES / "glass_kiln.toml")
    design = synthesize(table, "d", "gray", unused="safe")
    text = design.rtl_verilog
    codes = {s: design.encoding.code_string(s) for s in design.encoded_table.states}
    for state, code in codes.items():
        assert f"S_{state.upper()} = {len(code)}'b{code}" in text
    assert "default: state_next = S_" in text and "(unused = \"safe\")" in text
    assert re.search(r"// \w+ \(spec line \d+\)", text)
    assert "case (state)" in text and "always @*" in text
    vhdl = design.rtl_vhdl
    assert "type state_type is (" in vhdl and "attribute enum_encoding of state_type" in vhdl


def test_the_cli_writes_rtl_beside_the_netlist(tmp_path: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    spec = EXAMPLES / "parcel_locker.toml"
    assert main(["build", str(spec), "-o", str(tmp_path), "-q", "--testbench",
                 "--hdl", "verilog-rtl,vhdl-rtl"]) == 0
    names = sorted(p.name for p in tmp_path.iterdir())
    assert names == ["parcel_locker.json", "parcel_locker_rtl.v", "parcel_locker_rtl.vhd",
                     "parcel_locker_tb.v", "parcel_locker_tb.vhd"]
    assert main(["build", str(spec), "-o", str(tmp_path), "--hdl", "verilog-rtl,sv"]) == 2
    assert "hdl verilog-rtl,sv: give one or more of verilog, vhdl, verilog-rtl, vhdl-rtl" in (
        capsys.readouterr().err)


def _break_fan(text: str, hdl: str) -> str:
    """grain_dryer with the fan never on: the burner then fires without air."""
    if hdl == "rtl":
        return text.replace("fan = 1'b1;", "fan = 1'b0;")
    line = next(ln for ln in text.splitlines() if "(fan, " in ln)  # the gate driving fan
    return text.replace(line, "    assign fan = 1'b0;")


@pytest.mark.parametrize("form", ["rtl", "structural"])
def test_an_invariant_broken_by_a_mutant_trips_its_assertion_in_icarus(
        form: str, tmp_path: Path) -> None:
    """grain_dryer says "~(burner & ~fan)"; a design whose fan never turns on breaks it, and
    the assertion reports it by number and text; the correct design reports nothing."""
    design = synthesize(read_table(EXAMPLES / "grain_dryer.toml"), "jk")
    text = design.rtl_verilog if form == "rtl" else design.verilog
    bench = write_testbench(design.reference)
    good = run_icarus(text, bench, tmp_path)
    assert good.returncode == 0 and "broken" not in good.stdout + good.stderr
    mutant = _break_fan(text, form)
    assert mutant != text
    bad = run_icarus(mutant, bench, tmp_path)
    assert "invariant 1 broken: ~(burner & ~fan)" in bad.stdout + bad.stderr


@pytest.mark.parametrize("form", ["rtl", "structural"])
def test_an_invariant_broken_by_a_mutant_trips_its_assertion_in_ghdl(
        form: str, tmp_path: Path) -> None:
    design = synthesize(read_table(EXAMPLES / "grain_dryer.toml"), "jk")
    text = design.rtl_vhdl if form == "rtl" else design.vhdl
    bench = write_vhdl_testbench(design.reference)
    good = run_ghdl(text, bench, "grain_dryer", tmp_path)
    assert good.returncode == 0 and "broken" not in good.stdout + good.stderr
    if form == "rtl":
        mutant = text.replace("fan <= '1';", "fan <= '0';")
    else:
        line = next(ln for ln in text.splitlines() if ln.strip().startswith("fan <= "))
        mutant = text.replace(line, "  fan <= '0';")
    assert mutant != text
    bad = run_ghdl(mutant, bench, "grain_dryer", tmp_path)
    assert "invariant 1 broken: ~(burner & ~fan)" in bad.stdout + bad.stderr
