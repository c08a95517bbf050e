"""Guarded transitions compiled to the rows of a state table.

Each state's transitions are tried in the order written, after the transitions whose present
state is ``"*"`` (which apply to every state); the first whose guard holds fires, like an
if/elif chain.  So transition *k* of a state covers exactly ``guard_k & ~(guard_1 | ... |
guard_{k-1})``; that set is a BDD, and its disjoint cubes become the table's rows.  ``else``
stands for "none of the earlier guards holds".  What no guard covers is unspecified
(``otherwise="dont-care"``) or a self-loop with the default outputs (``otherwise="stay"``).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.base.errors import TableError
from fsmsynth.base.names import port_bits
from fsmsynth.language.guards import GuardError, compile_guard
from fsmsynth.logic import bdd

ANY_STATE = "*"
OTHERWISE = ("dont-care", "stay")


def _widths(what: str, ports: object) -> dict[str, int]:
    if isinstance(ports, Mapping):
        widths = dict(ports)
    elif isinstance(ports, Sequence) and not isinstance(ports, (str, bytes)):
        widths = dict.fromkeys(ports, 1)
    else:
        raise TableError(f"{what} must be a list of names or a dict of name -> width, not "
                         f"{ports!r}")
    for port, width in widths.items():
        if isinstance(width, bool) or not isinstance(width, int) or width < 1:
            raise TableError(f"{what[:-1]} {port!r}: width must be a positive integer, not "
                             f"{width!r}", name=str(port))
    return widths


def _bits(widths: Mapping[str, int]) -> dict[str, list[str]]:
    """Each port's 1-bit names, most significant first: ``mode[1], mode[0]`` for a vector."""
    return {port: port_bits(port, None if width == 1 else width)
            for port, width in widths.items()}


def _value(port: str, width: int, value: object, where: str) -> str:
    """An output value (int, bit string MSB first, or all ``-``) as cube characters."""
    if isinstance(value, bool):
        value = int(value)
    if isinstance(value, int):
        if not 0 <= value < 1 << width:
            raise TableError(f"{where}: value {value} does not fit output {port!r} ({width} "
                             f"bit{'s' if width > 1 else ''}: 0 to {(1 << width) - 1})",
                             name=port)
        return format(value, f"0{width}b")
    if isinstance(value, str) and len(value) == width and set(value) <= set("01-"):
        return value
    raise TableError(f"{where}: value {value!r} does not fit output {port!r} (give an integer "
                     f"from 0 to {(1 << width) - 1}, or {width} of 0, 1 and -)", name=port)


def _output_word(outputs: Mapping[str, int], defaults: Mapping[str, object],
                 given: object, where: str) -> str:
    if given is None:
        given = {}
    if not isinstance(given, Mapping):
        raise TableError(f"{where}: outputs must be a dict of output -> value, not {given!r}")
    for port in given:
        if port not in outputs:
            raise TableError(f"{where}: unknown output {port!r} (outputs: "
                             f"{', '.join(outputs) or 'none'})", name=str(port))
    word = []
    for port, width in outputs.items():
        value = given[port] if port in given else defaults.get(port, "-" * width)
        word.append(_value(port, width, value, where))
    return "".join(word)


@dataclass(frozen=True, slots=True)
class CompiledTransitions:
    """Guarded transitions as the plain rows of a state table.

    ``inputs`` and ``outputs`` are 1-bit names (a vector's bits ``mode[1]``, ``mode[0]``);
    ``rows`` are (state, input cube, next state, output cube) with disjoint cubes per state;
    ``states`` in declaration order; ``state_outputs`` a Moore machine's output cube per
    state (``None`` for Mealy)."""

    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    states: tuple[str, ...]
    rows: tuple[tuple[str, str, str | None, str | None], ...]
    state_outputs: dict[str, str] | None


