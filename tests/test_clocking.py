"""Clock, reset and enable conventions: asynchronous or synchronous reset, active high or
low, an optional clock enable, and the names of their ports, in the structural netlists,
the RTL and the benches.

References: IEEE 1364-2005 and IEEE 1076-2008 through Icarus Verilog and GHDL, which run
the generated benches; the benches check every specified output of every row of every
reachable state, and with an enable that a clock edge with the enable at 0 holds the state.
What a synchronous reset and a clock enable do is common practice, no source.
"""

from __future__ import annotations

import itertools
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from strategies import state_tables
from test_rtl import run_icarus
from test_vhdl import run_ghdl

from fsmsynth import STORAGES, OptionError, StateTable, synthesize
from fsmsynth.base.errors import SpecFileError
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.formats.spec_toml import parse_spec
from fsmsynth.model.clocking import Clocking
from fsmsynth.writers.testbench import write_testbench
from fsmsynth.writers.vhdl import write_vhdl_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"

CONVENTIONS = [Clocking(reset_style=style, reset_active=level, enable=enable,
                        clock=clock, reset=reset)
               for (style, level, enable), (clock, reset) in zip(
                   itertools.product(("async", "sync"), ("high", "low"), (None, "ce")),
                   itertools.cycle([("clk", "rst"), ("clk_sys", "rst_n")]))]


def _ids(c: Clocking) -> str:
    return f"{c.reset_style}-{c.reset_active}-{'en' if c.enable else 'noen'}"


cases = st.tuples(state_tables(max_states=6, max_inputs=3), st.sampled_from(sorted(STORAGES)),
                  st.sampled_from(CONVENTIONS),
                  st.sampled_from(["combinational", "registered"]))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=cases)
def test_structural_and_rtl_verilog_follow_the_conventions_in_icarus(
        case: tuple[StateTable, str, Clocking, str],
        tmp_path_factory: pytest.TempPathFactory) -> None:
    table, storage, clocking, outputs = case
    design = synthesize(table, storage, clocking=clocking, outputs=outputs)
    bench = write_testbench(design.reference, clocking=clocking)
    for text in (design.verilog, design.rtl_verilog):
        run = run_icarus(text, bench, tmp_path_factory.mktemp("clk"))
        assert run.returncode == 0 and "PASS" in run.stdout, run.stdout + run.stderr


@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=cases)
def test_structural_and_rtl_vhdl_follow_the_conventions_in_ghdl(
        case: tuple[StateTable, str, Clocking, str],
        tmp_path_factory: pytest.TempPathFactory) -> None:
    table, storage, clocking, outputs = case
    design = synthesize(table, storage, clocking=clocking, outputs=outputs)
    bench = write_vhdl_testbench(design.reference, clocking=clocking)
    for text in (design.vhdl, design.rtl_vhdl):
        run = run_ghdl(text, bench, table.name, tmp_path_factory.mktemp("clk"))
        assert run.returncode == 0 and "PASS" in run.stdout + run.stderr, run.stdout + run.stderr


@pytest.mark.parametrize("clocking", CONVENTIONS, ids=_ids)
def test_a_design_that_ignores_the_convention_fails_the_bench(
        clocking: Clocking, tmp_path: Path) -> None:
    """Each convention is checked: the bench of one convention fails a design built for
    the opposite reset level, or without the enable."""
    table = read_table(EXAMPLES / "parcel_locker.toml")
    right = synthesize(table, "jk", clocking=clocking)
    bench = write_testbench(right.reference, clocking=clocking)
    run = run_icarus(right.verilog, bench, tmp_path)
    assert run.returncode == 0 and "PASS" in run.stdout
    other = "low" if clocking.reset_active == "high" else "high"
    for wrong in (Clocking(clock=clocking.clock, reset=clocking.reset,
                           reset_style=clocking.reset_style, reset_active=other,
                           enable=clocking.enable),) + (
            (Clocking(clock=clocking.clock, reset=clocking.reset,
                      reset_style=clocking.reset_style, reset_active=clocking.reset_active,
                      enable=None),) if clocking.enable else ()):
        text = synthesize(table, "jk", clocking=wrong).verilog
        if wrong.enable is None and clocking.enable:  # same ports: the enable tied off
            text = text.replace(f"    input  wire {clocking.reset},",
                                f"    input  wire {clocking.reset},\n"
                                f"    /* verilator lint_off UNUSED */ input wire "
                                f"{clocking.enable},")
        bad = run_icarus(text, bench, tmp_path)
        assert bad.returncode != 0 and "FAIL" in bad.stdout + bad.stderr


