"""What a design costs: gates, gate inputs and flip-flops, and one number to rank designs by.

The structural rules are those the netlist builder follows, so the cost of a set of covers
equals the cost counted on the netlist built from them:

* a product term of two or more literals is one AND gate, built once however many
  functions use it; a one-literal term is a wire;
* a function of two or more terms is one OR gate (two functions with the same terms share
  it); one term is a wire; a constant is a tie to 0 or 1;
* each variable used complemented anywhere gets one inverter.

The ranking number is the gate-input count (every gate input, inverters included, weighs 1)
plus a weight per flip-flop.  Gate-input count is the usual measure of two-level cost
(Mano, M. M. and Kime, C. R., *Logic and Computer Design Fundamentals*, 4th ed., 2008,
section 2.5, "gate-input cost", from memory).  The flip-flop weights are illustrative:
replace them with figures from your cell library.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

from fsmsynth.base.errors import OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic.cube import CUBE_ORDER, Cube

GATE_KINDS = ("not", "and", "or")


def finite_non_negative(value: object) -> bool:
    """Whether ``value`` is a real number (not a bool) that is finite and >= 0."""
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value) and value >= 0)


@dataclass(frozen=True, slots=True)
class CostWeights:
    """Weights of the ranking number ``Cost.total``.

    Attributes
    ----------
    gate:
        Weight of each gate, by kind (``not``, ``and``, ``or``).
    gate_input:
        Weight of each gate input.
    flip_flop:
        Weight of each flip-flop, by storage kind name; kinds not listed use
        ``default_flip_flop``.
    """

    gate: Mapping[str, float] = field(
        default_factory=lambda: FrozenMap({"not": 0.0, "and": 0.0, "or": 0.0}))
    gate_input: float = 1.0
    flip_flop: Mapping[str, float] = field(default_factory=lambda: FrozenMap({}))
    default_flip_flop: float = 6.0

    def __post_init__(self) -> None:
        named = [("gate_input", self.gate_input), ("default_flip_flop", self.default_flip_flop)]
        for group, values in (("gate", self.gate), ("flip_flop", self.flip_flop)):
            if not isinstance(values, Mapping):
                raise OptionError(f"cost weights: {group} must map names to numbers, "
                                  f"not {values!r}")
            named += [(f"{group}[{k!r}]", v) for k, v in values.items()]
        for where, value in named:
            if not finite_non_negative(value):
                raise OptionError(f"cost weight {where} must be a finite number >= 0, "
                                  f"not {value!r}")

    def flip_flop_weight(self, kind: str) -> float:
        """Weight of one flip-flop of ``kind``."""
        return float(self.flip_flop.get(kind, self.default_flip_flop))


DEFAULT_WEIGHTS = CostWeights()


@dataclass(frozen=True, slots=True)
class Cost:
    """Cost summary of a design.

    Attributes
    ----------
    product_terms:
        Distinct product terms with at least one literal (shared terms counted once).
    literals:
        Literals in those terms.
    gates:
        Gate count by kind (``not``, ``and``, ``or``).
    gate_inputs:
        Inputs of all those gates.
    flip_flops:
        Flip-flop count by storage kind.
    total:
        The ranking number (see the module docstring); on a target, its area: cells (or
        LUTs, or macrocells) plus flip-flops.
    target, cells, logic_area, flip_flop_area, depth, storage:
        On a target (:mod:`fsmsynth.map.targets`): its name, cells by name, the areas, the
        most cells on a path, and per storage kind the flip-flops, what they are built
        from and the area of their conversion logic.  The other fields keep the two-level
        figures of the same covers.
    """

    product_terms: int
    literals: int
    gates: Mapping[str, int]
    gate_inputs: int
    flip_flops: Mapping[str, int]
    total: float
    target: str = "two-level"
    cells: Mapping[str, int] = field(default_factory=lambda: FrozenMap({}))
    logic_area: float = 0.0
    flip_flop_area: float = 0.0
    depth: int = 0
    storage: Mapping[str, Mapping[str, object]] = field(default_factory=lambda: FrozenMap({}))

    def as_dict(self) -> dict[str, object]:
        """Plain data for JSON (with the target's figures when there is a target)."""
        data: dict[str, object] = {
            "product_terms": self.product_terms,
            "literals": self.literals,
            "gates": dict(self.gates),
            "gate_inputs": self.gate_inputs,
            "flip_flops": dict(self.flip_flops),
            "total": self.total,
        }
        if self.target != "two-level":
            data.update(target=self.target, cells=dict(self.cells),
                        logic_area=self.logic_area, flip_flop_area=self.flip_flop_area,
                        depth=self.depth,
                        storage={k: dict(v) for k, v in self.storage.items()})
        return data


@dataclass(frozen=True, slots=True)
class LogicShape:
    """The gates a set of covers needs, before any weighting."""

    products: tuple[Cube, ...]
    inverted: tuple[int, ...]
    or_inputs: tuple[tuple[Cube, ...], ...]

    @property
    def gate_counts(self) -> dict[str, int]:
        """Gates by kind."""
        return {
            "not": len(self.inverted),
            "and": sum(1 for p in self.products if p.literal_count >= 2),
            "or": len(self.or_inputs),
        }

    @property
    def gate_inputs(self) -> int:
        """Inputs of every gate, inverters included."""
        return (len(self.inverted)
                + sum(p.literal_count for p in self.products if p.literal_count >= 2)
                + sum(len(o) for o in self.or_inputs))


def normal_terms(terms: Iterable[Cube]) -> tuple[Cube, ...]:
    """A function's terms as the netlist builds them: sorted, no repeats; ``()`` is 0 and a
    lone universe cube is 1."""
    unique = sorted(set(terms), key=CUBE_ORDER)
    if any(t.care == 0 for t in unique):
        return (Cube.universe(),)
    return tuple(unique)


_ONE = (Cube.universe(),)


def logic_shape(covers: Sequence[Sequence[Cube]], *, normalized: bool = False) -> LogicShape:
    """The gates needed to build these covers under the rules of the module docstring.

    ``normalized=True`` promises every cover is already in :func:`normal_terms` form (the
    cover search calls this in its inner loop).
    """
    products: dict[Cube, None] = {}
    inverted = 0
    ors: dict[tuple[Cube, ...], None] = {}
    for raw in covers:
        terms = tuple(raw) if normalized else normal_terms(raw)
        if terms == _ONE:
            continue
        for t in terms:
            products[t] = None
            inverted |= t.care & ~t.value
        if len(terms) >= 2:
            ors[terms] = None
    bits = tuple(v for v in range(inverted.bit_length()) if inverted >> v & 1)
    return LogicShape(products=tuple(products), inverted=bits, or_inputs=tuple(ors))


def weigh(gates: Mapping[str, int], gate_inputs: int, weights: CostWeights) -> float:
    """The logic part of the ranking number."""
    return (sum(weights.gate.get(k, 0.0) * n for k, n in gates.items())
            + weights.gate_input * gate_inputs)


def cost_of(shape: LogicShape, flip_flops: Mapping[str, int],
            weights: CostWeights = DEFAULT_WEIGHTS) -> Cost:
    """The full cost of logic of this shape plus these flip-flops."""
    gates = shape.gate_counts
    total = weigh(gates, shape.gate_inputs, weights) + sum(
        weights.flip_flop_weight(kind) * n for kind, n in flip_flops.items())
    return Cost(
        product_terms=sum(1 for p in shape.products if p.literal_count >= 1),
        literals=sum(p.literal_count for p in shape.products),
        gates=FrozenMap(gates),
        gate_inputs=shape.gate_inputs,
        flip_flops=FrozenMap(dict(sorted(flip_flops.items()))),
        total=total,
    )
