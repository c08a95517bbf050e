"""Minimum covering tables: which columns (prime implicants) hit every row (point to cover).

The cost is lexicographic: fewest columns first, then the fewest literals among those.  It
is folded into one integer weight per column, ``big + literals`` with ``big`` larger than
all literals together, so that any cover with fewer columns is cheaper.

The table is reduced first: essential columns, row dominance and column dominance,
repeated (McCluskey 1956).  What is left, the cyclic core, is solved by branch and bound:

* every node is reduced again, and bounded from below by a Lagrangian relaxation of the
  covering problem (Beasley, "A Lagrangian heuristic for set-covering problems", *Naval
  Research Logistics* 37, 1990): any nonnegative row prices ``y`` give the bound
  ``sum(y) + sum(min(0, reduced cost))``, then raised greedily row by row (dual ascent);
* a column whose reduced cost alone lifts the bound to the best cover found cannot be in a
  better cover and is removed (reduced-cost fixing; the weighted form of Coudert's limit
  lower bound, "On solving covering problems", DAC 1996);
* a short search first prices rows at zero; when that does not settle the core, the
  linear relaxation (HiGHS, through :func:`scipy.optimize.linprog`) gives the prices.  An
  integral relaxation is already the minimum.  Otherwise the columns the relaxation uses
  are searched first, which finds the minimum (or nearly) quickly, and then all of them.

A core of more than :data:`BRANCH_CORE` columns, or one that needs more than a fixed
number of nodes, goes to 0-1 integer programs (HiGHS, through :func:`scipy.optimize.milp`),
under the time limit.  The node limits, not the clock, decide which engine answers, so the
same table always gets the same cover.
Petrick's method (Petrick 1956) is the small-case reference.

Sets of columns are bit masks (bit ``j`` = column ``j``); rows are keyed by an id so that
their prices follow them while columns are removed.
"""

from __future__ import annotations

import math
import time
from collections.abc import Iterable, Sequence
from functools import lru_cache

from fsmsynth.logic.cube import bits_of

QUICK_NODES = 40
"""Nodes searched with zero prices before the linear relaxation is solved."""

PRICED_NODES = 300
"""Nodes searched with the relaxation's prices (each phase) before integer programming."""

BRANCH_CORE = 64
"""Cores with more columns go straight to the integer programs: measured on random 8- and
9-input functions, branch and bound is the faster engine up to about 60 columns and HiGHS
beyond (a node costs more as the core grows, and more nodes are needed)."""

SLACK = 1e-3
"""Margin on floating-point bounds: weights are integers, so a bound above
``best - 1 + SLACK`` proves no cheaper cover exists, with room for rounding."""


def minimum_cover(rows: Sequence[Sequence[int]], literals: Sequence[int],
                  time_limit: float) -> tuple[set[int], bool, int]:
    """Fewest columns hitting every row, then fewest literals among those.

    ``rows`` lists, for each row, the columns that cover it (every row has one);
    ``literals`` gives each column's literal count.  Returns ``(chosen, proven, lower)``:
    ``lower`` is a proven lower bound on the number of columns, equal to ``len(chosen)``
    when ``proven``.
    """
    big = sum(literals) + 1
    weights = [big + lit for lit in literals]  # one column outweighs all literals together
    taken: list[int] = []
    core = reduce_table({i: _mask(r) for i, r in enumerate(rows)}, weights, taken)
    chosen = set(taken)
    if not core:
        return chosen, True, len(chosen)
    start = time.monotonic()
    deadline = start + max(time_limit, 0.01)
    small = len(_columns(_union(core.values()))) <= BRANCH_CORE
    found: set[int] = set()
    if small:
        picked, found = search_core(core, weights, deadline)
        if picked is not None:
            return chosen | picked, True, len(chosen | picked)
    # A large core keeps a quarter of the time: should the programs not finish, the
    # priced search then looks for a better cover than the greedy one they fall back to.
    programs_until = deadline if small else start + 0.75 * (deadline - start)
    core_rows = [list(_columns(m)) for m in core.values()]
    picked, proven, lower = _lexicographic_ilp(core_rows, literals, weights,
                                               max(programs_until - time.monotonic(), 0.0))
    if proven:
        return chosen | picked, True, len(chosen) + lower
    if not small and time.monotonic() < deadline:
        _minimum, found = search_core(core, weights, deadline, quick_nodes=0)
    if found and _weight(found, weights) < _weight(picked, weights):
        picked = found
    return chosen | picked, False, len(chosen) + lower


