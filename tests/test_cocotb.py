"""The generated cocotb test module, run by cocotb on Icarus Verilog (CI installs cocotb,
the optional extra fsmsynth[sim], and iverilog); elsewhere it skips when either is missing.
"""

from __future__ import annotations

import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import pytest
from test_verilog_tools import need, need_module

from fsmsynth import synthesize
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.writers.verilog import write_verilog

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def need_cocotb() -> None:
    need_module("cocotb", "sim", "cocotb")
    need("iverilog")


def run(folder: Path, name: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, f"{name}_cocotb.py", "--cycles", "200"],
                          cwd=folder, capture_output=True, text=True, timeout=300)


@pytest.mark.parametrize(("spec", "storage", "conventions"), [
    ("glass_kiln.toml", "jk", []),
    ("greenhouse_vent.toml", "t", []),
    ("glass_kiln.toml", "d", ["--reset-style", "sync", "--reset-active", "low",
                              "--reset-port", "rst_n", "--enable-port", "ce"])])
def test_cocotb_runs_the_generated_tests_on_icarus(spec: str, storage: str,
                                                  conventions: list[str],
                                                  tmp_path: Path) -> None:
    need_cocotb()
    name = read_table(EXAMPLES / spec).name
    assert main(["build", str(EXAMPLES / spec), "--storage", storage, "--cocotb", "-o",
                 str(tmp_path), "--quiet", *conventions]) == 0
    done = run(tmp_path, name)
    assert done.returncode == 0, done.stdout[-1500:] + done.stderr[-1500:]
    assert "TESTS=2 PASS=2 FAIL=0" in done.stdout + done.stderr


def test_a_faulted_netlist_fails_the_cocotb_tests(tmp_path: Path) -> None:
    need_cocotb()
    table = read_table(EXAMPLES / "parcel_locker.toml")
    assert main(["build", str(EXAMPLES / "parcel_locker.toml"), "--cocotb", "-o",
                 str(tmp_path), "--quiet"]) == 0
    design = synthesize(table, "d")
    gates = list(design.netlist.gates)
    k = next(i for i, g in enumerate(gates) if g.kind == "and")
    gates[k] = replace(gates[k], kind="or")
    (tmp_path / "parcel_locker.v").write_text(write_verilog(replace(design.netlist,
                                                                     gates=tuple(gates))))
    done = run(tmp_path, "parcel_locker")
    assert done.returncode != 0
    assert "FAIL=" in done.stdout + done.stderr and "FAIL=0" not in done.stdout + done.stderr
