"""Timer and counter blocks as logic: excitation of their flip-flops, minimized, as gates.

Each block (:mod:`fsmsynth.model.timers`) is a register with a next-value function of its
bits and its action inputs: a timer is a down-counter with load (a start loads ``N - 1``,
otherwise it counts down to 0 and holds), a counter an up-counter with clear that holds at
its limit.  The next value is built as BDDs from the arithmetic (borrow and carry chains),
not from a list of values, so a 100,000-cycle timer (17 bits) costs what a 4-bit one does.
Values above the block's range never occur from reset: they are don't cares, or with
``unused="safe"`` they go to 0 at the next clock.  From the next value each bit's pins come
out of the storage kind's excitation table, as for state bits, and the readings
(``purge_done``, ``tries_ge_2``) are functions of the bits; all are minimized together by
:func:`fsmsynth.logic.cover.minimize_logic`.

For T flip-flops the result is the textbook counter: a down-counter toggles bit ``i`` when
every lower bit is 0, an up-counter when every lower bit is 1 (Mano & Ciletti, *Digital
Design*, 5th ed., section 6.4, synchronous counters; from memory).

References
----------
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from fsmsynth.base.choices import DEFAULT_STORAGES
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.language.timer_words import Reading, action_signal
from fsmsynth.logic import bdd
from fsmsynth.logic.cost import DEFAULT_WEIGHTS, Cost, CostWeights, cost_of, logic_shape
from fsmsynth.logic.cover import Cover, minimize_logic
from fsmsynth.logic.functions import Function, LogicFunctions
from fsmsynth.model.storage import STORAGES, Storage, storage_named
from fsmsynth.model.timers import Block, TimedMachine, Timer
from fsmsynth.stages.equations import Equation
from fsmsynth.stages.netlist import Netlist, build_netlist


@dataclass(frozen=True, slots=True)
class BlockLogic:
    """One timer or counter built: its storage, functions, cover, gates and cost.

    ``netlist`` stands alone: its inputs are the block's action signals, its outputs its
    readings, its flip-flops bits ``0 .. width-1`` (:func:`fsmsynth.stages.compose.compose`
    places it beside the control machine)."""

    block: Block
    storage: Storage
    functions: LogicFunctions
    cover: Cover
    netlist: Netlist
    cost: Cost

    @property
    def equations(self) -> dict[str, Equation]:
        """Each pin and reading, keyed ``purge.D0`` (pins) or by the reading's signal."""
        out = {}
        for name, terms in zip(self.cover.names, self.cover.terms):
            key = f"{self.block.name}.{name}" if name[:1].isupper() else name
            out[key] = Equation(signal=key, variables=self.cover.variables, terms=terms)
        return out


def block_values(block: Block, q: Sequence[Any], act: dict[str, Any]
                 ) -> tuple[list[Any], Any]:
    """The next value's bits (BDDs over ``q``, bit 0 first, and the actions) and the set of
    values in range, from the arithmetic alone."""
    w = len(q)
    if isinstance(block, Timer):
        zero = bdd.ONE
        dec = []
        for i in range(w):  # borrow chain: bit i flips when every lower bit is 0
            dec.append(q[i] ^ zero)
            zero &= ~q[i]
        start = act.get("start", bdd.ZERO)
        nxt = [(start & _bit(block.top, i)) | (~start & ~zero & dec[i]) for i in range(w)]
    else:
        carry = bdd.ONE
        inc = []
        for i in range(w):  # carry chain: bit i flips when every lower bit is 1
            inc.append(q[i] ^ carry)
            carry &= q[i]
        count, clear = act.get("count", bdd.ZERO), act.get("clear", bdd.ZERO)
        at_top = compare(q, "==", block.top)
        step = count & ~at_top
        nxt = [~clear & ((step & inc[i]) | (~step & q[i])) for i in range(w)]
    return nxt, compare(q, "<=", block.top)


def reading_bdd(block: Block, q: Sequence[Any], reading: Reading) -> Any:
    """A reading as a BDD over the block's bits."""
    if reading.op == "done":
        return compare(q, "==", 0 if isinstance(block, Timer) else block.top)
    return compare(q, reading.op, reading.value)


def compare(q: Sequence[Any], op: str, number: int) -> Any:
    """``value(q) op number`` as a BDD (MSB first: less-than where the first differing bit
    of ``number`` is 1)."""
    below, equal = bdd.ZERO, bdd.ONE
    if number >> len(q):
        below, equal = bdd.ONE, bdd.ZERO
    else:
        for i in reversed(range(len(q))):
            if number >> i & 1:
                below |= equal & ~q[i]
                equal &= q[i]
            else:
                equal &= ~q[i]
    return {"<": below, "<=": below | equal, "==": equal, "!=": ~equal,
            ">": ~(below | equal), ">=": ~below}[op]


def _bit(value: int, i: int) -> Any:
    return bdd.ONE if value >> i & 1 else bdd.ZERO


