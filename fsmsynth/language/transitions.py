"""Guarded transitions compiled to the rows of a state table.

Each state's transitions are tried in the order written, after the every-state transitions
(which apply to every state); the first whose guard holds fires, like an if/elif chain.  So
transition *k* of a state covers exactly ``guard_k & ~(guard_1 | ... | guard_{k-1})``; that
set is a BDD, and its disjoint cubes become the table's rows.  ``else`` stands for "none of
the earlier guards holds".  An :class:`ExactCube` in place of a guard is a row as it stands,
outside the chain (rows of one state may then overlap where they agree); a next state of
``None`` (``"-"`` in a spec file) is a don't care.  What nothing covers is unspecified
(``otherwise="dont-care"``) or a self-loop with the default outputs (``otherwise="stay"``).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.base.errors import TableError
from fsmsynth.base.names import did_you_mean, port_bits
from fsmsynth.language.guards import GuardError, compile_guard
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube

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
            raise TableError(f"{where}: unknown output {port!r}"
                             f"{did_you_mean(str(port), list(outputs))} (outputs: "
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


@dataclass(frozen=True, slots=True)
class ExactCube:
    """An input cube given exactly (one ``0``/``1``/``-`` per input bit, vector bits most
    significant first) in place of a guard: the transition is that row of the table."""

    text: str


def compile_transitions(*, kind: str, inputs: object, outputs: object,
                        transitions: Sequence[Sequence[object]],
                        default_outputs: Mapping[str, object] | None = None,
                        otherwise: str = "dont-care",
                        state_outputs: Mapping[str, Mapping[str, object]] | None = None,
                        every_state: Sequence[Sequence[object]] = (),
                        states: Sequence[str] | None = None) -> CompiledTransitions:
    """The rows of guarded transitions (see the module docstring and
    :meth:`fsmsynth.model.table.StateTable.from_transitions`, which builds the table).

    Errors are :class:`~fsmsynth.base.errors.TableError` with ``row`` the entry's index and
    ``entry`` the list it is in (``"transition"`` or ``"every_state"``)."""
    if otherwise not in OTHERWISE:
        raise TableError(f"otherwise {otherwise!r}: use 'dont-care' or 'stay'")
    in_widths = _widths("inputs", inputs)
    out_widths = _widths("outputs", outputs)
    defaults = dict(default_outputs or {})
    for port in defaults:
        if port not in out_widths:
            raise TableError(f"default_outputs: unknown output {port!r}"
                             f"{did_you_mean(str(port), list(out_widths))}", name=str(port))
    for what, entries in (("transitions", transitions), ("every_state", every_state)):
        if isinstance(entries, (str, bytes)) or not isinstance(entries, Sequence):
            raise TableError(f"{what} must be a list of entries, not {entries!r}")
    in_bits = _bits(in_widths)
    names = [bit for port_names in in_bits.values() for bit in port_names]
    var = bdd.variables(len(names))
    index = {n: i for i, n in enumerate(names)}
    # The guard compiler takes each port's variables least significant first.
    bits = {port: [var[index[b]] for b in reversed(port_names)]
            for port, port_names in in_bits.items()}
    context = _Context(kind, in_widths, out_widths, defaults, bits, var, len(names))
    every = [context.parse(k, ANY_STATE, *_fields(entry, k, "every_state", 3))
             for k, entry in enumerate(every_state, start=1)]
    parsed = [context.parse(pos, *_fields(entry, pos, "transition", 4))
              for pos, entry in enumerate(transitions, start=1)]
    declared = _declared(parsed, every, states)
    rows: list[tuple[str, str, str | None, str | None]] = []
    stay_word = None if kind == "moore" else _output_word(out_widths, defaults, {},
                                                          "default outputs")
    for state in declared:
        chain = every + [p for p in parsed if p.state == state and not p.exact]
        covered = bdd.ZERO
        earlier: list[tuple[_Entry, Any]] = []
        for entry in chain:
            wanted = ~covered if entry.points is None else entry.points
            fires = wanted & ~covered
            if fires.is_zero():
                blockers = [e.name for e, g in earlier
                            if entry.points is None or not (g & wanted).is_zero()]
                reason = (f"earlier guards of state {state!r} cover it "
                          f"({', '.join(blockers)})" if blockers else "its guard never holds")
                raise TableError(f"{entry.name} ({state} -> {entry.to or '-'}, guard "
                                 f"{entry.guard!r}) can never fire: {reason}", state=state,
                                 row=entry.pos - 1, entry=entry.entry)
            for cube in bdd.cubes_of(fires, var):
                rows.append((state, cube.to_string(len(names)), entry.to, entry.word))
            earlier.append((entry, wanted))
            covered |= wanted
        for entry in parsed:
            if entry.state == state and entry.exact:
                rows.append((state, entry.guard, entry.to, entry.word))
                covered |= entry.points
        rest = ~covered
        if otherwise == "stay" and not rest.is_zero():
            for cube in bdd.cubes_of(rest, var):
                rows.append((state, cube.to_string(len(names)), state, stay_word))
    moore_words: dict[str, str] | None = None
    if kind == "moore":
        moore_words = {}
        for state, given in (state_outputs or {}).items():
            if state not in declared:
                raise TableError(f"state_outputs: unknown state {state!r}"
                                 f"{did_you_mean(str(state), declared)}", state=str(state))
            moore_words[state] = _output_word(out_widths, defaults, given,
                                              f"state_outputs of {state!r}")
        for state in declared:
            moore_words.setdefault(state, _output_word(out_widths, defaults, {},
                                                       f"state_outputs of {state!r}"))
    elif state_outputs:
        raise TableError("state_outputs is for Moore machines; give a Mealy machine's outputs "
                         "on its transitions")
    out_names = [b for port_names in _bits(out_widths).values() for b in port_names]
    return CompiledTransitions(inputs=tuple(names), outputs=tuple(out_names),
                               states=tuple(declared), rows=tuple(rows),
                               state_outputs=moore_words)


@dataclass(frozen=True, slots=True)
class _Entry:
    """One parsed transition: where it came from, its points (``None`` for ``else``) and
    what it sets."""

    pos: int
    entry: str
    state: str
    guard: str
    points: Any
    exact: bool
    to: str | None
    word: str | None

    @property
    def name(self) -> str:
        return (f"every-state transition {self.pos}" if self.entry == "every_state"
                else f"transition {self.pos}")


def _fields(entry: object, pos: int, what: str, size: int) -> tuple[object, ...]:
    """``(from, guard, to, outputs)`` of a transition, ``(guard, to, outputs)`` of an
    every-state one (outputs optional)."""
    shape = "(from, guard, to, outputs)" if size == 4 else "(guard, to, outputs)"
    name = "every-state transition" if what == "every_state" else "transition"
    if isinstance(entry, (str, bytes)) or not isinstance(entry, Sequence) \
            or len(entry) not in (size - 1, size):
        raise TableError(f"{name} {pos}: give {shape}, not {entry!r}", row=pos - 1, entry=what)
    values = tuple(entry) + (() if len(entry) == size else (None,))
    if size == 4 and values[0] == ANY_STATE:
        raise TableError(f"transition {pos}: {ANY_STATE!r} is not a state; give what every "
                         "state does as every-state transitions (every_state=[(guard, to, "
                         "outputs)], in a spec file [[every_state]] entries)",
                         row=pos - 1, entry=what)
    return values


@dataclass(frozen=True, slots=True)
class _Context:
    """What parsing one entry needs: the machine's kind, ports and BDD variables."""

    kind: str
    in_widths: dict[str, int]
    out_widths: dict[str, int]
    defaults: dict[str, object]
    bits: dict[str, list[Any]]
    var: list[Any]
    n_inputs: int

    def parse(self, pos: int, frm: object, guard: object, to: object,
              given: object) -> _Entry:
        what = "every_state" if frm == ANY_STATE else "transition"
        name = "every-state transition" if frm == ANY_STATE else "transition"
        if not isinstance(frm, str) or not frm:
            raise TableError(f"{name} {pos}: from state must be a name, not {frm!r}",
                             row=pos - 1, entry=what)
        if to is not None and (not isinstance(to, str) or not to):
            raise TableError(f"{name} {pos}: to state must be a name (or None for a don't "
                             f"care), not {to!r}", row=pos - 1, entry=what)
        nxt = None if to in (None, "-") else str(to)
        state = None if frm == ANY_STATE else frm
        exact = isinstance(guard, ExactCube)
        text = guard.text if isinstance(guard, ExactCube) else guard
        if not isinstance(text, str):
            raise TableError(f"{name} {pos}" + (f" (state {frm!r})" if state else "")
                             + f": guard must be text, not {guard!r}", state=state,
                             row=pos - 1, entry=what)
        where = (f"{name} {pos} ({frm} -> {nxt or '-'}, "
                 f"{'cube' if exact else 'guard'} {text!r})")
        if exact:
            if len(text) != self.n_inputs or set(text) - set("01-"):
                raise TableError(f"{where}: write the cube with one 0, 1 or - per input bit "
                                 f"({self.n_inputs})", state=state, row=pos - 1, entry=what)
            points = bdd.cube_bdd(Cube.from_string(text), self.var)
        elif text.strip() == "else":
            points = None
        else:
            try:
                points = compile_guard(text, self.in_widths, self.bits)
            except GuardError as error:
                raise TableError(f"{where}: {error.message}", state=state, row=pos - 1,
                                 entry=what) from None
        if self.kind == "moore":
            if given is not None:
                raise TableError(f"{where}: a Moore machine's outputs belong to its states "
                                 "(state_outputs); give None here", state=state, row=pos - 1,
                                 entry=what)
            word = None
        else:
            try:
                word = _output_word(self.out_widths, self.defaults, given, where)
            except TableError as exc:  # located at the entry, for the spec file's line
                raise TableError(exc.message, state=state, row=pos - 1, name=exc.name,
                                 entry=what) from None
        return _Entry(pos=pos, entry=what, state=frm, guard=text, points=points, exact=exact,
                      to=nxt, word=word)


