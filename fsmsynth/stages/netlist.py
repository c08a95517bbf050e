"""The netlist: gates and flip-flop cells joined by named nets.

Plain immutable data, kept apart from the writers that turn it into Verilog or JSON.
Gates are listed in an order where every gate's inputs are driven before it (flip-flop
outputs and primary inputs are driven from the start).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

from fsmsynth.base.errors import NetlistError
from fsmsynth.base.names import RESERVED_PREFIX, split_bit
from fsmsynth.logic.cost import normal_terms
from fsmsynth.logic.cover import Cover
from fsmsynth.logic.cube import Cube
from fsmsynth.model.clocking import Clocking
from fsmsynth.model.storage import Storage

EDGES = ("rising", "falling")
GATE_FUNCTIONS = ("not", "buf", "and", "or", "nand", "nor", "xor", "xnor", "const0", "const1",
                  "lut")
_ARITY = {"not": 1, "buf": 1, "const0": 0, "const1": 0}
"""Gates of fixed input count; the others take one or more (as Verilog's gate primitives)."""


@dataclass(frozen=True, slots=True)
class Gate:
    """A logic gate: ``output = kind(inputs)``.

    ``kind="lut"`` is any function of its inputs, given by ``table`` (bit ``m`` is the
    output when input ``i`` is ``m >> i & 1``): a look-up table, or a library cell that is
    no Verilog primitive.  ``cell`` names the target's cell the gate is (``"AOI21"``,
    ``"LUT4"``), empty for the two-level circuit.
    """

    name: str
    kind: str
    inputs: tuple[str, ...]
    output: str
    cell: str = ""
    table: int | None = None

    def __post_init__(self) -> None:
        if self.kind not in GATE_FUNCTIONS:
            raise NetlistError(f"gate {self.name!r}: unknown kind {self.kind!r}; use one of "
                               f"{', '.join(GATE_FUNCTIONS)}", cell=self.name)
        if (self.kind == "lut") != (self.table is not None):
            raise NetlistError(f"gate {self.name!r}: a truth table belongs to kind 'lut' "
                               "and to no other", cell=self.name)
        if self.table is not None and not 0 <= self.table < 1 << (1 << len(self.inputs)):
            raise NetlistError(f"gate {self.name!r}: truth table {self.table:#x} is wider "
                               f"than {len(self.inputs)} inputs allow", cell=self.name)
        arity = _ARITY.get(self.kind)
        if arity is not None and len(self.inputs) != arity:
            raise NetlistError(f"gate {self.name!r} ({self.kind}) has {len(self.inputs)} "
                               f"inputs; it takes exactly {arity}", cell=self.name)
        if arity is None and not self.inputs:
            raise NetlistError(f"gate {self.name!r} ({self.kind}) has no inputs; it takes one "
                               "or more", cell=self.name)


@dataclass(frozen=True, slots=True)
class FlipFlop:
    """An edge-triggered flip-flop holding state bit ``bit``.

    ``pins`` connects each data pin (storage pin name, ``"J"``) to a net.  The cell is clocked
    by the netlist's clock on its ``edge`` (``"rising"`` or ``"falling"``) and reset
    asynchronously (active high) to ``reset_value``: an asynchronous clear when that is 0,
    an asynchronous set when it is 1.
    """

    name: str
    storage: Storage
    bit: int
    pins: tuple[tuple[str, str], ...]
    q: str
    reset_value: int
    edge: str = "rising"

    def __post_init__(self) -> None:
        if self.edge not in EDGES:
            raise NetlistError(f"flip-flop {self.name!r}: clock edge {self.edge!r}; use "
                               f"{' or '.join(EDGES)}", cell=self.name)
        if self.reset_value not in (0, 1):
            raise NetlistError(f"flip-flop {self.name!r}: reset value {self.reset_value!r}; "
                               "use 0 or 1", cell=self.name)
        if sorted(p for p, _n in self.pins) != sorted(self.storage.pins):
            raise NetlistError(
                f"flip-flop {self.name!r} ({self.storage.title}) connects pins "
                f"{', '.join(p for p, _n in self.pins) or 'none'}; it needs exactly "
                f"{', '.join(self.storage.pins)}", cell=self.name)

    @property
    def reset_kind(self) -> str:
        """``"clear"`` or ``"set"``: what the asynchronous reset does to this bit."""
        return "set" if self.reset_value else "clear"

    def pin_net(self, pin: str) -> str:
        """The net on data pin ``pin``."""
        return dict(self.pins)[pin]


@dataclass(frozen=True, slots=True)
class Netlist:
    """A synchronous circuit: primary inputs, gates, flip-flops and output ports.

    Attributes
    ----------
    name:
        Module name.
    inputs:
        Primary input names; each is also the name of its net.
    outputs:
        ``(port, net)`` for every output, in declared order.
    gates:
        In an order where each gate's inputs are driven earlier.
    flip_flops:
        One per state bit, bit 0 first.
    clock, reset:
        Names of the clock and the reset port.
    reset_style, reset_active, enable:
        How the flip-flops reset (``"async"`` or ``"sync"``, active ``"high"`` or
        ``"low"``) and the clock-enable port that holds them while it is 0 (``None``: no
        enable); see :class:`~fsmsynth.model.clocking.Clocking`.
    """

    name: str
    inputs: tuple[str, ...]
    outputs: tuple[tuple[str, str], ...]
    gates: tuple[Gate, ...]
    flip_flops: tuple[FlipFlop, ...]
    clock: str = "clk"
    reset: str = "rst"
    reset_style: str = "async"
    reset_active: str = "high"
    enable: str | None = None

    @property
    def clocking(self) -> Clocking:
        """The clock, reset and enable conventions of the flip-flops."""
        return Clocking(clock=self.clock, reset=self.reset, reset_style=self.reset_style,
                        reset_active=self.reset_active, enable=self.enable)

    def with_clocking(self, clocking: Clocking) -> Netlist:
        """The same circuit with the conventions of ``clocking``."""
        return replace(self, clock=clocking.clock, reset=clocking.reset,
                       reset_style=clocking.reset_style, reset_active=clocking.reset_active,
                       enable=clocking.enable)

    @property
    def reset_code(self) -> int:
        """The state code the reset loads (bit b from flip-flop b)."""
        return sum(ff.reset_value << ff.bit for ff in self.flip_flops)

    @property
    def width(self) -> int:
        """Number of state bits."""
        return len(self.flip_flops)

    def nets_read(self) -> set[str]:
        """Every net some gate, flip-flop pin or output port reads."""
        read = {i for g in self.gates for i in g.inputs}
        read.update(net for ff in self.flip_flops for _pin, net in ff.pins)
        read.update(net for _port, net in self.outputs)
        return read

    def gate_counts(self) -> dict[str, int]:
        """Logic gates by kind (ties to constants are not gates)."""
        counts: dict[str, int] = {}
        for g in self.gates:
            if not g.kind.startswith("const"):
                counts[g.kind] = counts.get(g.kind, 0) + 1
        return counts


def checked_netlist(netlist: Netlist) -> Netlist:
    """The same circuit with its gates in evaluation order and its flip-flops by bit.

    A netlist built by hand or edited after synthesis may list gates and cells in any
    order; this puts them in the order the evaluators rely on, after checking that the
    circuit is a well-formed synchronous one.  Cost: O(gates + nets).

    Raises
    ------
    NetlistError
        Naming the net or cell at fault: a net with two drivers (inputs, flip-flop outputs,
        gate outputs, and output port names, which the Verilog writer declares as nets), a
        net read but driven by nothing, a combinational loop, state bits that are not
        0 .. k-1 once each, or flip-flops sampling on different clock edges.
    """
    driver: dict[str, str] = {}

    def drive(net: str, by: str) -> None:
        if net in driver:
            raise NetlistError(f"net {net!r} has two drivers: {driver[net]} and {by}", net=net)
        driver[net] = by

    for name in netlist.clocking.ports:
        drive(name, "the port " + repr(name))
    for name in netlist.inputs:
        drive(name, f"the input {name!r}")
    for port, net in netlist.outputs:
        if net != port:
            # The writers declare the port as a net of its own, wired to ``net``.
            drive(port, f"the output port {port!r} (wired to {net!r})")
    for ff in netlist.flip_flops:
        drive(ff.q, f"flip-flop {ff.name!r}")
    for g in netlist.gates:
        drive(g.output, f"gate {g.name!r}")
    bits = sorted(ff.bit for ff in netlist.flip_flops)
    if bits != list(range(len(bits))):
        raise NetlistError(f"flip-flops hold state bits {bits}: give bits 0 .. "
                           f"{len(bits) - 1}, one flip-flop each")
    edges = {ff.edge: ff.name for ff in netlist.flip_flops}
    if len(edges) > 1:
        raise NetlistError(
            f"flip-flops {edges['rising']!r} (rising edge) and {edges['falling']!r} (falling "
            "edge) sample on different clock edges: fsmsynth models one edge per machine; "
            "put every flip-flop on the same edge", cell=edges["falling"])
    readers = [(f"flip-flop {ff.name!r}", net) for ff in netlist.flip_flops
               for _pin, net in ff.pins]
    readers += [(f"output port {port!r}", net) for port, net in netlist.outputs]
    readers += [(f"gate {g.name!r}", net) for g in netlist.gates for net in g.inputs]
    for who, net in readers:
        if net not in driver:
            raise NetlistError(f"net {net!r}, read by {who}, is driven by nothing", net=net)
    by_output = {g.output: g for g in netlist.gates}
    order: list[Gate] = []
    state: dict[str, int] = {}  # 1 while on the current path, 2 once placed
    for root in netlist.gates:
        if state.get(root.output):
            continue
        stack = [(root, 0)]
        state[root.output] = 1
        while stack:
            gate, i = stack.pop()
            if i < len(gate.inputs):
                stack.append((gate, i + 1))
                source = by_output.get(gate.inputs[i])
                if source is None or state.get(source.output) == 2:
                    continue
                if state.get(source.output) == 1:
                    raise NetlistError(f"combinational loop through net {source.output!r} "
                                       f"(gate {source.name!r})", net=source.output,
                                       cell=source.name)
                state[source.output] = 1
                stack.append((source, 0))
            else:
                state[gate.output] = 2
                order.append(gate)
    return Netlist(name=netlist.name, inputs=netlist.inputs, outputs=netlist.outputs,
                   gates=tuple(order),
                   flip_flops=tuple(sorted(netlist.flip_flops, key=lambda ff: ff.bit)),
                   clock=netlist.clock, reset=netlist.reset)


def complement_net(name: str) -> str:
    """The internal net that carries the complement of input ``name``: ``fs_n_start`` for a
    1-bit input, ``fs_nv_mode_1`` for the bit ``mode[1]`` of a vector.

    One-to-one over every legal port name: the two kinds have prefixes neither of which
    starts the other, and a vector bit's index is the digits after the last underscore, so
    ``mode[1]`` and an input named ``mode_1`` get different nets."""
    bit = split_bit(name)
    if bit is None:
        return f"{RESERVED_PREFIX}n_{name}"
    return f"{RESERVED_PREFIX}nv_{bit[0]}_{bit[1]}"


def state_net(bit: int) -> str:
    """Net of state bit ``bit`` (flip-flop output)."""
    return f"{RESERVED_PREFIX}q{bit}"


def _plain(signal: str) -> str:
    """A signal as part of a net name: ``d0`` for the pin ``D0``, ``level_1`` for the vector
    bit ``level[1]``."""
    bit = split_bit(signal)
    text = signal if bit is None else f"{bit[0]}_{bit[1]}"
    return text.lower() if signal[:1].isupper() and signal[1:].isdigit() else text


def gate_name(net: str) -> str:
    """The gate driving ``net``, named after it: ``fs_g_d0_p2``, ``fs_g_fan``."""
    bit = split_bit(net)
    base = net if bit is None else f"{bit[0]}_{bit[1]}"
    return f"{RESERVED_PREFIX}g_{base.removeprefix(RESERVED_PREFIX)}"


def build_netlist(name: str, inputs: Sequence[str], outputs: Sequence[str], cover: Cover,
                  storages: Sequence[Storage], reset_code: int, edge: str = "rising") -> Netlist:
    """Build gates and flip-flops for a cover.

    Follows the structural rules of :mod:`fsmsynth.logic.cost`: one inverter per complemented
    variable, one AND gate per distinct product of two or more literals, one OR gate per
    distinct sum of two or more products, wires for single literals and single products.
    Nets say what they carry: ``fs_q1`` and ``fs_nq1`` a state bit and its complement,
    ``fs_n_start`` a complemented input, ``fs_d0_p2`` the second product of ``D0`` as the
    equations print it, ``fs_d0`` the sum driving pin ``D0``; each gate is named after its
    output (``fs_g_d0_p2``).

    Parameters
    ----------
    name, inputs, outputs:
        Module name and port names.
    cover:
        Terms of every flip-flop pin (named as in the equations, ``J0``) and every output.
    storages:
        Storage kind of each state bit, bit 0 first.
    reset_code:
        The code loaded by reset.
    edge:
        The clock edge every flip-flop samples on: ``"rising"`` or ``"falling"``.
    """
    k = len(storages)
    var_nets = [state_net(b) for b in range(k)] + list(inputs)
    inverted_nets = [f"{RESERVED_PREFIX}nq{b}" for b in range(k)] + [
        complement_net(i) for i in inputs]
    gates: list[Gate] = []

    def new_gate(kind: str, ins: tuple[str, ...], out: str) -> None:
        gates.append(Gate(name=gate_name(out), kind=kind, inputs=ins, output=out))

    normal = [normal_terms(t) for t in cover.terms]
    live = [t for t in normal if t != (Cube.universe(),)]
    inverted = sorted({v for terms in live for t in terms for v, pos in t.literals() if not pos})
    for v in inverted:
        new_gate("not", (var_nets[v],), inverted_nets[v])

    def literal_net(v: int, positive: bool) -> str:
        return var_nets[v] if positive else inverted_nets[v]

    # A product's net is named after the first equation that prints it and its place there
    # (fs_d0_p2: the second product of D0), so the netlist reads beside the equations.
    term_net: dict[Cube, str] = {}
    for signal, terms in zip(cover.names, normal):
        if terms == (Cube.universe(),):
            continue
        for k, t in enumerate(sorted(terms, key=lambda c: tuple(c.literals())), start=1):
            if t in term_net:
                continue
            lits = tuple(literal_net(v, p) for v, p in t.literals())
            if len(lits) == 1:
                term_net[t] = lits[0]
            else:
                term_net[t] = f"{RESERVED_PREFIX}{_plain(signal)}_p{k}"
                new_gate("and", lits, term_net[t])

    pin_names = {f"{pin}{b}": (b, pin) for b, s in enumerate(storages) for pin in s.pins}
    sum_net: dict[tuple[Cube, ...], str] = {}
    signal_net: dict[str, str] = {}
    for signal, terms in zip(cover.names, normal):
        own = (f"{RESERVED_PREFIX}{pin_names[signal][1].lower()}{pin_names[signal][0]}"
               if signal in pin_names else signal)
        if not terms or terms == (Cube.universe(),):
            new_gate("const1" if terms else "const0", (), own)
            signal_net[signal] = own
        elif len(terms) == 1:
            signal_net[signal] = term_net[terms[0]]
        elif terms in sum_net:
            signal_net[signal] = sum_net[terms]
        else:
            new_gate("or", tuple(term_net[t] for t in terms), own)
            sum_net[terms] = signal_net[signal] = own

    flip_flops = tuple(
        FlipFlop(name=f"{RESERVED_PREFIX}ff{b}", storage=s, bit=b,
                 pins=tuple((pin, signal_net[f"{pin}{b}"]) for pin in s.pins),
                 q=state_net(b), reset_value=reset_code >> b & 1, edge=edge)
        for b, s in enumerate(storages))
    nets = {g.output for g in gates} | set(inputs) | {ff.q for ff in flip_flops}
    taken: set[str] = set()
    for i, g in enumerate(gates):  # a gate's name may not be a net's (one Verilog scope)
        unique, n = g.name, 1
        while unique in nets or unique in taken:
            unique, n = f"{g.name}_{n}", n + 1
        taken.add(unique)
        if unique != g.name:
            gates[i] = replace(g, name=unique)
    return Netlist(name=name, inputs=tuple(inputs),
                   outputs=tuple((o, signal_net[o]) for o in outputs),
                   gates=tuple(gates), flip_flops=flip_flops)
