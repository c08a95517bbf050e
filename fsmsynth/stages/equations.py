"""Equations: a signal's sum of products, printable for people and convertible to sympy."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING

from fsmsynth.logic.cube import Cube

if TYPE_CHECKING:
    import sympy


def _term_key(term: Cube) -> tuple[tuple[int, bool], ...]:
    return tuple(term.literals())


@dataclass(frozen=True, slots=True)
class Equation:
    """``signal = sum of products`` over named variables.

    ``str(eq)`` gives ``"J1 = Q0 x' + Q1"``: literals side by side, ``'`` for a complement,
    ``+`` between products.  ``sympy.sympify(eq)`` (or :meth:`to_sympy`) gives the same
    function as a sympy Boolean expression.

    Attributes
    ----------
    signal:
        What the equation drives: a flip-flop pin (``J1``) or an output name.
    variables:
        Variable names, variable 0 first (``Q0``, ``Q1``, ..., then the inputs).
    terms:
        The product terms; ``()`` is the constant 0, a lone universe cube the constant 1.
    """

    signal: str
    variables: tuple[str, ...]
    terms: tuple[Cube, ...]

    @property
    def expression(self) -> str:
        """The right-hand side in sum-of-products notation."""
        if not self.terms:
            return "0"
        if any(t.care == 0 for t in self.terms):
            return "1"
        return " + ".join(
            " ".join(self.variables[v] + ("" if positive else "'") for v, positive in key)
            for key in sorted(map(_term_key, self.terms)))

    def __str__(self) -> str:
        return f"{self.signal} = {self.expression}"

    def to_sympy(self) -> sympy.logic.boolalg.Boolean:
        """The equation's right-hand side as a sympy Boolean expression."""
        import sympy  # loaded only when asked for (start-up time)
        syms = [sympy.Symbol(v) for v in self.variables]
        products = []
        for key in sorted(map(_term_key, self.terms)):
            products.append(sympy.And(*[syms[v] if positive else sympy.Not(syms[v])
                                        for v, positive in key]))
        return sympy.Or(*products)

    def _sympy_(self) -> sympy.logic.boolalg.Boolean:
        return self.to_sympy()

    def evaluate(self, values: Mapping[str, int]) -> int:
        """The value (0 or 1) under ``values`` (variable name -> 0/1)."""
        point = sum(1 << i for i, v in enumerate(self.variables) if values.get(v))
        return int(any(t.contains_point(point) for t in self.terms))

    @property
    def literal_count(self) -> int:
        """Literals in the right-hand side."""
        return sum(t.literal_count for t in self.terms)
