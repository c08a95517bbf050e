"""verify() and simulate() on netlists that synthesize() did not make: any order of cells
and gates is modelled exactly, and a netlist that is not a well-formed single-edge circuit
is rejected with an error naming the net or cell."""

from __future__ import annotations

import dataclasses
import subprocess
from pathlib import Path

import pytest
from reference import brute_force_equivalent
from test_verilog_tools import need

from fsmsynth import FlipFlop, Gate, Netlist, StateTable, simulate, synthesize, verify
from fsmsynth.base.errors import NetlistError
from fsmsynth.model.storage import STORAGES
from fsmsynth.writers.verilog import write_verilog


def counter() -> StateTable:
    """A 2-bit up counter with its count as Moore outputs (bit 0 first)."""
    return StateTable.from_rows(
        name="count4", kind="moore", inputs=[], outputs=["c0", "c1"], reset="s0",
        rows=[("s0", "", "s1", None), ("s1", "", "s2", None), ("s2", "", "s3", None),
              ("s3", "", "s0", None)],
        state_outputs={"s0": "00", "s1": "10", "s2": "01", "s3": "11"})


def counter_netlist() -> Netlist:
    return synthesize(counter(), "d", "binary", minimize=False).netlist


def test_flip_flops_in_any_order_are_modelled_by_their_bits() -> None:
    netlist = counter_netlist()
    reordered = dataclasses.replace(netlist, flip_flops=netlist.flip_flops[::-1])
    assert verify(reordered, counter())
    assert simulate(reordered, [""] * 5) == simulate(netlist, [""] * 5)


def test_swapped_data_nets_are_not_a_false_proof() -> None:
    # Bit 1's cell listed first, with the D nets of the two cells exchanged: the circuit
    # no longer counts.  verify() used to read the present state by bit and write the next
    # state by list position, and called this equivalent.
    netlist = counter_netlist()
    ff0, ff1 = netlist.flip_flops
    swapped = (dataclasses.replace(ff1, pins=ff0.pins), dataclasses.replace(ff0, pins=ff1.pins))
    broken = dataclasses.replace(netlist, flip_flops=swapped)
    result = verify(broken, counter())
    assert not result
    assert not brute_force_equivalent(broken, counter())
    cex = result.counterexample
    assert cex is not None
    outputs = simulate(broken, list(cex.inputs))[-1][1]
    assert outputs[counter().outputs.index(cex.signal)] == cex.actual


def test_gates_in_any_order_are_evaluated_in_dependency_order() -> None:
    design = synthesize(counter(), "jk", "gray", minimize=False)
    shuffled = dataclasses.replace(design.netlist, gates=design.netlist.gates[::-1])
    assert verify(shuffled, counter())


def test_mixed_clock_edges_are_rejected() -> None:
    # Bit 1 alone on the falling edge counts 00, 11, 10, 01 in Icarus: not a single-edge
    # machine, which is what a state table describes.
    netlist = counter_netlist()
    ff0, ff1 = netlist.flip_flops
    mixed = dataclasses.replace(netlist, flip_flops=(ff0, dataclasses.replace(ff1, edge="falling")))
    with pytest.raises(NetlistError) as info:
        verify(mixed, counter())
    assert str(info.value) == (
        "flip-flops 'fs_ff0' (rising edge) and 'fs_ff1' (falling edge) sample on different "
        "clock edges: fsmsynth models one edge per machine; put every flip-flop on the "
        "same edge")
    assert info.value.cell == "fs_ff1"


def test_all_falling_edge_is_accepted() -> None:
    netlist = counter_netlist()
    falling = dataclasses.replace(netlist, flip_flops=tuple(
        dataclasses.replace(ff, edge="falling") for ff in netlist.flip_flops))
    assert verify(falling, counter())


def _with_gate(netlist: Netlist, gate: Gate) -> Netlist:
    return dataclasses.replace(netlist, gates=(*netlist.gates, gate))


def test_two_drivers_on_one_net_are_rejected() -> None:
    netlist = counter_netlist()
    victim = netlist.gates[0]
    with pytest.raises(NetlistError) as info:
        verify(_with_gate(netlist, Gate("extra", "const1", (), victim.output)), counter())
    assert str(info.value) == (f"net {victim.output!r} has two drivers: gate {victim.name!r} "
                               "and gate 'extra'")
    with pytest.raises(NetlistError) as info:
        verify(_with_gate(netlist, Gate("extra", "const1", (), "fs_q1")), counter())
    assert str(info.value) == "net 'fs_q1' has two drivers: flip-flop 'fs_ff1' and gate 'extra'"


