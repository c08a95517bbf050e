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

from fsmsynth.base.choices import LOGIC_METHODS
from fsmsynth.base.errors import OptionError
from fsmsynth.logic.cost import DEFAULT_WEIGHTS, CostWeights, normal_terms
from fsmsynth.logic.cube import Cube, bits_of
from fsmsynth.logic.espresso import espresso_cover
from fsmsynth.logic.exact import exact_cover, points_of
from fsmsynth.logic.functions import Function, LogicFunctions

METHODS = LOGIC_METHODS
EXACT_AUTO_LIMIT = 10
"""``logic="auto"`` runs the exact minimizer up to this many variables, Espresso beyond."""
EXACT_MAX_VARIABLES = 16
"""``logic="exact"`` works on the ``2**n`` points of its variables: at most this many."""


@dataclass(frozen=True, slots=True)
class Cover:
    """A sum of products for every function of a :class:`~fsmsynth.stages.excite.LogicFunctions`.

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
        Which minimizer produced the cover: ``"heuristic"`` (Espresso) or ``"exact"``.
    proven:
        For ``"exact"``: every minimization finished within its time limit, so each
        function's cover is a proven minimum sum of products (fewest terms, then literals),
        alone or as part of the shared multi-output minimum, whichever the gate cost chose.
    """

    variables: tuple[str, ...]
    names: tuple[str, ...]
    terms: tuple[tuple[Cube, ...], ...]
    method: str = "heuristic"
    proven: bool = False

    def of(self, name: str) -> tuple[Cube, ...]:
        """The terms of function ``name``."""
        return self.terms[self.names.index(name)]



def _logic_weight(terms: Sequence[Sequence[Cube]], weights: CostWeights) -> tuple[
        float, int, int]:
    """Gate cost, then (to break ties toward plain equations) literals and terms per function.

    The same count as :func:`fsmsynth.logic.cost.logic_shape` and
    :func:`fsmsynth.logic.cost.weigh`, in one pass: this runs in the inner loop of the cover
    choice and of the encoding searches.
    """
    # Terms are keyed by their (care, value) ints: hashing those is much cheaper than
    # hashing Cube records, and this runs thousands of times per search.
    products: set[tuple[int, int]] = set()
    ors: set[tuple[tuple[int, int], ...]] = set()
    inverted = and_gates = and_inputs = or_inputs = literals = count = 0
    for f in terms:
        count += len(f)
        if len(f) == 1 and f[0].care == 0:
            continue
        keys = tuple((t.care, t.value) for t in f)
        for care, value in keys:
            lits = care.bit_count()
            literals += lits
            if (care, value) not in products:
                products.add((care, value))
                inverted |= care & ~value
                if lits >= 2:
                    and_gates += 1
                    and_inputs += lits
        if len(f) >= 2 and keys not in ors:
            ors.add(keys)
            or_inputs += len(f)
    nots = inverted.bit_count()
    gate = weights.gate
    total = (gate.get("not", 0.0) * nots + gate.get("and", 0.0) * and_gates
             + gate.get("or", 0.0) * len(ors)
             + weights.gate_input * (nots + and_inputs + or_inputs))
    return total, literals, count


def _improve(start: list[tuple[Cube, ...]], options: Sequence[Sequence[tuple[Cube, ...]]],
             weights: CostWeights) -> list[tuple[Cube, ...]]:
    """Greedy descent: swap one function's cover for another option while that lowers cost
    (each trial weighed incrementally, :class:`_Weigher`, to the same figure
    :func:`_logic_weight` gives)."""
    current = list(start)
    varying = [f for f, choices in enumerate(options) if len(set(choices)) > 1]
    if not varying:
        return current
    weigher = _Weigher(current, weights)
    best = weigher.weight()
    improved = True
    while improved:
        improved = False
        for f in varying:
            for choice in options[f]:
                if choice == current[f]:
                    continue
                weigher.swap(current[f], choice)
                w = weigher.weight()
                if w < best:
                    current[f], best, improved = choice, w, True
                else:
                    weigher.swap(choice, current[f])
    return current


