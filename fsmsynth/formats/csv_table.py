"""Import a plain CSV state table.

Header row: ``state``, one column per input, ``next``, one column per output.  Each data row
is one row of the table: the state, one ``0``/``1``/``-`` per input, the next state (``-`` for
a don't care) and one ``0``/``1``/``-`` per output.  Blank lines and lines starting with
``#`` are skipped; leading ``# key: value`` lines may set ``name``, ``reset`` and ``kind``.
Without them the machine is a Mealy machine named after the file, reset into the state of
the first data row.  For ``kind: moore`` the output columns give the state's outputs and must
agree on every row of that state.
"""

from __future__ import annotations

import csv
import io
import re
from pathlib import Path

from fsmsynth.errors import SpecFileError, TableError
from fsmsynth.formats.text_files import read_text
from fsmsynth.table import StateTable

_DIRECTIVE = re.compile(r"#\s*(name|reset|kind)\s*:\s*(\S+)\s*$")


def read_csv(path: str | Path) -> StateTable:
    """Read a CSV state table; errors carry ``file:line:``."""
    default_name = re.sub(r"\W", "_", Path(path).stem)
    return parse_csv(read_text(path), str(path), default_name=default_name)


def parse_csv(text: str, path: str = "<string>", *, default_name: str = "machine") -> StateTable:
    """Parse CSV text; see the module docstring for the layout."""
    settings: dict[str, str] = {"name": default_name, "kind": "mealy"}
    records: list[tuple[int, list[str]]] = []
    # Lines end at \n only (splitlines would also break at form feeds and U+2028, and the
    # line numbers in errors would no longer be an editor's); fields may be long.
    limit = csv.field_size_limit()
    csv.field_size_limit(max(limit, len(text) + 1))
    try:
        for number, line in enumerate(text.removeprefix("\ufeff").split("\n"), start=1):
            line = line.removesuffix("\r")
            stripped = line.strip()
            if not stripped:
                continue
            if stripped.startswith("#"):
                match = _DIRECTIVE.match(stripped)
                if match and not records:
                    settings[match.group(1)] = match.group(2)
                continue
            try:
                cells = next(csv.reader(io.StringIO(line)))
            except csv.Error as exc:
                raise SpecFileError(f"not a CSV line: {exc}", path=path, line=number) from None
            records.append((number, [c.strip() for c in cells]))
    finally:
        csv.field_size_limit(limit)
    if not records:
        raise SpecFileError("no header row: expected state, inputs..., next, outputs...",
                            path=path)
    header_line, header = records[0]
    if not header or header[0] != "state" or "next" not in header:
        raise SpecFileError("the header must start with 'state' and have a 'next' column "
                            "between the inputs and the outputs", path=path, line=header_line)
    split = header.index("next")
    inputs, outputs = header[1:split], header[split + 1:]
    rows: list[tuple[str, str, str | None, str | None]] = []
    lines: list[int] = []
    moore: dict[str, tuple[str, int]] = {}
    for number, cells in records[1:]:
        if len(cells) != len(header):
            raise SpecFileError(f"expected {len(header)} cells like the header, found {len(cells)}",
                                path=path, line=number)
        state, nxt = cells[0], cells[split]
        cube = "".join(cells[1:split])
        out = "".join(cells[split + 1:])
        if len(cube) != len(inputs) or len(out) != len(outputs):
            raise SpecFileError("each input and output cell holds one of 0, 1 or -",
                                path=path, line=number)
        if settings["kind"] == "moore":
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
    reset = settings.get("reset") or (rows[0][0] if rows else None)
    try:
        return StateTable.from_rows(
            name=settings["name"], kind=settings["kind"], inputs=inputs, outputs=outputs,
            rows=rows, reset=reset,
            state_outputs={s: o for s, (o, _n) in moore.items()} if moore else None)
    except TableError as exc:
        where = lines[exc.row] if exc.row is not None else None
        if where is None and exc.name is not None:
            where = header_line
        raise SpecFileError(exc.message, path=path, line=where, state=exc.state, row=exc.row,
                            name=exc.name) from None
