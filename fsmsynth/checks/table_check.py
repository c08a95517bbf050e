"""What a valid table leaves open: unreachable states and unspecified input combinations.

These are reported, not rejected: a don't care is often intended, and an unreachable state
may be a placeholder.  Designers of machinery should still read the report (see README,
"Cautions").
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from fsmsynth.checks.spec_warnings import SpecWarning, reachable_states, spec_warnings
from fsmsynth.language.guards import guard_text
from fsmsynth.logic.cube import Cube, sharp
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.table import StateTable


@dataclass(frozen=True, slots=True)
class TableReport:
    """Findings about a table.

    Attributes
    ----------
    reachable:
        States reachable from reset, in declaration order.
    unreachable:
        States no sequence of specified transitions reaches from reset.
    unspecified:
        ``(state, cubes)`` for each state with input combinations that no row lists, as
        disjoint input cubes.
    inputs:
        The table's input names, so that :meth:`lines` can write those cubes as guards.
    dont_care_next:
        ``(state, input cube)`` of rows whose next state is a don't care.
    warnings:
        What the spec says that its designer may not have meant
        (:func:`fsmsynth.checks.spec_warnings.spec_warnings`), less the accepted ones.
    """

    reachable: tuple[str, ...]
    unreachable: tuple[str, ...]
    unspecified: tuple[tuple[str, tuple[str, ...]], ...]
    dont_care_next: tuple[tuple[str, str], ...]
    inputs: tuple[str, ...] = ()
    warnings: tuple[SpecWarning, ...] = ()

    @property
    def completely_specified(self) -> bool:
        """Whether every state has a next state for every input combination."""
        return not self.unspecified and not self.dont_care_next

    def lines(self, *, besides_warnings: bool = False) -> list[str]:
        """The findings as sentences; with ``besides_warnings``, those a warning says
        already are left out."""
        out = []
        warned = {(w.id, w.subject) for w in self.warnings} if besides_warnings else set()
        if self.unreachable and not warned & {("unreachable-state", s) for s in self.unreachable}:
            out.append(f"unreachable from reset: {', '.join(self.unreachable)}")
        for state, cubes in self.unspecified:
            if ("uncovered-inputs", state) in warned:
                continue
            guards = " | ".join(
                f"({g})" if "&" in g and len(cubes) > 1 else g
                for g in (guard_text(Cube.from_string(c), self.inputs) for c in cubes))
            out.append(f"state {state!r}: nothing covers {guards} "
                       "(next state and outputs are don't cares there)")
        for state, cube in self.dont_care_next:
            out.append(f"state {state!r}: next state is a don't care for inputs {cube!r}")
        return out


@exclusive
def check_table(table: StateTable, accept: Sequence[str] = ()) -> TableReport:
    """Report what ``table`` leaves unspecified, and its warnings less those ``accept``
    names.  Cost: O(rows^2 x inputs) in the worst case."""
    reachable = reachable_states(table)
    reached = set(reachable)
    n = len(table.inputs)
    unspecified = []
    for state in table.states:
        left = [Cube.universe()]
        for _s, cube, _n, _o in table.rows_of(state):
            c = Cube.from_string(cube)
            left = [piece for part in left for piece in sharp(part, c)]
        if left:
            unspecified.append((state, tuple(sorted(p.to_string(n) for p in left))))
    dont_care = tuple((r[0], r[1]) for r in table.rows if r[2] is None)
    return TableReport(
        reachable=reachable,
        unreachable=tuple(s for s in table.states if s not in reached),
        unspecified=tuple(unspecified),
        dont_care_next=dont_care,
        inputs=table.inputs,
        warnings=spec_warnings(table, accept),
    )