class _Weigher:
    """:func:`_logic_weight` of a list of covers kept up to date as one cover is swapped for
    another: products, OR gates and complemented variables are counted with multiplicity,
    so a swap costs the size of the two covers, not of the whole design."""

    def __init__(self, terms: Sequence[Sequence[Cube]], weights: CostWeights) -> None:
        self.weights = weights
        self.products: dict[tuple[int, int], int] = {}
        self.ors: dict[tuple[tuple[int, int], ...], int] = {}
        self.inverted: dict[int, int] = {}
        self.and_gates = self.and_inputs = self.or_inputs = self.literals = self.count = 0
        self._parts: dict[int, tuple[tuple[tuple[int, int], ...], tuple[
            tuple[tuple[int, int], int, tuple[int, ...]], ...]]] = {}
        for f in terms:
            self._add(f, 1)

    def swap(self, old: Sequence[Cube], new: Sequence[Cube]) -> None:
        """Replace one function's cover ``old`` by ``new``."""
        self._add(old, -1)
        self._add(new, 1)

    def _add(self, f: Sequence[Cube], sign: int) -> None:
        self.count += sign * len(f)
        if len(f) == 1 and f[0].care == 0:
            return
        # The covers are the same few option tuples again and again: their products,
        # literal counts and complemented bits are worked out once (keyed by identity; the
        # caller keeps every option alive while it weighs).
        parts = self._parts.get(id(f))
        if parts is None:
            keys = tuple((t.care, t.value) for t in f)
            parts = self._parts[id(f)] = (keys, tuple(
                (key, key[0].bit_count(), tuple(bits_of(key[0] & ~key[1]))) for key in keys))
        keys, products_of = parts
        products = self.products
        inverted = self.inverted
        for key, lits, bits in products_of:
            self.literals += sign * lits
            before = products.get(key, 0)
            products[key] = before + sign
            if before == (0 if sign > 0 else 1):  # first use added, or last use removed
                if lits >= 2:
                    self.and_gates += sign
                    self.and_inputs += sign * lits
                for low in bits:
                    inverted[low] = inverted.get(low, 0) + sign
        if len(f) >= 2:
            before = self.ors.get(keys, 0)
            self.ors[keys] = before + sign
            if before == (0 if sign > 0 else 1):
                self.or_inputs += sign * len(f)

    def weight(self) -> tuple[float, int, int]:
        """Gate cost, literals and terms, as :func:`_logic_weight` counts them."""
        nots = sum(1 for c in self.inverted.values() if c > 0)
        ors = sum(1 for c in self.ors.values() if c > 0)
        gate = self.weights.gate
        total = (gate.get("not", 0.0) * nots + gate.get("and", 0.0) * self.and_gates
                 + gate.get("or", 0.0) * ors
                 + self.weights.gate_input * (nots + self.and_inputs + self.or_inputs))
        return total, self.literals, self.count


class _Engine:
    """One two-level minimizer behind a common call; remembers whether all runs were proven."""

    def __init__(self, method: str, n: int, time_limit: float) -> None:
        self.exact = method == "exact"
        self.n = n
        self.time_limit = time_limit
        self.proven = self.exact

    def __call__(self, on_sets: Sequence[Sequence[Cube]],
                 off_sets: Sequence[Sequence[Cube]]) -> list[tuple[Cube, ...]]:
        if not self.exact:
            return espresso_cover(self.n, on_sets, off_sets)
        everything = set(range(1 << self.n))
        ons = [points_of(on, self.n) for on in on_sets]
        offs = [points_of(off, self.n) for off in off_sets]
        result = exact_cover(self.n, ons, [everything - a - b for a, b in zip(ons, offs)],
                             time_limit=self.time_limit)
        self.proven = self.proven and result.proven
        return list(result.terms)


