"""Invariants: conditions that must hold in every reachable state under every input.

An invariant is a condition over inputs, outputs (bits, vectors and their comparisons) and
the present state (``state == NAME``, ``state != NAME``, ``in(state, A, B)``), in the guard
grammar of :mod:`fsmsynth.language.guards`: ``~(fill & drain)``, ``~estop | speed == 0``,
``state != jammed``.  This module proves them three ways:

* :func:`check_invariants` on the table: breadth first over the states reachable from reset
  by specified transitions, each state's invariant is a BDD over the inputs and the outputs;
  it fails at an input point where no value of the don't-care outputs satisfies it (a Moore
  state needs one output value for every input).
* :func:`constrain_outputs` before synthesis: don't-care output bits that some value could
  break an invariant with are fixed, bit by bit, where that is needed and only there; bits
  every value of which is safe stay don't cares for the minimizer.
* :func:`check_invariants` with a netlist: the product of table states and the netlist's
  codes is walked as :func:`fsmsynth.checks.verify.verify` walks it, and at each node the
  invariant is evaluated on the netlist's own output functions, so it is proven for the
  values the gates produce, not for the table's intentions.

Both walks follow specified next states only: where the table leaves the next state a don't
care it says that input does not occur there.  A failure carries the shortest input sequence
from reset (breadth first) and the state path.

References
----------
Moore, E. F., "Gedanken-experiments on sequential machines", *Automata Studies*, Princeton,
1956 (exploring a machine's product from the initial states).
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986 (BDDs; quantification by smoothing and consensus).
"""

from __future__ import annotations

from collections import deque
from collections.abc import Sequence
from dataclasses import dataclass
from functools import partial
from typing import Any

from fsmsynth.base.names import ports_of
from fsmsynth.checks.simulate import split_by_code, step_symbolic
from fsmsynth.language.guards import GuardError, compile_condition, compile_guard
from fsmsynth.language.signals import Signals, signal_space
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.regions import state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.netlist import Netlist


@dataclass(frozen=True, slots=True)
class InvariantViolation:
    """The shortest way from reset to breaking an invariant.

    Attributes
    ----------
    invariant:
        Its text, as written.
    inputs:
        One word per clock cycle (one ``0``/``1`` per input in declared order); the
        invariant breaks in the last cycle, before its clock edge.
    states:
        The table's present state in each cycle.
    outputs:
        The outputs in the last cycle: on a netlist the values its gates give; on a table
        the specified values, ``-`` where they are don't cares (no value of which helps).
    on:
        ``"table"`` or ``"netlist"``.
    input_names, output_names:
        The table's 1-bit names, so that :meth:`describe` can name the values.
    together:
        On a table, the other invariants that ``invariant`` cannot hold together with there
        (each can hold alone, but no value of the don't-care outputs satisfies all of them:
        the table is at fault, not a netlist); empty when it breaks on its own.
    """

    invariant: str
    inputs: tuple[str, ...]
    states: tuple[str, ...]
    outputs: str
    on: str
    input_names: tuple[str, ...] = ()
    output_names: tuple[str, ...] = ()
    together: tuple[str, ...] = ()

    def describe(self) -> str:
        """One sentence a person can act on: the inputs of each cycle by name (vectors as
        numbers), the state path, and the outputs that break the invariant."""
        steps = "; ".join(f"cycle {i + 1}: {_named(w, self.input_names)}"
                          for i, w in enumerate(self.inputs))
        path = " -> ".join(self.states)
        said = "the table says" if self.on == "table" else "the netlist gives"
        if self.together:
            named = " and ".join(repr(t) for t in (self.invariant, *self.together))
            return (f"invariants {named} cannot hold together in state {self.states[-1]!r}, "
                    f"{len(self.inputs)} clock cycle{'s' if len(self.inputs) != 1 else ''} "
                    f"from reset (states {path}; {steps}): no value of the don't-care "
                    f"outputs satisfies all of them; {said} "
                    f"{_named(self.outputs, self.output_names)}")
        return (f"invariant {self.invariant!r} breaks in state {self.states[-1]!r}, "
                f"{len(self.inputs)} clock cycle{'s' if len(self.inputs) != 1 else ''} from "
                f"reset (states {path}; {steps}); {said} "
                f"{_named(self.outputs, self.output_names)}")


