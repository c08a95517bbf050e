"""Factored Boolean expressions: literals, constants, AND and OR of sub-expressions.

An :class:`Expr` is immutable and hashable; variables are indices into a list of names
(the cover's variables).  Printing uses the equations' notation (``Q0 (x + y')``), and
:meth:`Expr.to_sympy` gives the same function as a sympy expression.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    pass



@dataclass(frozen=True, slots=True)
class Expr:
    """``kind`` is ``"lit"`` (``var``, ``positive``), ``"const"`` (``positive`` is the
    value), ``"and"`` or ``"or"`` (``args``)."""

    kind: str
    var: int = -1
    positive: bool = True
    args: tuple[Expr, ...] = ()

    @staticmethod
    def lit(var: int, positive: bool = True) -> Expr:
        return Expr("lit", var, positive)

    @staticmethod
    def const(value: bool) -> Expr:
        return Expr("const", positive=bool(value))

    @staticmethod
    def and_(args: Sequence[Expr]) -> Expr:
        """The AND of ``args``, flattened; one argument is itself, none is 1."""
        flat: list[Expr] = []
        for a in args:
            if a.kind == "const":
                if not a.positive:
                    return Expr.const(False)
                continue
            flat.extend(a.args if a.kind == "and" else (a,))
        if not flat:
            return Expr.const(True)
        return flat[0] if len(flat) == 1 else Expr("and", args=tuple(flat))

    @staticmethod
    def or_(args: Sequence[Expr]) -> Expr:
        """The OR of ``args``, flattened; one argument is itself, none is 0."""
        flat: list[Expr] = []
        for a in args:
            if a.kind == "const":
                if a.positive:
                    return Expr.const(True)
                continue
            flat.extend(a.args if a.kind == "or" else (a,))
        if not flat:
            return Expr.const(False)
        return flat[0] if len(flat) == 1 else Expr("or", args=tuple(flat))

    @property
    def literals(self) -> int:
        """Literal count: the usual size measure of a factored form."""
        if self.kind == "lit":
            return 1
        return sum(a.literals for a in self.args)

    def evaluate(self, values: Sequence[Any], ones: Any) -> Any:
        """The function on bit-vector ints (``ones`` all set) or BDDs (``ones`` = 1)."""
        if self.kind == "lit":
            v = values[self.var]
            return v if self.positive else ones & ~v
        if self.kind == "const":
            return ones if self.positive else ones & ~ones
        parts = [a.evaluate(values, ones) for a in self.args]
        result = parts[0]
        for p in parts[1:]:
            result = result & p if self.kind == "and" else result | p
        return result

    def text(self, names: Sequence[str]) -> str:
        """``Q0 (x + y')``: products side by side, ``+`` between terms, ``'`` a complement."""
        if self.kind == "lit":
            return names[self.var] + ("" if self.positive else "'")
        if self.kind == "const":
            return "1" if self.positive else "0"
        if self.kind == "or":
            return " + ".join(a.text(names) for a in self.args)
        return " ".join(f"({a.text(names)})" if a.kind == "or" else a.text(names)
                        for a in self.args)

    def to_sympy(self, names: Sequence[str]) -> Any:
        """The same function as a sympy Boolean expression over symbols named ``names``."""
        import sympy  # loaded only when asked for (start-up time)
        if self.kind == "lit":
            s = sympy.Symbol(names[self.var])
            return s if self.positive else sympy.Not(s)
        if self.kind == "const":
            return sympy.true if self.positive else sympy.false
        parts = [a.to_sympy(names) for a in self.args]
        return sympy.And(*parts) if self.kind == "and" else sympy.Or(*parts)
