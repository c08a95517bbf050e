"""One netlist from the control machine's and the timer/counter blocks' netlists.

The control netlist reads the readings (``purge_done``) as inputs and drives the actions
(``purge_start``) as outputs; each block netlist the other way round.  Composed, the
readings and actions are internal nets carrying exactly those names (a gate's output net is
renamed to the signal, or a buffer drives the signal when the source is a flip-flop, an
input or a port's own net), the block's flip-flops follow the control's (state bits first),
and its internal nets are prefixed with its name: ``fs_purge_q0``, ``fs_purge_g_d1_p2``.
The ports are the spec's own inputs and outputs.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

from fsmsynth.base.names import RESERVED_PREFIX
from fsmsynth.stages.netlist import FlipFlop, Gate, Netlist, checked_netlist


def _renamed(netlist: Netlist, rename: Mapping[str, str]) -> Netlist:
    def r(net: str) -> str:
        return rename.get(net, net)

    return replace(
        netlist, inputs=tuple(r(n) for n in netlist.inputs),
        outputs=tuple((port, r(net)) for port, net in netlist.outputs),
        gates=tuple(replace(g, inputs=tuple(r(i) for i in g.inputs), output=r(g.output))
                    for g in netlist.gates),
        flip_flops=tuple(replace(ff, pins=tuple((p, r(n)) for p, n in ff.pins), q=r(ff.q))
                         for ff in netlist.flip_flops))


def _named_signals(netlist: Netlist, signals: Sequence[str], gate_prefix: str) -> Netlist:
    """``netlist`` with each output port in ``signals`` turned into an internal net of that
    name (and no longer a port)."""
    drivers = {g.output for g in netlist.gates}
    port_nets = {net for port, net in netlist.outputs if port not in signals}
    rename: dict[str, str] = {}
    buffers: list[Gate] = []
    for port, net in netlist.outputs:
        if port not in signals or net == port:
            continue
        if (net in drivers and net.startswith(RESERVED_PREFIX) and net not in rename
                and net not in port_nets):
            rename[net] = port
        else:
            buffers.append(Gate(name=f"{gate_prefix}g_{port}", kind="buf",
                                inputs=(rename.get(net, net),), output=port))
    done = _renamed(netlist, rename)
    return replace(done, gates=done.gates + tuple(buffers),
                   outputs=tuple((p, n) for p, n in done.outputs if p not in signals))


def _prefixed(netlist: Netlist, block: str, offset: int) -> Netlist:
    """A block's netlist with its own nets and cells prefixed and its bits moved up."""
    prefix = f"{RESERVED_PREFIX}{block}_"
    nets = {g.output for g in netlist.gates} | {ff.q for ff in netlist.flip_flops}
    rename = {n: prefix + n[len(RESERVED_PREFIX):] for n in nets if n.startswith(RESERVED_PREFIX)}
    for g in netlist.gates:
        for i in g.inputs:
            if i.startswith(RESERVED_PREFIX):
                rename.setdefault(i, prefix + i[len(RESERVED_PREFIX):])
    moved = _renamed(netlist, rename)
    return replace(moved,
                   gates=tuple(replace(g, name=prefix + g.name[len(RESERVED_PREFIX):])
                               for g in moved.gates),
                   flip_flops=tuple(replace(ff, name=prefix + ff.name[len(RESERVED_PREFIX):],
                                            bit=ff.bit + offset)
                                    for ff in moved.flip_flops))


def compose(control: Netlist, blocks: Sequence[tuple[str, Netlist]], inputs: Sequence[str],
            actions: Sequence[str], readings: Sequence[str]) -> Netlist:
    """The whole design: ``control`` (with ``readings`` among its inputs and ``actions``
    among its outputs) beside each named block netlist; ``inputs`` are the spec's own."""
    whole = _named_signals(control, actions, RESERVED_PREFIX)
    gates = list(whole.gates)
    flip_flops: list[FlipFlop] = list(whole.flip_flops)
    for name, block in blocks:
        placed = _prefixed(_named_signals(block, readings, RESERVED_PREFIX), name,
                           len(flip_flops))
        gates += placed.gates
        flip_flops += placed.flip_flops
    edge = control.flip_flops[0].edge if control.flip_flops else "rising"
    flip_flops = [replace(ff, edge=edge) for ff in flip_flops]
    composed = replace(whole, inputs=tuple(inputs), gates=tuple(gates),
                       flip_flops=tuple(flip_flops))
    return checked_netlist(composed).with_clocking(control.clocking)
