"""Build-step mode, pictures and Karnaugh maps."""

from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

import pytest

from fsmsynth import StateTable, synthesize
from fsmsynth.cli import main
from fsmsynth.formats import read_table
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.functions import Function
from fsmsynth.writers.dot import render, write_netlist_dot, write_state_diagram
from fsmsynth.writers.kmap import write_karnaugh

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def test_check_reports_stale_files_after_the_spec_changes(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "locker.toml"
    spec.write_text((EXAMPLES / "parcel_locker.toml").read_text())
    out = tmp_path / "out"
    assert main(["build", str(spec), "-o", str(out), "--check"]) == 1
    assert main(["build", str(spec), "-o", str(out)]) == 0
    stamps = {p.name: p.stat().st_mtime_ns for p in out.iterdir()}
    capsys.readouterr()
    assert main(["build", str(spec), "-o", str(out), "--check"]) == 0
    assert "up to date" in capsys.readouterr().out
    assert main(["build", str(spec), "-o", str(out)]) == 0  # second run rewrites nothing
    assert {p.name: p.stat().st_mtime_ns for p in out.iterdir()} == stamps
    spec.write_text(spec.read_text().replace(
        '{ from = "warn", cube = "-0-", to = "warn", set = { unlock = 0, buzzer = 1 } }',
        '{ from = "warn", cube = "-0-", to = "warn", set = { unlock = 1, buzzer = 1 } }'))
    capsys.readouterr()
    assert main(["build", str(spec), "-o", str(out), "--check"]) == 1
    text = capsys.readouterr().out
    assert f"stale: {out / 'parcel_locker.v'}" in text
    assert f"stale: {out / 'parcel_locker.json'}" in text


def test_outputs_are_byte_identical_across_processes(tmp_path: Path) -> None:
    runs = []
    for name in ("a", "b"):
        subprocess.run(["fsmsynth", "build", str(EXAMPLES / "greenhouse_vent.toml"), "--storage",
                        "sr", "--encoding", "one-hot", "-o", str(tmp_path / name),
                        "--testbench"], check=True, capture_output=True,
                       env={**os.environ, "PYTHONHASHSEED": "1" if name == "a" else "2"})
        runs.append({p.name: p.read_bytes() for p in (tmp_path / name).iterdir()})
    assert runs[0] == runs[1] and len(runs[0]) == 3


def test_makefile_example_builds_and_checks(tmp_path: Path) -> None:
    if shutil.which("make") is None:
        pytest.skip("make is not installed")
    work = tmp_path / "examples"
    shutil.copytree(EXAMPLES, work)
    subprocess.run(["make", "-C", str(work)], check=True, capture_output=True)
    assert (work / "build" / "parcel_locker.v").exists()
    check = subprocess.run(["make", "-C", str(work), "check"], capture_output=True, text=True)
    assert check.returncode == 0, check.stdout + check.stderr


def test_state_diagram_has_every_transition() -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    text = write_state_diagram(table)
    assert text.startswith('digraph "parcel_locker" {') and 'start -> "locked";' in text
    assert '"open" -> "warn" [label="~door_closed & timer_done / buzzer=1"];' in text
    assert text.count(" -> ") == 1 + len({(s, n) for s, _c, n, _o in table.rows})


def test_netlist_schematic_names_every_gate_and_flip_flop() -> None:
    design = synthesize(read_table(EXAMPLES / "conveyor_sorter.toml"), "jk")
    text = write_netlist_dot(design.netlist)
    for g in design.netlist.gates:
        assert f'"{g.name}" [' in text
    assert '"fs_ff0" [shape=record' in text


def test_pictures_render_when_graphviz_is_installed(tmp_path: Path) -> None:
    if shutil.which("dot") is None:
        pytest.skip("Graphviz is not installed")
    svg = render(write_state_diagram(read_table(EXAMPLES / "greenhouse_vent.toml")))
    assert svg.lstrip().startswith(b"<?xml") and b"<svg" in svg
    assert main(["diagram", str(EXAMPLES / "greenhouse_vent.toml"), "--netlist", "-o",
                 str(tmp_path / "n.png")]) == 0
    assert (tmp_path / "n.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_karnaugh_map_shows_dont_cares_in_gray_code_order() -> None:
    # Karnaugh (1953): rows and columns in reflected Gray code, 00 01 11 10 (here written
    # variable 0 first: 00 10 11 01).  Unused code 11 of a 3-state machine is a don't care.
    design = synthesize(read_table(EXAMPLES / "parcel_locker.toml"), "d")
    text = write_karnaugh(design.functions.function("D1"), design.functions.variables)
    lines = text.splitlines()
    assert lines[0] == "D1:"
    assert "timer_done=0" in lines[1] and "timer_done=1" in lines[1]
    assert lines[2].split()[:2] == ["Q0,Q1", "\\"]
    assert [ln.split()[0] for ln in lines[3:7]] == ["00", "10", "11", "01"]
    seven = Function(name="f", on=(Cube.from_string("1111111"),), off=())
    with pytest.raises(ValueError) as info:
        write_karnaugh(seven, [f"v{i}" for i in range(7)])
    assert str(info.value) == "f depends on 7 variables: Karnaugh maps go up to 6"


def test_karnaugh_map_of_a_moore_output_leaves_out_the_inputs() -> None:
    # A Moore output depends on the state alone, whatever the number of inputs (Moore 1956).
    table = StateTable.from_rows(
        name="wide", kind="moore", inputs=[f"x{i}" for i in range(6)], outputs=["y"],
        reset="a", rows=[("a", "1-----", "b", None), ("a", "0-----", "a", None),
                         ("b", "------", "a", None)], state_outputs={"a": "0", "b": "1"})
    design = synthesize(table, "d")
    text = write_karnaugh(design.functions.function("y"), design.functions.variables)
    assert text == "y:\n- \\ Q0 0 1\n-      0 1\n"


def test_kmap_cli(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["kmap", str(EXAMPLES / "conveyor_sorter.toml"), "D0"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("D0:\nQ0 \\ parcel,bad_label 00 10 11 01\n")
    assert "D0 = Q0' parcel bad_label" in out
