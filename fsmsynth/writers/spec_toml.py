"""Write a state table in fsmsynth's TOML spec format (the inverse of the reader)."""

from __future__ import annotations

import json

from fsmsynth.table import StateTable


def _quote(text: str) -> str:
    # JSON string escapes are valid TOML basic-string escapes; TOML also forbids raw DEL.
    return json.dumps(text).replace("\x7f", "\\u007f")


def _array(items: tuple[str, ...] | list[str]) -> str:
    return "[" + ", ".join(_quote(i) for i in items) + "]"


def write_spec(table: StateTable, *, comment: str = "") -> str:
    """TOML text that :func:`fsmsynth.formats.spec_toml.parse_spec` reads back to ``table``."""
    out = [f"# {line}" if line else "#" for line in comment.splitlines()]
    out += [
        f"name = {_quote(table.name)}",
        f"kind = {_quote(table.kind)}",
        f"inputs = {_array(table.inputs)}",
        f"outputs = {_array(table.outputs)}",
        f"reset = {_quote(table.reset)}",
        f"states = {_array(table.states)}",
        "",
        "# present state, input cube, next state (\"-\" = don't care)"
        + (", output cube" if table.kind == "mealy" else ""),
        "rows = [",
    ]
    for state, cube, nxt, outs in table.rows:
        cells = [state, cube, "-" if nxt is None else nxt]
        if table.kind == "mealy":
            cells.append(outs or "")
        out.append(f"  {_array(cells)},")
    out.append("]")
    if table.kind == "moore":
        out += ["", "[state_outputs]"]
        out += [f"{_quote(s)} = {_quote(table.state_outputs[s])}"
                for s in table.states if s in table.state_outputs]
    return "\n".join(out) + "\n"
