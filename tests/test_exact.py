"""Two-level minimization: exact against Espresso, brute force, sympy and textbooks."""

from __future__ import annotations

import itertools
import random

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import brute_force_minimum
from sympy.logic import SOPform

from fsmsynth import OptionError
from fsmsynth.logic.sop import minimize_sop


@st.composite
def functions(draw: st.DrawFn, max_inputs: int = 8, outputs: int = 1) -> tuple[
        int, list[list[int]], list[list[int]]]:
    """A random incompletely specified function: (n, on per output, dc per output)."""
    n = draw(st.integers(1, max_inputs))
    on, dc = [], []
    for _ in range(outputs):
        kinds = draw(st.lists(st.sampled_from("01-"), min_size=1 << n, max_size=1 << n))
        on.append([m for m, k in enumerate(kinds) if k == "1"])
        dc.append([m for m, k in enumerate(kinds) if k == "-"])
    return n, on, dc


def value(term: str, m: int, n: int) -> bool:
    return all(ch == "-" or int(ch) == (m >> (n - 1 - i) & 1) for i, ch in enumerate(term))


def agrees(cover: object, n: int, on: list[int], dc: list[int], output: int = 0) -> bool:
    terms = cover.output_terms(output)  # type: ignore[attr-defined]
    care_off = set(range(1 << n)) - set(on) - set(dc)
    return (all(any(value(t, m, n) for t in terms) for m in on)
            and not any(any(value(t, m, n) for t in terms) for m in care_off))


@settings(max_examples=60)
@given(functions(max_inputs=8))
def test_exact_never_has_more_terms_than_espresso(f: tuple[int, list[list[int]], list[list[int]]]
                                                  ) -> None:
    n, (on,), (dc,) = f
    exact = minimize_sop(n, on, dc)
    heuristic = minimize_sop(n, on, dc, method="heuristic")
    assert exact.proven
    assert agrees(exact, n, on, dc) and agrees(heuristic, n, on, dc)
    assert len(exact.terms) <= len(heuristic.terms)


@settings(max_examples=40)
@given(functions(max_inputs=6, outputs=3))
def test_multi_output_exact_never_more_terms_than_espresso(
        f: tuple[int, list[list[int]], list[list[int]]]) -> None:
    n, on, dc = f
    exact = minimize_sop(n, on, dc)
    heuristic = minimize_sop(n, on, dc, method="heuristic")
    for o in range(3):
        assert agrees(exact, n, on[o], dc[o], o) and agrees(heuristic, n, on[o], dc[o], o)
    assert len(exact.terms) <= len(heuristic.terms)


@settings(max_examples=80)
@given(functions(max_inputs=4))
def test_exact_equals_brute_force_minimum(f: tuple[int, list[list[int]], list[list[int]]]) -> None:
    n, (on,), (dc,) = f
    exact = minimize_sop(n, on, dc)
    points = {sum(1 << i for i in range(n) if m >> (n - 1 - i) & 1) for m in on}
    free = {sum(1 << i for i in range(n) if m >> (n - 1 - i) & 1) for m in dc}
    assert (len(exact.terms), exact.literals) == brute_force_minimum(n, points, free)


@settings(max_examples=25)
@given(functions(max_inputs=8))
def test_against_sympy_sopform(f: tuple[int, list[list[int]], list[list[int]]]) -> None:
    # sympy (a reference library): SOPform returns a sum of products that agrees with the
    # function on its care set; ours must agree too and have no more terms.
    n, (on,), (dc,) = f
    names = sympy.symbols(f"v0:{n}")
    reference = SOPform(names, [list(map(int, format(m, f"0{n}b"))) for m in on],
                        [list(map(int, format(m, f"0{n}b"))) for m in dc])
    ours = minimize_sop(n, on, dc)
    sympy_terms = (0 if reference == sympy.false else
                   len(reference.args) if isinstance(reference, sympy.Or) else 1)
    assert len(ours.terms) <= sympy_terms
    ours_expr = ours.to_sympy([str(v) for v in names])
    for m in on + [m for m in range(1 << n) if m not in on and m not in dc]:
        point = dict(zip(names, (bool(int(b)) for b in format(m, f"0{n}b"))))
        want = m in on
        assert bool(reference.subs(point)) == want
        assert bool(ours_expr.subs(point)) == want


def test_cyclic_core_needs_petrick() -> None:
    # Roth and Kinney, Fundamentals of Logic Design, 7th ed., section 6.5 (Petrick's
    # method): f(a,b,c) = sum m(0,1,2,5,6,7) has six prime implicants, none essential (a
    # cyclic core); the minimum has 3 terms, 6 literals (from memory).
    petrick = minimize_sop(3, on=[0, 1, 2, 5, 6, 7], method="petrick")
    exact = minimize_sop(3, on=[0, 1, 2, 5, 6, 7])
    assert (len(petrick.terms), petrick.literals) == (3, 6) == (len(exact.terms), exact.literals)
    assert set(exact.terms) in ({"00-", "1-1", "-10"}, {"0-0", "-01", "11-"})


