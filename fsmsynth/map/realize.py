"""A design's covers and flip-flops built on a target: the mapped netlist and what it costs.

The covers are factored (:mod:`fsmsynth.map.factor`); a flip-flop kind the target lacks
becomes a D flip-flop whose D input is the kind's characteristic function of its own pins
and its present state (``D = J Q' + K' Q`` for a JK), so that conversion logic is mapped
with the rest and counted; then the logic is decomposed into the subject graph and mapped
onto cells (:mod:`fsmsynth.map.cells`) or LUTs (:mod:`fsmsynth.map.luts`), or the covers are
fitted into a product-term array (:mod:`fsmsynth.map.pterms`).  The caller verifies the
mapped netlist against the table again: nothing here is assumed correct.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.base.names import RESERVED_PREFIX
from fsmsynth.logic.cover import Cover
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.sop import minimum_terms
from fsmsynth.map import cells as cellmap
from fsmsynth.map.expr import Expr
from fsmsynth.map.factor import factor
from fsmsynth.map.luts import map_luts
from fsmsynth.map.network import Network, plain_network, restructured
from fsmsynth.map.pterms import ArrayFit, fit_array
from fsmsynth.map.subject import SubjectGraph
from fsmsynth.map.targets import Target
from fsmsynth.model.storage import STORAGES, Storage
from fsmsynth.stages.netlist import FlipFlop, Gate, Netlist, state_net

D = STORAGES["d"]


@dataclass(frozen=True, slots=True)
class MappedDesign:
    """What a design became on a target.

    Attributes
    ----------
    target:
        The target's name.
    netlist:
        The mapped netlist (cells as gates, converted flip-flops as D flip-flops).
    cells:
        Cell (or LUT, product term, macrocell) counts by name.
    logic_area, flip_flop_area:
        Area of the combinational cells and of the flip-flops.
    depth:
        Most cells (LUTs, array passes) on a path from a flip-flop or input to a flip-flop
        or output.
    storage:
        Per storage kind asked for: ``{"flip_flops": n, "built_from": "d" or the kind
        itself, "flip_flop_area": a, "conversion_area": a}``; conversion area is the extra
        logic area that building it from a D flip-flop costs on this target.
    fit:
        For a product-term array, how the outputs fitted (``None`` otherwise).
    """

    target: str
    netlist: Netlist
    cells: Mapping[str, int]
    logic_area: float
    flip_flop_area: float
    depth: int
    storage: Mapping[str, Mapping[str, object]]
    fit: ArrayFit | None = None
    cell_delays: Mapping[str, float] = FrozenMap({})
    """Delay of each cell used, in the target's units (a LUT or an array pass counts 1)."""

    @property
    def area(self) -> float:
        return self.logic_area + self.flip_flop_area


def characteristic(storage: Storage) -> Expr:
    """Next state as a factored form over the storage's pins then ``Q`` (variable
    ``len(pins)``); forbidden pin combinations are don't cares."""
    return factor(characteristic_sop(storage))


def characteristic_sop(storage: Storage) -> tuple[Cube, ...]:
    """The next state of ``storage`` as a minimum sum of products over its pins then ``Q``
    (a D flip-flop fed this is the storage kind)."""
    n = len(storage.pins) + 1
    on, dc = [], []
    for m in range(1 << n):  # bit i of m: pin i, then Q
        pins = {p: m >> i & 1 for i, p in enumerate(storage.pins)}
        if storage.forbidden(pins) & 1:
            dc.append(m)
        elif storage.next_state(m >> (n - 1) & 1, pins, 1) & 1:
            on.append(m)
    return minimum_terms(n, on, dc)


def _bits(storages: Sequence[Storage], target: Target) -> list[tuple[int, Storage, bool]]:
    """Per state bit: (bit, the kind built, whether it is converted from D)."""
    return [(b, s if target.has_storage(s.name) else D, not target.has_storage(s.name))
            for b, s in enumerate(storages)]


