"""Read a cell library: fsmsynth's own TOML schema (documented in docs/guide/targets.md).

::

    name = "my_cells"
    lut_size = 0                  # optional: a LUT target instead of cells (4 or 6, ...)

    [flip_flops]                  # area of each storage kind the library has; d is needed
    d = 4.5
    jk = 6.0

    [[cell]]
    name = "NAND2"
    pins = ["a", "b"]             # inputs; the output is the cell's function
    function = "~(a & b)"         # the guard language over the pins: ~ & | ^ ( ) 0 1
    area = 1.0
    delay = 1.0                   # optional, default 1

Every error names the file and the line of the key or ``[[cell]]`` entry at fault.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path
from typing import Any

from fsmsynth.base.errors import OptionError, SpecFileError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.formats.text_files import read_text
from fsmsynth.map.targets import Cell, Target, make_cell
from fsmsynth.model.storage import STORAGES

KEYS = ("name", "flip_flops", "cell", "lut_size")
CELL_KEYS = ("name", "pins", "function", "area", "delay")


def read_cells(path: str | Path) -> Target:
    """A :class:`~fsmsynth.map.targets.Target` from a cell library file."""
    return parse_cells(read_text(path), str(path))


def _line_of(text: str, pattern: str, nth: int = 0) -> int | None:
    seen = -1
    for n, line in enumerate(text.split("\n"), start=1):
        if re.match(pattern, line.strip()):
            seen += 1
            if seen == nth:
                return n
    return None


def parse_cells(text: str, path: str = "<string>") -> Target:
    """Parse library text; ``path`` is used in error messages."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SpecFileError(f"not valid TOML: {exc}", path=path) from None
    for key in data:
        if key not in KEYS:
            raise SpecFileError(f"unknown key {key!r}: the keys are {', '.join(KEYS)}",
                                path=path, line=_line_of(text, rf"{re.escape(key)}\s*="))
    name = data.get("name", Path(path).stem)
    if not isinstance(name, str):
        raise SpecFileError("'name' must be a string", path=path, line=_line_of(text, r"name\s*="))
    flops = data.get("flip_flops", {})
    where = _line_of(text, r"\[flip_flops\]")
    if not isinstance(flops, dict):
        raise SpecFileError("'flip_flops' must be a table of storage kind = area", path=path)
    for kind, area in flops.items():
        line = _line_of(text, rf"{re.escape(kind)}\s*=") or where
        if kind not in STORAGES:
            raise SpecFileError(f"flip_flops: unknown storage kind {kind!r} (kinds: "
                                f"{', '.join(sorted(STORAGES))})", path=path, line=line)
        if isinstance(area, bool) or not isinstance(area, (int, float)) or area < 0:
            raise SpecFileError(f"flip_flops: area of {kind!r} must be a number >= 0, not "
                                f"{area!r}", path=path, line=line)
    if "d" not in flops:
        raise SpecFileError("flip_flops: give the area of a D flip-flop (d = ...): the other "
                            "kinds are built from it where the library lacks them",
                            path=path, line=where)
    lut_size = data.get("lut_size", 0)
    if isinstance(lut_size, bool) or not isinstance(lut_size, int) or not 0 <= lut_size <= 8:
        raise SpecFileError(f"lut_size must be 0 (cells) or 1 to 8, not {lut_size!r}",
                            path=path, line=_line_of(text, r"lut_size\s*="))
    entries = data.get("cell", [])
    if not isinstance(entries, list):
        raise SpecFileError("write cells as [[cell]] tables", path=path)
    cells: list[Cell] = []
    for i, entry in enumerate(entries):
        line = _line_of(text, r"\[\[cell\]\]", i)
        cells.append(_cell(entry, i, path, line))
    try:
        if lut_size:
            return Target(name, "lut", flip_flops=FrozenMap(dict(flops)), lut_size=lut_size,
                          illustrative=False)
        return Target(name, "cells", tuple(cells), FrozenMap(dict(flops)), illustrative=False)
    except OptionError as exc:
        raise SpecFileError(str(exc), path=path) from None


def _cell(entry: Any, i: int, path: str, line: int | None) -> Cell:
    if not isinstance(entry, dict):
        raise SpecFileError(f"cell {i + 1}: write it as a [[cell]] table", path=path, line=line)
    for key in entry:
        if key not in CELL_KEYS:
            raise SpecFileError(f"cell {i + 1}: unknown field {key!r}: the fields are "
                                f"{', '.join(CELL_KEYS)}", path=path, line=line)
    for key in ("name", "pins", "function", "area"):
        if key not in entry:
            raise SpecFileError(f"cell {i + 1}: missing field {key!r}", path=path, line=line)
    name, pins = entry["name"], entry["pins"]
    if not isinstance(name, str) or not isinstance(pins, list) or not all(
            isinstance(p, str) for p in pins):
        raise SpecFileError(f"cell {i + 1}: name must be a string and pins an array of "
                            "strings", path=path, line=line)
    try:
        return make_cell(name, pins, entry["function"], entry["area"], entry.get("delay", 1.0))
    except OptionError as exc:
        raise SpecFileError(str(exc), path=path, line=line) from None
