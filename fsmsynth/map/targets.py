"""Targets: what a design is built from, and what each part costs there.

A :class:`Target` is one of

* ``"two-level"``: the AND/OR/NOT circuit of unlimited fan-in that ``cost.total`` has always
  counted (the default);
* a **cell library** (``kind="cells"``): combinational :class:`Cell` s, each a Boolean
  function of its pins with an area and a delay, plus flip-flop cells by storage kind;
* **look-up tables** (``kind="lut"``): any function of at most ``lut_size`` inputs is one
  LUT, with D flip-flops (with clock enable), as in FPGAs;
* a **product-term array** (``kind="pterms"``): a shared AND plane feeding OR terms of at
  most ``products`` products per output, each output registered (D) or not.

Built in: ``"nand2"``, ``"gates2"``, ``"cmos"``, ``"lut4"``, ``"lut6"`` and ``"pterms:N"``.
Their areas (in NAND2 equivalents) and delays are **illustrative**, of the usual relative
sizes of static CMOS gates (common practice, no source): use a library file with your
vendor's figures (:func:`fsmsynth.formats.cells_toml.read_cells`) for real numbers.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from fsmsynth.base.errors import OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.base.names import name_problem
from fsmsynth.language.guards import GuardError, compile_guard
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.sop import minimum_terms
from fsmsynth.map.expr import Expr
from fsmsynth.map.factor import factor

KINDS = ("two-level", "cells", "lut", "pterms")
PRIMITIVES = {"not": 1, "buf": 1, "and": 0, "or": 0, "nand": 0, "nor": 0, "xor": 0,
              "xnor": 0}
"""Verilog gate primitives a cell can be written as (0: any number of inputs)."""


@dataclass(frozen=True, slots=True)
class Cell:
    """A combinational cell: output ``y = function(pins)``.

    ``table`` is the truth table (bit ``m`` is the output when pin ``i`` is ``m >> i & 1``);
    ``primitive`` the Verilog gate primitive it is, if any (``"nand"``), else ``None``.
    """

    name: str
    pins: tuple[str, ...]
    function: str
    area: float
    delay: float
    table: int
    primitive: str | None

    @property
    def sop(self) -> tuple[Cube, ...]:
        """A minimum sum of products of the cell's function (variable ``i`` is pin ``i``)."""
        return _minimum_sop(self.table, len(self.pins))

    def patterns(self) -> tuple[tuple[Expr, bool], ...]:
        """Factored forms the mapper matches: ``(f, False)`` and ``(f', True)`` (the
        complement's form, inverted), over pin indices."""
        n = len(self.pins)
        positive = factor(_minimum_sop(self.table, n))
        negative = factor(_minimum_sop(~self.table & ((1 << (1 << n)) - 1), n))
        return ((positive, False), (negative, True))


def _minimum_sop(table: int, n: int) -> tuple[Cube, ...]:
    return minimum_terms(n, (m for m in range(1 << n) if table >> m & 1))


def truth_table(function: str, pins: Sequence[str]) -> int:
    """The truth table of ``function`` over ``pins`` (bit ``m``: pin ``i`` = ``m >> i & 1``).

    Raises
    ------
    GuardError
        For a function that does not parse, naming the column.
    """
    var = bdd.variables(len(pins), "fs_pin")
    f = compile_guard(function, dict.fromkeys(pins, 1), {p: [v] for p, v in zip(pins, var)},
                      role="pin")
    table = 0
    for m in range(1 << len(pins)):
        point = {v: m >> i & 1 for i, v in enumerate(var)}
        if f.restrict(point).is_one():
            table |= 1 << m
    return table


def _primitive(table: int, n: int) -> str | None:
    full = (1 << (1 << n)) - 1
    if n == 1:
        return {0b10: "buf", 0b01: "not"}.get(table)
    parity = sum(1 << m for m in range(1 << n) if bin(m).count("1") % 2)
    known = {1 << (full.bit_length() - 1): "and", full & ~1: "or", parity: "xor"}
    for t, kind in known.items():
        if table == t:
            return kind
        if table == full & ~t:
            return {"and": "nand", "or": "nor", "xor": "xnor"}[kind]
    return None


def make_cell(name: str, pins: Sequence[str], function: str, area: float,
              delay: float = 1.0) -> Cell:
    """A :class:`Cell`, its function checked and tabulated."""
    if not pins or len(pins) > 6:
        raise OptionError(f"cell {name!r}: give 1 to 6 pins, not {len(pins)}")
    for pin in pins:
        problem = name_problem(pin)
        if problem:
            raise OptionError(f"cell {name!r}: pin name {pin!r} {problem}")
    if len(set(pins)) != len(pins):
        raise OptionError(f"cell {name!r}: a pin is named twice")
    for what, value in (("area", area), ("delay", delay)):
        if isinstance(value, bool) or not isinstance(value, (int, float)) or value < 0:
            raise OptionError(f"cell {name!r}: {what} must be a number >= 0, not {value!r}")
    if not isinstance(function, str):
        raise OptionError(f"cell {name!r}: function must be text, not {function!r}")
    try:
        table = truth_table(function, tuple(pins))
    except GuardError as exc:
        raise OptionError(f"cell {name!r}: function {function!r}: {exc.message}") from None
    return Cell(name=name, pins=tuple(pins), function=function, area=float(area),
                delay=float(delay), table=table, primitive=_primitive(table, len(pins)))