def block_functions(block: Block, readings: Sequence[Reading], actions: Sequence[str],
                    storage: Storage, unused: str = "dont-care") -> LogicFunctions:
    """Pin functions of every bit (``D0``, ``J1``, ...) and the readings, over the bits
    (``purge.Q0`` ...) and the action signals present (``purge_start``)."""
    w = block.width
    var = bdd.variables(w + len(actions), name="fs_k")
    q = var[:w]
    act = {a: var[w + i] for i, a in enumerate(actions)}
    nxt, care = block_values(block, q, act)
    if unused == "safe":
        nxt = [n & care for n in nxt]
        care = bdd.ONE
    functions = []
    for b in range(w):
        on: dict[str, Any] = {p: bdd.ZERO for p in storage.pins}
        off: dict[str, Any] = {p: bdd.ZERO for p in storage.pins}
        for present in (0, 1):
            for after in (0, 1):
                region = care & (q[b] if present else ~q[b]) & (nxt[b] if after else ~nxt[b])
                for pin, v in zip(storage.pins, storage.pin_values(present, after)):
                    if v == "1":
                        on[pin] |= region
                    elif v == "0":
                        off[pin] |= region
        functions += [Function(f"{pin}{b}", tuple(bdd.cubes_of(on[pin], var)),
                               tuple(bdd.cubes_of(off[pin], var))) for pin in storage.pins]
    for r in readings:
        f = reading_bdd(block, q, r)
        functions.append(Function(r.signal, tuple(bdd.cubes_of(care & f, var)),
                                  tuple(bdd.cubes_of(care & ~f, var))))
    names = tuple(f"{block.name}.Q{b}" for b in range(w)) + tuple(
        action_signal(block.name, a) for a in actions)
    return LogicFunctions(variables=names, functions=tuple(functions), exclusive=tuple(
        (f"{a}{b}", f"{c}{b}") for b in range(w) for a, c in storage.exclusive))


def block_logic(block: Block, readings: Sequence[Reading], actions: Sequence[str],
                storage: str | Storage, *, unused: str = "dont-care",
                weights: CostWeights = DEFAULT_WEIGHTS, logic: str = "heuristic") -> BlockLogic:
    """The block built with ``storage`` (one kind for every bit; ``"best"``, ``"per-bit"``
    or a mixture: the kind of the cheapest block)."""
    if isinstance(storage, Storage) or storage in STORAGES:
        kinds = [storage_named(storage)]
    else:
        kinds = [STORAGES[k] for k in DEFAULT_STORAGES if k in STORAGES]
    built = [_built(block, readings, actions, k, unused, weights, logic) for k in kinds]
    return min(built, key=lambda b: (b.cost.total, b.cost.gate_inputs))


def _built(block: Block, readings: Sequence[Reading], actions: Sequence[str], storage: Storage,
           unused: str, weights: CostWeights, logic: str) -> BlockLogic:
    functions = block_functions(block, readings, actions, storage, unused)
    cover = minimize_logic(functions, weights, logic)
    storages = (storage,) * block.width
    netlist = build_netlist(block.name, functions.variables[block.width:],
                            [r.signal for r in readings], cover, storages, 0)
    cost = cost_of(logic_shape(cover.terms), {storage.name: block.width}, weights)
    return BlockLogic(block=block, storage=storage, functions=functions, cover=cover,
                      netlist=netlist, cost=cost)


def total_cost(costs: Sequence[Cost]) -> Cost:
    """Costs of separate pieces of logic added up (no product is shared between them)."""
    gates: dict[str, int] = {}
    flip_flops: dict[str, int] = {}
    for c in costs:
        for k, v in c.gates.items():
            gates[k] = gates.get(k, 0) + v
        for k, v in c.flip_flops.items():
            flip_flops[k] = flip_flops.get(k, 0) + v
    first = costs[0]
    return replace(first, product_terms=sum(c.product_terms for c in costs),
                   literals=sum(c.literals for c in costs), gates=FrozenMap(gates),
                   gate_inputs=sum(c.gate_inputs for c in costs), flip_flops=FrozenMap(flip_flops),
                   total=sum(c.total for c in costs))


@dataclass(frozen=True, slots=True)
class TimedLogic:
    """How a timed machine was built (on :attr:`fsmsynth.flows.design.Design.timed`).

    Attributes
    ----------
    machine:
        The timed machine.
    choice:
        ``"counters"`` (control machine plus blocks) or ``"unrolled"`` (one plain table).
    blocks:
        The blocks built (empty when unrolled).
    control:
        The control machine's own netlist (readings as inputs, actions as outputs); ``None``
        when unrolled.
    alternatives:
        Total cost of each way that was built (``{"counters": 61.0, "unrolled": 140.0}``).
    """

    machine: TimedMachine
    choice: str
    blocks: tuple[BlockLogic, ...] = ()
    control: Netlist | None = None
    alternatives: Mapping[str, float] = field(default_factory=lambda: FrozenMap({}))

    def describe(self) -> list[str]:
        """Lines for a report: each block, its storage and cost, and the alternatives."""
        lines = []
        for b in self.blocks:
            lines.append(f"{b.block.describe()}; {b.block.width} {b.storage.name.upper()} "
                         f"flip-flops, cost {b.cost.total:g}")
        if self.choice == "unrolled":
            lines.append("timers and counters unrolled into states")
        if len(self.alternatives) > 1:
            lines.append("built both ways: " + ", ".join(
                f"{k} {v:g}" for k, v in self.alternatives.items()) + f"; chose {self.choice}")
        return lines
