"""Verification: prove that a netlist behaves as its state table says, from reset.

The proof walks the product of table states and netlist state codes breadth first, from the
reset state and the netlist's reset code, under every input combination.  Input
combinations are grouped into classes that neither the table nor the netlist can tell
apart (the cubes of the table's rows, split on every input the netlist reads), so the walk
is exact without enumerating ``2**inputs`` points one by one.  When those classes are too
many (each state watching a few of many inputs), each product node is compared instead on
BDDs over the inputs, against the state's own rows.  Outputs must agree wherever the table
specifies them; a don't-care next state is free, and the walk does not follow it.
Exclusive pins (S and R of one flip-flop) are checked at every reachable point and, by a
SAT solver on the netlist's clauses, at every code and input whatsoever, unused codes
included; so is the promise that unused codes go to reset.

References
----------
Moore, E. F., "Gedanken-experiments on sequential machines", *Automata Studies*, Princeton,
1956 (equivalence of machines by exploring their product from the initial states).
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986 (BDDs).
Tseitin, G. S., "On the complexity of derivation in propositional calculus", *Studies in
Constructive Mathematics and Mathematical Logic* 2, 1968 (clauses of a circuit).
"""

from __future__ import annotations

from collections import deque
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from typing import Any, TypeVar

from pyeda.boolalg.bdd import BDDONE

from fsmsynth.base.errors import NetlistError
from fsmsynth.checks.proof import Counterexample, Verification
from fsmsynth.checks.sat_checks import _exclusive_anywhere, _exclusive_name, _unsafe_unused
from fsmsynth.checks.simulate import _low_index, _split_by_code, _step, split_by_code
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube, partition_within
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.regions import state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.netlist import Netlist, checked_netlist

LOCAL_ABOVE = 64


"""Above this many input classes (the table's rows split on every input the netlist reads),
the product walk compares each node symbolically instead (see :func:`_walk_symbolic`)."""


@dataclass(frozen=True, slots=True)
class _StateSpec:
    """What the table asks of one state, per input class (bit j = class j)."""

    next_masks: tuple[tuple[str, int], ...]
    out_on: tuple[int, ...]
    out_off: tuple[int, ...]


def _state_specs(table: StateTable, classes: Sequence[Cube], ones: int) -> dict[str, _StateSpec]:
    specs = {}
    for state in table.states:
        nxt: dict[str, int] = {}
        on = [0] * len(table.outputs)
        off = [0] * len(table.outputs)
        for _s, cube_text, row_next, row_out in table.rows_of(state):
            cube = Cube.from_string(cube_text)
            mask = sum(1 << j for j, c in enumerate(classes) if cube.contains(c))
            if row_next is not None:
                nxt[row_next] = nxt.get(row_next, 0) | mask
            for o, ch in enumerate(row_out or ""):
                if ch == "1":
                    on[o] |= mask
                elif ch == "0":
                    off[o] |= mask
        if table.kind == "moore":
            for o, ch in enumerate(table.output_cube_of(state)):
                on[o] = ones if ch == "1" else 0
                off[o] = ones if ch == "0" else 0
        specs[state] = _StateSpec(next_masks=tuple(sorted(nxt.items())), out_on=tuple(on),
                                  out_off=tuple(off))
    return specs


def _input_classes(table: StateTable, netlist: Netlist) -> list[Cube] | None:
    """Input classes neither the table nor the netlist tells apart; ``None`` past
    :data:`LOCAL_ABOVE` of them."""
    read = netlist.nets_read()
    cubes = [Cube.from_string(r[1]) for r in table.rows]
    cubes += [Cube(care=1 << j, value=1 << j)
              for j, name in enumerate(table.inputs) if name in read]
    return partition_within(cubes, LOCAL_ABOVE)