def _graph(network: Network, cover: Cover, storages: Sequence[Storage],
           outputs: Sequence[str], bits: Sequence[tuple[int, Storage, bool]],
           convert: bool) -> SubjectGraph:
    graph = SubjectGraph()
    leaves = [graph.input(v) for v in cover.variables]
    for _name, terms in network.nodes:
        leaves.append(graph.expression(factor(terms), leaves))
    nodes = {name: leaves[network.n_base + i] for name, i in network.signals}
    for b, storage in enumerate(storages):
        converted = bits[b][2]
        if converted and convert:
            pins = [nodes[f"{p}{b}"] for p in storage.pins]
            graph.roots[f"D{b}"] = graph.expression(characteristic(storage), [*pins, leaves[b]])
        else:
            for p in storage.pins:
                graph.roots[f"{p}{b}"] = nodes[f"{p}{b}"]
    for o in outputs:
        graph.roots[o] = nodes[o]
    return graph


def map_design(name: str, inputs: Sequence[str], outputs: Sequence[str], cover: Cover,
               storages: Sequence[Storage], reset_code: int, target: Target,
               goal: str = "area", edge: str = "rising") -> MappedDesign:
    """Build the design on ``target`` (a cell library, LUTs or a product-term array).

    For cells and LUTs both the functions as factored one by one and the network after
    common-cube extraction and resubstitution (:mod:`fsmsynth.map.network`) are mapped,
    and the cheaper is kept (by area, or by depth then area with ``goal="delay"``)."""
    bits = _bits(storages, target)
    if target.kind == "pterms":
        return _on_array(name, inputs, outputs, cover, storages, reset_code, target, bits,
                         edge)
    network, (gates, nets, counts, area) = _cheapest(name, inputs, outputs, cover, storages,
                                                     target, goal, bits)
    storage_report = _storage_report(network, cover, storages, outputs, bits, target, goal,
                                     area)
    flip_flops = _flip_flops(storages, bits, nets, reset_code, edge)
    netlist = Netlist(name=name, inputs=tuple(inputs),
                      outputs=tuple((o, nets[o]) for o in outputs), gates=tuple(gates),
                      flip_flops=flip_flops)
    ff_area = sum(target.flip_flops[ff.storage.name] for ff in flip_flops)
    delays = {c.name: c.delay for c in target.cells if c.name in counts}
    delays.update({name: 1.0 for name in counts if name.startswith("LUT")})
    return MappedDesign(target.name, netlist, FrozenMap(dict(sorted(counts.items()))), area,
                    ff_area, _depth(netlist), FrozenMap(storage_report),
                    cell_delays=FrozenMap(dict(sorted(delays.items()))))


def mapped_area(inputs: Sequence[str], outputs: Sequence[str], cover: Cover,
                storages: Sequence[Storage], target: Target, goal: str = "area") -> float:
    """The area :func:`map_design` gives (logic and flip-flops), without building the
    netlist or the storage report: what the encoding searches score a candidate by."""
    if target.kind == "pterms":
        return map_design("area", inputs, outputs, cover, storages, 0, target, goal).area
    bits = _bits(storages, target)
    ff_area = sum(target.flip_flops[built.name] for _b, built, _c in bits)
    return _cheapest("area", inputs, outputs, cover, storages, target, goal, bits)[1][3] + ff_area