def reduce_table(rows: dict[int, int], weights: Sequence[int],
                 taken: list[int]) -> dict[int, int] | None:
    """Cyclic core of a covering table (McCluskey 1956).

    Takes essential columns (appending them to ``taken``), drops a row when another row's
    columns are a subset of its own (covering that one covers it), and a column when
    another column, no costlier, covers all its rows; repeats until nothing changes.
    ``rows`` maps a row id to the mask of its columns.  Returns the remaining rows, or
    ``None`` when a row has no column left.  A kept row inside another has its lowest
    column in it, and a column's dominator shares its first row, so only those are
    compared.
    """
    while True:
        essential = 0
        for r in rows.values():
            if r == 0:
                return None
            if r & (r - 1) == 0:
                essential |= r
        if essential:
            taken.extend(_columns(essential))
            rows = {i: r for i, r in rows.items() if not r & essential}
            continue
        kept: dict[int, int] = {}
        kept_by_low: dict[int, list[int]] = {}
        for i in sorted(rows, key=lambda i: (rows[i].bit_count(), i)):
            r = rows[i]
            if any(k & ~r == 0 for j in _columns(r) for k in kept_by_low.get(j, ())):
                continue
            kept[i] = r
            kept_by_low.setdefault(_low(r), []).append(r)
        rows_of: dict[int, int] = {}  # column -> mask of the kept rows' positions
        first_row: dict[int, int] = {}
        for position, r in enumerate(kept.values()):
            for j in _columns(r):
                if j in rows_of:
                    rows_of[j] |= 1 << position
                else:
                    rows_of[j] = 1 << position
                    first_row[j] = r
        dominated = 0
        for b, covered in rows_of.items():
            for a in _columns(first_row[b]):
                if a == b or covered & ~rows_of[a]:
                    continue
                # a covers every row of b: b goes unless it is cheaper, or equal and first.
                if weights[a] < weights[b] or (weights[a] == weights[b]
                                               and (rows_of[a] != covered or a < b)):
                    dominated |= 1 << b
                    break
        if not dominated:
            return kept
        rows = {i: r & ~dominated for i, r in kept.items()}


def search_core(core: dict[int, int], weights: Sequence[int], deadline: float,
                quick_nodes: int = QUICK_NODES) -> tuple[set[int] | None, set[int]]:
    """Minimum-weight cover of a cyclic core by branch and bound (see the module text).

    ``quick_nodes`` bounds the search with zero prices that comes before the linear
    relaxation (0 skips it).

    Returns ``(minimum, best found)``: ``minimum`` is ``None`` when the node limits or the
    deadline stopped the search, and ``best found`` is the cheapest cover seen (empty if
    none).
    """
    columns = list(_columns(_union(core.values())))
    local = {j: c for c, j in enumerate(columns)}
    weight = [weights[j] for j in columns]
    rows = {i: _mask(local[j] for j in _columns(r)) for i, r in core.items()}
    search = _Search(weight, deadline)
    search.best_cost, search.best = _greedy_masks(rows, weight)
    quick = quick_nodes > 0 and search.run(rows, [0.0] * (max(rows) + 1), quick_nodes)

    def found() -> set[int]:
        return {columns[c] for c in search.best}

    if quick:
        return found(), found()
    solution, prices = _relaxation(rows, weight)
    if solution is not None:  # an integral relaxation is a minimum
        return {columns[c] for c in solution}, {columns[c] for c in solution}
    used, y = prices
    # The columns the relaxation uses first: a good cover early makes fixing bite.
    narrowed = {i: r & used for i, r in rows.items()}
    search.run(narrowed, y, PRICED_NODES)
    if search.run(rows, y, PRICED_NODES):
        return found(), found()
    return None, found()


