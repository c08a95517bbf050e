"""A machine's signals as BDD variables, and the check that a condition is well written.

Invariants are conditions over the inputs, the outputs and the present state; both the
model (which refuses a badly written one when a table is built) and the proofs of
:mod:`fsmsynth.checks.invariants` compile them over the same variables, made here from the
port names alone.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.base.names import ports_of
from fsmsynth.language.guards import GuardError, compile_condition
from fsmsynth.logic import bdd


@dataclass(frozen=True, slots=True)
class Signals:
    """BDD variables of a machine's inputs then outputs, and each port's bits (LSB first)."""

    inputs: tuple[Any, ...]
    outputs: tuple[Any, ...]
    widths: dict[str, int]
    bits: dict[str, list[Any]]


def signal_space(inputs: Sequence[str], outputs: Sequence[str]) -> Signals:
    """The variables of the 1-bit names ``inputs`` then ``outputs`` (vector bits such as
    ``mode[1]`` grouped into their port)."""
    n_in = len(inputs)
    var = bdd.variables(n_in + len(outputs))
    widths: dict[str, int] = {}
    bits: dict[str, list[Any]] = {}
    for names, offset in ((inputs, 0), (outputs, n_in)):
        at = 0
        for port, width in ports_of(names):
            w = width or 1
            widths[port] = w
            bits[port] = [var[offset + at + k] for k in reversed(range(w))]
            at += w
    return Signals(tuple(var[:n_in]), tuple(var[n_in:]), widths, bits)


def condition_problem(text: object, inputs: Sequence[str], outputs: Sequence[str],
                      states: Sequence[str], state: str) -> str | None:
    """Why ``text`` is not a condition over these signals and states (evaluated in
    ``state``), or ``None``."""
    if not isinstance(text, str) or not text.strip():
        return f"invariant {text!r} must be a condition written as text"
    signals = signal_space(inputs, outputs)
    try:
        compile_condition(text, signals.widths, signals.bits, states, state)
    except GuardError as exc:
        return exc.message
    return None
