"""A controller that waits and counts: a control machine beside timers and counters.

Semantics (the reference every stage and proof follows; docs/guide/timers.md has a timing
example):

* **Timer** ``T`` of ``N`` cycles: a register of ``max(1, bit_length(N - 1))`` bits, 0 after
  reset.  A transition that starts ``T`` loads ``N - 1`` at its clock edge; otherwise a
  value above 0 counts down by one at every clock edge, whatever state the machine is in.
  ``T.done`` is 1 while the value is 0.  So a state entered by a transition that starts
  ``T`` and left on ``T.done`` is occupied for exactly ``N`` clock cycles, and a timer never
  started reads done.  Starting a running timer starts it again.
* **Counter** ``C`` with limit ``K``: a register of ``bit_length(K)`` bits, 0 after reset.
  A transition that counts ``C`` adds one at its clock edge, except at ``K``, where it holds;
  one that clears ``C`` sets it to 0 (a transition may not do both).  ``C.done`` is 1 while
  the value is ``K``; ``C >= 2`` (and ``==``, ``!=``, ``<``, ``<=``, ``>``) compares the value.

The control machine is an ordinary Mealy :class:`~fsmsynth.model.table.StateTable` whose
last inputs are the readings (``purge_done``, ``tries_ge_2``) and whose last outputs are the
actions (``purge_start``, ``tries_count``, ``tries_clear``), as
:mod:`fsmsynth.language.timer_words` names them.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from fsmsynth.base.errors import TableError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.language.timer_words import (
    ACTIONS,
    Reading,
    TimerWords,
    action_signal,
    check_free,
)
from fsmsynth.model.table import StateTable


@dataclass(frozen=True, slots=True)
class Timer:
    """A timer of ``cycles`` clock cycles (see the module docstring)."""

    name: str
    cycles: int

    @property
    def width(self) -> int:
        return max(1, (self.cycles - 1).bit_length())

    @property
    def top(self) -> int:
        """The highest value the register holds (what a start loads)."""
        return self.cycles - 1

    @property
    def actions(self) -> tuple[str, ...]:
        return ("start",)

    def next_value(self, value: int, act: Mapping[str, int]) -> int:
        if act.get("start"):
            return self.top
        return value - 1 if value > 0 else 0

    def reads(self, value: int, op: str, number: int) -> int:
        return int(value == 0) if op == "done" else _compare(value, op, number)

    def describe(self) -> str:
        return f"{self.name}: {self.cycles} cycle{'s' if self.cycles != 1 else ''}"


@dataclass(frozen=True, slots=True)
class Counter:
    """A counter of events up to ``limit`` (see the module docstring)."""

    name: str
    limit: int

    @property
    def width(self) -> int:
        return self.limit.bit_length()

    @property
    def top(self) -> int:
        return self.limit

    @property
    def actions(self) -> tuple[str, ...]:
        return ("count", "clear")

    def next_value(self, value: int, act: Mapping[str, int]) -> int:
        if act.get("clear"):
            return 0
        if act.get("count"):
            return min(value + 1, self.limit)
        return value

    def reads(self, value: int, op: str, number: int) -> int:
        return int(value == self.limit) if op == "done" else _compare(value, op, number)

    def describe(self) -> str:
        return f"{self.name}: counts to {self.limit}"


Block = Timer | Counter


def _compare(value: int, op: str, number: int) -> int:
    return int({"==": value == number, "!=": value != number, "<": value < number,
                "<=": value <= number, ">": value > number, ">=": value >= number}[op])


@dataclass(frozen=True, slots=True)
class TimedMachine:
    """A control machine with timers and counters (see the module docstring).

    Attributes
    ----------
    control:
        The Mealy machine: the spec's inputs then the readings, the spec's outputs then
        the actions.
    blocks:
        Timers and counters in declared order (timers first).
    readings:
        The control inputs that read them, in the control machine's input order.
    inputs, outputs:
        The spec's own input and output bits (the ports of the whole design).
    lines:
        Spec line of each timer and counter, where it came from a file.
    written:
        The invariants as the spec writes them.
    """

    control: StateTable
    blocks: tuple[Block, ...]
    readings: tuple[Reading, ...]
    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    lines: Mapping[str, int] = field(default_factory=lambda: FrozenMap({}), compare=False)
    written: tuple[str, ...] = ()
    """The invariants as written (``purge.done``), one per invariant of the control
    machine (``purge_done``), for messages."""

    @property
    def name(self) -> str:
        return self.control.name

    @property
    def states(self) -> tuple[str, ...]:
        """The control machine's states."""
        return self.control.states

    @property
    def widths(self) -> tuple[int, ...]:
        return tuple(b.width for b in self.blocks)

    def block(self, name: str) -> Block:
        for b in self.blocks:
            if b.name == name:
                return b
        raise KeyError(name)

    def action_signals(self) -> list[tuple[str, str, str]]:
        """``(signal, block, action)`` for every action output the control machine has."""
        outs = set(self.control.outputs)
        return [(action_signal(b.name, a), b.name, a) for b in self.blocks for a in b.actions
                if action_signal(b.name, a) in outs]

    def read_word(self, values: Sequence[int]) -> str:
        """The readings' bits for block values ``values`` (in :attr:`blocks` order)."""
        by_name = {b.name: (b, v) for b, v in zip(self.blocks, values)}
        return "".join(str(by_name[r.block][0].reads(by_name[r.block][1], r.op, r.value))
                       for r in self.readings)

    def next_values(self, values: Sequence[int], outputs: str) -> tuple[int, ...]:
        """Block values after a clock edge, given the control machine's output word."""
        word = dict(zip(self.control.outputs, outputs))
        return tuple(b.next_value(v, {a: int(word.get(action_signal(b.name, a), "0") == "1")
                                      for a in b.actions})
                     for b, v in zip(self.blocks, values))

    def state_notes(self) -> dict[str, list[str]]:
        """For each state, the blocks it waits on: a timer started on a transition into the
        state and read in the state's own guards (``purge: 300 cycles``), and the counters
        its guards read."""
        starts = {a: b for a, b, x in self.action_signals() if x == "start"}
        at = {o: i for i, o in enumerate(self.control.outputs)}
        reads = {r.signal: r.block for r in self.readings}
        n_in = len(self.inputs)
        notes: dict[str, list[str]] = {}
        for state in self.control.states:
            entered = {starts[a] for _s, _c, nxt, out in self.control.rows
                       if nxt == state and out for a in starts if out[at[a]] == "1"}
            read = {reads[r.signal] for _s, cube, _n, _o in self.control.rows_of(state)
                    for j, r in enumerate(self.readings) if cube[n_in + j] != "-"}
            notes[state] = [b.describe() for b in self.blocks
                            if b.name in read and (b.name in entered or isinstance(b, Counter))]
        return notes

    @classmethod
    def from_transitions(cls, *, name: str, reset: str,
                         inputs: Sequence[str] | Mapping[str, int],
                         outputs: Sequence[str] | Mapping[str, int],
                         transitions: Sequence[Sequence[object]],
                         timers: Mapping[str, int] | None = None,
                         counters: Mapping[str, int] | None = None,
                         every_state: Sequence[Sequence[object]] = (),
                         default_outputs: Mapping[str, object] | None = None,
                         invariants: Sequence[str] | None = None,
                         **options: object) -> TimedMachine:
        """A timed machine from guarded transitions, as
        :meth:`fsmsynth.model.table.StateTable.from_transitions` takes them, plus:
        ``timers={"purge": 300}`` (cycles), ``counters={"tries": 3}`` (limits), guards and
        invariants that read ``purge.done``, ``tries.done`` or ``tries >= 2``, and a fifth
        field on a transition (a fourth on an every-state one): a dict of actions,
        ``{"start": ["purge"], "count": ["tries"], "clear": []}``.  Mealy only: the actions
        happen on transitions."""
        if options.pop("kind", "mealy") != "mealy":
            raise TableError("timers and counters act on transitions: write the controller "
                             "as a Mealy machine (kind = \"mealy\")")
        words = TimerWords(dict(timers or {}), dict(counters or {}))
        lowered = [_lowered(words, entry, 4, i, "transition")
                   for i, entry in enumerate(transitions, start=1)]
        every = [_lowered(words, entry, 3, i, "every_state")
                 for i, entry in enumerate(every_state, start=1)]
        rules = [words.rewrite(text, f"invariant {i}")
                 for i, text in enumerate(invariants or (), start=1)]
        readings = tuple(words.readings.values())
        user_in, user_out = _names(inputs), _names(outputs)
        used = sorted({s for e in [*lowered, *every] if isinstance(e[-1], Mapping)
                       for s in e[-1] if s not in user_out})
        actions = [action_signal(b, a) for b in words.blocks
                   for a in (("start",) if b in words.timers else ("count", "clear"))
                   if action_signal(b, a) in used]
        check_free([r.signal for r in readings] + actions, [*user_in, *user_out])
        control = StateTable.from_transitions(
            name=name, reset=reset, kind="mealy",
            inputs=_extended(inputs, [r.signal for r in readings]),
            outputs=_extended(outputs, actions),
            transitions=lowered, every_state=every, invariants=rules,
            default_outputs={**{a: 0 for a in actions}, **dict(default_outputs or {})},
            **options)  # type: ignore[arg-type]
        blocks: list[Block] = [Timer(n, c) for n, c in words.timers.items()]
        blocks += [Counter(n, k) for n, k in words.counters.items()]
        n_user_in = len(control.inputs) - len(readings)
        n_user_out = len(control.outputs) - len(actions)
        return cls(control=control, blocks=tuple(blocks), readings=readings,
                   inputs=control.inputs[:n_user_in], outputs=control.outputs[:n_user_out],
                   written=tuple(invariants or ()))