class _Search:
    """Depth-first branch and bound over covering rows; the incumbent lives here."""

    def __init__(self, weight: list[int], deadline: float) -> None:
        self.weight = weight
        self.deadline = deadline
        self.best_cost = math.inf
        self.best: list[int] = []
        self.nodes = 0
        self.node_limit = 0
        self.prices: Sequence[float] = ()

    def run(self, rows: dict[int, int], prices: Sequence[float], node_limit: int) -> bool:
        """Search ``rows`` with the given row prices; True when it finished (the best
        cover is then a minimum of ``rows``)."""
        self.nodes, self.node_limit, self.prices = 0, node_limit, prices
        return self._visit(rows, 0, [])

    def _visit(self, rows: dict[int, int], cost: int, chosen: list[int]) -> bool:
        self.nodes += 1
        if self.nodes > self.node_limit or time.monotonic() > self.deadline:
            return False
        weight = self.weight
        while True:
            taken: list[int] = []
            core = reduce_table(rows, weight, taken)
            if core is None:
                return True
            rows = core
            cost += sum(weight[c] for c in taken)
            chosen = chosen + taken
            if not rows:
                if cost < self.best_cost:
                    self.best_cost, self.best = cost, chosen
                return True
            bound, reduced = _lagrangian_bound(rows, weight, self.prices)
            room = self.best_cost - 1 + SLACK - cost - bound
            if room < 0:
                return True
            # Reduced-cost fixing: a column that alone closes the room cannot help.
            useless = _mask(c for c in _columns(_union(rows.values()))
                            if reduced.get(c, weight[c]) > room)
            if not useless:
                break
            rows = {i: r & ~useless for i, r in rows.items()}
        # Branch on the row with fewest columns; siblings exclude the columns tried before.
        row = min(rows.values(), key=lambda r: (r.bit_count(), r))
        excluded = 0
        for c in sorted(_columns(row), key=lambda c: (reduced.get(c, weight[c]), c)):
            bit = 1 << c
            branch = {i: r & ~excluded for i, r in rows.items() if not r & bit}
            if not self._visit(branch, cost + weight[c], chosen + [c]):
                return False
            excluded |= bit
        return True


def _lagrangian_bound(rows: dict[int, int], weight: Sequence[int],
                      prices: Sequence[float]) -> tuple[float, dict[int, float]]:
    """Lower bound on the cheapest cover of ``rows``, and each column's reduced cost.

    With row prices ``y >= 0`` every cover costs at least ``sum(y)`` plus the negative
    reduced costs ``w_j - sum of y over column j's rows`` (Lagrangian relaxation).  Rows,
    fewest columns first, then raise their price by the least positive reduced cost of
    their columns, which lifts the bound by as much (dual ascent).
    """
    reduced: dict[int, float] = {}
    total = 0.0
    row_columns = []
    for i, r in rows.items():
        cols = _columns(r)
        row_columns.append(cols)
        price = prices[i]
        if price > 0:
            total += price
            for c in cols:
                reduced[c] = reduced.get(c, weight[c]) - price
    total += sum(v for v in reduced.values() if v < 0)
    for cols in sorted(row_columns, key=len):
        lift = min(reduced.get(c, weight[c]) for c in cols)
        if lift > 0:
            total += lift
            for c in cols:
                reduced[c] = reduced.get(c, weight[c]) - lift
    return total, reduced


def _relaxation(rows: dict[int, int], weight: Sequence[int]
                ) -> tuple[list[int] | None, tuple[int, list[float]]]:
    """The linear relaxation of the cover by HiGHS.

    Returns ``(integral solution or None, (mask of the columns it uses, row prices))``;
    the prices are the relaxation's duals, indexed by row id.
    """
    import numpy as np  # loaded only when an exact cover needs it (start-up time)
    from scipy.optimize import linprog
    from scipy.sparse import csr_matrix
    ids = sorted(rows)
    n_cols = len(weight)
    cells = [(p, c) for p, i in enumerate(ids) for c in _columns(rows[i])]
    matrix = csr_matrix(([-1.0] * len(cells), ([p for p, _c in cells], [c for _p, c in cells])),
                        shape=(len(ids), n_cols))
    result = linprog(np.array(weight, dtype=float), A_ub=matrix, b_ub=-np.ones(len(ids)),
                     bounds=(0, 1), method="highs")
    prices = [0.0] * (max(ids) + 1)
    if result.status != 0:
        return None, ((1 << n_cols) - 1, prices)
    x = result.x
    if all(v < 1e-7 or v > 1 - 1e-7 for v in x):
        return [c for c in range(n_cols) if x[c] > 0.5], (0, prices)
    for p, i in enumerate(ids):
        prices[i] = max(float(-result.ineqlin.marginals[p]), 0.0)
    return None, (_mask(c for c in range(n_cols) if x[c] > 1e-7), prices)


def _greedy_masks(rows: dict[int, int], weight: Sequence[int]) -> tuple[int, list[int]]:
    """A cover by repeatedly taking the column with least weight per newly covered row."""
    left = list(rows.values())
    picked: list[int] = []
    while left:
        counts: dict[int, int] = {}
        for r in left:
            for c in _columns(r):
                counts[c] = counts.get(c, 0) + 1
        best = min(counts, key=lambda c: (weight[c] / counts[c], c))
        picked.append(best)
        left = [r for r in left if not r >> best & 1]
    return sum(weight[c] for c in picked), picked