def _cheapest(name: str, inputs: Sequence[str], outputs: Sequence[str], cover: Cover,
              storages: Sequence[Storage], target: Target, goal: str,
              bits: Sequence[tuple[int, Storage, bool]]) -> tuple[
                  Network, tuple[list[Gate], dict[str, str], dict[str, int], float]]:
    """The plain and the restructured network mapped, and the cheaper kept: the network and
    its gates, root nets, cell counts and logic area."""
    n = len(cover.variables)
    options = [plain_network(cover.names, cover.terms, n),
               restructured(cover.names, cover.terms, n)]
    best: tuple[tuple[float, ...], Network, tuple[list[Gate], dict[str, str],
                                                   dict[str, int], float]] | None = None
    for network in options:
        graph = _graph(network, cover, storages, outputs, bits, convert=True)
        covered = _cover(graph, cover, len(storages), target, goal)
        area = round(covered[3], 9)
        if goal == "area" and best is not None and area > best[0][0]:
            continue  # dearer: its depth cannot make it the choice
        depth = _depth(Netlist(name=name, inputs=tuple(inputs), outputs=(),
                               gates=tuple(covered[0]), flip_flops=()), covered[1].values())
        key = (area, depth) if goal == "area" else (depth, area)
        if best is None or key < best[0]:
            best = (key, network, covered)
    assert best is not None
    return best[1], best[2]


def _cover(graph: SubjectGraph, cover: Cover, width: int, target: Target, goal: str
           ) -> tuple[list[Gate], dict[str, str], dict[str, int], float]:
    """Gates covering every root, the net of each root, cell counts and logic area."""
    var_nets = [state_net(b) for b in range(width)] + list(cover.variables[width:])
    net_of_input = dict(zip(cover.variables, var_nets))
    gates: list[Gate] = []
    made: dict[int, str] = {}
    counts: dict[str, int] = {}
    area = 0.0

    def base(n: int) -> str | None:
        node = graph.nodes[n]
        if node[0] == "in":
            return net_of_input[str(node[1])]
        if node[0] == "const":
            if n not in made:
                made[n] = f"{RESERVED_PREFIX}m{n}"
                gates.append(Gate(f"{RESERVED_PREFIX}u{len(gates)}",
                                  "const1" if node[1] else "const0", (), made[n]))
            return made[n]
        return made.get(n)

    if target.kind == "lut":
        luts = {lut.node: lut for lut in map_luts(graph, target.lut_size, goal)}
        for n in sorted(luts):
            lut = luts[n]
            ins = tuple(base(leaf) or made[leaf] for leaf in lut.leaves)
            made[n] = f"{RESERVED_PREFIX}m{n}"
            cell = f"LUT{target.lut_size}"
            gates.append(Gate(f"{RESERVED_PREFIX}u{len(gates)}", "lut", ins, made[n],
                              cell=cell, table=lut.table))
            counts[cell] = counts.get(cell, 0) + 1
            area += target.lut_area
    else:
        choice = cellmap.cover(graph, target.cells, goal)

        def build(n: int) -> str:
            known = base(n)
            if known is not None:
                return known
            nonlocal area
            pick = choice[n]
            ins = tuple(build(leaf) for leaf in pick.leaves)
            made[n] = f"{RESERVED_PREFIX}m{n}"
            cell = pick.cell
            if cell.primitive is not None:
                gate = Gate(f"{RESERVED_PREFIX}u{len(gates)}", cell.primitive, ins, made[n],
                            cell=cell.name)
            else:
                gate = Gate(f"{RESERVED_PREFIX}u{len(gates)}", "lut", ins, made[n],
                            cell=cell.name, table=cell.table)
            gates.append(gate)
            counts[cell.name] = counts.get(cell.name, 0) + 1
            area += cell.area
            return made[n]

        for root in graph.roots.values():
            build(root)
    nets = {signal: base(n) or made[n] for signal, n in graph.roots.items()}
    return gates, nets, counts, area


def _flip_flops(storages: Sequence[Storage], bits: Sequence[tuple[int, Storage, bool]],
                nets: Mapping[str, str], reset_code: int, edge: str) -> tuple[FlipFlop, ...]:
    result = []
    for b, built, converted in bits:
        pins = tuple((p, nets[f"D{b}" if converted else f"{p}{b}"]) for p in built.pins)
        result.append(FlipFlop(name=f"{RESERVED_PREFIX}ff{b}", storage=built, bit=b, pins=pins,
                               q=state_net(b), reset_value=reset_code >> b & 1, edge=edge))
    assert len(result) == len(storages)
    return tuple(result)


