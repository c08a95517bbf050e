"""Figures the documentation shows, computed by fsmsynth itself (run: python docs/figures.py).

Each function returns a Markdown fragment that a page includes from ``docs/figures/``;
``tests/test_docs.py`` computes them again and compares, so a figure in the docs cannot go
stale: a change that moves one fails the test until this script is run and the new numbers
are committed (and read).
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from pathlib import Path

HERE = Path(__file__).resolve().parent
EXAMPLES = HERE.parent / "examples"


def _grain_dryer():  # type: ignore[no-untyped-def]
    from fsmsynth import read_table
    return read_table(EXAMPLES / "grain_dryer.toml")


def ranking() -> str:
    """The five cheapest storage kind x encoding pairs of the grain dryer on three targets;
    pairs of equal cost share a line."""
    from fsmsynth import compare
    table = _grain_dryer()
    columns = {}
    for target in ("two-level", "nand2", "lut4"):
        rows = compare(table, storages=["d", "t", "jk", "sr"], encodings=["binary", "one-hot"],
                       target=target).rows
        groups: dict[float, list[str]] = {}
        for row in rows:
            groups.setdefault(row.total, []).append(f"{row.storage.upper()} {row.encoding}")
        columns[target] = [f"{', '.join(names)} {total:g}"
                           for total, names in sorted(groups.items())][:5]
    lines = ["| rank | two-level | nand2 | lut4 |", "| --- | --- | --- | --- |"]
    for rank in range(5):
        cells = [columns[t][rank] if rank < len(columns[t]) else "" for t in columns]
        lines.append(f"| {rank + 1} | " + " | ".join(cells) + " |")
    return "\n".join(lines) + "\n"


def storage_on_luts() -> str:
    """What each storage kind costs on LUT4s, where only D flip-flops exist: the grain dryer,
    binary codes."""
    from fsmsynth import synthesize
    table = _grain_dryer()
    lines = ["| storage | flip-flops | built from | conversion area (LUTs) | total |",
             "| --- | --- | --- | --- | --- |"]
    for kind in ("d", "t", "jk", "sr"):
        design = synthesize(table, kind, target="lut4")
        entry = design.cost.storage[kind]
        lines.append(f"| {kind.upper()} | {entry['flip_flops']} | "
                     f"{str(entry['built_from']).upper()} | {entry['conversion_area']:g} | "
                     f"{design.cost.total:g} |")
    return "\n".join(lines) + "\n"


def glitch_remedies() -> str:
    """Cost and hazards of the grain dryer (Mealy, D flip-flops) under each remedy."""
    from dataclasses import replace

    from fsmsynth import synthesize
    table = _grain_dryer()
    plain = replace(table, invariants=())  # registered Mealy outputs move them a clock
    remedies = [
        ("none, binary codes", "", table, {}, "nothing"),
        ("hazard-free covers", "`--outputs hazard-free`", table, {"outputs": "hazard-free"},
         "no static hazard under single-input changes"),
        ("searched codes", "`--encoding adjacency`", table, {"encoding": "adjacency"},
         "nothing"),
        ("one-bit steps", "`--encoding adjacency --unit-distance`", table,
         {"encoding": "adjacency", "unit_distance": True},
         "no function hazard on transitions one bit apart"),
        ("both", "`--encoding adjacency --unit-distance --outputs hazard-free`", table,
         {"encoding": "adjacency", "unit_distance": True, "outputs": "hazard-free"},
         "both of the above"),
        ("registered outputs", "`--outputs registered`", plain, {"outputs": "registered"},
         "outputs are flip-flop outputs; Mealy outputs one clock later"),
    ]
    lines = ["| remedy | option | cost | static | function | what is guaranteed |",
             "| --- | --- | --- | --- | --- | --- |"]
    for name, option, machine, kwargs, guarantee in remedies:
        design = synthesize(machine, "d", **kwargs)  # type: ignore[arg-type]
        kinds = [g.kind for g in design.glitches.glitches]
        lines.append(f"| {name} | {option} | {design.cost.total:g} | {kinds.count('static')} "
                     f"| {kinds.count('function')} | {guarantee} |")
    lines.append("| output-encoded states | `--encoding outputs` | Moore only | | | outputs are "
                 "flip-flop outputs: glitch-free |")
    return "\n".join(lines) + "\n"


FIGURES: dict[str, Callable[[], str]] = {
    "ranking": ranking, "storage_on_luts": storage_on_luts, "glitch_remedies": glitch_remedies}


def main() -> int:
    sys.path.insert(0, str(HERE.parent))
    for name, make in FIGURES.items():
        (HERE / "figures" / f"{name}.md").write_text(make())
        print(f"wrote docs/figures/{name}.md")
    return 0


if __name__ == "__main__":
    sys.exit(main())