@exclusive
def verify(netlist: Any, table: Any = None, *,
           safe_unused: Sequence[int] | Sequence[Cube] | None = None) -> Verification:
    """Prove that ``netlist`` realizes ``table`` from reset, or find the shortest counterexample.

    Parameters
    ----------
    netlist:
        The circuit; its inputs and output ports must carry the table's names.  A design
        returned by :func:`fsmsynth.synthesize` may be given instead of both arguments, and
        the two arguments may come in either order.
    table:
        The specification.
    safe_unused:
        Codes (ints, or cubes over the state bits for many codes at once) from which the
        netlist must reach its reset code in one clock under every input (the
        ``unused="safe"`` promise); checked exactly.  For a design made with
        ``unused="safe"`` its unused codes are checked by default.

    Returns
    -------
    Verification
        ``equivalent`` with the number of product states explored, or the counterexample
        with the fewest clock cycles.

    Raises
    ------
    NetlistError
        A netlist that is not a well-formed single-clock-edge circuit (see
        :func:`fsmsynth.stages.netlist.checked_netlist`), or whose ports are not the table's.
        Any other netlist is modelled exactly, whatever the order of its gates and cells.
    """
    if table is None and hasattr(netlist, "netlist") and hasattr(netlist, "table"):
        design = netlist
        netlist, table = design.netlist, design.table
        if safe_unused is None and getattr(design, "unused", None) == "safe":
            safe_unused = design.encoding.unused_cubes()
    if isinstance(netlist, StateTable) and isinstance(table, Netlist):
        netlist, table = table, netlist
    if not isinstance(netlist, Netlist) or not isinstance(table, StateTable):
        raise TypeError("verify() takes a netlist and a state table, or a design")
    safe_unused = safe_unused or ()
    ports = tuple(p for p, _ in netlist.outputs)
    if tuple(netlist.inputs) != table.inputs or ports != table.outputs:
        raise NetlistError("the netlist's inputs and outputs are not the table's: "
                           f"{netlist.inputs} / {ports} against {table.inputs} / "
                           f"{table.outputs}")
    netlist = checked_netlist(netlist)
    found = _input_classes(table, netlist)
    if found is None:
        return _finish(netlist, safe_unused, _walk_symbolic(netlist, table))
    classes = found
    ones = (1 << len(classes)) - 1
    input_vectors = {
        name: sum(1 << c for c, cube in enumerate(classes) if cube.value >> j & 1)
        for j, name in enumerate(table.inputs)
    }
    specs = _state_specs(table, classes, ones)
    start = (table.reset, netlist.reset_code)
    parent: dict[tuple[str, int], tuple[tuple[str, int], int] | None] = {start: None}
    queue = deque([start])

    def trace(node: tuple[str, int], last_class: int) -> tuple[tuple[str, ...], tuple[str, ...]]:
        steps, states = _path(parent, node, last_class)
        return tuple(_bits(classes[c], len(table.inputs)) for c in steps), states

    while queue:
        node = queue.popleft()
        state, code = node
        spec = specs[state]
        env, next_bits, clash = _step(netlist, code, input_vectors, ones)
        failure = _output_mismatch(netlist, spec, env, ones)
        if failure is None and clash:
            failure = (_low_index(clash), _exclusive_name(netlist), "not both 1", "both 1")
        if failure is not None:
            cls, signal, expected, actual = failure
            words, states = trace(node, cls)
            return Verification(False, len(parent), len(classes),
                                Counterexample(words, states, signal, expected, actual))
        for nxt, mask in spec.next_masks:
            for group, next_code in _split_by_code(mask, next_bits):
                target = (nxt, next_code)
                if target not in parent:
                    parent[target] = (node, _low_index(group))
                    queue.append(target)
    return _finish(netlist, safe_unused, Verification(True, len(parent), len(classes)))


_Step = TypeVar("_Step")


def _path(parent: Mapping[tuple[str, int], tuple[tuple[str, int], _Step] | None],
          node: tuple[str, int], last: _Step) -> tuple[tuple[_Step, ...], tuple[str, ...]]:
    """The steps (input classes or words) and table states from reset to ``node``, then
    ``last``: the breadth-first tree read backwards."""
    steps, states = [last], [node[0]]
    link = parent[node]
    while link is not None:
        node, step = link
        steps.append(step)
        states.append(node[0])
        link = parent[node]
    return tuple(reversed(steps)), tuple(reversed(states))


