"""Verification: prove that a netlist behaves as its state table says, from reset.

The proof walks the product of table states and netlist state codes breadth first, from the
reset state and the netlist's reset code, under every input combination.  Input
combinations are grouped into classes that neither the table nor the netlist can tell
apart (the cubes of the table's rows, split on every input the netlist reads), so the walk
is exact without enumerating ``2**inputs`` points one by one.  Outputs must agree wherever
the table specifies them; a don't-care next state is free, and the walk does not follow it.
Exclusive pins (S and R of one flip-flop) are checked at every reachable point and, with
binary decision diagrams, at every code and input whatsoever, unused codes included.

References
----------
Moore, E. F., "Gedanken-experiments on sequential machines", *Automata Studies*, Princeton,
1956 (equivalence of machines by exploring their product from the initial states).
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986 (BDDs).
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from functools import reduce
from typing import Any

from pyeda.boolalg.bdd import BDDONE, BDDZERO, bddvar

from fsmsynth.errors import NetlistError, OptionError
from fsmsynth.logic.cube import Cube, partition
from fsmsynth.netlist import Netlist, checked_netlist
from fsmsynth.table import StateTable


@dataclass(frozen=True, slots=True)
class Counterexample:
    """An input sequence after which the netlist and the table disagree.

    Attributes
    ----------
    inputs:
        One string per clock cycle, one ``0``/``1`` per input in declared order.  The
        difference shows in the last cycle, before its clock edge.
    states:
        The table's present state in each cycle (empty when ``start_code`` is set).
    signal:
        The output (or the pair of exclusive pins, ``"S0/R0"``) that differs.
    expected, actual:
        The table's value and the netlist's value of ``signal`` (for an exclusive pair,
        ``"not both 1"`` and ``"both 1"``).
    start_code:
        ``None`` for a sequence from reset; otherwise the state code the netlist starts in
        (an unused code, for a check that does not depend on reachability).
    """

    inputs: tuple[str, ...]
    states: tuple[str, ...]
    signal: str
    expected: str
    actual: str
    start_code: int | None = None

    def describe(self) -> str:
        """One sentence a person can act on."""
        steps = ", ".join(self.inputs) if self.inputs else "(no inputs)"
        start = ("from reset" if self.start_code is None
                 else f"from state code {self.start_code:b}")
        where = f" in state {self.states[-1]!r}" if self.states else ""
        return (f"{self.signal} is {self.actual} but should be {self.expected}{where} "
                f"after inputs {steps} {start}")


@dataclass(frozen=True, slots=True)
class Verification:
    """Outcome of :func:`verify`.  True when the netlist matches the table."""

    equivalent: bool
    product_states: int
    input_classes: int
    counterexample: Counterexample | None = None
    safe_unused: bool | None = None

    def __bool__(self) -> bool:
        return self.equivalent

    def summary(self) -> str:
        """A line for reports."""
        if self.equivalent:
            text = (f"verified: netlist matches the table from reset "
                    f"({self.product_states} product states, {self.input_classes} input classes)")
            if self.safe_unused:
                text += "; every unused code goes to reset in one clock"
            return text
        assert self.counterexample is not None
        return "NOT verified: " + self.counterexample.describe()


def evaluate(netlist: Netlist, values: Mapping[str, Any], ones: Any) -> dict[str, Any]:
    """Values of every net, given the primary inputs' and flip-flop outputs' values.

    Works on anything with ``&``, ``|``, ``^`` and ``~``: Python ints used as bit vectors
    (``ones`` has every evaluation point's bit set) or BDDs (``ones`` is the constant 1).
    """
    env = dict(values)
    for g in netlist.gates:
        args = [env[i] for i in g.inputs]
        env[g.output] = _GATE_EVAL[g.kind](args, ones)
    return env


def _and(a: Sequence[Any], ones: Any) -> Any:
    return reduce(lambda x, y: x & y, a, ones)


def _or(a: Sequence[Any], ones: Any) -> Any:
    return reduce(lambda x, y: x | y, a, ones & ~ones)


def _xor(a: Sequence[Any], ones: Any) -> Any:
    return reduce(lambda x, y: x ^ y, a, ones & ~ones)


_GATE_EVAL: dict[str, Callable[[Sequence[Any], Any], Any]] = {
    "not": lambda a, ones: ones & ~a[0],
    "buf": lambda a, ones: a[0],
    "and": _and,
    "or": _or,
    "nand": lambda a, ones: ones & ~_and(a, ones),
    "nor": lambda a, ones: ones & ~_or(a, ones),
    "xor": _xor,
    "xnor": lambda a, ones: ones & ~_xor(a, ones),
    "const0": lambda a, ones: ones & ~ones,
    "const1": lambda a, ones: ones,
}


def _step(netlist: Netlist, code: int, inputs: Mapping[str, Any], ones: Any) -> tuple[
        dict[str, Any], list[Any], Any]:
    """Nets, next state bits and exclusive-pin violations for one present code."""
    values = dict(inputs)
    for ff in netlist.flip_flops:
        values[ff.q] = ones if code >> ff.bit & 1 else ones & ~ones
    env = evaluate(netlist, values, ones)
    next_bits, clash = [], ones & ~ones
    for ff in netlist.flip_flops:
        pins = {pin: env[net] for pin, net in ff.pins}
        next_bits.append(ff.storage.next_state(env[ff.q], pins, ones))
        clash = clash | ff.storage.forbidden(pins)
    return env, next_bits, clash


def _low_index(mask: int) -> int:
    return (mask & -mask).bit_length() - 1


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


def _input_classes(table: StateTable, netlist: Netlist) -> list[Cube]:
    read = netlist.nets_read()
    cubes = [Cube.from_string(r[1]) for r in table.rows]
    cubes += [Cube(care=1 << j, value=1 << j)
              for j, name in enumerate(table.inputs) if name in read]
    return partition(cubes)


def verify(netlist: Any, table: Any = None, *, safe_unused: Sequence[int] | None = None
           ) -> Verification:
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
        Codes from which the netlist must reach its reset code in one clock under every
        input (the ``unused="safe"`` promise); checked exactly.  For a design made with
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
        :func:`fsmsynth.netlist.checked_netlist`), or whose ports are not the table's.
        Any other netlist is modelled exactly, whatever the order of its gates and cells.
    """
    if table is None and hasattr(netlist, "netlist") and hasattr(netlist, "table"):
        design = netlist
        netlist, table = design.netlist, design.table
        if safe_unused is None and getattr(design, "unused", None) == "safe":
            safe_unused = design.encoding.unused_codes()
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
    classes = _input_classes(table, netlist)
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
        steps = [last_class]
        states = [node[0]]
        link = parent[node]
        while link is not None:
            node, cls = link
            steps.append(cls)
            states.append(node[0])
            link = parent[node]
        words = tuple(_bits(classes[c], len(table.inputs)) for c in reversed(steps))
        return words, tuple(reversed(states))

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

    failure_any = _exclusive_anywhere(netlist)
    if failure_any is not None:
        return Verification(False, len(parent), len(classes), failure_any)
    if safe_unused:
        unsafe = _unsafe_unused(netlist, safe_unused)
        if unsafe is not None:
            return Verification(False, len(parent), len(classes), unsafe)
    return Verification(True, len(parent), len(classes), None,
                        safe_unused=True if safe_unused else None)


def _bits(cube: Cube, n: int) -> str:
    return "".join("1" if cube.value >> i & 1 else "0" for i in range(n))


def _exclusive_name(netlist: Netlist) -> str:
    names = [f"{a}{ff.bit}/{b}{ff.bit}" for ff in netlist.flip_flops
             for a, b in ff.storage.exclusive]
    return ", ".join(names)


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


def _split_by_code(mask: int, next_bits: Sequence[int]) -> list[tuple[int, int]]:
    """Group the classes in ``mask`` by the next code the netlist computes for them."""
    groups = [(mask, 0)]
    for b, vec in enumerate(next_bits):
        split = []
        for group, code in groups:
            if group & vec:
                split.append((group & vec, code | 1 << b))
            if group & ~vec:
                split.append((group & ~vec, code))
        groups = split
    return sorted(groups, key=lambda g: _low_index(g[0]))


def _symbolic(netlist: Netlist) -> tuple[dict[str, Any], list[Any]]:
    """BDD variables for every state bit and input: nets and variable list."""
    variables = [bddvar("fs_v", i) for i in range(netlist.width + len(netlist.inputs))]
    values = {ff.q: variables[ff.bit] for ff in netlist.flip_flops}
    values.update({name: variables[netlist.width + j] for j, name in enumerate(netlist.inputs)})
    return values, variables


def _point(assignment: Mapping[Any, int], variables: Sequence[Any], netlist: Netlist) -> tuple[
        int, str]:
    code = sum(assignment.get(variables[b], 0) << b for b in range(netlist.width))
    word = "".join(str(assignment.get(variables[netlist.width + j], 0))
                   for j in range(len(netlist.inputs)))
    return code, word


def _exclusive_anywhere(netlist: Netlist) -> Counterexample | None:
    """Exclusive pins both 1 at any code and input at all (unused codes included)."""
    if not any(ff.storage.exclusive for ff in netlist.flip_flops):
        return None
    values, variables = _symbolic(netlist)
    env = evaluate(netlist, values, BDDONE)
    for ff in netlist.flip_flops:
        for a, b in ff.storage.exclusive:
            both = env[ff.pin_net(a)] & env[ff.pin_net(b)]
            if not both.is_zero():
                code, word = _point(both.satisfy_one(), variables, netlist)
                return Counterexample((word,), (), f"{a}{ff.bit}/{b}{ff.bit}", "not both 1",
                                      "both 1", start_code=code)
    return None


def _unsafe_unused(netlist: Netlist, codes: Sequence[int]) -> Counterexample | None:
    """An unused code and input from which the next code is not the reset code."""
    values, variables = _symbolic(netlist)
    env = evaluate(netlist, values, BDDONE)
    in_codes = BDDZERO
    for code in codes:
        term = BDDONE
        for b in range(netlist.width):
            term &= variables[b] if code >> b & 1 else ~variables[b]
        in_codes |= term
    for ff in netlist.flip_flops:
        pins = {pin: env[net] for pin, net in ff.pins}
        nxt = ff.storage.next_state(env[ff.q], pins, BDDONE)
        wrong = in_codes & (~nxt if ff.reset_value else nxt)
        if not wrong.is_zero():
            code, word = _point(wrong.satisfy_one(), variables, netlist)
            return Counterexample((word,), (), f"Q{ff.bit} after one clock", str(ff.reset_value),
                                  str(1 - ff.reset_value), start_code=code)
    return None


def simulate(netlist: Netlist, inputs: Sequence[str], start_code: int | None = None) -> list[
        tuple[int, str]]:
    """Run the netlist cycle by cycle.

    Parameters
    ----------
    inputs:
        One string per clock cycle with one ``0``/``1`` per input in declared order.
    start_code:
        The code to start in; by default the reset code.

    Returns
    -------
    list of (code, outputs)
        For each cycle, the present state code and the outputs (one ``0``/``1`` per output)
        seen before that cycle's clock edge.  Flip-flops behave as their Verilog cells do,
        also on pin combinations the storage kind forbids (an SR cell with S = R = 1 sets).

    Raises
    ------
    NetlistError
        As for :func:`verify`.
    """
    netlist = checked_netlist(netlist)
    code = netlist.reset_code if start_code is None else start_code
    trace = []
    for word in inputs:
        if len(word) != len(netlist.inputs) or set(word) - {"0", "1"}:
            raise OptionError(f"input word {word!r}: give one 0 or 1 per input")
        values = {name: int(ch) for name, ch in zip(netlist.inputs, word)}
        env, next_bits, _clash = _step(netlist, code, values, 1)
        trace.append((code, "".join(str(env[net]) for _p, net in netlist.outputs)))
        code = sum(bit << b for b, bit in enumerate(next_bits))
    return trace
