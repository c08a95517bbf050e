"""VHDL (IEEE 1076-2008) output, analysed, elaborated and run in GHDL against the VHDL
testbench generated from the table.  These run in CI (.ci/run installs ghdl); elsewhere
they skip when ghdl is missing."""

from __future__ import annotations

import subprocess
from dataclasses import replace
from pathlib import Path

import pytest
from test_verilog_tools import need

from fsmsynth import StateTable, TableError, synthesize
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.writers.vhdl import write_vhdl, write_vhdl_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def run_ghdl(design_vhd: str, bench_vhd: str, name: str, folder: Path
             ) -> subprocess.CompletedProcess[str]:
    ghdl = need("ghdl")
    (folder / "design.vhd").write_text(design_vhd)
    (folder / "bench.vhd").write_text(bench_vhd)
    for step in (["-a", "--std=08", "design.vhd", "bench.vhd"], ["-e", "--std=08", f"{name}_tb"]):
        done = subprocess.run([ghdl, *step], cwd=folder, capture_output=True, text=True)
        assert done.returncode == 0, done.stderr
    return subprocess.run([ghdl, "-r", "--std=08", f"{name}_tb"], cwd=folder,
                          capture_output=True, text=True)


CASES = [
    ("parcel_locker.toml", "d", {}),
    ("parcel_locker.toml", "jk", {"clock_edge": "falling"}),
    ("greenhouse_vent.toml", "t", {}),                 # Moore
    ("greenhouse_vent.toml", "sr", {"unused": "safe"}),
    ("glass_kiln.toml", "jk", {}),                     # vector ports
    ("grain_dryer.toml", "d", {"target": "cmos"}),     # library cells as truth tables
    ("rail_crossing.csv", "t", {"target": "lut4"}),
    ("parcel_locker.toml", "sr", {"outputs": "registered"}),
]


@pytest.mark.parametrize(("spec", "storage", "options"), CASES,
                         ids=[f"{s}-{k}-{'-'.join(map(str, o.values())) or 'plain'}"
                              for s, k, o in CASES])
def test_ghdl_runs_the_bench_and_it_passes(spec: str, storage: str, options: dict[str, str],
                                           tmp_path: Path) -> None:
    table = read_table(EXAMPLES / spec)
    design = synthesize(table, storage, **options)  # type: ignore[arg-type]
    run = run_ghdl(design.vhdl, write_vhdl_testbench(design.reference), table.name, tmp_path)
    assert run.returncode == 0, run.stdout[-800:] + run.stderr[-800:]
    assert "PASS: " in run.stdout


def test_a_faulted_netlist_fails_the_vhdl_bench(tmp_path: Path) -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    design = synthesize(table, "jk")
    gates = list(design.netlist.gates)
    k = next(i for i, g in enumerate(gates) if g.kind == "and")
    gates[k] = replace(gates[k], kind="or")
    faulty = replace(design.netlist, gates=tuple(gates))
    run = run_ghdl(write_vhdl(faulty), write_vhdl_testbench(table), table.name, tmp_path)
    assert run.returncode != 0 and "MISMATCH" in run.stdout + run.stderr
    assert "PASS" not in run.stdout


@pytest.mark.parametrize(("inputs", "message"), [
    (["signal", "b"], "input name 'signal' is a VHDL reserved word; rename it for VHDL output"),
    (["go__now", "b"], "input name 'go__now' has a double or trailing underscore, which VHDL "
                       "forbids; rename it for VHDL output"),
    (["Start", "start"], "input name 'start' is the same VHDL name as 'Start' (VHDL ignores "
                         "case); rename one"),
])
def test_names_vhdl_cannot_take_are_refused_for_vhdl_only(inputs: list[str],
                                                          message: str) -> None:
    table = StateTable.from_rows(name="m", inputs=inputs, outputs=["y"], reset="a",
                                 rows=[("a", "1-", "b", "0"), ("a", "0-", "a", "0"),
                                       ("b", "--", "a", "1")])
    design = synthesize(table, "d")
    assert design.verilog  # Verilog takes these names
    with pytest.raises(TableError) as info:
        _ = design.vhdl
    assert info.value.message == message


def test_build_writes_vhdl_beside_verilog(tmp_path: Path) -> None:
    spec = str(EXAMPLES / "glass_kiln.toml")
    assert main(["build", spec, "--hdl", "verilog,vhdl", "--testbench", "-o", str(tmp_path),
                 "--quiet"]) == 0
    names = sorted(p.name for p in tmp_path.iterdir())
    assert names == ["glass_kiln.json", "glass_kiln.v", "glass_kiln.vhd", "glass_kiln_tb.v",
                     "glass_kiln_tb.vhd"]
    text = (tmp_path / "glass_kiln.vhd").read_text()
    assert "band : in std_logic_vector(2 downto 0);" in text
    assert "Caution: synchronise asynchronous inputs" in text
    assert main(["build", spec, "--hdl", "vhdl,edif", "-o", str(tmp_path)]) == 2


def test_the_reserved_prefix_is_refused_in_any_case_for_vhdl() -> None:
    """VHDL ignores case (IEEE 1076-2008, section 15.4: basic identifiers differing only in
    case are the same; from memory), so an input ``FS_q0`` is the generated net ``fs_q0``."""
    table = StateTable.from_rows(name="m", inputs=["FS_q0"], outputs=["y"], reset="a",
                                 rows=[("a", "1", "b", "1"), ("a", "0", "a", "0"),
                                       ("b", "-", "a", "0")])
    with pytest.raises(TableError) as caught:
        synthesize(table, "d").vhdl  # noqa: B018
    assert caught.value.message == (
        "input name 'FS_q0' starts with 'fs_' in another case; VHDL ignores case, so it "
        "would clash with the generated nets that prefix is reserved for; rename it for VHDL "
        "output")
