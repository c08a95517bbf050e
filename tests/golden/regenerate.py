"""Write the golden outputs of every bundled example (run: python tests/golden/regenerate.py).

`tests/test_golden.py` builds the same files again and compares them byte for byte, so a
change that moves or reshapes code cannot change what a user gets without this script being
run on purpose (and the diff of `tests/golden/` read in review).
"""

from __future__ import annotations

import contextlib
import hashlib
import io
import re
import shutil
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
GOLDEN = Path(__file__).resolve().parent / "files"

# Each run: (folder under files/, spec, command-line options of `fsmsynth build`).
BUILDS: list[tuple[str, str, list[str]]] = [
    ("parcel_locker_jk", "parcel_locker.toml",
     ["--storage", "jk", "--hdl", "verilog,vhdl,verilog-rtl,vhdl-rtl", "--testbench",
      "--cocotb"]),
    ("greenhouse_vent_t", "greenhouse_vent.toml",
     ["--storage", "t", "--encoding", "gray", "--hdl", "verilog,vhdl", "--testbench"]),
    ("greenhouse_vent_registered", "greenhouse_vent.toml",
     ["--storage", "sr", "--outputs", "registered", "--testbench",
      "--hdl", "verilog,verilog-rtl,vhdl-rtl"]),
    ("conveyor_sorter_onehot", "conveyor_sorter.toml",
     ["--storage", "d", "--encoding", "one-hot", "--unused", "safe", "--testbench"]),
    ("dock_leveler_anneal", "dock_leveler.toml",
     ["--storage", "jk", "--encoding", "anneal", "--hdl", "verilog,vhdl", "--testbench"]),
    ("glass_kiln_lut4", "glass_kiln.toml",
     ["--storage", "t", "--target", "lut4", "--hdl", "verilog,vhdl", "--testbench"]),
    ("glass_kiln_cubes", "glass_kiln_cubes.toml", ["--storage", "d"]),
    ("grain_dryer_cells", "grain_dryer.toml",
     ["--storage", "d", "--target", "libraries/cells.toml", "--hdl", "verilog,vhdl",
      "--testbench"]),
    ("grain_dryer_hazard_free", "grain_dryer.toml",
     ["--storage", "jk", "--outputs", "hazard-free", "--encoding", "adjacency",
      "--hdl", "verilog,verilog-rtl,vhdl-rtl"]),
    ("rail_crossing_registered", "rail_crossing.csv",
     ["--storage", "d", "--outputs", "registered", "--unused", "safe", "--target", "nand2",
      "--testbench"]),
]

# Printed reports: (file name, argv of `fsmsynth`).
REPORTS: list[tuple[str, list[str]]] = [
    ("parcel_locker_build.txt", ["build", "parcel_locker.toml", "--storage", "jk", "-o", "{tmp}"]),
    ("parcel_locker_build.json", ["build", "parcel_locker.toml", "--json", "-o", "{tmp}"]),
    ("greenhouse_vent_compare.txt", ["compare", "greenhouse_vent.toml"]),
    ("parcel_locker_compare.json", ["compare", "parcel_locker.toml", "--json"]),
    ("glass_kiln_compare_lut4.csv",
     ["compare", "glass_kiln.toml", "--target", "lut4", "--csv"]),
    ("conveyor_sorter_reduce.toml", ["reduce", "conveyor_sorter.toml"]),
    ("glass_kiln_cubes_reduce.txt", ["reduce", "glass_kiln_cubes.toml", "--json"]),
    ("dock_leveler_timing.txt", ["timing", "dock_leveler.toml", "--storage", "jk"]),
    ("grain_dryer_timing.json", ["timing", "grain_dryer.toml", "--json"]),
    ("parcel_locker_diagram.dot", ["diagram", "parcel_locker.toml"]),
    ("greenhouse_vent_netlist.dot", ["diagram", "greenhouse_vent.toml", "--netlist"]),
    ("parcel_locker_kmap.txt", ["kmap", "parcel_locker.toml", "--storage", "jk"]),
    ("grain_dryer_check.txt", ["check", "grain_dryer.toml"]),
    ("rail_crossing_check.json", ["check", "rail_crossing.csv", "--json"]),
    ("convert_t_jk.txt", ["convert", "t", "--using", "jk"]),
]


def run_cli(argv: list[str]) -> tuple[int, str]:
    """Run the command line in this process; return its exit status and what it printed."""
    from fsmsynth.cli import main

    out = io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(out):
        try:
            status = main(argv)
        except SystemExit as stop:
            status = int(stop.code or 0)
    return int(status or 0), out.getvalue()


def produce(into: Path) -> None:
    """Write every golden file below `into` (a fresh folder)."""
    examples = ROOT / "examples"
    for folder, spec, options in BUILDS:
        out = into / folder
        status, printed = run_cli(["build", str(examples / spec), "-q", "-o", str(out),
                                   *[o if not o.endswith("cells.toml") else str(examples / o)
                                     for o in options]])
        (out / "printed.txt").write_text(_relative(printed, out, examples) + f"exit {status}\n")
    with tempfile.TemporaryDirectory() as tmp:
        for name, argv in REPORTS:
            argv = [str(examples / a) if (examples / a).is_file() else a.replace("{tmp}", tmp)
                    for a in argv]
            status, printed = run_cli(argv)
            (into / name).write_text(_relative(printed, Path(tmp), examples)
                                     + f"exit {status}\n")


def _relative(text: str, out: Path, examples: Path) -> str:
    """Paths made independent of the machine, and wall-clock times (the one thing a run may
    print that is not a function of its input) masked."""
    text = text.replace(str(out), "OUT").replace(str(examples), "EXAMPLES")
    text = re.sub(r"in \d+\.\d+ s\b", "in TIME s", text)
    return re.sub(r'"seconds": \d+(\.\d+)?(e-?\d+)?', '"seconds": TIME', text)


# Files up to this size are kept whole (a change shows as a readable diff); every file,
# large ones included, is in the manifest by its SHA-256.
KEPT_WHOLE = 32 * 1024


def manifest(folder: Path) -> str:
    """One line per file below `folder`: SHA-256, size, path (sorted)."""
    lines = []
    for path in sorted(p for p in folder.rglob("*") if p.is_file() and p.name != "MANIFEST"):
        data = path.read_bytes()
        lines.append(f"{hashlib.sha256(data).hexdigest()} {len(data):8d} "
                     f"{path.relative_to(folder).as_posix()}")
    return "\n".join(lines) + "\n"


def main() -> int:
    if GOLDEN.exists():
        shutil.rmtree(GOLDEN)
    GOLDEN.mkdir(parents=True)
    produce(GOLDEN)
    (GOLDEN / "MANIFEST").write_text(manifest(GOLDEN))
    for path in GOLDEN.rglob("*"):
        if path.is_file() and path.stat().st_size > KEPT_WHOLE:
            path.unlink()
    print(f"wrote {GOLDEN / 'MANIFEST'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