def test_the_ports_are_named_and_ordered_by_the_conventions() -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    clocking = Clocking(clock="clk_sys", reset="rst_n", reset_style="sync",
                        reset_active="low", enable="ce")
    design = synthesize(table, "d", clocking=clocking)
    text = design.verilog
    start = text.index("module parcel_locker (")
    head = text[start:text.index(");", start)]
    assert [ln.split()[-1].rstrip(",") for ln in head.splitlines()[1:4]] == [
        "clk_sys", "rst_n", "ce"]
    assert "always @(posedge clk) begin" in text and "if (!rst) begin" in text  # the cell
    assert "end else if (en) begin" in text
    assert ".clk(clk_sys), .rst(rst_n), .en(ce)" in text
    rtl = design.rtl_verilog
    assert "always @(posedge clk_sys) begin" in rtl and "if (!rst_n) begin" in rtl
    assert "end else if (ce) begin" in rtl
    assert "clock clk_sys, synchronous active-low reset rst_n, clock enable ce" in text
    assert '"reset_style": "sync"' in design.json and '"enable": "ce"' in design.json


def test_conventions_from_the_spec_the_cli_and_project_files(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    text = (EXAMPLES / "parcel_locker.toml").read_text() + (
        '\n[clocking]\nclock = "clk_a"\nreset = "rst_n"\nreset_style = "sync"\n'
        'reset_active = "low"\n')
    spec = tmp_path / "locker.toml"
    spec.write_text(text)
    table = parse_spec(text, str(spec))
    assert table.clocking == Clocking(clock="clk_a", reset="rst_n", reset_style="sync",
                                      reset_active="low")
    assert synthesize(table, "d").clocking == table.clocking
    assert main(["build", str(spec), "-o", str(tmp_path / "a"), "-q", "--testbench",
                 "--enable-port", "ce"]) == 0
    built = (tmp_path / "a" / "parcel_locker.v").read_text()
    assert "input  wire clk_a," in built and "input  wire ce," in built
    assert "reg ce = 1'b1;" in (tmp_path / "a" / "parcel_locker_tb.v").read_text()
    project = tmp_path / "fsmsynth.toml"
    project.write_text('specs = ["locker.toml"]\n[defaults]\nreset_style = "async"\n'
                       'reset_port = "arst"\n')
    assert main(["build-all", str(project), "-q"]) == 0
    built = (tmp_path / "build" / "parcel_locker.v").read_text()
    assert "input  wire arst," in built and "negedge rst" in built  # active low kept
    assert main(["build", str(spec), "-o", str(tmp_path / "b"), "--reset-port", "code_ok"]) == 2
    assert ("port 'code_ok' (clock, reset or enable) is also a name of the machine "
            "'parcel_locker': rename one") in capsys.readouterr().err


def test_bad_conventions_are_refused_by_name() -> None:
    with pytest.raises(OptionError, match="reset style 'later': use async or sync"):
        Clocking(reset_style="later")
    with pytest.raises(OptionError, match="three different names"):
        Clocking(reset="clk")
    with pytest.raises(OptionError, match="enable port 'always' is a Verilog keyword"):
        Clocking(enable="always")
    text = (EXAMPLES / "parcel_locker.toml").read_text() + '\n[clocking]\nrest = "r"\n'
    with pytest.raises(SpecFileError, match=r"\[clocking\]: unknown key 'rest'; did you "
                                            r"mean 'reset'"):
        parse_spec(text, "locker.toml")