def _lexicographic_ilp(rows: list[list[int]], literals: Sequence[int],
                       weights: Sequence[int], time_limit: float) -> tuple[set[int], bool, int]:
    """Minimum cover of a cyclic core by 0-1 integer programs (HiGHS), terms first.

    The linear relaxation bounds the number of terms from below; starting at its ceiling
    ``k``, minimize literals subject to covering every row with at most ``k`` columns,
    and raise ``k`` while that is infeasible.  The first feasible ``k`` is the minimum
    number of terms, and its solution the fewest literals among such covers.  Measured on
    random 10-input cores, this is several times faster than one program with the two
    costs folded into a single weighted objective (the relaxation is usually within one
    term of the optimum, so one or two programs are solved).
    ``weights`` (terms first, folded) rank the greedy cover returned when time runs out.
    Returns ``(picked, proven, lower bound on the number of terms)``.
    """
    import numpy as np  # loaded only when an exact cover needs it (start-up time)
    from scipy.optimize import Bounds, LinearConstraint, linprog, milp
    from scipy.sparse import csr_matrix, vstack
    deadline = time.monotonic() + max(time_limit, 0.01)
    columns = sorted({j for r in rows for j in r})
    index = {j: i for i, j in enumerate(columns)}
    data, row_ix, col_ix = [], [], []
    for i, r in enumerate(rows):
        for j in r:
            data.append(1.0)
            row_ix.append(i)
            col_ix.append(index[j])
    n_rows, n_cols = len(rows), len(columns)
    cover = csr_matrix((data, (row_ix, col_ix)), shape=(n_rows, n_cols))
    relaxed = linprog(np.ones(n_cols), A_ub=-cover, b_ub=-np.ones(n_rows), bounds=(0, 1),
                      method="highs")
    k = math.ceil(relaxed.fun - 1e-6) if relaxed.status == 0 else 1
    with_count = vstack([cover, csr_matrix(np.ones((1, n_cols)))]).tocsr()
    cost = np.array([literals[j] for j in columns], dtype=float)
    lower_rows = np.r_[np.ones(n_rows), -np.inf]
    while True:
        left = deadline - time.monotonic()
        if left <= 0:
            break
        result = milp(cost, integrality=np.ones(n_cols), bounds=Bounds(0, 1),
                      constraints=LinearConstraint(with_count, lb=lower_rows,
                                                   ub=np.r_[np.full(n_rows, np.inf), k]),
                      # The objective is integral: a zero gap proves the literal count.
                      options={"time_limit": left, "disp": False, "mip_rel_gap": 0.0})
        if result.status == 2:  # infeasible: k terms cannot cover the core
            k += 1
            continue
        if result.x is not None:
            picked = {columns[i] for i, v in enumerate(result.x) if v > 0.5}
            return picked, result.status == 0, k
        break
    _cost, greedy = _greedy_masks({i: _mask(index[j] for j in r) for i, r in enumerate(rows)},
                                  [weights[j] for j in columns])
    return {columns[c] for c in greedy}, False, k


def petrick(rows: Sequence[Sequence[int]], weights: Sequence[int]) -> set[int]:
    """Petrick's method: multiply out the product of sums of covering columns and keep the
    cheapest product.  Exponential; the reference for small covering problems.

    References
    ----------
    Petrick, S. R., "A direct determination of the irredundant forms of a Boolean
    function from the set of prime implicants", AFCRC-TR-56-110, 1956.
    """
    products: set[frozenset[int]] = {frozenset()}
    for row in rows:
        products = {p | {j} for p in products for j in row}
        # absorption: drop products that contain another
        products = {p for p in products if not any(q < p for q in products)}
    best = min(products, key=lambda p: (sum(weights[j] for j in p), sorted(p)))
    return set(best)


def _union(masks: Iterable[int]) -> int:
    out = 0
    for m in masks:
        out |= m
    return out


def _weight(columns: set[int], weights: Sequence[int]) -> int:
    return sum(weights[j] for j in columns)


def _mask(columns: object) -> int:
    out = 0
    for j in columns:  # type: ignore[attr-defined]
        out |= 1 << j
    return out


def _low(mask: int) -> int:
    return (mask & -mask).bit_length() - 1


@lru_cache(maxsize=1 << 14)
def _columns(mask: int) -> tuple[int, ...]:
    """The set bits of ``mask``, lowest first (cached: the same rows recur across nodes)."""
    return tuple(bits_of(mask))