def test_mano_karnaugh_map_example() -> None:
    # Mano and Ciletti, Digital Design, 5th ed., section 3.3 (four-variable map):
    # F(w,x,y,z) = sum m(0,1,2,4,5,6,8,9,12,13,14) = y' + w'z' + xz' (from memory).
    r = minimize_sop(4, on=[0, 1, 2, 4, 5, 6, 8, 9, 12, 13, 14])
    assert set(r.terms) == {"--0-", "0--0", "-1-0"} and r.proven


def test_mano_dont_care_example() -> None:
    # Mano and Ciletti, Digital Design, 5th ed., section 3.5 (don't-care conditions):
    # F = sum m(1,3,7,11,15), d = (0,2,5) has the two minimal forms yz + w'x' and
    # yz + w'z (from memory).
    r = minimize_sop(4, on=[1, 3, 7, 11, 15], dc=[0, 2, 5])
    assert set(r.terms) in ({"--11", "00--"}, {"--11", "0--1"})


def test_time_limit_returns_best_found_with_a_bound(monkeypatch: pytest.MonkeyPatch) -> None:
    from fsmsynth.logic import exact

    heuristic = []

    def espresso(*args: object) -> object:
        heuristic.append(real(*args))  # type: ignore[arg-type]
        return heuristic[-1]

    real = exact.heuristic_cover
    monkeypatch.setattr(exact, "heuristic_cover", espresso)
    rng = random.Random(12)
    points = list(range(1 << 12))
    rng.shuffle(points)
    third = len(points) // 3
    r = minimize_sop(12, on=points[:third], dc=points[third:2 * third], time_limit=0.05)
    assert not r.proven and 0 < r.lower_bound <= len(r.terms)
    assert agrees(r, 12, points[:third], points[third:2 * third])
    # Stopped early, the result is never worse than Espresso's cover of the same function.
    (fallback,) = heuristic
    assert (len(r.terms), r.literals) <= fallback.size


def test_bad_minterm() -> None:
    with pytest.raises(OptionError, match=r"^minterm 8 of output 0: use 0 \.\. 7$"):
        minimize_sop(3, on=[8])


def test_constant_functions() -> None:
    assert minimize_sop(2, on=[]).terms == ()
    assert minimize_sop(2, on=[0, 1, 2, 3]).expression() == "1"
    for n, on in itertools.product((1, 2), ([0],)):
        assert minimize_sop(n, on=on).proven


def _weighted_program_optimum(core: list[list[int]], weights: list[int]) -> int:
    """Reference: HiGHS (through scipy.optimize.milp) on one program whose weights fold
    terms and literals together, solved with a zero gap."""
    import numpy as np
    from scipy.optimize import Bounds, LinearConstraint, milp
    from scipy.sparse import csr_matrix

    columns = sorted({j for r in core for j in r})
    index = {j: i for i, j in enumerate(columns)}
    cells = [(i, index[j]) for i, r in enumerate(core) for j in r]
    matrix = csr_matrix(([1.0] * len(cells), ([c[0] for c in cells], [c[1] for c in cells])),
                        shape=(len(core), len(columns)))
    reference = milp(np.array([weights[j] for j in columns], dtype=float),
                     constraints=LinearConstraint(matrix, lb=1.0, ub=np.inf),
                     integrality=np.ones(len(columns)), bounds=Bounds(0, 1),
                     options={"disp": False, "mip_rel_gap": 0.0})
    return round(reference.fun)


def _random_core(n: int, seed: int) -> tuple[list[list[int]], list[int], list[int]]:
    """The cyclic core of a random function (a third on, a third don't care)."""
    from fsmsynth.logic import covering
    from fsmsynth.logic import exact as ex
    rng = random.Random(seed)
    points = list(range(1 << n))
    rng.shuffle(points)
    third = len(points) // 3
    on, dc = set(points[:third]), set(points[third:2 * third])
    primes = ex.prime_implicants(n, [on | dc])
    literals = [c.literal_count for c, _t in primes]
    big = sum(literals) + 1
    weights = [big + x for x in literals]
    rows = ex._cover_rows([on], primes, n)
    core = covering.reduce_table(dict(enumerate(covering._mask(r) for r in rows)), weights, [])
    assert core is not None
    return [list(covering._columns(m)) for m in core.values()], literals, weights


@pytest.mark.parametrize(("n", "seed"), [(8, 2), (8, 5), (9, 0), (9, 1), (9, 4)])
def test_core_search_matches_one_weighted_program(n: int, seed: int) -> None:
    # Cores whose linear relaxation is fractional: the priced branch and bound must reach
    # the weighted program's optimum, and prove it.
    import time

    from fsmsynth.logic import covering
    core, literals, weights = _random_core(n, seed)
    minimum, found = covering.search_core(dict(enumerate(covering._mask(r) for r in core)),
                                          weights, deadline=time.monotonic() + 60)
    if minimum is None:  # past the node limits: the integer programs answer
        minimum, proven, _lower = covering._lexicographic_ilp(core, literals, weights, 60.0)
        assert proven
    assert found and all(set(r) & found for r in core)
    assert all(set(r) & minimum for r in core)
    assert sum(weights[j] for j in minimum) == _weighted_program_optimum(core, weights)


