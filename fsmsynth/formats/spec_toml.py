"""Read fsmsynth's TOML state-table format (documented in docs/guide/spec-language.md).

Every error names the file and line: TOML syntax errors carry the parser's position, and
table errors are traced back to the line of the row, key or entry at fault.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import replace
from pathlib import Path
from typing import Any

from fsmsynth.base.errors import OptionError, SpecFileError, TableError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.base.names import did_you_mean, ports_of
from fsmsynth.checks.spec_warnings import accept_problem
from fsmsynth.formats.text_files import read_text
from fsmsynth.language.timer_words import ACTIONS
from fsmsynth.language.transitions import ExactCube
from fsmsynth.model.clocking import Clocking
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine

KEYS = ("name", "kind", "inputs", "outputs", "reset", "states", "state_outputs",
        "transition", "every_state", "default_outputs", "otherwise", "invariants", "final",
        "accept_warnings", "clocking", "timers", "counters")
CLOCKING_KEYS = ("clock", "reset", "reset_style", "reset_active", "enable")
"""Keys of ``[clocking]``: the clock, reset and enable port names, and how the reset acts
(:class:`~fsmsynth.model.clocking.Clocking`)."""
TRANSITION_KEYS = ("from", "when", "cube", "to", "set", "start", "count", "clear")
"""Fields of one ``[[transition]]`` entry: present state, a guard (``when``) or an exact
input cube (``cube``), next state (``"-"``: don't care), outputs set, and the timers it
starts and counters it counts or clears (:mod:`fsmsynth.model.timers`)."""
EVERY_STATE_KEYS = ("when", "to", "set", "start", "count", "clear")
"""Fields of one ``[[every_state]]`` entry, which every state tries before its own."""
_POSITION = re.compile(r"\(at line (\d+), column \d+\)")
_INVARIANT = re.compile(r"invariant (\d+) \(")
REWRITE = "fsmsynth rewrite"
"""The command that writes an older spec file in today's form."""


def read_spec(path: str | Path, *, legacy: bool = False) -> StateTable | TimedMachine:
    """Read a state table from a ``.toml`` spec file; a spec with ``timers`` or ``counters``
    gives a :class:`~fsmsynth.model.timers.TimedMachine`.

    ``legacy`` also reads the older forms (``rows = [...]`` of cube rows, ``from = "*"``),
    which ``fsmsynth rewrite`` turns into today's; otherwise they are refused with a message
    that names that command.

    Raises
    ------
    SpecFileError
        With ``file:line:`` first in the message.
    """
    return parse_spec(read_text(path), str(path), legacy=legacy)


def parse_spec(text: str, path: str = "<string>", *, legacy: bool = False
               ) -> StateTable | TimedMachine:
    """Parse spec text; ``path`` is used in error messages (``legacy`` as for
    :func:`read_spec`)."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        match = _POSITION.search(str(exc))
        message = _POSITION.sub("", str(exc)).strip()
        raise SpecFileError(f"not valid TOML: {message}", path=path,
                            line=int(match.group(1)) if match else None) from None
    lines = _Lines(text)
    if "rows" in data and not legacy:
        raise SpecFileError(f"cube rows ('rows') are an older form: `{REWRITE} {path} -o NEW.toml` "
                            "writes the same machine as [[transition]] entries, row for row",
                            path=path, line=lines.key("rows"))
    for key in data:
        if key not in KEYS and not (legacy and key == "rows"):
            raise SpecFileError(f"unknown key {key!r}: the keys are {', '.join(KEYS)}",
                                path=path, line=lines.key(key))
    for key in ("name", "inputs", "outputs", "reset"):
        if key not in data:
            raise SpecFileError(f"missing key {key!r}", path=path)
    if "rows" in data and ("transition" in data or "every_state" in data):
        raise SpecFileError("give either 'rows' or [[transition]] entries, not both",
                            path=path, line=lines.key("rows"))
    if "rows" not in data and "transition" not in data:
        raise SpecFileError("missing [[transition]] entries: from a state, when a guard "
                            "holds, to the next state", path=path)
    for key in ("name", "kind", "reset", "otherwise"):
        _expect(data, key, str, path, lines)
    for key in ("invariants", "states", "final", "accept_warnings"):
        _expect_strings(data, key, path, lines)
    problem = accept_problem(data.get("accept_warnings", []))
    if problem:
        raise SpecFileError(f"accept_warnings: {problem}", path=path,
                            line=lines.key("accept_warnings"))
    if "rows" in data:
        return _cube_rows(data, path, lines)
    return _guarded(data, path, lines, legacy)


def _cube_rows(data: dict[str, Any], path: str, lines: _Lines) -> StateTable:
    """The older cube-row form, read only to be rewritten."""
    for key in ("default_outputs", "otherwise", "final", "accept_warnings"):
        if key in data:
            raise SpecFileError(f"{key!r} belongs to the [[transition]] form; cube rows say "
                                "it row by row", path=path, line=lines.key(key))
    for key in ("inputs", "outputs"):
        _expect_strings(data, key, path, lines)
    if not isinstance(data["rows"], list):
        raise SpecFileError("'rows' must be an array of rows", path=path, line=lines.key("rows"))
    kind = data.get("kind", "mealy")
    rows = []
    for i, raw in enumerate(data["rows"]):
        if not isinstance(raw, list) or not all(isinstance(x, str) for x in raw) or not (
                len(raw) == 4 or (kind == "moore" and len(raw) == 3)):
            shape = ('["state", "input cube", "next state"]' if kind == "moore"
                     else '["state", "input cube", "next state", "output cube"]')
            raise SpecFileError(f"row {i + 1}: write it as {shape} (strings; next state "
                                "\"-\" for a don't care)", path=path, line=lines.row(i), row=i)
        nxt = None if raw[2] == "-" else raw[2]
        out = raw[3] if len(raw) == 4 else None
        rows.append((raw[0], raw[1], nxt, out))
    outs = data.get("state_outputs")
    if outs is not None and (not isinstance(outs, dict)
                             or not all(isinstance(v, str) for v in outs.values())):
        raise SpecFileError("'state_outputs' must be a table of state = \"output cube\"",
                            path=path, line=lines.key("state_outputs"))
    try:
        return StateTable.from_rows(name=data["name"], kind=kind, inputs=data["inputs"],
                                    outputs=data["outputs"], reset=data["reset"], rows=rows,
                                    states=data.get("states"), state_outputs=outs,
                                    invariants=data.get("invariants"))
    except TableError as exc:
        raise SpecFileError(exc.message, path=path, line=lines.locate(exc, data), state=exc.state,
                            row=exc.row, name=exc.name) from None


def _entries(data: dict[str, Any], key: str, fields: tuple[str, ...], path: str,
             lines: _Lines) -> list[dict[str, Any]]:
    """The ``[[key]]`` entries, each checked for unknown fields and field types."""
    entries = data.get(key, [])
    if not isinstance(entries, list) or not all(isinstance(e, dict) for e in entries):
        raise SpecFileError(f"write them as [[{key}]] tables", path=path, line=lines.key(key))
    name = "every-state transition" if key == "every_state" else "transition"
    for i, entry in enumerate(entries):
        where = lines.entry(key, i)
        for field in entry:
            if field not in fields:
                raise SpecFileError(f"{name} {i + 1}: unknown field {field!r}: the fields are "
                                    f"{', '.join(fields)}", path=path, line=where, row=i)
        guard = [f for f in ("when", "cube") if f in entry and f in fields]
        if len(guard) != 1:
            raise SpecFileError(f"{name} {i + 1}: give " + ("'when' (a guard) or 'cube' (an "
                                "exact input cube)" if "cube" in fields else "'when' (a guard)"),
                                path=path, line=where, row=i)
        for field in ("from", *guard, "to"):
            if field in fields and not isinstance(entry.get(field), str):
                raise SpecFileError(f"{name} {i + 1}: field {field!r} must be a string",
                                    path=path, line=where, row=i)
        if "set" in entry and not isinstance(entry["set"], dict):
            raise SpecFileError(f"{name} {i + 1}: 'set' must be a table of output = value",
                                path=path, line=where, row=i)
    return entries


def _guarded(data: dict[str, Any], path: str, lines: _Lines, legacy: bool
             ) -> StateTable | TimedMachine:
    """``[[transition]]`` and ``[[every_state]]`` entries (the keys every spec has are
    checked by :func:`parse_spec`)."""
    moore = data.get("kind", "mealy") == "moore"

    def outputs(entry: dict[str, Any]) -> dict[str, Any] | None:
        return None if moore and "set" not in entry else entry.get("set") or {}

    timed = "timers" in data or "counters" in data

    def actions(entry: dict[str, Any]) -> tuple[Any, ...]:
        given = {a: entry[a] for a in ACTIONS if a in entry}
        return (given,) if timed else ()

    transitions: list[tuple[Any, ...]] = []
    every: list[tuple[Any, ...]] = []
    for i, entry in enumerate(_entries(data, "transition", TRANSITION_KEYS, path, lines)):
        if not timed and any(a in entry for a in ACTIONS):
            action = next(a for a in ACTIONS if a in entry)
            raise SpecFileError(f"transition {i + 1}: {action!r} acts on timers or counters; "
                                "declare them first (timers = { name = cycles }, counters = "
                                "{ name = limit })", path=path,
                                line=lines.entry("transition", i), row=i)
        guard = ExactCube(entry["cube"]) if "cube" in entry else entry["when"]
        if entry["from"] == "*" and legacy:
            every.append((guard, entry["to"], outputs(entry)))
        elif entry["from"] == "*":
            raise SpecFileError(f"transition {i + 1}: from = \"*\" is an older form: write "
                                "what every state does as [[every_state]] entries (no 'from'), "
                                f"or run `{REWRITE} {path} -o NEW.toml`", path=path,
                                line=lines.entry("transition", i), row=i)
        else:
            transitions.append((entry["from"], guard, entry["to"], outputs(entry),
                                *actions(entry)))
    every += [(entry["when"], entry["to"], outputs(entry), *actions(entry))
              for entry in _entries(data, "every_state", EVERY_STATE_KEYS, path, lines)]
    defaults = data.get("default_outputs")
    if not moore and not legacy:  # an output a transition does not set is its default, or 0
        ports = data["outputs"] if isinstance(data["outputs"], (dict, list)) else []
        defaults = {**{p: 0 for p in ports if isinstance(p, str)}, **(defaults or {})}
    states = data.get("states")
    if legacy and states is None:  # older files declared states by their first mention
        named = [t[0] for t in transitions] + [t[2] for t in transitions] + [e[1] for e in every]
        states = [n for n in dict.fromkeys(named) if n not in ("-", "*")]
    args: dict[str, Any] = dict(
        name=data["name"], kind=data.get("kind", "mealy"), reset=data["reset"],
        inputs=data["inputs"], outputs=data["outputs"], transitions=transitions,
        every_state=every, states=states, default_outputs=defaults,
        otherwise=data.get("otherwise"),
        state_outputs=data.get("state_outputs"), invariants=data.get("invariants"),
        final=data.get("final", ()), accept_warnings=data.get("accept_warnings", ()))
    for key in ("timers", "counters"):
        if key in data and not isinstance(data[key], dict):
            raise SpecFileError(f"{key!r} must be a table of name = "
                                f"{'cycles' if key == 'timers' else 'limit'}", path=path,
                                line=lines.key(key))
    try:
        if timed:
            machine = TimedMachine.from_transitions(
                timers=data.get("timers", {}), counters=data.get("counters", {}), **args)
            table = machine.control
        else:
            table = StateTable.from_transitions(**args)
    except TableError as exc:
        # The compiler's errors name an entry; the table's own checks name compiled rows.
        line = (lines.entry(exc.entry, exc.row) if exc.entry and exc.row is not None
                else _block_line(exc, data, lines) or lines.locate(exc, data))
        raise SpecFileError(exc.message, path=path, line=line, state=exc.state, row=exc.row,
                            name=exc.name) from None
    if moore and not legacy:
        _moore_outputs_said(table, data, path, lines)
    table = replace(table, intent=replace(table.intent, source=path,
                                          lines=FrozenMap(_introduced(table, data, lines))),
                    clocking=_clocking(data, path, lines))
    if timed:
        blocks = {**data.get("timers", {}), **data.get("counters", {})}
        return replace(machine, control=table, lines=FrozenMap(
            {name: lines.key("timers" if name in data.get("timers", {}) else "counters") or 0
             for name in blocks}))
    return table


def _block_line(exc: TableError, data: dict[str, Any], lines: _Lines) -> int | None:
    """The line of the timer or counter an error names (its declaration)."""
    for key in ("timers", "counters"):
        if exc.name is not None and exc.name in data.get(key, {}):
            return lines.key(key)
    return None


def _clocking(data: dict[str, Any], path: str, lines: _Lines) -> Clocking | None:
    """The ``[clocking]`` table, checked."""
    given = data.get("clocking")
    if given is None:
        return None
    where = lines.section("clocking") or lines.key("clocking")
    if not isinstance(given, dict):
        raise SpecFileError("[clocking] must be a table of clock, reset, reset_style, "
                            "reset_active and enable", path=path, line=where)
    for key, value in given.items():
        if key not in CLOCKING_KEYS:
            raise SpecFileError(f"[clocking]: unknown key {key!r}"
                                f"{did_you_mean(key, CLOCKING_KEYS)} (keys: "
                                f"{', '.join(CLOCKING_KEYS)})", path=path,
                                line=lines.key(key, "clocking") or where)
        if not isinstance(value, str):
            raise SpecFileError(f"[clocking]: {key} must be text, not {value!r}", path=path,
                                line=lines.key(key, "clocking") or where)
    try:
        return Clocking(**given)
    except OptionError as exc:
        raise SpecFileError(f"[clocking]: {exc}", path=path, line=where) from None


def _introduced(table: StateTable, data: dict[str, Any], lines: _Lines) -> dict[str, int]:
    """Where the spec introduces each state (its first transition, else ``states``), input
    and output port, for warnings."""
    found: dict[str, int] = {}
    for i, entry in enumerate(data.get("transition", [])):
        line = lines.entry("transition", i)
        if line is not None and isinstance(entry, dict):
            found.setdefault(f"state:{entry.get('from')}", line)
    declared = lines.key("states")
    for state in table.states:
        if declared is not None:
            found.setdefault(f"state:{state}", declared)
    for kind, key in (("input", "inputs"), ("output", "outputs")):
        line = lines.key(key)
        if line is not None:
            found.update({f"{kind}:{port}": line for port, _w in ports_of(getattr(table, key))})
    return found


def _moore_outputs_said(table: StateTable, data: dict[str, Any], path: str,
                        lines: _Lines) -> None:
    """In a spec file a Moore state's outputs are said, never implied: a state that
    [state_outputs] leaves out, where default_outputs does not give every output, is an
    error (it once made every output a don't care, which the minimizer was free to set)."""
    given = data.get("state_outputs") or {}
    defaults = data.get("default_outputs") or {}
    outputs = data["outputs"] if isinstance(data["outputs"], dict) else dict.fromkeys(
        data["outputs"], 1)
    for state in table.states:
        said = given.get(state, {})
        missing = [o for o in outputs if o not in defaults and o not in said]
        if not missing:
            continue
        what = ("has no outputs" if state not in given else
                f"does not say {', '.join(repr(o) for o in missing)}")
        raise SpecFileError(
            f"Moore state {state!r} {what}: give them in [state_outputs] "
            f"({state} = {{ {', '.join(f'{o} = 0' for o in missing)} }}) or in "
            "default_outputs; write \"-\" for an output that may be anything",
            path=path, line=(lines.key(state, "state_outputs") or lines.section("state_outputs")
                             or lines.key("outputs")), state=state)


def _expect(data: dict[str, Any], key: str, kind: type, path: str, lines: _Lines) -> None:
    if key in data and not isinstance(data[key], kind):
        raise SpecFileError(f"{key!r} must be a string", path=path, line=lines.key(key))


def _expect_strings(data: dict[str, Any], key: str, path: str, lines: _Lines) -> None:
    value = data.get(key, [])
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        raise SpecFileError(f"{key!r} must be an array of strings", path=path,
                            line=lines.key(key))


class _Lines:
    """Where things are in the spec text, for error messages."""

    def __init__(self, text: str) -> None:
        self.text = text
        # Lines end at \n only, as TOML says (splitlines also breaks at U+2028 and others).
        self.lines = [line.removesuffix("\r") for line in text.split("\n")]

    def key(self, key: str, section: str | None = None) -> int | None:
        """Line of ``key = ...`` (bare or quoted), inside ``[section]`` when given."""
        k = re.escape(key)
        pattern = re.compile(rf"""\s*(?:{k}|"{k}"|'{k}')\s*=""")
        inside = section is None
        for n, line in enumerate(self.lines, start=1):
            stripped = line.strip()
            if stripped.startswith("["):
                inside = section is not None and stripped.strip("[] \t") == section
                if section is None:
                    return None
                continue
            if inside and pattern.match(line):
                return n
        return None

    def section(self, name: str) -> int | None:
        """Line of the ``[name]`` header."""
        for n, line in enumerate(self.lines, start=1):
            if line.strip().replace(" ", "") == f"[{name}]":
                return n
        return None

    def entry(self, name: str, index: int) -> int | None:
        """Line of element ``index`` of ``name``: a ``[[name]]`` header, or the ``{`` of an
        inline table in ``name = [ {...}, ... ]``."""
        seen = -1
        for n, line in enumerate(self.lines, start=1):
            if line.strip().replace(" ", "").startswith(f"[[{name}]]"):
                seen += 1
                if seen == index:
                    return n
        return self.row(index, name, "{") if seen < 0 else None

    def row(self, index: int, key: str = "rows", opener: str = "[") -> int | None:
        """Line where element ``index`` of the top-level array ``key`` starts (elements are
        arrays, inline tables with ``opener="{"``, or strings with ``opener='"'``)."""
        start = self.key(key)
        if start is None:
            return None
        offset = sum(len(line) + 1 for line in self.lines[:start - 1])
        text, line, depth, i = self.text, start, 0, offset
        seen = -1
        while i < len(text):
            ch = text[i]
            if ch == "\n":
                line += 1
            elif ch == "#":
                while i < len(text) and text[i] != "\n":
                    i += 1
                continue
            elif ch in "\"'":
                if opener == '"' and depth == 1:
                    seen += 1
                    if seen == index:
                        return line
                end = _skip_string(text, i)
                line += text[i:end].count("\n")  # a multi-line string
                i = end
                continue
            elif ch in "[{":
                depth += 1
                if depth == 2 and ch == opener:
                    seen += 1
                    if seen == index:
                        return line
            elif ch in "]}":
                depth -= 1
                if depth == 0:
                    return None
            i += 1
        return None

    def locate(self, exc: TableError, data: dict[str, Any]) -> int | None:
        """Best line for a table error."""
        found = _INVARIANT.match(exc.message)
        if found:
            return (self.row(int(found.group(1)) - 1, "invariants", '"')
                    or self.key("invariants"))
        if exc.row is not None:
            return self.row(exc.row)
        if exc.message.startswith("kind "):
            return self.key("kind")
        if exc.message.startswith("final "):
            return self.key("final")
        if exc.message.startswith("state_outputs"):
            return self.section("state_outputs") or self.key("state_outputs")
        if exc.message.endswith("in states") or "must be a non-empty name" in exc.message:
            return self.key("states")
        if exc.name is not None:
            for key in ("inputs", "outputs", "name"):
                value = data.get(key)
                if value == exc.name or (isinstance(value, list) and exc.name in value):
                    return self.key(key)
        if exc.state is not None:
            where = self.key(exc.state, "state_outputs")
            if where is not None:
                return where
            if data.get("reset") == exc.state:
                return self.key("reset")
        if "reset" in exc.message and "reset" in data:
            return self.key("reset")
        return None


def _skip_string(text: str, i: int) -> int:
    """Index just past the TOML string starting at ``i``."""
    quote = text[i]
    if text.startswith(quote * 3, i):
        end = text.find(quote * 3, i + 3)
        return len(text) if end < 0 else end + 3
    j = i + 1
    while j < len(text) and text[j] not in (quote, "\n"):
        j += 2 if quote == '"' and text[j] == "\\" else 1
    return j + 1