def _declared(parsed: Sequence[_Entry], every: Sequence[_Entry],
              states: Sequence[str] | None) -> list[str]:
    """Declaration order (it fixes binary and Gray codes): ``states`` when given, every
    state named in a transition being one of them; else present states as first written,
    then states that only appear as next states."""
    named = [e.state for e in parsed] + [e.to for e in [*every, *parsed] if e.to is not None]
    if states is None:
        # A next state must be a state: one with transitions of its own (a misspelled name
        # would otherwise become a new state that the machine sticks in).
        leaving = list(dict.fromkeys(e.state for e in parsed))
        for entry in [*every, *parsed]:
            if entry.to is not None and entry.to not in leaving:
                raise TableError(
                    f"{entry.name}: to state {entry.to!r} has no transitions of its own"
                    f"{did_you_mean(entry.to, leaving)} (a state meant to have none is "
                    "declared in states)", state=entry.to, row=entry.pos - 1,
                    entry=entry.entry)
        return list(dict.fromkeys(named))
    if isinstance(states, (str, bytes)) or not all(isinstance(s, str) for s in states):
        raise TableError(f"states must be a list of names, not {states!r}")
    for entry in [*parsed, *every]:
        for role, state in (("from", entry.state), ("to", entry.to)):
            if state is not None and state != ANY_STATE and state not in states:
                raise TableError(f"{entry.name}: {role} state {state!r} is not declared in "
                                 f"states{did_you_mean(state, states)} "
                                 f"({', '.join(states)})", state=state,
                                 row=entry.pos - 1, entry=entry.entry)
    return list(states)
