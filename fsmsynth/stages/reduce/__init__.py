"""State minimization: the smallest machine that behaves like the table.

Completely specified machines (every reachable state has a next state and every output for
every input) are reduced exactly by Hopcroft's partition refinement.  Incompletely specified
machines need a covering problem: compatible pairs from the implication chart, maximal
compatibles, prime compatibles, and a minimum closed cover found by branch and bound under
a time limit.  In both cases the input space is split only into the classes the rows
actually distinguish, so a machine with many inputs is never expanded to ``2**inputs``
columns.

References
----------
Hopcroft, J. E., "An n log n algorithm for minimizing states in a finite automaton",
*Theory of Machines and Computations*, Academic Press, 1971.
Paull, M. C. and Unger, S. H., "Minimizing the number of states in incompletely specified
sequential switching functions", *IRE Trans. Electronic Computers* EC-8, 1959.
Grasselli, A. and Luccio, F., "A method for minimizing the number of internal states in
incompletely specified sequential networks", *IEEE Trans. Electronic Computers* EC-14, 1965.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from fsmsynth.base.errors import OptionError
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.regions import completely_specified, state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.reduce.complete import _from_partition, _refine, _refine_local
from fsmsynth.stages.reduce.incomplete import _closed_cover, _LocalBehaviour
from fsmsynth.stages.reduce.reduced_table import _from_cover, _from_local_cover
from fsmsynth.stages.reduce.tabulation import (
    LOCAL_ABOVE,
    StateMinimization,
    _Behaviour,
    _dense,
    _pair_rank,
    _reachable,
    _RowArrays,
    _tabulate,
)


@exclusive
def minimize_states(table: StateTable, reachable_only: bool = True, *,
                    time_limit: float = 10.0) -> StateMinimization:
    """The smallest table that realizes ``table``, with the classes of merged states.

    Parameters
    ----------
    table:
        The machine.
    reachable_only:
        Drop states unreachable from reset first (reported in ``unreachable``).  With
        ``False`` every state is kept and classed, as textbook reductions do.
    time_limit:
        Seconds for the exact closed-cover search of an incompletely specified machine; when
        it runs out the best closed cover found is returned with ``proven=False``.

    Returns
    -------
    StateMinimization

    Notes
    -----
    Completely specified: partition refinement in O(k n log n) for n states and k input
    classes (see :func:`_refine`).  Incompletely specified: exponential in the worst case
    (the problem is NP-hard), bounded by ``time_limit``.

    Examples
    --------
    >>> t = StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], reset="a", rows=[
    ...     ("a", "0", "b", "0"), ("a", "1", "c", "0"), ("b", "-", "a", "1"),
    ...     ("c", "-", "a", "1")])
    >>> r = minimize_states(t)
    >>> r.table.states, sorted(r.classes["b"])
    (('a', 'b'), ['b', 'c'])
    """
    rows = _RowArrays.of(table)
    kept = np.ones(len(table.states), dtype=bool)
    if reachable_only:
        kept = _reachable(rows, len(table.states), table.states.index(table.reset))
    unreachable = tuple(s for s, k in zip(table.states, kept.tolist()) if not k)
    if not (isinstance(time_limit, (int, float)) and math.isfinite(time_limit)
            and time_limit > 0):
        raise OptionError(f"time limit {time_limit!r}: give a finite number of seconds > 0")
    tab = _tabulate(table, rows, kept, LOCAL_ABOVE)
    if tab is None:
        return _minimize_local(table, rows, kept, unreachable, time_limit)
    if tab.complete:
        # States start together when their outputs agree under every input class (there
        # is always at least one class; Moore outputs are the same in all of them).
        initial = _dense(tab.output_id[:, 0])
        if table.kind == "mealy":
            for a in range(1, tab.output_id.shape[1]):
                initial = _pair_rank(initial, tab.output_id[:, a])
        return _from_partition(table, rows, tab.states, tab.kept,
                               _refine(tab.next_state, initial), unreachable,
                               len(tab.classes), "hopcroft")
    beh = _Behaviour.of(tab)
    cover, proven = _closed_cover(beh, time_limit)
    return _from_cover(table, beh, cover, proven, unreachable)


def _minimize_local(table: StateTable, rows: _RowArrays, kept: np.ndarray,
                    unreachable: tuple[str, ...], time_limit: float) -> StateMinimization:
    """:func:`minimize_states` for tables whose rows distinguish many input classes."""
    states = tuple(s for s, k in zip(table.states, kept.tolist()) if k)
    regions = state_regions(table)
    widest = max((len(table.rows_of(s)) for s in states), default=0)
    if all(completely_specified(regions[s]) for s in states):
        block = _refine_local(table, states, regions)
        return replace(_from_partition(table, rows, states, kept, block, unreachable, widest,
                                       "moore rounds"), input_partition="local")
    beh = _LocalBehaviour(table, states, regions)
    cover, proven = _closed_cover(beh, time_limit)
    return _from_local_cover(table, beh, cover, proven, unreachable, widest)
