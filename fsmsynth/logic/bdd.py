"""Sets of input points as binary decision diagrams, for machines with many inputs.

Where the rows of a table distinguish too many input classes to list them, the stages work
on each state's own rows, with the set of points a row covers as a BDD: union, intersection,
emptiness and equality then cost a walk of two graphs, never ``2**inputs``.  pyeda's BDDs are
reduced and ordered, so equal functions are the same object and can key a dict.

Variables are created through :func:`variables` only, always ``0 .. n-1`` in increasing
order, so their order in every BDD is their index order whatever ran earlier.

References
----------
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from pyeda.boolalg.bdd import BDDONE, BDDZERO, bddvar

from fsmsynth.logic.cube import CUBE_ORDER, Cube

ONE: Any = BDDONE
ZERO: Any = BDDZERO


def variables(n: int, name: str = "fs_x") -> list[Any]:
    """BDD variables ``name[0] .. name[n-1]`` (created in index order on first use)."""
    return [bddvar(name, i) for i in range(n)]


def cube_bdd(cube: Cube, var: Sequence[Any]) -> Any:
    """The points of ``cube`` (variable ``i`` is ``var[i]``)."""
    result = ONE
    for i, positive in cube.literals():
        result &= var[i] if positive else ~var[i]
    return result


def cubes_of(function: Any, var: Sequence[Any]) -> list[Cube]:
    """Disjoint cubes whose union is ``function``: one per path to 1, sorted."""
    index = {v: i for i, v in enumerate(var)}
    cubes = []
    for path in function.satisfy_all():
        care = value = 0
        for v, bit in path.items():
            care |= 1 << index[v]
            value |= bit << index[v]
        cubes.append(Cube(care=care, value=value))
    return sorted(cubes, key=CUBE_ORDER)


def point_of(function: Any, var: Sequence[Any]) -> int:
    """One point of a non-empty ``function`` (free variables 0), as bits (bit i = var i)."""
    found = function.satisfy_one()
    assert found is not None, "empty set has no point"
    index = {v: i for i, v in enumerate(var)}
    return sum(bit << index[v] for v, bit in found.items())


def exists(function: Any, over: Sequence[Any]) -> Any:
    """``function`` with the variables ``over`` quantified existentially (smoothing), one
    variable at a time: linear in their number (pyeda's ``smoothing`` visits every point of
    the variables together, ``2**len(over)`` cofactors)."""
    for v in over:
        if v in function.support:
            function = function.restrict({v: 0}) | function.restrict({v: 1})
    return function


def forall(function: Any, over: Sequence[Any]) -> Any:
    """``function`` with the variables ``over`` quantified universally (consensus), one
    variable at a time."""
    for v in over:
        if v in function.support:
            function = function.restrict({v: 0}) & function.restrict({v: 1})
    return function
