"""Import a state table kept as a plain spreadsheet (CSV).

The table: a header row ``from``, one column per input, ``to``, one column per output; then
one row per transition: the present state, each input's value, the next state (``-`` for a
don't care) and each output's value.  An input or output cell holds ``0``, ``1`` or ``-``; a
vector column is headed ``mode[1:0]`` (most significant bit first, down to 0) and holds a
number (``2``), bits (``1-``) or ``-``.

Above the table, an optional settings table: a row of setting names (``name``, ``reset``,
``kind``) and the row of their values under them.  Settings given by the caller (the command
line's ``--name``, ``--reset``, ``--kind``) override those.  Without either, the machine is a
Mealy machine named after the file, reset into the state of the first transition.  For
``kind`` ``moore`` the output columns give the state's outputs and must agree on every row of
that state.  Blank rows and rows whose first cell starts with ``#`` are skipped.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Mapping
from pathlib import Path

from fsmsynth.base.errors import SpecFileError, TableError
from fsmsynth.base.names import bit_name
from fsmsynth.formats.text_files import read_text
from fsmsynth.model.table import StateTable

SETTINGS = ("name", "reset", "kind")
_OLD_DIRECTIVE = re.compile(r"#\s*(name|reset|kind)\s*:")
_VECTOR = re.compile(r"^(.+)\[(\d+):0\]$")


def read_csv(path: str | Path, settings: Mapping[str, str] | None = None) -> StateTable:
    """Read a CSV state table; errors carry ``file:line:``.  ``settings`` (``name``,
    ``reset``, ``kind``) override the file's settings row."""
    default_name = re.sub(r"\W", "_", Path(path).stem)
    return parse_csv(read_text(path), str(path), default_name=default_name, settings=settings)


def _records(text: str, path: str) -> list[tuple[int, list[str]]]:
    records: list[tuple[int, list[str]]] = []
    # Lines end at \n only (splitlines would also break at form feeds and U+2028, and the
    # line numbers in errors would no longer be an editor's); fields may be long.
    limit = csv.field_size_limit()
    csv.field_size_limit(max(limit, len(text) + 1))
    try:
        for number, line in enumerate(text.removeprefix("\ufeff").split("\n"), start=1):
            line = line.removesuffix("\r")
            stripped = line.strip()
            if not stripped or not stripped.strip(",").strip():
                continue
            if stripped.startswith("#"):
                if _OLD_DIRECTIVE.match(stripped):
                    raise SpecFileError(
                        "settings go in a settings row, not a comment: a row 'name,reset' "
                        "above the table with their values under it (or --name and --reset "
                        "on the command line)", path=path, line=number)
                continue
            try:
                cells = next(csv.reader(io.StringIO(line)))
            except csv.Error as exc:
                raise SpecFileError(f"not a CSV line: {exc}", path=path, line=number) from None
            records.append((number, [c.strip() for c in cells]))
    finally:
        csv.field_size_limit(limit)
    return records


def _columns(header: list[str], path: str, line: int) -> list[tuple[str, list[str]]]:
    """Each header cell's 1-bit names: ``mode[1:0]`` is ``mode[1], mode[0]``."""
    columns = []
    for cell in header:
        vector = _VECTOR.match(cell)
        if vector:
            top = int(vector.group(2))
            if top < 1:
                raise SpecFileError(f"column {cell!r}: a vector has at least 2 bits "
                                    f"({vector.group(1)}[1:0]); write a bit as "
                                    f"{vector.group(1)}", path=path, line=line)
            columns.append((cell, [bit_name(vector.group(1), i) for i in range(top, -1, -1)]))
        else:
            columns.append((cell, [cell]))
    return columns


