"""The machine as register-transfer-level HDL describes it: states with their codes, and per
state an if/else-if chain of branches, each a condition over the inputs, a next state and
the outputs it sets.  The Verilog and VHDL writers (:mod:`fsmsynth.writers.rtl_verilog`,
:mod:`fsmsynth.writers.rtl_vhdl`) only print it.

Don't cares are refined the way hand-written RTL refines them: an open next state stays,
and a free output takes its default, 0; these are choices the table allows, so the RTL
describes a machine that meets the table, whatever the storage kind or target of the
netlist.  Conditions are sums of products by the Espresso heuristic, free to take the
points of earlier branches and the points the table leaves open.  Invariants become one
condition per state over the inputs and outputs (a BDD, written the same way), so that
states, vectors and comparisons need no translation of their text.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.base.names import ports_of
from fsmsynth.language.guards import compile_condition, short_cover
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.model.clocking import DEFAULT_CLOCKING, Clocking
from fsmsynth.model.regions import pieces, state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine
from fsmsynth.writers.rtl_blocks import RtlBlock, rtl_blocks


@dataclass(frozen=True, slots=True)
class Branch:
    """One branch of a state's chain: ``terms`` (input cubes; empty for "always"), the next
    state, and the output word (``0``/``1`` per output bit; ``None`` in a Moore machine)."""

    terms: tuple[Cube, ...]
    to: str
    word: str | None


@dataclass(frozen=True, slots=True)
class RtlState:
    """A state: its name, the HDL constant that names it (``S_IDLE``), its code, spec line,
    Moore output word, and its branches in order (the last may be the ``else`` one)."""

    name: str
    constant: str
    code: int
    line: int | None
    word: str | None
    branches: tuple[Branch, ...]
    last_is_else: bool


@dataclass(frozen=True, slots=True)
class RtlInvariant:
    """An invariant: its text, its position in the spec, and per state its condition over
    inputs then outputs (cubes; ``None`` where it always holds)."""

    number: int
    text: str
    per_state: tuple[tuple[str, tuple[Cube, ...] | None], ...]


@dataclass(frozen=True, slots=True)
class RtlMachine:
    """Everything an RTL writer prints."""

    name: str
    kind: str
    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    width: int
    states: tuple[RtlState, ...]
    reset: str
    unused_safe: bool
    registered: bool
    edge: str
    method: str
    source: str | None
    invariants: tuple[RtlInvariant, ...]
    clocking: Clocking = DEFAULT_CLOCKING
    blocks: tuple[RtlBlock, ...] = ()
    """Timers and counters beside the machine (:mod:`fsmsynth.writers.rtl_blocks`)."""
    internal: tuple[str, ...] = ()
    """Inputs and outputs of the machine that are not ports: the timers' and counters'
    readings (driven by the blocks) and actions (read by them)."""

    @property
    def ports_in(self) -> tuple[str, ...]:
        return tuple(i for i in self.inputs if i not in self.internal)

    @property
    def ports_out(self) -> tuple[str, ...]:
        return tuple(o for o in self.outputs if o not in self.internal)

    @property
    def unused_codes(self) -> bool:
        """Whether some code of ``width`` bits names no state."""
        return len(self.states) < (1 << self.width)

    def state(self, name: str) -> RtlState:
        return next(s for s in self.states if s.name == name)

    def constant(self, name: str) -> str:
        """The HDL constant naming state ``name``."""
        return self.state(name).constant

    def reset_word(self) -> str:
        """What registered outputs hold after reset: the reset state's outputs (Moore), or
        0 (Mealy: nothing has been output yet)."""
        if self.kind == "moore":
            word = self.state(self.reset).word
            assert word is not None
            return word
        return "0" * len(self.outputs)


def _refined(cube: str) -> str:
    return cube.replace("-", "0")


def _branches(table: StateTable, state: str, regions: Any, var: list[Any]
              ) -> tuple[tuple[Branch, ...], bool]:
    """A state's branches: its input points grouped by (next state, output word) after
    refinement; the group that is the default (stay, all outputs 0) needs no branch."""
    n_out = len(table.outputs) if table.kind == "mealy" else 0
    free = bdd.ZERO
    groups: dict[tuple[str, str], Any] = {}
    for points, nxt, word in pieces(regions, n_out):
        if nxt is None and set(word) <= {"-"}:
            free |= points  # nothing specified: any branch may take these points
            continue
        key = (state if nxt is None else nxt, _refined(word))
        groups[key] = groups[key] | points if key in groups else points
    default = (state, "0" * n_out)
    chain = [(key, points) for key, points in groups.items() if key != default]
    chain.sort(key=lambda item: list(table.states).index(item[0][0]))
    last_is_else = default not in groups and bool(chain)
    branches = []
    taken = bdd.ZERO
    for k, ((to, word), points) in enumerate(chain):
        if last_is_else and k == len(chain) - 1:
            terms: tuple[Cube, ...] = ()
        else:
            terms = tuple(short_cover(points, free | taken, var, len(table.inputs)))
        branches.append(Branch(terms, to, word if table.kind == "mealy" else None))
        taken |= points
    return tuple(branches), last_is_else


def _invariants(spec: StateTable, states: tuple[str, ...],
                members: Mapping[str, Sequence[str]]) -> tuple[RtlInvariant, ...]:
    """Each invariant of ``spec`` as one condition per RTL state over inputs then outputs:
    for a state that stands for several of the spec's (merged by state minimization), the
    condition of every one of them."""
    signals = [*spec.inputs, *spec.outputs]
    var = bdd.variables(len(signals))
    widths = {p: w or 1 for p, w in ports_of(signals)}
    at, bits = 0, {}
    for port, width in ports_of(signals):
        n = width or 1
        bits[port] = [var[at + k] for k in reversed(range(n))]  # least significant first
        at += n
    found = []
    for number, text in enumerate(spec.invariants, start=1):
        per_state = []
        for state in states:
            holds = bdd.ONE
            for member in members.get(state, (state,)):
                holds &= compile_condition(text, widths, bits, spec.states, member)
            per_state.append((state, None if holds.is_one() else
                              tuple(short_cover(holds, bdd.ZERO, var, len(signals)))))
        found.append(RtlInvariant(number, text, tuple(per_state)))
    return tuple(found)


def _constants(states: Sequence[str]) -> dict[str, str]:
    """``S_IDLE`` for ``idle``: upper case, anything but letters and digits one underscore
    (a merged state ``a+b`` is ``S_A_B``), numbered where two would be the same (VHDL
    ignores case)."""
    found: dict[str, str] = {}
    for state in states:
        base = "S_" + "_".join(p for p in re.split(r"[^A-Za-z0-9]+", state) if p).upper()
        name, n = base, 1
        while name in found.values():
            name, n = f"{base}_{n}", n + 1
        found[state] = name
    return found


def rtl_machine(table: StateTable, codes: Mapping[str, int], width: int, *, method: str,
                unused: str, registered: bool, edge: str = "rising",
                spec: StateTable | None = None,
                members: Mapping[str, Sequence[str]] | None = None,
                clocking: Clocking = DEFAULT_CLOCKING,
                timed: TimedMachine | None = None) -> RtlMachine:
    """The RTL description of ``table`` (the machine that was encoded) with state ``codes``
    of ``width`` bits; ``registered`` puts every output in a register of its own (as
    :mod:`fsmsynth.stages.registered` builds them).  The invariants are those of ``spec``
    (the table as given; by default ``table``), whose states ``members`` maps each of
    ``table``'s to (by default itself).  ``clocking`` names the clock, reset and enable
    ports and says how the registers reset.  ``timed``: the timers and counters whose
    readings and actions ``table`` (its control machine) has among its inputs and outputs."""
    var = bdd.variables(len(table.inputs))
    regions = state_regions(table, var)
    states = []
    constants = _constants(table.states)
    for state in table.states:
        branches, last_is_else = _branches(table, state, regions[state], var)
        word = _refined(table.output_cube_of(state)) if table.kind == "moore" else None
        states.append(RtlState(state, constants[state], codes[state],
                               table.intent.line_of("state", state), word, branches,
                               last_is_else))
    return RtlMachine(name=table.name, kind=table.kind, inputs=table.inputs,
                      outputs=table.outputs, width=max(width, 1), states=tuple(states),
                      reset=table.reset, unused_safe=unused == "safe", registered=registered,
                      edge=edge, method=method, source=table.intent.source,
                      invariants=_invariants(spec or table, table.states, members or {}),
                      clocking=clocking, blocks=rtl_blocks(timed) if timed else (),
                      internal=(*(r.signal for r in timed.readings),
                                *(s for s, _b, _a in timed.action_signals())) if timed else ())
