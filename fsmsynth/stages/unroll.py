"""A timed machine written out as one plain state table: every timer and counter value
becomes part of the state.

This is the reference the composed design is checked against (exactly, when it is small)
and the alternative the build compares with: for short timers a few states more can cost
less than a counter.  States are named ``<state>_<block><value>...`` (``purge_purge3``),
the reset state keeps its name when every block is 0 in it.  Only combinations reachable
from reset by specified transitions appear (breadth first, so the order is stable).
"""

from __future__ import annotations

import re
from collections import deque

from fsmsynth.base.errors import TableError
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine

UNROLL_LIMIT = 20000
"""Above this many states an unrolled table is refused (the composed design's proof does not
need one)."""

Node = tuple[str, tuple[int, ...]]


def unroll(machine: TimedMachine, *, limit: int = UNROLL_LIMIT, signals: bool = False
           ) -> StateTable:
    """The plain table of ``machine`` (see the module docstring).

    With ``signals`` the readings and actions stay as outputs of the table (readings first),
    then one output per state the invariants test (``in_state_purge``, 1 in every unrolled
    state of ``purge``), and the invariants are kept with their state tests rewritten as
    tests of those outputs; that is the table invariants of a timed machine are proven on.

    Raises
    ------
    TableError
        When more than ``limit`` states are reachable.
    """
    return _unrolled(machine, limit, signals)[0]


def unroll_for_bench(machine: TimedMachine, *, limit: int = UNROLL_LIMIT
                     ) -> tuple[StateTable, tuple[str, ...]]:
    """:func:`unroll`'s table, and the states a bench tests (the first reached, so the
    nearest to reset, of each pair of a control state and the readings there); the others
    differ from one of these only in counter values, which the proof covers
    (:mod:`fsmsynth.checks.timed_proof`)."""
    return _unrolled(machine, limit, False)


def _unrolled(machine: TimedMachine, limit: int, signals: bool
              ) -> tuple[StateTable, tuple[str, ...]]:
    control = machine.control
    n_in, n_out = len(machine.inputs), len(machine.outputs)
    start: Node = (control.reset, tuple(0 for _ in machine.blocks))
    names: dict[Node, str] = {}
    taken = set(control.states)

    def name_of(node: Node) -> str:
        if node not in names:
            state, values = node
            text = "_".join([state, *(f"{b.name}{v}" for b, v in zip(machine.blocks, values))])
            if node == start:
                text = state
            while text in taken and node != start:
                text += "_u"
            taken.add(text)
            names[node] = text
        return names[node]

    name_of(start)
    rows: list[tuple[str, str, str | None, str]] = []
    seen = {start}
    queue = deque([start])
    of_state: dict[str, list[str]] = {}
    first: dict[tuple[str, str], str] = {}
    while queue:
        node = queue.popleft()
        state, values = node
        here = name_of(node)
        of_state.setdefault(state, []).append(here)
        read = machine.read_word(values)
        first.setdefault((state, read), here)
        for _s, cube, nxt, out in control.rows_of(state):
            if any(c not in ("-", r) for c, r in zip(cube[n_in:], read)):
                continue
            assert out is not None
            word = out[:n_out] + (read + out[n_out:] if signals else "")
            if nxt is None:
                rows.append((here, cube[:n_in], None, word))
                continue
            after: Node = (nxt, machine.next_values(values, out))
            if after not in seen:
                if len(seen) >= limit:
                    raise TableError(f"{machine.name}: unrolling the timers and counters "
                                     f"gives more than {limit} states; build it with "
                                     "counters instead")
                seen.add(after)
                queue.append(after)
            rows.append((here, cube[:n_in], name_of(after), word))
    outputs = machine.outputs
    invariants = None
    if signals:
        outputs += (*(r.signal for r in machine.readings), *control.outputs[n_out:])
        # Each state an invariant tests becomes an output that is 1 in its unrolled states.
        tested = _tested_states(control.invariants, control.states)
        flags = {s: _free(f"in_state_{s}", {*outputs, *control.inputs}) for s in tested}
        outputs += tuple(flags.values())
        member = {u: s for s, us in of_state.items() for u in us}
        rows = [(u, c, n, w + "".join("1" if member[u] == s else "0" for s in tested))
                for u, c, n, w in rows]
        invariants = [_over_flags(text, flags) for text in control.invariants]
    table = StateTable.from_rows(name=machine.name, kind="mealy", inputs=machine.inputs,
                                 outputs=outputs, rows=rows, reset=control.reset,
                                 states=[names[n] for n in names if n in seen],
                                 invariants=invariants)
    return table, tuple(first.values())


_STATE_TEST = re.compile(r"\bstate\s*(==|!=)\s*([A-Za-z_][A-Za-z0-9_]*)")
_IN_STATE = re.compile(r"\bin\s*\(\s*state\s*,([^)]*)\)")


def _tested_states(invariants: tuple[str, ...], states: tuple[str, ...]) -> list[str]:
    named = {m.group(2) for text in invariants for m in _STATE_TEST.finditer(text)}
    named |= {n.strip() for text in invariants for m in _IN_STATE.finditer(text)
              for n in m.group(1).split(",")}
    return [s for s in states if s in named]


def _free(name: str, taken: set[str]) -> str:
    while name in taken:
        name += "_"
    return name


def _over_flags(text: str, flags: dict[str, str]) -> str:
    """An invariant's state tests as tests of the state flags (an unknown state is left for
    the guard compiler to name)."""
    def members(names: list[str]) -> str:
        found = [flags[n.strip()] for n in names if n.strip() in flags]
        return f"({' | '.join(found)})" if found else "0"

    def test(match: re.Match[str]) -> str:
        held = members([match.group(2)])
        return held if match.group(1) == "==" else f"~{held}"

    text = _IN_STATE.sub(lambda m: members(m.group(1).split(",")), text)
    return _STATE_TEST.sub(test, text)