def _named(word: str, names: Sequence[str]) -> str:
    """``start=1 mode=2`` for a word of one character per 1-bit name (``-`` kept)."""
    if len(names) != len(word):
        return word or "(none)"
    parts, at = [], 0
    for port, width in ports_of(names):
        chars = word[at:at + (width or 1)]
        at += width or 1
        shown = str(int(chars, 2)) if width is not None and "-" not in chars else chars
        parts.append(f"{port}={shown}")
    return " ".join(parts) or "(none)"


@dataclass(frozen=True, slots=True)
class InvariantCheck:
    """Outcome of :func:`check_invariants`; true when every invariant holds.

    ``walked`` counts the states (on a table) or product nodes (on a netlist) examined."""

    invariants: tuple[str, ...]
    walked: int
    on: str
    violation: InvariantViolation | None = None

    def __bool__(self) -> bool:
        return self.violation is None

    def summary(self) -> str:
        """A line for reports."""
        if not self.invariants:
            return "no invariants to prove"
        if self.violation is not None:
            return "invariant broken: " + self.violation.describe()
        count = len(self.invariants)
        where = ("states reachable from reset" if self.on == "table"
                 else "reachable states of the netlist")
        return (f"{count} invariant{'s' if count != 1 else ''} hold in every one of "
                f"{self.walked} {where}, under every input")


def kept_by_reduction(table: StateTable, reduced: StateTable) -> tuple[str, ...]:
    """The invariants of ``table`` that still mean the same on its reduced machine: those
    over signals only (a state a predicate names may have been merged or removed)."""
    signals = signal_space(table.inputs, table.outputs)
    kept = []
    for text in table.invariants:
        try:
            compile_guard(text, signals.widths, signals.bits)
        except GuardError:
            continue
        kept.append(text)
    assert reduced.inputs == table.inputs and reduced.outputs == table.outputs
    return tuple(kept)


def _conditions(table: StateTable, signals: Signals) -> dict[str, list[Any]]:
    """Each state's invariants as BDDs over inputs and outputs."""
    return {s: [compile_condition(text, signals.widths, signals.bits, table.states, s)
                for text in table.invariants]
            for s in table.states}


def _allowed(condition: Any, on: Sequence[Any], off: Sequence[Any],
             outputs: Sequence[Any]) -> Any:
    """Points (inputs, outputs) where ``condition`` holds and the outputs are as specified."""
    result = condition
    for o, var in enumerate(outputs):
        result &= (~on[o] | var) & (~off[o] | ~var)
    return result


def _word(point: int, n: int) -> str:
    return "".join(str(point >> j & 1) for j in range(n))


def _specified(on: Sequence[Any], off: Sequence[Any], point: Any) -> str:
    """The output word the table gives at one input point (a BDD restriction)."""
    chars = []
    for high, low in zip(on, off):
        chars.append("1" if not (high & point).is_zero()
                     else "0" if not (low & point).is_zero() else "-")
    return "".join(chars)


@exclusive
def check_invariants(table: StateTable, netlist: Netlist | None = None) -> InvariantCheck:
    """Prove ``table.invariants`` on the table, or on ``netlist`` (which realizes it).

    On the table, breadth first over the states reachable from reset: at each one, the
    points where no value of the don't-care outputs satisfies an invariant (for a Moore
    state: no one value for every input).  On a netlist, breadth first over the product of
    table states and netlist codes (as :func:`fsmsynth.checks.verify.verify`), with the outputs the
    netlist computes.  The first failure found is the shortest, in clock cycles.

    Examples
    --------
    >>> t = StateTable.from_rows(name="tank", inputs=["go"], outputs=["fill", "drain"],
    ...     reset="idle", rows=[("idle", "1", "busy", "10"), ("idle", "0", "idle", "00"),
    ...                         ("busy", "-", "idle", "11")], invariants=["~(fill & drain)"])
    >>> print(check_invariants(t).violation.describe())  # doctest: +NORMALIZE_WHITESPACE
    invariant '~(fill & drain)' breaks in state 'busy', 2 clock cycles from reset (states
    idle -> busy; cycle 1: go=1; cycle 2: go=0); the table says fill=1 drain=1
    """
    if not table.invariants:
        return InvariantCheck((), 0, "table" if netlist is None else "netlist")
    signals = signal_space(table.inputs, table.outputs)
    conditions = _conditions(table, signals)
    regions = state_regions(table, signals.inputs)
    if netlist is not None:
        return _check_netlist(table, netlist, signals, conditions, regions)
    n_in = len(table.inputs)
    parent: dict[str, tuple[str, str] | None] = {table.reset: None}
    queue = deque([table.reset])
    while queue:
        state = queue.popleft()
        here = regions[state]
        broken = partial(_broken, conditions=conditions[state], here=here, signals=signals,
                         moore=table.kind == "moore")
        every = range(len(table.invariants))
        alone = next(((i, bad) for i in every if not (bad := broken([i])).is_zero()), None)
        together = () if alone is not None else _conflict(every, broken)
        if alone is not None or together:
            first, bad = alone if alone is not None else (together[0], broken(together))
            point = bdd.point_of(bad, signals.inputs)
            words, states = _path(parent, state, _word(point, n_in))
            at = bdd.cube_bdd(Cube.minterm(point, n_in), signals.inputs)
            return InvariantCheck(table.invariants, len(parent), "table", InvariantViolation(
                table.invariants[first], words, states,
                _specified(here.out_on, here.out_off, at), "table", table.inputs,
                table.outputs, tuple(table.invariants[i] for i in together[1:])))
        for nxt, points in here.next:
            if nxt not in parent:
                parent[nxt] = (state, _word(bdd.point_of(points, signals.inputs), n_in))
                queue.append(nxt)
    return InvariantCheck(table.invariants, len(parent), "table")