def test_gate_driving_an_output_port_wired_elsewhere_is_rejected() -> None:
    netlist = counter_netlist()
    port, net = netlist.outputs[0]
    assert port != net  # c0 is a wire to the flip-flop output
    with pytest.raises(NetlistError) as info:
        verify(_with_gate(netlist, Gate("extra", "const0", (), port)), counter())
    assert str(info.value) == (f"net {port!r} has two drivers: the output port {port!r} "
                               f"(wired to {net!r}) and gate 'extra'")


def test_combinational_loop_is_rejected() -> None:
    netlist = counter_netlist()
    loop = (Gate("la", "and", ("fs_q0", "lb"), "la_out"), Gate("lb", "or", ("la_out",), "lb"))
    with pytest.raises(NetlistError) as info:
        verify(dataclasses.replace(netlist, gates=(*netlist.gates, *loop)), counter())
    assert str(info.value) == "combinational loop through net 'la_out' (gate 'la')"


def test_undriven_net_and_bad_cells_are_rejected() -> None:
    netlist = counter_netlist()
    with pytest.raises(NetlistError) as info:
        verify(_with_gate(netlist, Gate("g", "and", ("fs_q0", "nowhere"), "x")), counter())
    assert str(info.value) == "net 'nowhere', read by gate 'g', is driven by nothing"
    with pytest.raises(NetlistError) as info:
        Gate("g", "nand3", ("a",), "x")
    assert str(info.value) == ("gate 'g': unknown kind 'nand3'; use one of not, buf, and, or, "
                               "nand, nor, xor, xnor, const0, const1, lut")
    with pytest.raises(NetlistError) as info:
        Gate("g", "not", ("a", "b"), "x")
    assert str(info.value) == "gate 'g' (not) has 2 inputs; it takes exactly 1"
    with pytest.raises(NetlistError) as info:
        FlipFlop("ff", STORAGES["jk"], 0, (("J", "a"),), "q", 0)
    assert str(info.value) == ("flip-flop 'ff' (JK flip-flop) connects pins J; it needs "
                               "exactly J, K")
    ff0, ff1 = netlist.flip_flops
    with pytest.raises(NetlistError) as info:
        verify(dataclasses.replace(netlist, flip_flops=(ff0, dataclasses.replace(
            ff1, bit=0, q="fs_qx"))), counter())
    assert str(info.value) == ("flip-flops hold state bits [0, 0]: give bits 0 .. 1, one "
                               "flip-flop each")


def test_simulate_agrees_with_the_sr_cell_on_s_and_r_both_high(tmp_path: Path) -> None:
    # The SR cell's Verilog model is q <= s | (~r & q): set-dominant.  simulate() used to
    # give 0 here.  Checked against Icarus Verilog.
    iverilog, vvp = need("iverilog"), need("vvp")
    table = StateTable.from_rows(name="srtest", inputs=[], outputs=["y"], reset="a",
                                 rows=[("a", "", "a", "0")])
    netlist = Netlist(
        name="srtest", inputs=(), outputs=(("y", "fs_q0"),),
        gates=(Gate("g1", "const1", (), "fs_s0"), Gate("g2", "const1", (), "fs_r0")),
        flip_flops=(FlipFlop("fs_ff0", STORAGES["sr"], 0, (("S", "fs_s0"), ("R", "fs_r0")),
                             "fs_q0", 0),))
    assert verify(netlist, table).counterexample is not None  # S = R = 1 is reported
    ours = [outs for _code, outs in simulate(netlist, ["", "", ""])]
    bench = tmp_path / "tb.v"
    bench.write_text(
        "`timescale 1ns/1ps\nmodule tb; reg clk = 0, rst = 1; wire y;\n"
        "srtest dut(.clk(clk), .rst(rst), .y(y));\n"
        "initial begin #1 rst = 0; repeat (3) begin #4 $display(\"%b\", y); clk = 1; #1 "
        "clk = 0; end $finish; end\nendmodule\n")
    (tmp_path / "dut.v").write_text(write_verilog(netlist))
    subprocess.run([iverilog, "-g2005", "-o", str(tmp_path / "sim"), str(bench),
                    str(tmp_path / "dut.v")], check=True, capture_output=True)
    run = subprocess.run([vvp, "-N", str(tmp_path / "sim")], capture_output=True, text=True,
                         check=True)
    assert run.stdout.split() == ours == ["0", "1", "1"]