def _separate(terms: list[tuple[Cube, ...]], functions: LogicFunctions, engine: _Engine,
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
            (new,) = engine([f.on], [f.off + terms[keep]])
            trial = terms[:redo] + [normal_terms(new)] + terms[redo + 1:]
            trials.append((_logic_weight(trial, weights), trial))
        terms = min(trials, key=lambda t: t[0])[1]
    return terms


def _alone(engine: _Engine, f: Function, memo: dict[object, tuple[tuple[Cube, ...], bool]]
           | None) -> tuple[Cube, ...]:
    """``f`` minimized on its own, through ``memo`` when one is given."""
    if memo is None:
        return normal_terms(engine([f.on], [f.off])[0])
    key = (engine.exact, engine.n, f.on, f.off)
    if key not in memo:
        before = engine.proven
        engine.proven = True
        memo[key] = (normal_terms(engine([f.on], [f.off])[0]), engine.proven)
        engine.proven = before
    terms, proven = memo[key]
    engine.proven = engine.proven and proven
    return terms


def minimize_logic(functions: LogicFunctions, weights: CostWeights = DEFAULT_WEIGHTS,
                   method: str = "heuristic", *, time_limit: float = 10.0,
                   memo: dict[object, tuple[tuple[Cube, ...], bool]] | None = None) -> Cover:
    """Two-level covers of all functions, with shared product terms where sharing pays.

    Minimizes all functions together and each alone, then chooses per function between the
    two by the gate cost of the whole design (greedy, from both starting points), and
    finally makes exclusive pin pairs disjoint.  Every returned cover is 1 on its
    function's on-set and 0 on its off-set.

    Parameters
    ----------
    method:
        ``"heuristic"`` (Espresso), ``"exact"`` (all primes and a minimum cover, see
        :mod:`fsmsynth.logic.exact`), or ``"auto"`` (exact up to
        :data:`EXACT_AUTO_LIMIT` variables, Espresso beyond).
    time_limit:
        Seconds for each exact cover.
    memo:
        A dict kept across calls that remembers each function's cover minimized alone,
        keyed by its on- and off-set.  The encoding searches pass one: the thousands of
        assignments they score often repeat a pin's function (JK and T pins especially).

    References
    ----------
    Brayton, R. K. et al., *Logic Minimization Algorithms for VLSI Synthesis*, Kluwer, 1984
    (Espresso, multi-output minimization).
    """
    if method not in METHODS:
        raise OptionError(f"unknown logic minimizer {method!r}: use one of {', '.join(METHODS)}")
    n = len(functions.variables)
    if method == "auto":
        method = "exact" if n <= EXACT_AUTO_LIMIT else "heuristic"
    if method == "exact" and n > EXACT_MAX_VARIABLES:
        raise OptionError(
            f"exact two-level minimization over {n} variables (state bits and inputs): it "
            f"enumerates 2**{n} points, and works up to {EXACT_MAX_VARIABLES}; use logic "
            "'heuristic' or 'auto'")
    engine = _Engine(method, n, time_limit)
    fs: tuple[Function, ...] = functions.functions
    joint = [normal_terms(t) for t in engine([f.on for f in fs], [f.off for f in fs])]
    alone = [_alone(engine, f, memo) for f in fs]
    options = [(joint[i], alone[i]) for i in range(len(fs))]
    if joint == alone:
        chosen = joint
    else:
        candidates = [_improve(joint, options, weights), _improve(alone, options, weights)]
        chosen = min(candidates, key=lambda c: _logic_weight(c, weights))
    chosen = _separate(chosen, functions, engine, weights)
    return Cover(variables=functions.variables, names=tuple(f.name for f in fs),
                 terms=tuple(normal_terms(t) for t in chosen), method=method,
                 proven=engine.proven)