def _bits(cell: str, column: tuple[str, list[str]], path: str, line: int) -> str:
    """A cell's value as one ``0``/``1``/``-`` per bit of its column."""
    name, bits = column
    width = len(bits)
    if width > 1 and cell.isdigit():
        value = int(cell)
        if value >= 1 << width:
            raise SpecFileError(f"column {name!r}: value {value} does not fit {width} bits "
                                f"(0 to {(1 << width) - 1})", path=path, line=line)
        return format(value, f"0{width}b")
    if cell == "-":
        return "-" * width
    if len(cell) == width and set(cell) <= set("01-"):
        return cell
    wanted = ("one of 0, 1 or -" if width == 1 else
              f"a number from 0 to {(1 << width) - 1}, {width} of 0, 1 and -, or -")
    raise SpecFileError(f"column {name!r}: {cell!r} is not a value: give {wanted}",
                        path=path, line=line)


def parse_csv(text: str, path: str = "<string>", *, default_name: str = "machine",
              settings: Mapping[str, str] | None = None) -> StateTable:
    """Parse CSV text; see the module docstring for the layout."""
    chosen: dict[str, str] = {"name": default_name, "kind": "mealy"}
    records = _records(text, path)
    if records and records[0][1] and records[0][1][0] in SETTINGS:
        names_line, names = records[0]
        for cell in names:
            if cell not in SETTINGS:
                raise SpecFileError(f"unknown setting {cell!r}: the settings are "
                                    f"{', '.join(SETTINGS)}", path=path, line=names_line)
        if len(records) < 2 or len(records[1][1]) < len(names):
            raise SpecFileError("the settings row needs a row of values under it", path=path,
                                line=names_line)
        chosen.update((k, v) for k, v in zip(names, records[1][1]) if v)
        records = records[2:]
    for key, value in (settings or {}).items():
        if key not in SETTINGS:
            raise SpecFileError(f"unknown setting {key!r}: the settings are "
                                f"{', '.join(SETTINGS)}", path=path)
        chosen[key] = value
    if not records:
        raise SpecFileError("no header row: expected from, inputs..., to, outputs...",
                            path=path)
    header_line, header = records[0]
    if not header or header[0] not in ("from", "state") or not {"to", "next"} & set(header):
        raise SpecFileError("the header must start with 'from' and have a 'to' column "
                            "between the inputs and the outputs", path=path, line=header_line)
    split = header.index("to" if "to" in header else "next")
    columns = _columns(header, path, header_line)
    in_columns, out_columns = columns[1:split], columns[split + 1:]
    inputs = [b for _c, bits in in_columns for b in bits]
    outputs = [b for _c, bits in out_columns for b in bits]
    rows: list[tuple[str, str, str | None, str | None]] = []
    lines: list[int] = []
    moore: dict[str, tuple[str, int]] = {}
    for number, cells in records[1:]:
        if len(cells) != len(header):
            raise SpecFileError(f"expected {len(header)} cells like the header, found {len(cells)}",
                                path=path, line=number)
        state, nxt = cells[0], cells[split]
        cube = "".join(_bits(c, col, path, number) for c, col in zip(cells[1:split], in_columns))
        out = "".join(_bits(c, col, path, number)
                      for c, col in zip(cells[split + 1:], out_columns))
        if chosen["kind"] == "moore":
            if state in moore and moore[state][0] != out:
                raise SpecFileError(
                    f"state {state!r} has outputs {out!r} here but {moore[state][0]!r} on line "
                    f"{moore[state][1]}: a Moore state has one output cube", path=path,
                    line=number, state=state)
            moore.setdefault(state, (out, number))
            rows.append((state, cube, None if nxt == "-" else nxt, None))
        else:
            rows.append((state, cube, None if nxt == "-" else nxt, out))
        lines.append(number)
    reset = chosen.get("reset") or (rows[0][0] if rows else None)
    try:
        return StateTable.from_rows(
            name=chosen["name"], kind=chosen["kind"], inputs=inputs, outputs=outputs,
            rows=rows, reset=reset,
            state_outputs={s: o for s, (o, _n) in moore.items()} if moore else None)
    except TableError as exc:
        where = lines[exc.row] if exc.row is not None else None
        if where is None and exc.name is not None:
            where = header_line
        raise SpecFileError(exc.message, path=path, line=where, state=exc.state, row=exc.row,
                            name=exc.name) from None
