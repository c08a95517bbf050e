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
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace
from functools import reduce
from typing import Any, TypeVar

from pyeda.boolalg.bdd import BDDONE

from fsmsynth.errors import NetlistError, OptionError
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube, partition_within
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.logic.sat import Solver
from fsmsynth.netlist import FlipFlop, Netlist, checked_netlist
from fsmsynth.regions import state_regions
from fsmsynth.table import StateTable

LOCAL_ABOVE = 64
"""Above this many input classes (the table's rows split on every input the netlist reads),
the product walk compares each node symbolically instead (see :func:`_walk_symbolic`)."""


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
    symbolic: bool = False
    """Whether the walk compared each node on BDDs (many input classes) rather than over
    input classes of the whole table; ``input_classes`` is then 0."""

    def __bool__(self) -> bool:
        return self.equivalent

    def summary(self) -> str:
        """A line for reports."""
        if self.equivalent:
            inputs = ("inputs compared symbolically" if self.symbolic
                      else f"{self.input_classes} input classes")
            text = (f"verified: netlist matches the table from reset "
                    f"({self.product_states} product states, {inputs})")
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
        if g.table is not None:
            env[g.output] = _table_eval(g.table, args, ones)
        else:
            env[g.output] = _GATE_EVAL[g.kind](args, ones)
    return env


def _table_eval(table: int, args: Sequence[Any], ones: Any) -> Any:
    """A truth table applied to ``args`` (Shannon expansion on the last input first)."""
    if not args:
        return ones if table & 1 else ones & ~ones
    half = 1 << (len(args) - 1)
    low = _table_eval(table & ((1 << half) - 1), args[:-1], ones)
    high = _table_eval(table >> half, args[:-1], ones)
    last = args[-1]
    return (last & high) | (ones & ~last & low)


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
        :func:`fsmsynth.netlist.checked_netlist`), or whose ports are not the table's.
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
    exclusive-pin clashes are compared with the state's own regions (:mod:`fsmsynth.regions`).
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


def step_symbolic(netlist: Netlist, code: int, inputs: Mapping[str, Any]
                  ) -> tuple[dict[str, Any], list[Any]]:
    """Every net and each next-state bit as BDDs over the inputs, in state ``code``."""
    env, nexts, _clash = _step(netlist, code, inputs, BDDONE)
    return env, nexts


def split_by_code(points: Any, next_bits: Sequence[Any]) -> list[tuple[Any, int]]:
    """``points`` (a BDD over the inputs) split by the next code the bits ``next_bits``
    compute there: ``(part, code)`` for each non-empty part, by code."""
    groups = [(points, 0)]
    for b, vec in enumerate(next_bits):
        split = []
        for group, next_code in groups:
            high, low = group & vec, group & ~vec
            if not high.is_zero():
                split.append((high, next_code | 1 << b))
            if not low.is_zero():
                split.append((low, next_code))
        groups = split
    return sorted(groups, key=lambda g: g[1])


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


