"""Fitting a design into a product-term array: a shared AND plane feeding OR terms of at most
N products per output, each output registered in a D flip-flop or not.

The two-level covers go in as they are (one product term per cube, shared between outputs
in the AND plane).  An output of more than N products is split: N - 1 of them stay, and the
rest go to an extra output fed back into the array as one more product (and so on, which
costs an array pass of delay each time).  A flip-flop kind the array lacks is a D flip-flop
whose D is the kind's characteristic function of its pins, which become fed-back outputs.

This is how programmable array logic devices are fitted (common practice, no source); a
device's own fitter also assigns pins and macrocells, which is not done here.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from fsmsynth.base.names import RESERVED_PREFIX
from fsmsynth.logic.cover import Cover
from fsmsynth.logic.cube import Cube
from fsmsynth.model.storage import Storage
from fsmsynth.stages.netlist import Gate, state_net


@dataclass(frozen=True, slots=True)
class ArrayFit:
    """How a design fitted.

    Attributes
    ----------
    limit:
        Products per output the array allows.
    products:
        Distinct product terms in the AND plane (a one-literal product counts too).
    macrocells:
        Outputs used: the machine's outputs, one per flip-flop, fed-back signals and split
        parts.
    widest:
        Most products any signal needed before splitting.
    splits:
        ``(signal, extra outputs)`` for each signal split over extra outputs.
    """

    limit: int
    products: int
    macrocells: int
    widest: int
    splits: tuple[tuple[str, int], ...]

    @property
    def fits(self) -> bool:
        """Whether every signal fitted in one output without splitting."""
        return not self.splits

    def lines(self) -> list[str]:
        head = (f"product-term array: {self.products} product terms, {self.macrocells} "
                f"macrocells, at most {self.widest} products per signal (limit {self.limit})")
        if self.fits:
            return [head + ": fits"]
        return [head] + [f"  {signal} needs more than {self.limit} products: split over "
                         f"{extra} extra output{'s' if extra > 1 else ''} fed back"
                         for signal, extra in self.splits]


def fit_array(cover: Cover, storages: Sequence[Storage], limit: int, converted: Sequence[int],
              characteristic_sop: Callable[[Storage], tuple[Cube, ...]]
              ) -> tuple[ArrayFit, list[Gate], dict[str, str]]:
    """Gates of the array (ANDs of the plane, ORs of the outputs), the net of every signal,
    and the fit report.  ``converted`` are the bits built from D flip-flops."""
    width = len(storages)
    nets = [state_net(b) for b in range(width)] + list(cover.variables[width:])
    gates: list[Gate] = []
    inverted: dict[str, str] = {}
    plane: dict[tuple[str, ...], str] = {}
    signal_net: dict[str, str] = {}
    splits: list[tuple[str, int]] = []
    widest = 0
    macrocells = 0

    def gate(kind: str, ins: tuple[str, ...], out: str, cell: str) -> None:
        gates.append(Gate(f"{RESERVED_PREFIX}a{len(gates)}", kind, ins, out, cell=cell))

    def literal(net: str, positive: bool) -> str:
        if positive:
            return net
        if net not in inverted:
            inverted[net] = f"{RESERVED_PREFIX}an{len(inverted)}"
            gate("not", (net,), inverted[net], "")
        return inverted[net]

    def product(lits: tuple[str, ...]) -> str:
        if lits not in plane:
            if len(lits) == 1:
                plane[lits] = lits[0]
            else:
                plane[lits] = f"{RESERVED_PREFIX}ap{len(plane)}"
                gate("and", lits, plane[lits], "PT")
        return plane[lits]

    def build(signal: str, terms: list[tuple[str, ...]], depth: int = 0) -> str:
        nonlocal macrocells
        macrocells += 1
        out = f"{RESERVED_PREFIX}ao{macrocells}"
        if not terms or any(not t for t in terms):
            gate("const1" if terms else "const0", (), out, "")
            return out
        if len(terms) > limit:
            rest = build(signal, terms[limit - 1:], depth + 1)
            terms = terms[:limit - 1] + [(rest,)]
        ins = tuple(product(t) for t in terms)
        if len(ins) == 1:
            gate("buf", ins, out, "OR")
        else:
            gate("or", ins, out, "OR")
        return out

    def nets_of(terms: Sequence[Cube], var_nets: Sequence[str]) -> list[tuple[str, ...]]:
        return [tuple(literal(var_nets[v], p) for v, p in t.literals()) for t in terms]

    def place(signal: str, terms: Sequence[Cube], var_nets: Sequence[str]) -> str:
        nonlocal widest
        widest = max(widest, len(terms))
        before = macrocells
        net = build(signal, nets_of(terms, var_nets))
        if macrocells - before > 1:
            splits.append((signal, macrocells - before - 1))
        return net

    for name, terms in zip(cover.names, cover.terms):
        bit = _bit_of(name, storages)
        if bit is not None and bit in converted:
            continue
        signal_net[name] = place(name, terms, nets)
    for b in converted:
        storage = storages[b]
        pins = [place(f"{p}{b}", cover.of(f"{p}{b}"), nets) for p in storage.pins]
        signal_net[f"D{b}"] = place(f"D{b}", characteristic_sop(storage), [*pins, nets[b]])
    fit = ArrayFit(limit=limit, products=sum(1 for lits in plane if lits),
                   macrocells=macrocells, widest=widest, splits=tuple(splits))
    return fit, gates, signal_net


def _bit_of(name: str, storages: Sequence[Storage]) -> int | None:
    for b, s in enumerate(storages):
        if name in {f"{p}{b}" for p in s.pins}:
            return b
    return None
