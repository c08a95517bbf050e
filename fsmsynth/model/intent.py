"""What a specification says about how it is meant, beyond its rows.

The spec warnings (:mod:`fsmsynth.checks.warnings`) read it: whether input combinations that
no transition covers were declared don't cares on purpose, which states are final (never
left, on purpose), which warnings the spec accepts, and where in the spec file each state,
input and output is written, so that a warning can name its line.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

from fsmsynth.base.frozen import FrozenMap


@dataclass(frozen=True, slots=True)
class Intent:
    """How a table is meant.

    Attributes
    ----------
    gaps_said:
        Whether what no transition covers was declared on purpose: ``True`` for a table of
        rows (an unlisted point is a don't care by the table's form) and for guarded
        transitions that say ``otherwise``; ``False`` for guarded transitions that leave it
        unsaid (the ``uncovered-inputs`` warning).
    final:
        States meant never to be left (no ``no-exit`` warning for them).
    accept:
        Warnings the spec accepts: an identifier (``"unread-input"``) or an identifier and
        its subject (``"unread-input:spare"``).
    source:
        The spec file, when the table was read from one.
    lines:
        ``"state:NAME"``, ``"input:NAME"``, ``"output:NAME"`` -> the line that introduces it in
        ``source``.  Neither ``source`` nor ``lines`` takes part in equality.
    """

    gaps_said: bool = True
    final: tuple[str, ...] = ()
    accept: tuple[str, ...] = ()
    source: str | None = field(default=None, compare=False)
    lines: Mapping[str, int] = field(default_factory=lambda: FrozenMap({}), compare=False)

    def line_of(self, kind: str, name: str) -> int | None:
        """The line that introduces ``name`` (a ``"state"``, ``"input"`` or ``"output"``)."""
        return self.lines.get(f"{kind}:{name}")


TABLE_OF_ROWS = Intent()
"""The intent of a table given as rows: every gap a don't care, nothing final or accepted."""