def _storage_report(network: Network, cover: Cover, storages: Sequence[Storage],
                    outputs: Sequence[str], bits: Sequence[tuple[int, Storage, bool]],
                    target: Target, goal: str, area: float) -> dict[str, dict[str, object]]:
    """Per storage kind: flip-flops, what they are built from, and their areas.  The
    conversion area is this design's logic area minus that of the same logic mapped with
    the lacking kinds' pins as plain outputs (no characteristic function on top)."""
    converted = any(c for _b, _s, c in bits)
    conversion = 0.0
    if converted:
        plain = _graph(network, cover, storages, outputs, bits, convert=False)
        plain_area = _cover(plain, cover, len(storages), target, goal)[3]
        conversion = round(max(0.0, area - plain_area), 4)
    report: dict[str, dict[str, object]] = {}
    converted_bits = sum(1 for _b, _s, c in bits if c)
    for b, storage in enumerate(storages):
        entry = report.setdefault(storage.name, {
            "flip_flops": 0, "built_from": bits[b][1].name, "flip_flop_area": 0.0,
            "conversion_area": 0.0})
        entry["flip_flops"] = int(entry["flip_flops"]) + 1  # type: ignore[call-overload]
    for kind, entry in report.items():
        n = int(entry["flip_flops"])  # type: ignore[call-overload]
        built = str(entry["built_from"])
        entry["flip_flop_area"] = round(n * target.flip_flops[built], 4)
        if built != kind and converted_bits:
            entry["conversion_area"] = round(conversion * n / converted_bits, 4)
    return report


def _depth(netlist: Netlist, ends: Iterable[str] | None = None) -> int:
    """Most gates on a path to an output or flip-flop pin (or to the nets ``ends``)."""
    level: dict[str, int] = {}
    for g in netlist.gates:
        level[g.output] = 0 if g.kind.startswith("const") else 1 + max(
            (level.get(i, 0) for i in g.inputs), default=0)
    if ends is None:
        ends = [net for _p, net in netlist.outputs]
        ends += [net for ff in netlist.flip_flops for _p, net in ff.pins]
    return max((level.get(n, 0) for n in ends), default=0)


def _on_array(name: str, inputs: Sequence[str], outputs: Sequence[str], cover: Cover,
              storages: Sequence[Storage], reset_code: int, target: Target,
              bits: Sequence[tuple[int, Storage, bool]], edge: str) -> MappedDesign:
    fit, gates, nets = fit_array(cover, storages, target.products,
                                 [b for b, _s, c in bits if c], characteristic_sop)
    flip_flops = _flip_flops(storages, bits, nets, reset_code, edge)
    netlist = Netlist(name=name, inputs=tuple(inputs),
                      outputs=tuple((o, nets[o]) for o in outputs), gates=tuple(gates),
                      flip_flops=flip_flops)
    counts = {"product terms": fit.products, "macrocells": fit.macrocells}
    report: dict[str, dict[str, object]] = {}
    for b, storage in enumerate(storages):
        entry = report.setdefault(storage.name, {
            "flip_flops": 0, "built_from": bits[b][1].name, "flip_flop_area": 0.0,
            "conversion_area": 0.0})
        entry["flip_flops"] = int(entry["flip_flops"]) + 1  # type: ignore[call-overload]
        entry["flip_flop_area"] = float(entry["flip_flop_area"]) + 1.0  # type: ignore[arg-type]
        if bits[b][2]:
            entry["conversion_area"] = float(entry["conversion_area"]) + len(  # type: ignore[arg-type]
                storage.pins)
    # Area of an array design: its macrocells (each output, fed-back signal and split
    # part uses one; registered ones hold the flip-flops), the device's resource that runs out.
    return MappedDesign(target.name, netlist, FrozenMap(counts), float(fit.macrocells - len(
        storages)), float(len(storages)), _depth(netlist), FrozenMap(report), fit,
        FrozenMap({"PT": 1.0, "OR": 0.0}))