@dataclass(frozen=True, slots=True)
class Target:
    """What a design is built from; see the module docstring.

    Attributes
    ----------
    flip_flops:
        Area of a flip-flop of each storage kind the target has (``"d"``, ``"jk"``, ...);
        a kind it lacks is built from a D flip-flop plus logic.
    lut_size, lut_area:
        For LUT targets: inputs per LUT and the area counted per LUT.
    products:
        For product-term arrays: products per output.
    illustrative:
        Whether the figures are placeholders (the built-in targets) or a vendor's.
    """

    name: str
    kind: str
    cells: tuple[Cell, ...] = ()
    flip_flops: Mapping[str, float] = field(default_factory=lambda: FrozenMap({}))
    lut_size: int = 0
    lut_area: float = 1.0
    products: int = 0
    illustrative: bool = True

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise OptionError(f"target kind {self.kind!r}: use one of {', '.join(KINDS)}")
        if self.kind == "cells":
            tables = {(len(c.pins), c.table) for c in self.cells}
            if (1, 0b01) not in tables or (2, 0b0111) not in tables:
                raise OptionError(f"cell library {self.name!r} needs an inverter and a "
                                  "2-input NAND (any names): every circuit is built from them")
        if self.kind != "two-level" and "d" not in self.flip_flops:
            raise OptionError(f"target {self.name!r} needs a D flip-flop: the other storage "
                              "kinds are built from it where the target lacks them")

    def has_storage(self, kind: str) -> bool:
        return self.kind == "two-level" or kind in self.flip_flops


def _cells(spec: Sequence[tuple[str, Sequence[str], str, float, float]]) -> tuple[Cell, ...]:
    return tuple(make_cell(n, p, f, a, d) for n, p, f, a, d in spec)


_INV = ("INV", ("a",), "~a", 0.67, 0.6)
_NAND2 = ("NAND2", ("a", "b"), "~(a & b)", 1.0, 1.0)
_FLOPS_CELLS = FrozenMap({"d": 4.67})


def _built_in(name: str) -> Target:
    if name == "two-level":
        return Target("two-level", "two-level")
    if name == "nand2":
        return Target("nand2", "cells", _cells([_INV, _NAND2]), _FLOPS_CELLS)
    if name == "gates2":
        return Target("gates2", "cells", _cells([
            _INV, _NAND2, ("NOR2", ("a", "b"), "~(a | b)", 1.0, 1.1),
            ("AND2", ("a", "b"), "a & b", 1.33, 1.4), ("OR2", ("a", "b"), "a | b", 1.33, 1.5),
            ("XOR2", ("a", "b"), "a ^ b", 2.33, 1.8),
            ("XNOR2", ("a", "b"), "~(a ^ b)", 2.33, 1.8)]), _FLOPS_CELLS)
    if name == "cmos":
        return Target("cmos", "cells", _cells([
            _INV, _NAND2, ("NAND3", ("a", "b", "c"), "~(a & b & c)", 1.33, 1.3),
            ("NAND4", ("a", "b", "c", "d"), "~(a & b & c & d)", 1.67, 1.6),
            ("NOR2", ("a", "b"), "~(a | b)", 1.0, 1.1),
            ("NOR3", ("a", "b", "c"), "~(a | b | c)", 1.67, 1.5),
            ("NOR4", ("a", "b", "c", "d"), "~(a | b | c | d)", 2.0, 2.0),
            ("AOI21", ("a", "b", "c"), "~(a & b | c)", 1.33, 1.3),
            ("AOI22", ("a", "b", "c", "d"), "~(a & b | c & d)", 1.67, 1.5),
            ("OAI21", ("a", "b", "c"), "~((a | b) & c)", 1.33, 1.3),
            ("OAI22", ("a", "b", "c", "d"), "~((a | b) & (c | d))", 1.67, 1.5),
            ("XOR2", ("a", "b"), "a ^ b", 2.33, 1.8),
            ("MUX2", ("a", "b", "s"), "a & ~s | b & s", 2.33, 1.7)]),
            FrozenMap({"d": 4.67, "jk": 6.0}))
    if name in ("lut4", "lut6"):
        return Target(name, "lut", flip_flops=FrozenMap({"d": 1.0, "de": 1.0}),
                      lut_size=int(name[3]))
    if name.startswith("pterms:"):
        count = name.split(":", 1)[1]
        if not count.isdigit() or int(count) < 1:
            raise OptionError(f"target {name!r}: give the products per output, pterms:8")
        return Target(name, "pterms", flip_flops=FrozenMap({"d": 1.0}), products=int(count))
    raise OptionError(f"unknown target {name!r}: use two-level, nand2, gates2, cmos, lut4, "
                      "lut6, pterms:N, or a cell library file (.toml)")


BUILT_IN = ("two-level", "nand2", "gates2", "cmos", "lut4", "lut6", "pterms:N")


def target_named(name: str | Target) -> Target:
    """A built-in target by name (``"pterms:8"`` for 8 products per output), or ``name``
    itself when it is a :class:`Target` already."""
    if isinstance(name, Target):
        return name
    if not isinstance(name, str):
        raise OptionError(f"target {name!r}: give a name or a Target")
    return _built_in(name)


__all__ = ["BUILT_IN", "Cell", "GuardError", "Target", "make_cell", "target_named",
           "truth_table"]
