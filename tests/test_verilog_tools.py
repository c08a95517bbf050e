"""Generated Verilog in real tools: Verilator lint and Icarus Verilog simulation.

These run in CI (.ci/run installs both); elsewhere they skip when a tool is missing.
"""

from __future__ import annotations

import importlib
import os
import shutil
import subprocess
from pathlib import Path
from typing import Any

import pytest

from fsmsynth import STORAGES, StateTable, synthesize
from fsmsynth.formats import read_table
from fsmsynth.writers.testbench import write_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
IN_CI = bool(os.environ.get("CI"))


def need(tool: str) -> str:
    path = shutil.which(tool)
    if path is None:
        if IN_CI:
            pytest.fail(f"{tool} is not installed, and CI must run this test")
        pytest.skip(f"{tool} is not installed")
    return path


def need_module(name: str, extra: str, what: str) -> Any:
    """The Python module ``name``: a skip without it, a failure in CI, which must run the
    test (``extra`` is the fsmsynth extra that installs it)."""
    try:
        return importlib.import_module(name)
    except ImportError:
        if IN_CI:
            pytest.fail(f"{what} is not installed, and CI must run this test")
        pytest.skip(f"{what} is not installed (pip install fsmsynth[{extra}])")


def machines() -> list[StateTable]:
    # Timed examples have benches of their unrolled table: test_timers runs them, shortened.
    tables = [t for t in map(read_table, sorted(EXAMPLES.glob("*.toml")))
              if isinstance(t, StateTable)]
    tables.append(read_table(EXAMPLES / "rail_crossing.csv"))
    tables.append(StateTable.from_rows(  # zero inputs, one state bit unused by any logic
        name="blinker", inputs=[], outputs=["lamp"], reset="dark",
        rows=[("dark", "", "lit", "0"), ("lit", "", "dark", "1")]))
    tables.append(StateTable.from_rows(  # an input the logic does not need
        name="ignores", inputs=["a", "b"], outputs=["y"], reset="p",
        rows=[("p", "1-", "q", "0"), ("p", "0-", "p", "0"), ("q", "--", "p", "1")]))
    tables.append(StateTable.from_transitions(  # vector ports; bit 0 of mode read by nothing
        name="spinner", reset="idle", inputs={"start": 1, "mode": 2, "level_ok": 1},
        outputs={"fill": 1, "speed": 3}, default_outputs={"fill": 0, "speed": 0},
        transitions=[("idle", "start & mode[1]", "fill", {"fill": 1}),
                     ("idle", "else", "idle", {}),
                     ("fill", "level_ok", "spin", {"speed": 5}),
                     ("fill", "else", "fill", {"fill": 1}),
                     ("spin", "1", "idle", {"speed": "---"})]))
    return tables


CASES = [(t, s, e) for t in machines() for s in sorted(STORAGES)
         for e in ("binary", "gray", "one-hot")]


def ids(case: tuple[StateTable, str, str]) -> str:
    return f"{case[0].name}-{case[1]}-{case[2]}"


@pytest.mark.parametrize("case", CASES, ids=ids)
def test_verilator_lint_is_clean(case: tuple[StateTable, str, str], tmp_path: Path) -> None:
    verilator = need("verilator")
    table, storage, encoding = case
    design = synthesize(table, storage, encoding)
    source = tmp_path / f"{table.name}.v"
    source.write_text(design.verilog)
    run = subprocess.run([verilator, "--lint-only", "-Wall", str(source)], capture_output=True,
                         text=True, timeout=120)
    assert run.returncode == 0, run.stderr


def simulate(design_v: str, table: StateTable, folder: Path) -> subprocess.CompletedProcess[str]:
    iverilog, vvp = need("iverilog"), need("vvp")
    (folder / "design.v").write_text(design_v)
    (folder / "bench.v").write_text(write_testbench(table))
    compiled = subprocess.run([iverilog, "-g2005", "-o", str(folder / "sim"),
                               str(folder / "bench.v"), str(folder / "design.v")],
                              capture_output=True, text=True, timeout=120)
    assert compiled.returncode == 0, compiled.stderr
    return subprocess.run([vvp, "-N", str(folder / "sim")], capture_output=True, text=True,
                          timeout=120)


@pytest.mark.parametrize("case", [c for c in CASES if c[2] != "gray"], ids=ids)
def test_icarus_simulation_matches_the_table(case: tuple[StateTable, str, str],
                                             tmp_path: Path) -> None:
    table, storage, encoding = case
    run = simulate(synthesize(table, storage, encoding).verilog, table, tmp_path)
    assert run.returncode == 0, run.stdout + run.stderr
    assert "PASS" in run.stdout


def test_icarus_bench_fails_on_a_faulted_netlist(tmp_path: Path) -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    text = synthesize(table, "jk").verilog
    line = next(ln for ln in text.splitlines() if ln.lstrip().startswith("and "))
    faulted = text.replace(line, line.replace("and ", "or  ", 1), 1)
    assert faulted != text
    run = simulate(faulted, table, tmp_path)
    assert run.returncode != 0
    assert "FAIL" in run.stdout + run.stderr


@pytest.mark.parametrize("storage", sorted(STORAGES))
def test_a_machine_of_one_state_needs_no_flip_flop(storage: str, tmp_path: Path) -> None:
    """Two equivalent states reduce to one; its outputs are a function of the inputs alone,
    so the design has no flip-flop (it had one D flip-flop holding a constant), lints clean
    and passes its bench."""
    table = StateTable.from_rows(
        name="gate", inputs=["a", "b"], outputs=["y"], reset="s",
        rows=[("s", "11", "t", "1"), ("s", "0-", "s", "0"), ("s", "10", "s", "0"),
              ("t", "11", "t", "1"), ("t", "0-", "s", "0"), ("t", "10", "s", "0")])
    design = synthesize(table, storage)
    assert design.minimization is not None and len(design.minimization.table.states) == 1
    assert design.netlist.flip_flops == () and design.cost.flip_flops == {}
    assert design.verification and design.storage == "none"
    (tmp_path / "gate.v").write_text(design.verilog)
    (tmp_path / "tb.v").write_text(write_testbench(table))
    subprocess.run([need("verilator"), "--lint-only", "-Wall", str(tmp_path / "gate.v")],
                   check=True, capture_output=True)
    subprocess.run([need("iverilog"), "-g2005", "-o", str(tmp_path / "sim"),
                    str(tmp_path / "gate.v"), str(tmp_path / "tb.v")], check=True)
    run = subprocess.run([need("vvp"), "-N", str(tmp_path / "sim")], capture_output=True,
                         text=True)
    assert run.stdout.strip().splitlines()[-1].startswith("PASS"), run.stdout[-400:]
