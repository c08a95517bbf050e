"""Write a state table in fsmsynth's TOML spec format (the inverse of the reader)."""

from __future__ import annotations

import json

from fsmsynth.base.names import ports_of
from fsmsynth.language.guards import short_guard
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.model.table import StateTable


def _quote(text: str) -> str:
    # JSON string escapes are valid TOML basic-string escapes; TOML also forbids raw DEL.
    return json.dumps(text).replace("\x7f", "\\u007f")


def toml_value(value: object) -> str:
    """``value`` (text, number, bool, list or table of those) as a TOML value on one line."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, str):
        return _quote(value)
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        if not value:
            return "{}"
        return "{ " + ", ".join(f"{_key(str(k))} = {toml_value(v)}"
                                for k, v in value.items()) + " }"
    raise TypeError(f"no TOML form for {value!r}")


def _array(items: tuple[str, ...] | list[str]) -> str:
    return "[" + ", ".join(_quote(i) for i in items) + "]"


def write_spec(table: StateTable, *, comment: str = "", guards: bool = False) -> str:
    """TOML text that :func:`fsmsynth.formats.spec_toml.parse_spec` reads back to ``table``.

    By default each row is one ``[[transition]]`` entry with its exact input cube
    (``cube = "1-0"``, ``to = "-"`` for an open next state), which reads back to an equal
    table, row for row.  With ``guards``, the transitions are written as guarded entries
    (vector ports whole, one entry per next state and output value, ``else`` for the rest
    of a state) when that says the same machine: when every state has rows, every row names
    its next state and no two rows of a state overlap; otherwise as exact entries.
    """
    out = [f"# {line}" if line else "#" for line in comment.splitlines()]
    if guards:
        written = _guarded(table)
        if written is not None:
            return "\n".join(out + written) + "\n"
    entries = []
    for state, cube, nxt, outs in table.rows:
        fields = (f"from = {_quote(state)}, cube = {_quote(cube)}, "
                  f"to = {_quote('-' if nxt is None else nxt)}")
        if table.kind == "mealy":
            fields += f", set = {_values(outs or '', table.outputs, every=True)}"
        entries.append(f"  {{ {fields} }},")
    out += _head(table, with_states=True) + [
        "",
        "# from a state, on exactly this input cube (one 0, 1 or - per input bit), to the next",
        "# state (\"-\": don't care), setting outputs (\"-\": free)",
        "transition = [",
        *entries,
        "]",
    ]
    out += _invariants(table) + _state_outputs(table) + _clocking(table)
    return "\n".join(out) + "\n"


def _head(table: StateTable, *, with_states: bool) -> list[str]:
    head = [
        f"name = {_quote(table.name)}",
        f"kind = {_quote(table.kind)}",
        f"inputs = {_ports(table.inputs)}",
        f"outputs = {_ports(table.outputs)}",
        f"reset = {_quote(table.reset)}",
    ]
    head += [f"states = {_array(table.states)}"] if with_states else []
    intent = table.intent
    if intent.gaps_said:  # what no transition covers is a don't care, on purpose
        head.append('otherwise = "dont-care"')
    if intent.final:
        head.append(f"final = {_array(intent.final)}")
    if intent.accept:
        head.append(f"accept_warnings = {_array(intent.accept)}")
    return head


def _state_outputs(table: StateTable) -> list[str]:
    if table.kind != "moore":
        return []
    return ["", "[state_outputs]"] + [
        f"{_quote(s)} = {_values(table.output_cube_of(s), table.outputs, every=True)}"
        for s in table.states]


def _clocking(table: StateTable) -> list[str]:
    c = table.clocking
    if c is None:
        return []
    pairs = [("clock", c.clock), ("reset", c.reset), ("reset_style", c.reset_style),
             ("reset_active", c.reset_active)] + ([("enable", c.enable)] if c.enable else [])
    return ["", "[clocking]"] + [f"{k} = {_quote(v)}" for k, v in pairs if v is not None]


def _invariants(table: StateTable) -> list[str]:
    if not table.invariants:
        return []
    return ["", "invariants = ["] + [f"  {_quote(t)}," for t in table.invariants] + ["]"]


def _ports(names: tuple[str, ...]) -> str:
    ports = ports_of(names)
    if all(width is None for _port, width in ports):
        return _array(names)
    return "{ " + ", ".join(f"{_key(p)} = {w or 1}" for p, w in ports) + " }"


def _key(name: str) -> str:
    bare = name.replace("_", "a").replace("-", "a").isalnum() and name.isascii()
    return name if bare else _quote(name)


def _values(word: str, names: tuple[str, ...], *, every: bool = False) -> str:
    """``{ fill = 1, speed = 5 }``: each output port the word specifies (ints where whole);
    with ``every``, the free ones too, as ``"-"`` (in a spec file outputs are said, never
    implied)."""
    parts, at = [], 0
    for port, width in ports_of(names):
        chars = word[at:at + (width or 1)]
        at += width or 1
        if set(chars) == {"-"} and not every:
            continue
        value = str(int(chars, 2)) if "-" not in chars else _quote(chars)
        parts.append(f"{_key(port)} = {value}")
    return "{ " + ", ".join(parts) + " }" if parts else "{}"


def _guarded(table: StateTable) -> list[str] | None:
    """The guarded-transition form of ``table``, or ``None`` when it cannot say the same."""
    n = len(table.inputs)
    var = bdd.variables(n)
    entries: list[str] = []
    if any(not table.rows_of(state) for state in table.states):
        return None  # a state without rows would not be declared, or would move
    for state in table.states:
        groups: dict[tuple[str, str], object] = {}
        covered = bdd.ZERO
        for _s, cube, nxt, outs in table.rows_of(state):
            points = bdd.cube_bdd(Cube.from_string(cube), var)
            if nxt is None or not (points & covered).is_zero():
                return None
            covered |= points
            key = (nxt, outs or "")
            groups[key] = groups.get(key, bdd.ZERO) | points
        earlier = bdd.ZERO
        for k, ((nxt, outs), points) in enumerate(groups.items()):
            last = k == len(groups) - 1
            if last and covered.is_one():
                when = "else"
            else:
                when = short_guard(points, earlier, var, table.inputs)
            earlier |= points
            fields = f"from = {_quote(state)}, when = {_quote(when)}, to = {_quote(nxt)}"
            if table.kind == "mealy":
                fields += f", set = {_values(outs, table.outputs, every=True)}"
            entries.append(f"  {{ {fields} }},")
    out = _head(table, with_states=False) + [
        "",
        "# from a state, when a guard holds, to the next state, setting outputs (tried in order)",
        "transition = [",
        *entries,
        "]",
    ]
    return out + _invariants(table) + _state_outputs(table) + _clocking(table)