def compile_transitions(*, kind: str, inputs: object, outputs: object,
                        transitions: Sequence[Sequence[object]],
                        default_outputs: Mapping[str, object] | None = None,
                        otherwise: str = "dont-care",
                        state_outputs: Mapping[str, Mapping[str, object]] | None = None,
                        ) -> CompiledTransitions:
    """The rows of guarded transitions (see the module docstring and
    :meth:`fsmsynth.model.table.StateTable.from_transitions`, which builds the table)."""
    if otherwise not in OTHERWISE:
        raise TableError(f"otherwise {otherwise!r}: use 'dont-care' or 'stay'")
    in_widths = _widths("inputs", inputs)
    out_widths = _widths("outputs", outputs)
    defaults = dict(default_outputs or {})
    for port in defaults:
        if port not in out_widths:
            raise TableError(f"default_outputs: unknown output {port!r}", name=str(port))
    if isinstance(transitions, (str, bytes)) or not isinstance(transitions, Sequence):
        raise TableError(f"transitions must be a list of (from, guard, to, outputs), not "
                         f"{transitions!r}")
    in_bits = _bits(in_widths)
    names = [bit for port_names in in_bits.values() for bit in port_names]
    var = bdd.variables(len(names))
    index = {n: i for i, n in enumerate(names)}
    # The guard compiler takes each port's variables least significant first.
    bits = {port: [var[index[b]] for b in reversed(port_names)]
            for port, port_names in in_bits.items()}
    parsed: list[tuple[int, str, str, Any, str, str | None]] = []
    states: list[str] = []
    for pos, entry in enumerate(transitions, start=1):
        if isinstance(entry, (str, bytes)) or not isinstance(entry, Sequence) \
                or len(entry) not in (3, 4):
            raise TableError(f"transition {pos}: give (from, guard, to, outputs), not "
                             f"{entry!r}", row=pos - 1)
        frm, guard, to = entry[0], entry[1], entry[2]
        given = entry[3] if len(entry) == 4 else None
        for what, value in (("from", frm), ("to", to)):
            if not isinstance(value, str) or not value:
                raise TableError(f"transition {pos}: {what} state must be a name, not "
                                 f"{value!r}", row=pos - 1)
        assert isinstance(frm, str) and isinstance(to, str)
        if not isinstance(guard, str):
            raise TableError(f"transition {pos} (state {frm!r}): guard must be text, not "
                             f"{guard!r}", state=frm, row=pos - 1)
        where = f"transition {pos} ({frm} -> {to}, guard {guard!r})"
        if guard.strip() == "else":
            points = None
        else:
            try:
                points = compile_guard(guard, in_widths, bits)
            except GuardError as error:
                raise TableError(f"{where}: {error.message}", state=frm,
                                 row=pos - 1) from None
        if kind == "moore":
            if given is not None:
                raise TableError(f"{where}: a Moore machine's outputs belong to its states "
                                 "(state_outputs); give None here", state=frm, row=pos - 1)
            word = None
        else:
            try:
                word = _output_word(out_widths, defaults, given, where)
            except TableError as exc:  # located at the transition, for the spec file's line
                raise TableError(exc.message, state=frm, row=pos - 1, name=exc.name) from None
        parsed.append((pos, frm, guard, points, to, word))
    # Declaration order (it fixes binary and Gray codes): present states as first written,
    # then states that only appear as next states.
    for state in [p[1] for p in parsed] + [p[4] for p in parsed]:
        if state != ANY_STATE and state not in states:
            states.append(state)
    if ANY_STATE in (p[4] for p in parsed):
        raise TableError("a transition goes to '*': name its next state")
    rows: list[tuple[str, str, str | None, str | None]] = []
    stay_word = None if kind == "moore" else _output_word(out_widths, defaults, {},
                                                          "default outputs")
    every = {p[0] for p in parsed if p[1] == ANY_STATE}
    for state in states:
        chain = [p for p in parsed if p[1] == ANY_STATE] + [p for p in parsed if p[1] == state]
        covered = bdd.ZERO
        earlier: list[tuple[int, Any]] = []
        for pos, _frm, guard, points, to, word in chain:
            wanted = ~covered if points is None else points
            fires = wanted & ~covered
            if fires.is_zero():
                blockers = [f"{p} (for every state)" if p in every else str(p)
                            for p, g in earlier if points is None or not (g & wanted).is_zero()]
                reason = (f"earlier guards of state {state!r} cover it (transition"
                          f"{'s' if len(blockers) > 1 else ''} {', '.join(blockers)})"
                          if blockers else "its guard never holds")
                raise TableError(f"transition {pos} ({state} -> {to}, guard {guard!r}) can "
                                 f"never fire: {reason}", state=state, row=pos - 1)
            for cube in bdd.cubes_of(fires, var):
                rows.append((state, cube.to_string(len(names)), to, word))
            earlier.append((pos, wanted))
            covered |= wanted
        rest = ~covered
        if otherwise == "stay" and not rest.is_zero():
            for cube in bdd.cubes_of(rest, var):
                rows.append((state, cube.to_string(len(names)), state, stay_word))
    moore_words: dict[str, str] | None = None
    if kind == "moore":
        moore_words = {}
        for state, given in (state_outputs or {}).items():
            if state not in states:
                raise TableError(f"state_outputs: unknown state {state!r}", state=str(state))
            moore_words[state] = _output_word(out_widths, defaults, given,
                                              f"state_outputs of {state!r}")
        for state in states:
            moore_words.setdefault(state, _output_word(out_widths, defaults, {},
                                                       f"state_outputs of {state!r}"))
    elif state_outputs:
        raise TableError("state_outputs is for Moore machines; give a Mealy machine's outputs "
                         "on its transitions")
    out_names = [b for port_names in _bits(out_widths).values() for b in port_names]
    return CompiledTransitions(inputs=tuple(names), outputs=tuple(out_names),
                               states=tuple(states), rows=tuple(rows),
                               state_outputs=moore_words)