def _broken(indices: Sequence[int], *, conditions: Sequence[Any], here: Any, signals: Signals,
            moore: bool) -> Any:
    """Input points of a state (``here``, its regions) where no output value the table
    allows satisfies every invariant of ``indices`` together (a Moore state: no one value
    for every input)."""
    condition = bdd.ONE
    for i in indices:
        condition &= conditions[i]
    allowed = _allowed(condition, here.out_on, here.out_off, signals.outputs)
    if moore:
        if not bdd.exists(bdd.forall(allowed, signals.inputs), signals.outputs).is_zero():
            return bdd.ZERO
        fixed = {var: 1 if high.is_one() else 0
                 for var, high in zip(signals.outputs, here.out_on)}
        return ~allowed.restrict(fixed)
    return ~bdd.exists(allowed, signals.outputs)


def _conflict(indices: Sequence[int], broken: Any) -> tuple[int, ...]:
    """A smallest-by-deletion set of invariants that cannot hold together, or ``()`` when
    all of them can: drop each one in turn while the rest still conflict."""
    keep = list(indices)
    if len(keep) < 2 or broken(keep).is_zero():
        return ()
    for i in list(keep):
        rest = [j for j in keep if j != i]
        if len(rest) >= 2 and not broken(rest).is_zero():
            keep = rest
    return tuple(keep)


