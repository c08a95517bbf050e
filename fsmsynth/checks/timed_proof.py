"""Proof that a composed netlist realizes a timed machine (:mod:`fsmsynth.model.timers`).

A 100,000-cycle timer has a reachable state space 100,000 deep, so no walk from reset,
explicit or by BDD images one clock at a time, ends in seconds.  The proof is
compositional instead (assume-guarantee reasoning):

1. **Control.** The netlist is cut at the readings (``purge_done`` becomes a free input)
   and what drives the control flip-flops and the outputs is proven against the control
   machine by :func:`fsmsynth.checks.verify.verify`, for *every* sequence of readings,
   possible or not.
2. **Blocks.** Each timer or counter is cut at its actions (``purge_start`` free); its
   next value and readings are compared with the arithmetic of
   :func:`fsmsynth.stages.counters.block_values` as BDDs over its bits and actions, on every
   value in range (0 after reset, and closed under every action, so this is an inductive
   invariant of the block).
3. The whole is the same composition on both sides, so 1 and 2 prove it from reset.

The cut is sound but conservative: a netlist that misbehaves only on readings the timers
can never produce fails step 1.  Whenever a step fails, the machine is unrolled
(:func:`fsmsynth.stages.unroll.unroll`) and the whole netlist is verified against that
table, which gives the shortest input sequence from reset that shows a real difference, or
proves there is none; past :data:`fsmsynth.stages.unroll.UNROLL_LIMIT` states the local
failure is reported.

References
----------
Clarke, E. M., Long, D. E., McMillan, K. L., "Compositional model checking", *Proc. LICS*,
1989 (proving a composition from its parts under assumptions about their environment).
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from typing import Any

from fsmsynth.base.errors import NetlistError, TableError
from fsmsynth.checks.invariants import InvariantCheck, check_invariants
from fsmsynth.checks.proof import Counterexample, Verification
from fsmsynth.checks.simulate import evaluate
from fsmsynth.checks.verify import verify
from fsmsynth.logic import bdd
from fsmsynth.model.timers import TimedMachine
from fsmsynth.stages.counters import block_values, reading_bdd
from fsmsynth.stages.netlist import Netlist, checked_netlist
from fsmsynth.stages.unroll import unroll


def cut(netlist: Netlist, *, inputs: Sequence[str], bits: Sequence[int],
        outputs: Sequence[str]) -> Netlist:
    """The part of ``netlist`` that drives flip-flops ``bits`` (renumbered from 0) and the
    nets ``outputs`` (as ports of the same name), with ``inputs`` as its only inputs.

    Raises
    ------
    NetlistError
        When that part reads a net outside it (the parts are not separate).
    """
    keep = [ff for ff in netlist.flip_flops if ff.bit in set(bits)]
    by_output = {g.output: g for g in netlist.gates}
    port_net = dict(netlist.outputs)
    sources = set(inputs) | {ff.q for ff in keep}
    needed: list[str] = [n for ff in keep for _p, n in ff.pins]
    needed += [port_net.get(o, o) for o in outputs]
    used: set[str] = set()
    while needed:
        net = needed.pop()
        if net in sources or net in used:
            continue
        gate = by_output.get(net)
        if gate is None:
            raise NetlistError(f"net {net!r} crosses from one part of the design to another "
                               "other than through a reading or an action", net=net)
        used.add(net)
        needed.extend(gate.inputs)
    order = {ff.bit: i for i, ff in enumerate(sorted(keep, key=lambda f: f.bit))}
    part = replace(netlist, inputs=tuple(inputs),
                   outputs=tuple((o, port_net.get(o, o)) for o in outputs),
                   gates=tuple(g for g in netlist.gates if g.output in used),
                   flip_flops=tuple(replace(ff, bit=order[ff.bit]) for ff in keep))
    return checked_netlist(part).with_clocking(netlist.clocking)


def verify_timed(netlist: Netlist, machine: TimedMachine, *, safe: bool = False
                 ) -> Verification:
    """Prove ``netlist`` realizes ``machine`` from reset (see the module docstring).

    ``safe``: the blocks must also take every value above their range to 0 in one clock."""
    try:
        result = verify(control_part(netlist, machine), machine.control)
        offset = netlist.width - sum(machine.widths)
        for block in machine.blocks:
            own = [(s, a) for s, b, a in machine.action_signals() if b == block.name]
            reads = [r for r in machine.readings if r.block == block.name]
            part = cut(netlist, inputs=[s for s, _a in own],
                       bits=range(offset, offset + block.width),
                       outputs=[r.signal for r in reads])
            problem = _block_problem(part, machine, block.name, own, safe)
            if problem:
                return _exact(netlist, machine, problem)
            offset += block.width
    except NetlistError as exc:
        return _exact(netlist, machine, exc.args[0])
    if not result:
        return _exact(netlist, machine, result.summary())
    blocks = ", ".join(b.describe() for b in machine.blocks)
    return replace(result, note=f"control proven for any readings; {blocks} proven on their "
                        "arithmetic (BDDs)")


def control_part(netlist: Netlist, machine: TimedMachine) -> Netlist:
    """The part of ``netlist`` that is ``machine``'s control machine: its flip-flops come
    first, the readings are its inputs beside the spec's, the actions its outputs."""
    return cut(netlist, inputs=[*machine.inputs, *(r.signal for r in machine.readings)],
               bits=range(netlist.width - sum(machine.widths)),
               outputs=[*machine.outputs, *(s for s, _b, _a in machine.action_signals())])


