"""State assignment that looks for cheap logic, judged by the true cost after minimization.

Three searches, all scoring a candidate assignment by synthesizing its logic (excitation,
two-level minimization, cost) exactly as the final design will be built:

* ``adjacency``: the state-assignment rules of Armstrong (1962), in the priority order
  textbooks give them (Katz and Borriello, *Contemporary Logic Design*, 2nd ed., 2005,
  section 9.? "state assignment guidelines", from memory): (1) states with the same next
  state under the same input, (2) next states of one state, (3) states with the same
  output under the same input should get adjacent codes.  The rules give pair weights
  4, 2, 1; codes are placed in the hypercube to minimize the weighted Hamming distance
  (greedily, then improved by swaps, from several seeded starts).  The logic is not
  synthesized during the placement; it only chooses among the few best placements found
  and their bit-complemented forms, which the rules cannot tell apart.
* ``exhaustive``: every assignment (reset anywhere) when there are at most
  :data:`RAW_LIMIT`, otherwise one per class under permuting the state bits; each is
  synthesized, and one-hot is tried too.  Renaming state bits renames the logic, so the
  minimum two-level cost is the same across a class; only the minimizer's choice among
  equally cheap covers can differ, by a gate or so.  Complementing a bit is not a symmetry
  of the true cost (it complements D-input logic and moves inverters), so assignments are
  never merged under it.
* ``anneal``: simulated annealing over assignments (swap two states' codes, or move a
  state to an unused code), seeded and bounded by a step budget, started from the
  cheaper of binary and the ``adjacency`` result.

References
----------
Armstrong, D. B., "A programmed algorithm for assigning internal codes to sequential
machines", *IRE Trans. Electronic Computers* EC-11, 1962.
McCluskey, E. J. and Unger, S. H., "A note on the number of internal variable assignments
for sequential switching circuits", *IRE Trans. Electronic Computers* EC-8, 1959.
Kirkpatrick, S., Gelatt, C. D. and Vecchi, M. P., "Optimization by simulated annealing",
*Science* 220, 1983.
"""

from __future__ import annotations

from fsmsynth.stages.assign.adjacency import (
    ALL_POLARITIES_UP_TO,
    RULE_SCORES,
    RULE_STARTS,
    WEIGHTS_BY_CLASS_UP_TO,
    WIDE_EMBEDDINGS,
    adjacency_codes,
    adjacency_embeddings,
    adjacency_search,
    adjacency_weights,
)
from fsmsynth.stages.assign.anneal import anneal_search
from fsmsynth.stages.assign.exhaustive import (
    EXHAUSTIVE_LIMIT,
    RAW_LIMIT,
    count_assignments,
    count_candidates,
    exhaustive_assignments,
    exhaustive_search,
)
from fsmsynth.stages.assign.scoring import (
    SEARCHES,
    UNIT_DISTANCE_PENALTY,
    Scorer,
    SearchResult,
    min_width,
    transitions,
)

__all__ = [
    "ALL_POLARITIES_UP_TO",
    "EXHAUSTIVE_LIMIT",
    "RAW_LIMIT",
    "RULE_SCORES",
    "RULE_STARTS",
    "SEARCHES",
    "Scorer",
    "SearchResult",
    "UNIT_DISTANCE_PENALTY",
    "WEIGHTS_BY_CLASS_UP_TO",
    "WIDE_EMBEDDINGS",
    "adjacency_codes",
    "adjacency_embeddings",
    "adjacency_search",
    "adjacency_weights",
    "anneal_search",
    "count_assignments",
    "count_candidates",
    "exhaustive_assignments",
    "exhaustive_search",
    "min_width",
    "transitions",
]
