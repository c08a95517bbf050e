"""Covers: the chosen sum of products of every function, and how they are chosen.

A multi-output cover shares product terms between functions, which usually saves gates, but
it can hand one function terms or literals it does not need on its own (a flip-flop input
that could be plain ``Q0`` coming out as a three-term sum).  :func:`minimize_logic` therefore
also minimizes each function alone and keeps, function by function, whichever choice gives
the lower gate cost for the whole design.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from fsmsynth.cost import DEFAULT_WEIGHTS, CostWeights, logic_shape, normal_terms, weigh
from fsmsynth.excite import Function, LogicFunctions
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.espresso import espresso_cover


@dataclass(frozen=True, slots=True)
class Cover:
    """A sum of products for every function of a :class:`~fsmsynth.excite.LogicFunctions`.

    Attributes
    ----------
    variables:
        Variable names, variable 0 first.
    names:
        Function names, in the order of ``terms``.
    terms:
        For each function its product terms (``()`` is the constant 0, a lone universe
        cube the constant 1).
    method:
        Which minimizer produced the cover.
    """

    variables: tuple[str, ...]
    names: tuple[str, ...]
    terms: tuple[tuple[Cube, ...], ...]
    method: str = "espresso"

    def of(self, name: str) -> tuple[Cube, ...]:
        """The terms of function ``name``."""
        return self.terms[self.names.index(name)]

    def value_at(self, name: str, point: int) -> int:
        """The function's value at the point ``point`` (bit i = variable i)."""
        return int(any(t.contains_point(point) for t in self.of(name)))


def _logic_weight(terms: Sequence[Sequence[Cube]], weights: CostWeights) -> tuple[
        float, int, int]:
    """Gate cost, then (to break ties toward plain equations) literals and terms per function."""
    shape = logic_shape(terms)
    return (weigh(shape.gate_counts, shape.gate_inputs, weights),
            sum(t.literal_count for f in terms for t in f), sum(len(f) for f in terms))


def _improve(start: list[tuple[Cube, ...]], options: Sequence[Sequence[tuple[Cube, ...]]],
             weights: CostWeights) -> list[tuple[Cube, ...]]:
    """Greedy descent: swap one function's cover for another option while that lowers cost."""
    current = list(start)
    best = _logic_weight(current, weights)
    improved = True
    while improved:
        improved = False
        for f, choices in enumerate(options):
            for choice in choices:
                if choice == current[f]:
                    continue
                trial = current[:f] + [choice] + current[f + 1:]
                w = _logic_weight(trial, weights)
                if w < best:
                    current, best, improved = trial, w, True
    return current


def _separate(terms: list[tuple[Cube, ...]], functions: LogicFunctions, n: int,
              weights: CostWeights) -> list[tuple[Cube, ...]]:
    """Make every exclusive pair (S and R of one flip-flop) disjoint.

    Where the covers of ``a`` and ``b`` overlap (possible only on don't-care points), one
    of them is minimized again with the other's cover added to its off-set; both ways are
    tried and the cheaper kept.  Each way is feasible because the on-set of either pin lies
    in the off-set of the other (excitation tables never ask for S = R = 1).
    """
    names = [f.name for f in functions.functions]
    for a, b in functions.exclusive:
        ia, ib = names.index(a), names.index(b)
        if not any(x.intersects(y) for x in terms[ia] for y in terms[ib]):
            continue
        trials = []
        for keep, redo in ((ia, ib), (ib, ia)):
            f = functions.functions[redo]
            (new,) = espresso_cover(n, [f.on], [f.off + terms[keep]])
            trial = terms[:redo] + [new] + terms[redo + 1:]
            trials.append((_logic_weight(trial, weights), trial))
        terms = min(trials, key=lambda t: t[0])[1]
    return terms


def minimize_logic(functions: LogicFunctions,
                   weights: CostWeights = DEFAULT_WEIGHTS) -> Cover:
    """Two-level covers of all functions, with shared product terms where sharing pays.

    Runs Espresso on all functions together and on each alone, then chooses per function
    between the two by the gate cost of the whole design (greedy, from both starting points),
    and finally makes exclusive pin pairs disjoint.  Every returned cover is 1 on its
    function's on-set and 0 on its off-set.

    References
    ----------
    Brayton, R. K. et al., *Logic Minimization Algorithms for VLSI Synthesis*, Kluwer, 1984
    (Espresso, multi-output minimization).
    """
    n = len(functions.variables)
    fs: tuple[Function, ...] = functions.functions
    joint = [normal_terms(t) for t in espresso_cover(n, [f.on for f in fs], [f.off for f in fs])]
    alone = [normal_terms(espresso_cover(n, [f.on], [f.off])[0]) for f in fs]
    options = [(joint[i], alone[i]) for i in range(len(fs))]
    candidates = [_improve(joint, options, weights), _improve(alone, options, weights)]
    chosen = min(candidates, key=lambda c: _logic_weight(c, weights))
    chosen = _separate(chosen, functions, n, weights)
    return Cover(variables=functions.variables, names=tuple(f.name for f in fs),
                 terms=tuple(normal_terms(t) for t in chosen))