def _block_problem(part: Netlist, machine: TimedMachine, name: str,
                   actions: Sequence[tuple[str, str]], safe: bool) -> str | None:
    """What is wrong with block ``name``'s part (``actions``: its ``(signal, action)``
    inputs), or ``None``."""
    block = machine.block(name)
    var = bdd.variables(block.width + len(actions), name="fs_v")
    q = var[:block.width]
    act = {a: var[block.width + i] for i, (_s, a) in enumerate(actions)}
    values: dict[str, Any] = {s: var[block.width + i] for i, (s, _a) in enumerate(actions)}
    values.update({ff.q: q[ff.bit] for ff in part.flip_flops})
    env = evaluate(part, values, bdd.ONE)
    want, care = block_values(block, q, act)
    if safe:
        want, care = [w & care for w in want], bdd.ONE
    for ff in part.flip_flops:
        pins = {pin: env[net] for pin, net in ff.pins}
        got = ff.storage.next_state(env[ff.q], pins, bdd.ONE)
        clash = ff.storage.forbidden(pins) & care
        if not clash.is_zero():
            return f"{name}: bit {ff.bit} gets {'/'.join(ff.storage.pins)} both 1"
        wrong = (got ^ want[ff.bit]) & care
        if not wrong.is_zero():
            return f"{name}: bit {ff.bit} goes wrong from value {_value(wrong, q)}"
    for r in machine.readings:
        if r.block == name:
            wrong = (env[dict(part.outputs)[r.signal]] ^ reading_bdd(block, q, r)) & care
            if not wrong.is_zero():
                return f"{name}: {r.signal} is wrong at value {_value(wrong, q)}"
    return None


def _value(points: Any, q: Sequence[Any]) -> int:
    point = points.satisfy_one() or {}
    return sum(point.get(v, 0) << i for i, v in enumerate(q))


def _exact(netlist: Netlist, machine: TimedMachine, local: str) -> Verification:
    """The whole netlist against the unrolled table (a real, shortest counterexample)."""
    try:
        table = unroll(machine)
    except TableError:
        return Verification(equivalent=False, product_states=0, input_classes=0,
                            counterexample=Counterexample(
                                inputs=(), states=(), signal="(part)", expected="as specified",
                                actual=local), note="too large to unroll for a trace")
    result = verify(netlist, table)
    return replace(result, note="by the unrolled table")


INVARIANT_UNROLL_LIMIT = 1500
"""Invariants of a timed machine are proven exactly on its unrolled table up to this many
states (an explicit walk); beyond, on the control machine with free readings."""


def check_timed_invariants(machine: TimedMachine, netlist: Netlist | None = None
                           ) -> InvariantCheck:
    """See :func:`_check_timed_invariants`; a broken invariant is named as written."""
    kept = _check_timed_invariants(machine, netlist)
    if kept.violation is None or len(machine.written) != len(kept.invariants):
        return kept
    text = machine.written[kept.invariants.index(kept.violation.invariant)]
    return replace(kept, invariants=machine.written,
                   violation=replace(kept.violation, invariant=text))


def _check_timed_invariants(machine: TimedMachine, netlist: Netlist | None = None
                            ) -> InvariantCheck:
    """Prove the control machine's invariants (which may read ``purge.done``, the actions
    and ``tries >= 2``) on the timed machine, or on ``netlist`` that realizes it.

    Exact on the unrolled table (readings and actions kept as outputs) up to
    :data:`INVARIANT_UNROLL_LIMIT` states; beyond, on the control machine with the readings
    taken as free inputs, which is sound (an invariant proven so holds) but may report a
    violation that needs readings the timers never give (the summary says so)."""
    control = machine.control
    if not control.invariants:
        return InvariantCheck((), 0, "table" if netlist is None else "netlist")
    readings = [r.signal for r in machine.readings]
    actions = [a for a, _b, _x in machine.action_signals()]
    try:
        table = unroll(machine, signals=True, limit=INVARIANT_UNROLL_LIMIT)
    except TableError:
        if netlist is None:
            return check_invariants(control)
        return check_invariants(control, control_part(netlist, machine))
    if netlist is None or len(table.outputs) > len(machine.outputs) + len(readings) + len(
            actions):
        # Invariants that test states are proven on the unrolled table (the netlist has no
        # net that says "in state purge"; it is proven to be that table's machine).
        return check_invariants(table)
    view = replace(netlist, outputs=netlist.outputs + tuple(
        (s, s) for s in [*readings, *actions]))
    return check_invariants(table, view)
