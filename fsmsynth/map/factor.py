"""Algebraic factoring of sums of products.

A sum of products is treated as a polynomial in its literals (``x`` and ``x'`` are
different symbols, no Boolean identities), as in Brayton and McMullen's algebraic model.
:func:`factor` finds the kernels of a function (its cube-free quotients by a cube), divides
by the kernel that saves the most literals, and factors quotient, divisor and remainder
again; where no kernel helps, the literal shared by most products is taken out.  Division
never adds literals, so a factored form has at most the literals of its sum of products,
and :func:`factor` keeps the plain form when factoring does not save any.

References
----------
Brayton, R. K. and McMullen, C., "The decomposition and factorization of Boolean
expressions", *Proc. IEEE International Symposium on Circuits and Systems*, 1982 (kernels,
co-kernels, algebraic division).
Brayton, R. K., Rudell, R., Sangiovanni-Vincentelli, A. and Wang, A. R., "MIS: a
multiple-level logic optimization system", *IEEE Trans. CAD* 6(6), 1987 (good factoring).
"""

from __future__ import annotations

import functools
from collections.abc import Iterable, Sequence

from fsmsynth.logic.cube import CUBE_ORDER, Cube
from fsmsynth.map.expr import Expr

Sop = tuple[Cube, ...]
FACTORED_REMEMBERED = 20_000
"""Factored forms :func:`factor` remembers (the least recently used go first)."""
KERNEL_LIMIT = 200
"""Kernels examined per factoring step; a large function keeps the best of the first ones."""


def _lits(cube: Cube) -> list[tuple[int, bool]]:
    return list(cube.literals())


def _count(sop: Sop) -> int:
    return sum(c.literal_count for c in sop)


def _divides(d: Cube, c: Cube) -> bool:
    """Whether every literal of ``d`` is in ``c``."""
    return c.care & d.care == d.care and c.value & d.care == d.value


def _quotient_by_cube(sop: Sop, d: Cube) -> Sop:
    return tuple(sorted((Cube(care=c.care & ~d.care, value=c.value & ~d.care)
                         for c in sop if _divides(d, c)), key=CUBE_ORDER))


def _common_cube(sop: Sop) -> Cube:
    """The literals every cube of ``sop`` has."""
    care = sop[0].care
    for c in sop:
        care &= c.care & ~(c.value ^ sop[0].value)
    return Cube(care=care, value=sop[0].value & care)


def divide(f: Sop, d: Sop) -> tuple[Sop, Sop]:
    """Algebraic (weak) division: ``f = q * d + r`` with ``q`` as large as possible."""
    quotient: set[Cube] | None = None
    for cube in d:
        part = set(_quotient_by_cube(f, cube))
        quotient = part if quotient is None else quotient & part
        if not quotient:
            return (), f
    assert quotient is not None
    q = tuple(sorted(quotient, key=CUBE_ORDER))
    used = {Cube(care=a.care | b.care, value=a.value | b.value) for a in q for b in d}
    r = tuple(c for c in f if c not in used)
    return q, r


def kernels(f: Sop, limit: int = KERNEL_LIMIT) -> list[Sop]:
    """Kernels of ``f`` (cube-free quotients of ``f`` by a cube, ``f`` itself if cube-free),
    by the recursive procedure of Brayton and McMullen, at most ``limit`` of them."""
    found: dict[Sop, None] = {}

    def walk(g: Sop, start: int) -> None:
        order = sorted({lit for c in g for lit in _lits(c)})
        for k, (var, positive) in enumerate(order):
            if len(found) >= limit:
                return
            if k < start:
                continue
            lit = Cube(care=1 << var, value=(1 << var) if positive else 0)
            having = [c for c in g if _divides(lit, c)]
            if len(having) < 2:
                continue
            q = _quotient_by_cube(tuple(having), lit)
            common = _common_cube(q)
            if any(lit2 < (var, positive) for lit2 in _lits(common)):
                continue  # this kernel is reached from an earlier literal
            kernel = _quotient_by_cube(q, common) if common.care else q
            if kernel not in found:
                found[kernel] = None
                walk(kernel, 0)

    if len(f) >= 2:
        if not _common_cube(f).care:
            found[tuple(sorted(f, key=CUBE_ORDER))] = None
        walk(tuple(sorted(f, key=CUBE_ORDER)), 0)
    return [k for k in found if len(k) >= 2]


def _plain(sop: Sop) -> Expr:
    return Expr.or_([_product(c) for c in sop])


def _product(cube: Cube) -> Expr:
    return Expr.and_([Expr.lit(v, p) for v, p in cube.literals()])


def _factor(sop: Sop) -> Expr:
    if not sop:
        return Expr.const(False)
    if any(c.care == 0 for c in sop):
        return Expr.const(True)
    if len(sop) == 1:
        return _product(sop[0])
    common = _common_cube(sop)
    if common.care:
        return Expr.and_([_product(common), _factor(_quotient_by_cube(sop, common))])
    best: tuple[int, Sop, Sop, Sop] | None = None
    for kernel in kernels(sop):
        if kernel == sop:
            continue
        q, r = divide(sop, kernel)
        if not q:
            continue
        saved = _count(sop) - (_count(q) + _count(kernel) + _count(r))
        if best is None or saved > best[0]:
            best = (saved, kernel, q, r)
    if best is not None and best[0] > 0:
        _saved, kernel, q, r = best
        return Expr.or_([Expr.and_([_factor(q), _factor(kernel)]), _factor(r)])
    # No kernel saves literals: take out the literal most products share, if any.
    counts: dict[tuple[int, bool], int] = {}
    for c in sop:
        for lit in _lits(c):
            counts[lit] = counts.get(lit, 0) + 1
    (var, positive), times = max(counts.items(), key=lambda kv: (kv[1], -kv[0][0], kv[0][1]))
    if times < 2:
        return _plain(sop)
    taken = Cube(care=1 << var, value=(1 << var) if positive else 0)
    q, r = divide(sop, (taken,))
    return Expr.or_([Expr.and_([Expr.lit(var, positive), _factor(q)]), _factor(r)])


def factor(terms: Iterable[Cube]) -> Expr:
    """A factored form of the sum of products ``terms``, with at most its literals.

    Examples
    --------
    >>> from fsmsynth.logic.cube import Cube
    >>> f = [Cube.from_string(s) for s in ("11-", "1-1")]       # x0 x1 + x0 x2
    >>> factor(f).text(["a", "b", "c"])
    'a (b + c)'
    """
    return _factored(tuple(sorted(set(terms), key=CUBE_ORDER)))


@functools.lru_cache(maxsize=FACTORED_REMEMBERED)
def _factored(sop: Sop) -> Expr:
    """:func:`factor` of a sorted cover, remembered: the encoding searches map thousands of
    candidates whose functions often repeat, and a factored form is immutable."""
    if any(c.care == 0 for c in sop):
        return Expr.const(True)
    factored = _factor(sop)
    plain = _plain(sop) if sop else Expr.const(False)
    return factored if factored.literals <= plain.literals else plain


def factor_all(covers: Sequence[Sequence[Cube]]) -> tuple[Expr, ...]:
    """:func:`factor` of each cover."""
    return tuple(factor(terms) for terms in covers)