def _names(ports: Sequence[str] | Mapping[str, int]) -> list[str]:
    return [str(p) for p in ports]


def _extended(ports: Sequence[str] | Mapping[str, int], extra: Sequence[str]
              ) -> Sequence[str] | Mapping[str, int]:
    if isinstance(ports, Mapping):
        return {**ports, **{name: 1 for name in extra}}
    return [*ports, *extra]


def _lowered(words: TimerWords, entry: Sequence[object], size: int, pos: int, kind: str
             ) -> tuple[object, ...]:
    """One transition with its guard rewritten and its actions merged into its outputs
    (errors name the entry: ``row`` its index, ``entry`` its list)."""
    where = f"transition {pos}" if kind == "transition" else f"every-state transition {pos}"
    try:
        return _lowered_entry(words, entry, size, where)
    except TableError as exc:
        raise TableError(exc.message, name=exc.name, row=pos - 1, entry=kind) from None


def _lowered_entry(words: TimerWords, entry: Sequence[object], size: int, where: str
                   ) -> tuple[object, ...]:
    if isinstance(entry, (str, bytes)) or not isinstance(entry, Sequence) or len(entry) not in (
            size, size + 1):
        return tuple(entry) if isinstance(entry, Sequence) else (entry,)  # the compiler says why
    fields = list(entry[:size])
    actions = entry[size] if len(entry) > size else {}
    if not isinstance(actions, Mapping):
        raise TableError(f"{where}: actions must be a dict such as {{'start': ['purge']}}, "
                         f"not {actions!r}")
    unknown = [k for k in actions if k not in ACTIONS]
    if unknown:
        raise TableError(f"{where}: unknown action {unknown[0]!r}: the actions are "
                         f"{', '.join(ACTIONS)}")
    g = size - 3  # the guard's place: (from, guard, to, set) or (guard, to, set)
    guard = fields[g]
    if isinstance(guard, str) and guard != "else":
        fields[g] = words.rewrite(guard, where)
    pulses = words.actions(actions, where)
    if pulses:
        outs = fields[-1]
        if outs is not None and not isinstance(outs, Mapping):
            return tuple(fields)  # the compiler names the bad outputs
        fields[-1] = {**dict(outs or {}), **pulses}
    return tuple(fields)