def _path(parent: dict[Any, tuple[Any, str] | None], node: Any, last: str
          ) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Input words and table states from reset to ``node`` (a state, or a product node whose
    first element is the state), then ``last``."""
    words, states = [last], [node[0] if isinstance(node, tuple) else node]
    link = parent[node]
    while link is not None:
        node, word = link
        words.append(word)
        states.append(node[0] if isinstance(node, tuple) else node)
        link = parent[node]
    return tuple(reversed(words)), tuple(reversed(states))


def _check_netlist(table: StateTable, netlist: Netlist, signals: Signals,
                   conditions: dict[str, list[Any]], regions: dict[str, Any]) -> InvariantCheck:
    n_in = len(table.inputs)
    input_values = dict(zip(netlist.inputs, signals.inputs))
    start = (table.reset, netlist.reset_code)
    parent: dict[tuple[str, int], tuple[tuple[str, int], str] | None] = {start: None}
    queue = deque([start])
    while queue:
        node = queue.popleft()
        state, code = node
        env, nexts = step_symbolic(netlist, code, input_values)
        produced = [env[net] for _port, net in netlist.outputs]
        given = dict(zip(signals.outputs, produced))
        for text, condition in zip(table.invariants, conditions[state]):
            bad = ~condition.compose(given)
            if bad.is_zero():
                continue
            point = bdd.point_of(bad, signals.inputs)
            words, states = _path(parent, node, _word(point, n_in))
            values = {var: point >> i & 1 for i, var in enumerate(signals.inputs)}
            outputs = "".join(str(int(y.restrict(values).is_one())) for y in produced)
            return InvariantCheck(table.invariants, len(parent), "netlist",
                                  InvariantViolation(text, words, states, outputs, "netlist",
                                                     table.inputs, table.outputs))
        for nxt, points in regions[state].next:
            for group, next_code in split_by_code(points, nexts):
                target = (nxt, next_code)
                if target not in parent:
                    parent[target] = (node, _word(bdd.point_of(group, signals.inputs), n_in))
                    queue.append(target)
    return InvariantCheck(table.invariants, len(parent), "netlist")


@exclusive
def constrain_outputs(table: StateTable) -> StateTable:
    """``table`` with the don't-care output bits fixed where a value could break an invariant.

    Output bits are taken in declared order.  At each input point of each state where bit
    *j* is a don't care: if both values leave the remaining bits a way to satisfy every
    invariant, it stays a don't care (and the remaining bits must then work for both);
    otherwise it takes the value that does (0 when only 0 does, or neither).  A Mealy
    state's changed rows are re-split into disjoint cubes (BDD paths), and input points no
    row covered get rows with a don't-care next state and the fixed outputs; a Moore state
    gets one output value for every input.  Points where no value helps are left as they
    are: :func:`check_invariants` reports them.  Tables without invariants are returned
    unchanged.
    """
    if not table.invariants:
        return table
    signals = signal_space(table.inputs, table.outputs)
    conditions = _conditions(table, signals)
    regions = state_regions(table, signals.inputs)
    n_in = len(table.inputs)
    rows: list[tuple[str, str, str | None, str | None]] = []
    state_outputs = dict(table.state_outputs)
    for state in table.states:
        here = regions[state]
        allowed = bdd.ONE
        for condition in conditions[state]:
            allowed &= _allowed(condition, here.out_on, here.out_off, signals.outputs)
        if table.kind == "moore":
            allowed = bdd.forall(allowed, signals.inputs)
        force = _force(allowed, here.out_on, here.out_off, signals.outputs)
        if table.kind == "moore":
            cube = list(table.output_cube_of(state))
            for o, (zero, one) in enumerate(force):
                cube[o] = "1" if one.is_one() else "0" if zero.is_one() else cube[o]
            state_outputs[state] = "".join(cube)
            rows.extend(table.rows_of(state))
            continue
        rows.extend(_forced_rows(state, table.rows_of(state), here, force, signals.inputs,
                                 n_in, len(table.outputs)))
    return StateTable._derived(table, rows=rows, states=table.states, reset=table.reset,
                               state_outputs=state_outputs if table.kind == "moore" else None,
                               invariants=table.invariants)


def _force(allowed: Any, on: Sequence[Any], off: Sequence[Any], outputs: Sequence[Any]
           ) -> list[tuple[Any, Any]]:
    """Per output bit, the input points where it must be fixed to 0 and to 1."""
    force = []
    for o, var in enumerate(outputs):
        rest = list(outputs[o + 1:])
        low, high = allowed.restrict({var: 0}), allowed.restrict({var: 1})
        can_low, can_high = bdd.exists(low, rest), bdd.exists(high, rest)
        either = bdd.exists(low & high, rest)
        free = ~(on[o] | off[o])
        keep = free & either
        to_low = free & ~either & can_low
        to_high = free & ~either & ~can_low & can_high
        force.append((to_low, to_high))
        allowed = ((keep & low & high) | (to_low & low) | (to_high & high)
                   | (~keep & ~to_low & ~to_high & (low | high)))
    return force


def _forced_rows(state: str, rows: Sequence[tuple[str, str, str | None, str | None]],
                 here: Any, force: Sequence[tuple[Any, Any]], inputs: Sequence[Any], n_in: int,
                 n_out: int) -> list[tuple[str, str, str | None, str | None]]:
    forced = bdd.ZERO
    for zero, one in force:
        forced |= zero | one
    result: list[tuple[str, str, str | None, str | None]] = []
    covered = bdd.ZERO
    pieces: list[tuple[Any, str | None, list[str]]] = []
    for row, (points, nxt, out) in zip(rows, here.rows):
        covered |= points
        if (points & forced).is_zero():
            result.append(row)
        else:
            pieces.append((points, nxt, list(out or "-" * n_out)))
    pieces.append((~covered & forced, None, ["-"] * n_out))
    for o, (zero, one) in enumerate(force):
        split = []
        for points, nxt, word in pieces:
            for part, value in ((points & one, "1"), (points & zero, "0"),
                                (points & ~(zero | one), None)):
                if part.is_zero():
                    continue
                split.append((part, nxt, word if value is None
                              else word[:o] + [value] + word[o + 1:]))
        pieces = split
    for points, nxt, word in pieces:
        for cube in bdd.cubes_of(points, inputs):
            result.append((state, cube.to_string(n_in), nxt, "".join(word)))
    return result