class _Clauses:
    """A netlist as clauses for a SAT solver (Tseitin 1968): one variable per net.

    Questions about every code and input at once ("can S and R both be 1 anywhere?") are
    answered by PicoSAT (bundled with pyeda; :mod:`fsmsynth.logic.sat`) on this encoding,
    whose size is the netlist's; a BDD over every state bit and every input can instead
    grow exponentially (one-hot logic, for one).  Variables ``1 .. width`` are the state
    bits, then the inputs.
    """

    def __init__(self, netlist: Netlist) -> None:
        self.netlist = netlist
        self.count = netlist.width + len(netlist.inputs)
        self.var = {ff.q: ff.bit + 1 for ff in netlist.flip_flops}
        self.var.update({name: netlist.width + j + 1 for j, name in enumerate(netlist.inputs)})
        self.clauses: list[tuple[int, ...]] = []
        for g in netlist.gates:
            ins = [self.var[i] for i in g.inputs]
            self.var[g.output] = (self._table(g.table, ins) if g.table is not None
                                  else self._gate(g.kind, ins))
        self._solver = Solver()
        self._sent = 0

    def __enter__(self) -> _Clauses:
        return self

    def __exit__(self, *exc: object) -> None:
        self._solver.close()

    def fresh(self) -> int:
        self.count += 1
        return self.count

    def conj(self, lits: Sequence[int]) -> int:
        """A variable equal to the AND of ``lits`` (an empty AND is true)."""
        out = self.fresh()
        self.clauses += [(-out, lit) for lit in lits]
        self.clauses.append((out, *(-lit for lit in lits)))
        return out

    def disj(self, lits: Sequence[int]) -> int:
        """A variable equal to the OR of ``lits`` (an empty OR is false)."""
        return -self.conj([-lit for lit in lits])

    def _xor(self, a: int, b: int) -> int:
        out = self.fresh()
        self.clauses += [(-out, a, b), (-out, -a, -b), (out, -a, b), (out, a, -b)]
        return out

    def _table(self, table: int, ins: list[int]) -> int:
        """A truth table as the OR of its minterms."""
        minterms = [self.conj([lit if m >> i & 1 else -lit for i, lit in enumerate(ins)])
                    for m in range(1 << len(ins)) if table >> m & 1]
        return self.disj(minterms)

    def _gate(self, kind: str, ins: list[int]) -> int:
        if kind in ("not", "buf"):
            return -ins[0] if kind == "not" else ins[0]
        if kind in ("const0", "const1"):
            return self.conj([]) if kind == "const1" else -self.conj([])
        if kind in ("and", "nand"):
            out = self.conj(ins)
        elif kind in ("or", "nor"):
            out = self.disj(ins)
        else:
            out = ins[0]
            for lit in ins[1:]:
                out = self._xor(out, lit)
        return -out if kind in ("nand", "nor", "xnor") else out

    def next_state(self, ff: FlipFlop) -> int:
        """A variable equal to the flip-flop's next state (its cell model, as simulated)."""
        pins = {pin: self.var[net] for pin, net in ff.pins}
        q = self.var[ff.q]
        terms = []
        for values, present, nxt in ff.storage.characteristic:
            if ff.storage.forbidden_next if nxt is None else nxt:
                lits = [q if present else -q]
                lits += [pins[p] if v == "1" else -pins[p] for p, v in zip(ff.storage.pins, values)]
                terms.append(self.conj(lits))
        return self.disj(terms)

    def solve(self, *units: int) -> tuple[int, str] | None:
        """(code, input word) of a point where every literal of ``units`` holds, or None."""
        self._solver.add(self.clauses[self._sent:])
        self._sent = len(self.clauses)
        netlist = self.netlist
        found = self._solver.solve(units, netlist.width + len(netlist.inputs))
        if found is None:
            return None
        true = {lit for lit in found if lit > 0}
        code = sum(1 << b for b in range(netlist.width) if b + 1 in true)
        word = "".join("1" if netlist.width + j + 1 in true else "0"
                       for j in range(len(netlist.inputs)))
        return code, word


def _exclusive_anywhere(netlist: Netlist) -> Counterexample | None:
    """Exclusive pins both 1 at any code and input at all (unused codes included)."""
    if not any(ff.storage.exclusive for ff in netlist.flip_flops):
        return None
    with _Clauses(netlist) as cnf:
        for ff in netlist.flip_flops:
            for a, b in ff.storage.exclusive:
                found = cnf.solve(cnf.var[ff.pin_net(a)], cnf.var[ff.pin_net(b)])
                if found is not None:
                    return Counterexample((found[1],), (), f"{a}{ff.bit}/{b}{ff.bit}",
                                          "not both 1", "both 1", start_code=found[0])
    return None


def _unsafe_unused(netlist: Netlist, codes: Sequence[int] | Sequence[Cube]
                   ) -> Counterexample | None:
    """An unused code and input from which the next code is not the reset code."""
    with _Clauses(netlist) as cnf:
        terms = []
        for code in codes:
            cube = code if isinstance(code, Cube) else Cube.minterm(code, netlist.width)
            terms.append(cnf.conj([v + 1 if positive else -(v + 1)
                                   for v, positive in cube.literals()]))
        unused = cnf.disj(terms)
        for ff in netlist.flip_flops:
            nxt = cnf.next_state(ff)
            found = cnf.solve(unused, -nxt if ff.reset_value else nxt)
            if found is not None:
                return Counterexample((found[1],), (), f"Q{ff.bit} after one clock",
                                      str(ff.reset_value), str(1 - ff.reset_value),
                                      start_code=found[0])
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