def _finish(netlist: Netlist, safe_unused: Sequence[int] | Sequence[Cube],
            walked: Verification) -> Verification:
    """The walk's verdict, then the checks that do not depend on reachability."""
    if not walked:
        return walked
    failure_any = _exclusive_anywhere(netlist)
    if failure_any is not None:
        return replace(walked, equivalent=False, counterexample=failure_any)
    if safe_unused:
        unsafe = _unsafe_unused(netlist, safe_unused)
        if unsafe is not None:
            return replace(walked, equivalent=False, counterexample=unsafe)
    return replace(walked, safe_unused=True if safe_unused else None)


def _walk_symbolic(netlist: Netlist, table: StateTable) -> Verification:
    """The product walk of :func:`verify` for tables whose rows distinguish many input
    classes: each node (table state, netlist code) is checked on BDDs over the inputs.

    At a node the netlist is evaluated on BDDs over the inputs with its state bits set to
    the node's code (whole-netlist BDDs over state bits and inputs can grow exponentially,
    one-hot logic over either variable order for one), and its outputs, next-state bits and
    exclusive-pin clashes are compared with the state's own regions (:mod:`fsmsynth.model.regions`).
    The points leading to one next state are split by the next code the netlist computes,
    one successor per non-empty part, each with a witness input for counterexamples.
    Breadth first, so a counterexample has the fewest clock cycles, as in the class-based
    walk.
    """
    inputs = bdd.variables(len(netlist.inputs))
    input_values = dict(zip(netlist.inputs, inputs))
    regions = state_regions(table, inputs)
    n_in = len(table.inputs)
    start = (table.reset, netlist.reset_code)
    parent: dict[tuple[str, int], tuple[tuple[str, int], str] | None] = {start: None}
    queue = deque([start])

    def word(points: Any) -> str:
        bits = bdd.point_of(points, inputs)
        return "".join(str(bits >> j & 1) for j in range(n_in))

    def trace(node: tuple[str, int], last: str) -> tuple[tuple[str, ...], tuple[str, ...]]:
        return _path(parent, node, last)

    def failed(node: tuple[str, int], points: Any, signal: str, expected: str,
               actual: str) -> Verification:
        words, states = trace(node, word(points))
        return Verification(False, len(parent), 0,
                            Counterexample(words, states, signal, expected, actual),
                            symbolic=True)

    while queue:
        node = queue.popleft()
        state, code = node
        env, nexts, both = _step(netlist, code, input_values, BDDONE)
        here = regions[state]
        for o, (port, net) in enumerate(netlist.outputs):
            y = env[net]
            for bad, expected in ((y & here.out_off[o], "0"), (~y & here.out_on[o], "1")):
                if not bad.is_zero():
                    return failed(node, bad, port, expected, str(1 - int(expected)))
        if not both.is_zero():
            return failed(node, both, _exclusive_name(netlist), "not both 1", "both 1")
        for nxt, points in here.next:
            for group, next_code in split_by_code(points, nexts):
                target = (nxt, next_code)
                if target not in parent:
                    parent[target] = (node, word(group))
                    queue.append(target)
    return Verification(True, len(parent), 0, symbolic=True)


def _bits(cube: Cube, n: int) -> str:
    return "".join("1" if cube.value >> i & 1 else "0" for i in range(n))


def _output_mismatch(netlist: Netlist, spec: _StateSpec, env: Mapping[str, int],
                     ones: int) -> tuple[int, str, str, str] | None:
    for o, (port, net) in enumerate(netlist.outputs):
        vec = env[net]
        bad = (vec & spec.out_off[o]) | (ones & ~vec & spec.out_on[o])
        if bad:
            cls = _low_index(bad)
            actual = vec >> cls & 1
            return cls, port, str(1 - actual), str(actual)
    return None
