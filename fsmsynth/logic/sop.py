"""Two-level minimization of a function given by minterms: the designer's truth-table entry.

Minterm numbers follow the usual truth-table convention: the first variable is the most
significant bit (with three variables a, b, c, minterm 6 is a = 1, b = 1, c = 0).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from fsmsynth.base.errors import OptionError
from fsmsynth.logic.cover import EXACT_MAX_VARIABLES
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.logic.exact import exact_cover, heuristic_cover, petrick_cover

if TYPE_CHECKING:
    import sympy

METHODS = ("exact", "heuristic", "petrick")
SOP_MAX_VARIABLES = 20
"""Functions given by minterm numbers take at most this many variables (``2**n`` points)."""


@dataclass(frozen=True, slots=True)
class SopCover:
    """A minimized sum of products (one or several outputs sharing terms).

    Attributes
    ----------
    n_inputs:
        Number of variables.
    terms:
        The distinct product terms, each a string with one ``0``/``1``/``-`` per variable,
        first variable first (``"1-0"`` is ``a c'``).
    outputs:
        For each term, the outputs whose sum uses it.
    literals:
        Literals in the distinct terms.
    proven:
        Whether the term count is proven minimal (always False for the heuristic).
    lower_bound:
        Proven lower bound on the number of terms.
    method:
        ``"exact"``, ``"petrick"`` or ``"heuristic"`` (Espresso).
    """

    n_inputs: int
    terms: tuple[str, ...]
    outputs: tuple[tuple[int, ...], ...]
    literals: int
    proven: bool
    lower_bound: int
    method: str

    def output_terms(self, output: int = 0) -> tuple[str, ...]:
        """The terms of one output."""
        return tuple(t for t, outs in zip(self.terms, self.outputs) if output in outs)

    def expression(self, names: Sequence[str] | None = None, output: int = 0) -> str:
        """``"a c' + b"`` style text of one output."""
        names = list(names or _default_names(self.n_inputs))
        terms = self.output_terms(output)
        if not terms:
            return "0"
        if any(set(t) == {"-"} or t == "" for t in terms):
            return "1"
        return " + ".join(" ".join(names[i] + ("" if ch == "1" else "'")
                                   for i, ch in enumerate(t) if ch != "-") for t in terms)

    def to_sympy(self, names: Sequence[str] | None = None,
                 output: int = 0) -> sympy.logic.boolalg.Boolean:
        """One output as a sympy Boolean expression."""
        import sympy  # loaded only when asked for (start-up time)
        syms = [sympy.Symbol(n) for n in (names or _default_names(self.n_inputs))]
        return sympy.Or(*[sympy.And(*[syms[i] if ch == "1" else sympy.Not(syms[i])
                                      for i, ch in enumerate(t) if ch != "-"])
                          for t in self.output_terms(output)])


def _default_names(n: int) -> list[str]:
    return [chr(ord("a") + i) for i in range(n)] if n <= 26 else [f"x{i}" for i in range(n)]


def minimum_terms(n: int, on: Iterable[int], dc: Iterable[int] = ()) -> tuple[Cube, ...]:
    """A proven minimum sum of products of a function given by points (bit ``i`` of a
    point is variable ``i``), as cubes: ``()`` for 0, the universe cube for 1."""
    on_set = set(on)
    dc_set = set(dc) - on_set
    if len(on_set | dc_set) == 1 << n and on_set:
        return (Cube.universe(),)
    if not on_set:
        return ()
    return exact_cover(n, [on_set], [dc_set]).products


def _to_point(minterm: int, n: int) -> int:
    """Truth-table minterm number (first variable most significant) to bit i = variable i."""
    return sum(1 << i for i in range(n) if minterm >> (n - 1 - i) & 1)


@exclusive
def minimize_sop(n_inputs: int, on: Sequence[int] | Sequence[Sequence[int]],
                 dc: Sequence[int] | Sequence[Sequence[int]] = (), method: str = "exact",
                 *, time_limit: float = 10.0) -> SopCover:
    """Minimize a single- or multi-output function given by minterm numbers.

    Parameters
    ----------
    n_inputs:
        Number of variables (minterms run from 0 to ``2**n_inputs - 1``).
    on:
        Minterms where the function is 1; for several outputs, one list per output.
    dc:
        Don't-care minterms, in the same shape as ``on``.
    method:
        ``"exact"`` (all primes, minimum cover by integer programming), ``"petrick"``
        (Petrick's method, small functions only) or ``"heuristic"`` (Espresso).
    time_limit:
        Seconds for the exact cover; past it the better of the best cover found and
        Espresso's is returned, with ``proven=False`` and the lower bound reached.

    Examples
    --------
    >>> r = minimize_sop(3, on=[0, 1, 2, 5, 6, 7])
    >>> len(r.terms), r.literals, r.proven
    (3, 6, True)
    >>> r = minimize_sop(4, on=[1, 3, 7, 11, 15], dc=[0, 2, 5])
    >>> len(r.terms), r.literals, "y z" in r.expression(["w", "x", "y", "z"])
    (2, 4, True)
    """
    if method not in METHODS:
        raise OptionError(f"unknown method {method!r}: use one of {', '.join(METHODS)}")
    most = EXACT_MAX_VARIABLES if method != "heuristic" else SOP_MAX_VARIABLES
    if isinstance(n_inputs, bool) or not isinstance(n_inputs, int) or not 1 <= n_inputs <= most:
        raise OptionError(f"n_inputs {n_inputs!r}: give a whole number from 1 to {most} for "
                          f"method {method!r} (the function is given by its 2**n minterms)")
    for name, value in (("on", on), ("dc", dc)):
        if isinstance(value, (str, bytes)) or not isinstance(value, Sequence):
            raise OptionError(f"{name} must be a list of minterm numbers (or one list per "
                              f"output), not {value!r}")
    if not isinstance(time_limit, (int, float)) or not math.isfinite(time_limit) \
            or time_limit <= 0:
        raise OptionError(f"time limit {time_limit!r}: give a finite number of seconds > 0")
    multi = bool(on) and not isinstance(on[0], int)
    on_lists: list[list[int]] = [list(x) for x in on] if multi else [list(on)]  # type: ignore[arg-type]
    dc_lists: list[list[int]]
    if multi:
        dc_lists = [list(x) for x in dc] if dc else [[] for _ in on_lists]  # type: ignore[arg-type]
    else:
        dc_lists = [list(dc)]  # type: ignore[arg-type]
    if len(dc_lists) != len(on_lists):
        raise OptionError("give one don't-care list per output")
    top = 1 << n_inputs
    for lists in (on_lists, dc_lists):
        for f, ms in enumerate(lists):
            for m in ms:
                if not isinstance(m, int) or not 0 <= m < top:
                    raise OptionError(f"minterm {m!r} of output {f}: use 0 .. {top - 1}")
    on_sets = [{_to_point(m, n_inputs) for m in ms} for ms in on_lists]
    dc_sets = [{_to_point(m, n_inputs) for m in ms} - on_sets[f] for f, ms in enumerate(dc_lists)]
    if method == "heuristic":
        result = heuristic_cover(n_inputs, on_sets, dc_sets)
    elif method == "petrick":
        result = petrick_cover(n_inputs, on_sets, dc_sets)
    else:
        result = exact_cover(n_inputs, on_sets, dc_sets, time_limit=time_limit)
    products = result.products
    return SopCover(
        n_inputs=n_inputs,
        terms=tuple(p.to_string(n_inputs) for p in products),
        outputs=tuple(tuple(f for f, ts in enumerate(result.terms) if p in ts) for p in products),
        literals=sum(p.literal_count for p in products),
        proven=result.proven,
        lower_bound=result.lower_bound,
        method=method,
    )
