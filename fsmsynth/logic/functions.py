"""Incompletely specified Boolean functions: what the minimizers take.

Plain functions over named variables, with no notion of machines: the excitation stage
builds them from a state table, and anything else may build them from its own functions.
"""

from __future__ import annotations

from dataclasses import dataclass

from fsmsynth.logic.cube import Cube


@dataclass(frozen=True, slots=True)
class Function:
    """One incompletely specified single-output function: where it must be 1 and where 0."""

    name: str
    on: tuple[Cube, ...]
    off: tuple[Cube, ...]


@dataclass(frozen=True, slots=True)
class LogicFunctions:
    """Several functions over shared variables.

    Attributes
    ----------
    variables:
        Variable names, variable 0 first (for a machine: ``Q0 .. Q<k-1>``, then the inputs).
    functions:
        The functions (for a machine: flip-flop data inputs, then the outputs).
    exclusive:
        Pairs of function names that must never be 1 at the same point (``S0``/``R0``).
    """

    variables: tuple[str, ...]
    functions: tuple[Function, ...]
    exclusive: tuple[tuple[str, str], ...] = ()

    def function(self, name: str) -> Function:
        """The function called ``name``."""
        for f in self.functions:
            if f.name == name:
                return f
        raise KeyError(name)