@pytest.mark.parametrize("seed", [0, 1, 2, 4])
def test_integer_programs_match_one_weighted_program(seed: int) -> None:
    # 9 inputs: cyclic cores of 80+ columns, solved by the lexicographic programs.
    from fsmsynth.logic import covering
    core, literals, weights = _random_core(9, seed)
    assert len({j for r in core for j in r}) > 80
    picked, proven, lower = covering._lexicographic_ilp(core, literals, weights, time_limit=60.0)
    assert proven and lower == len(picked)
    assert sum(weights[j] for j in picked) == _weighted_program_optimum(core, weights)
    assert all(set(r) & picked for r in core)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.sets(st.integers(0, 11), min_size=1, max_size=4), min_size=1, max_size=14),
       st.lists(st.integers(1, 5), min_size=12, max_size=12))
def test_minimum_cover_equals_petrick(rows: list[set[int]], literals: list[int]) -> None:
    # Petrick's method (Petrick 1956) multiplies out every cover: the reference minimum.
    # Checked for the whole solver and for the search priced by the linear relaxation
    # from its first node (no quick phase).
    import time

    from fsmsynth.logic import covering
    big = sum(literals) + 1
    weights = [big + x for x in literals]
    reference = sum(weights[j] for j in covering.petrick([sorted(r) for r in rows], weights))
    chosen, proven, lower = covering.minimum_cover([sorted(r) for r in rows], literals, 10.0)
    assert proven and lower == len(chosen)
    minimum, found = covering.search_core(dict(enumerate(covering._mask(r) for r in rows)),
                                          weights, time.monotonic() + 60, quick_nodes=0)
    assert minimum is not None and minimum == found
    for cover in (chosen, minimum):
        assert all(r & cover for r in rows)
        assert sum(weights[j] for j in cover) == reference


@settings(max_examples=80, deadline=None)
@given(st.lists(st.sets(st.integers(0, 7), min_size=1, max_size=3), min_size=1, max_size=9),
       st.lists(st.integers(1, 9), min_size=8, max_size=8),
       st.lists(st.floats(0, 12), min_size=9, max_size=9))
def test_lagrangian_bound_and_reduced_costs_are_valid(rows: list[set[int]], weights: list[int],
                                                      prices: list[float]) -> None:
    # For any nonnegative row prices, every cover costs at least the bound, and every cover
    # using column j at least the bound plus j's positive reduced cost (Beasley 1990,
    # Lagrangian relaxation of set covering; from memory).  Checked against all covers.
    from fsmsynth.logic import covering
    table = dict(enumerate(covering._mask(r) for r in rows))
    bound, reduced = covering._lagrangian_bound(table, weights, prices)
    columns = sorted(set().union(*rows))
    for size in range(1, len(columns) + 1):
        for subset in itertools.combinations(columns, size):
            if all(r & set(subset) for r in rows):
                cost = sum(weights[j] for j in subset)
                assert cost >= bound - 1e-9
                for j in subset:
                    assert cost >= bound + max(reduced.get(j, weights[j]), 0) - 1e-9


@settings(max_examples=200, deadline=None)
@given(st.lists(st.lists(st.lists(st.text("01-", min_size=4, max_size=4), min_size=1,
                                  max_size=5), min_size=2, max_size=3),
                min_size=1, max_size=5),
       st.lists(st.tuples(st.integers(0, 4), st.integers(0, 2)), max_size=12),
       st.sampled_from([(1.0, 0.0), (1.0, 2.5), (0.5, 1.0)]))
def test_incremental_weight_equals_the_whole_count(
        raw: list[list[list[str]]], swaps: list[tuple[int, int]],
        weights: tuple[float, float]) -> None:
    """The greedy cover choice weighs each trial by swapping one function's cover in a
    running count; after any sequence of swaps it must give what counting the whole design
    again gives (shared products, shared OR gates, inverters, literals, terms)."""
    from fsmsynth.logic.cost import CostWeights
    from fsmsynth.logic.cover import _logic_weight, _Weigher
    from fsmsynth.logic.cube import Cube
    w = CostWeights(gate={"not": weights[1], "and": weights[1], "or": 0.0},
                    gate_input=weights[0])
    options = [[tuple(sorted({Cube.from_string(c) for c in cover})) for cover in f]
               for f in raw]
    current = [f[0] for f in options]
    weigher = _Weigher(current, w)
    assert weigher.weight() == _logic_weight(current, w)
    for f, o in swaps:
        if f >= len(options):
            continue
        new = options[f][o % len(options[f])]
        weigher.swap(current[f], new)
        current[f] = new
        assert weigher.weight() == _logic_weight(current, w)
