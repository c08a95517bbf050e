"""Timers and counters in guards and on transitions, lowered to plain signals.

A spec may declare ``timers = {purge = 300}`` (cycles) and ``counters = {tries = 3}``
(a limit), start a timer, count or clear a counter on a transition, and read them in
guards and invariants: ``purge.done``, ``tries.done``, ``tries >= 2``.  Before the guards
are compiled, each reading becomes a 1-bit input of the control machine and each action a
1-bit Mealy output that is 1 on the transitions that take it:

=====================  =============================  ==================
written                signal                         kind
=====================  =============================  ==================
``purge.done``         ``purge_done``                 control input
``tries >= 2``         ``tries_ge_2`` (``eq``, ``ne``,   control input
                       ``lt``, ``le``, ``gt``)
``start = ["purge"]``  ``purge_start``                control output
``count = ["tries"]``  ``tries_count``                control output
``clear = ["tries"]``  ``tries_clear``                control output
=====================  =============================  ==================

The counters themselves (what drives the inputs from the outputs) are
:class:`fsmsynth.model.timers.TimedMachine`'s business; this module only rewrites text and
names the signals.  Errors are :class:`~fsmsynth.base.errors.TableError` naming the timer
or counter.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from fsmsynth.base.errors import TableError
from fsmsynth.base.names import did_you_mean, name_problem

ACTIONS = ("start", "count", "clear")
"""What a transition can do to a timer (``start``) or a counter (``count``, ``clear``)."""
COMPARISONS = {"==": "eq", "!=": "ne", "<": "lt", "<=": "le", ">": "gt", ">=": "ge"}
"""Comparisons of a counter's value with a number, and the word each signal name uses."""

_DONE = re.compile(r"\b([A-Za-z_][A-Za-z0-9_]*)\s*\.\s*([A-Za-z_]+)\b")
_COMPARE = re.compile(r"\b([A-Za-z_][A-Za-z0-9_]*)\s*(==|!=|>=|<=|>|<)\s*([0-9]+)\b")


@dataclass(frozen=True, slots=True)
class Reading:
    """A control input that reads a timer or counter: ``purge_done`` is
    ``Reading("purge_done", "purge", "done", 0)``, ``tries_ge_2`` is
    ``Reading("tries_ge_2", "tries", ">=", 2)``."""

    signal: str
    block: str
    op: str
    value: int


def done_signal(block: str) -> str:
    """The control input that reads ``block.done``."""
    return f"{block}_done"


def action_signal(block: str, action: str) -> str:
    """The control output that carries ``action`` (``start``, ``count``, ``clear``)."""
    return f"{block}_{action}"


@dataclass
class TimerWords:
    """Rewrites guards and invariants over declared timers (cycles) and counters (limits),
    collecting the readings it meets."""

    timers: Mapping[str, int]
    counters: Mapping[str, int]

    def __post_init__(self) -> None:
        self.readings: dict[str, Reading] = {}
        for what, blocks in (("timer", self.timers), ("counter", self.counters)):
            for name, size in blocks.items():
                problem = name_problem(name)
                if problem:
                    raise TableError(f"{what} {name!r}: {problem}", name=str(name))
                if isinstance(size, bool) or not isinstance(size, int) or size < 1:
                    unit = "cycles" if what == "timer" else "a limit"
                    raise TableError(f"{what} {name!r}: give {unit} as a whole number of 1 "
                                     f"or more, not {size!r}", name=name)
        both = set(self.timers) & set(self.counters)
        if both:
            name = sorted(both)[0]
            raise TableError(f"{name!r} is declared both as a timer and as a counter", name=name)

    @property
    def blocks(self) -> list[str]:
        return [*self.timers, *self.counters]

    def rewrite(self, text: str, where: str) -> str:
        """``text`` (a guard or invariant) with every timer/counter reading replaced by its
        signal; ``where`` names the text in errors (``"transition 3"``)."""
        def done(match: re.Match[str]) -> str:
            block, field = match.group(1), match.group(2)
            if block not in self.timers and block not in self.counters:
                raise TableError(f"{where}: {block}.{field}: no timer or counter is called "
                                 f"{block!r}{did_you_mean(block, self.blocks)}", name=block)
            if field != "done":
                raise TableError(f"{where}: {block}.{field}: a timer or counter reads "
                                 f"'{block}.done' (or, for a counter, a comparison such as "
                                 f"'{block} >= 2')", name=block)
            return self._reading(done_signal(block), block, "done", 0)

        def compare(match: re.Match[str]) -> str:
            block, op, number = match.group(1), match.group(2), int(match.group(3))
            if block in self.timers:
                raise TableError(f"{where}: {block} {op} {number}: a timer is read as "
                                 f"'{block}.done', not by its value", name=block)
            if block not in self.counters:
                return match.group(0)  # a vector input's comparison, for the guard compiler
            limit = self.counters[block]
            if number > limit:
                raise TableError(f"{where}: {block} {op} {number}: counter {block!r} counts "
                                 f"0 .. {limit}", name=block)
            signal = f"{block}_{COMPARISONS[op]}_{number}"
            return self._reading(signal, block, op, number)

        return _COMPARE.sub(compare, _DONE.sub(done, text))

    def _reading(self, signal: str, block: str, op: str, value: int) -> str:
        self.readings.setdefault(signal, Reading(signal, block, op, value))
        return signal

    def actions(self, given: Mapping[str, object], where: str) -> dict[str, int]:
        """The control outputs a transition's ``start``/``count``/``clear`` lists set."""
        out: dict[str, int] = {}
        for action in ACTIONS:
            names = given.get(action) or []
            if isinstance(names, str) or not isinstance(names, Sequence) or not all(
                    isinstance(n, str) for n in names):
                raise TableError(f"{where}: {action!r} must be a list of names, not {names!r}")
            kinds = self.timers if action == "start" else self.counters
            what = "timer" if action == "start" else "counter"
            for name in names:
                if name not in kinds:
                    other = ("a counter" if name in self.counters else "a timer"
                             if name in self.timers else None)
                    hint = (f" ({name!r} is {other}: timers are started, counters counted "
                            "and cleared)" if other else did_you_mean(name, list(kinds)))
                    raise TableError(f"{where}: {action} {name!r}: no {what} is called "
                                     f"{name!r}{hint}", name=name)
                out[action_signal(name, action)] = 1
        for name in self.counters:
            if action_signal(name, "count") in out and action_signal(name, "clear") in out:
                raise TableError(f"{where}: counts and clears counter {name!r} at once; "
                                 "do one or the other", name=name)
        return out


def check_free(names: Sequence[str], ports: Sequence[str]) -> None:
    """Refuse a timer/counter signal that is also one of the spec's own ports."""
    taken = set(ports)
    for name in names:
        if name in taken:
            raise TableError(f"the port {name!r} has the name fsmsynth gives a timer or counter "
                             "signal; rename the port or the timer/counter", name=name)
