"""Warnings about what a spec says that its designer may not have meant.

A valid table can still say something surprising: a state whose transitions leave input
combinations to chance, a state the machine can never reach or never leave, an input
nothing reads, an output that is never 1.  Each is reported as a :class:`SpecWarning` with
a short identifier of fsmsynth's own (:data:`WARNINGS`), which a spec can accept
(``accept_warnings``), a run can accept (``--accept``), and ``--strict`` turns into an
error.  Nothing here changes the machine: these are questions to its designer.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from fsmsynth.base.errors import TableError
from fsmsynth.base.names import did_you_mean, port_spans, ports_of
from fsmsynth.language.guards import short_guard
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.table import StateTable

WARNINGS: dict[str, str] = {
    "uncovered-inputs": "a state's transitions leave input combinations uncovered and the spec "
                        "does not say `otherwise`",
    "unreachable-state": "no sequence of transitions reaches the state from reset",
    "no-exit": "a reachable state can never be left and is not declared `final`",
    "unread-input": "no transition reads the input",
    "output-never-1": "the output is never 1 (never set, or 0 or free everywhere)",
    "output-never-0": "the output is never 0 (1 or free everywhere)",
    "dont-care-transition": "a transition fires only where nothing is specified: its next "
                            "state and every output are don't cares",
}
"""Every warning by identifier, in the order they are reported.  The identifiers are
stable: specs and build scripts name them."""


@dataclass(frozen=True, slots=True)
class SpecWarning:
    """One warning: its identifier (a key of :data:`WARNINGS`), the state, input or output
    it is about, a sentence, and where the spec introduces the subject (file and line,
    when the table was read from a file)."""

    id: str
    subject: str
    message: str
    source: str | None = None
    line: int | None = None

    @property
    def key(self) -> str:
        """``id:subject``: what ``accept_warnings`` names to accept this warning alone."""
        return f"{self.id}:{self.subject}"

    def text(self) -> str:
        """One line: ``file:line: [id] message``."""
        where = (f"{self.source}:{self.line}: " if self.source and self.line else
                 f"{self.source}: " if self.source else "")
        return f"{where}[{self.id}] {self.message}"

    def as_dict(self) -> dict[str, object]:
        """For JSON reports."""
        return {"id": self.id, "subject": self.subject, "message": self.message,
                "file": self.source, "line": self.line}


def accept_problem(accepted: Iterable[str]) -> str | None:
    """Why an accepted warning is not one (an unknown identifier, with a suggestion)."""
    for item in accepted:
        if not isinstance(item, str):
            return f"accepted warnings are identifiers, not {item!r}"
        ident = item.split(":", 1)[0]
        if ident not in WARNINGS:
            return (f"unknown warning {ident!r}{did_you_mean(ident, list(WARNINGS))} "
                    f"(warnings: {', '.join(WARNINGS)})")
    return None


def accepted_by(warning: SpecWarning, accepted: Iterable[str]) -> bool:
    """Whether ``warning`` is accepted by one of ``accepted`` (``id`` or ``id:subject``)."""
    return any(a in (warning.id, warning.key) for a in accepted)


def reachable_states(table: StateTable) -> tuple[str, ...]:
    """States reachable from reset through specified transitions, in declaration order."""
    seen = {table.reset}
    queue = deque([table.reset])
    while queue:
        state = queue.popleft()
        for _s, _c, nxt, _o in table.rows_of(state):
            if nxt is not None and nxt not in seen:
                seen.add(nxt)
                queue.append(nxt)
    return tuple(s for s in table.states if s in seen)


@exclusive
def spec_warnings(table: StateTable, accept: Sequence[str] = ()) -> tuple[SpecWarning, ...]:
    """The warnings of ``table``, in :data:`WARNINGS` order and then the table's order,
    leaving out those its spec accepts (``table.intent.accept``) and those in ``accept``.

    Raises :class:`~fsmsynth.base.errors.TableError` for an unknown identifier in either.
    """
    for given in (table.intent.accept, accept):
        problem = accept_problem(given)
        if problem:
            raise TableError(problem)
    reachable = reachable_states(table)
    found = [*_uncovered(table, reachable), *_unreachable(table, reachable),
             *_no_exit(table, reachable), *_unread(table), *_constant(table, reachable),
             *_dont_care(table)]
    found.sort(key=lambda w: list(WARNINGS).index(w.id))  # stable: table order kept within
    accepted = (*table.intent.accept, *accept)
    return tuple(w for w in found if not accepted_by(w, accepted))


def _warning(table: StateTable, ident: str, kind: str, subject: str,
             message: str) -> SpecWarning:
    return SpecWarning(ident, subject, message, table.intent.source,
                       table.intent.line_of(kind, subject))


def _uncovered(table: StateTable, reachable: Sequence[str]) -> list[SpecWarning]:
    if table.intent.gaps_said:
        return []
    var = bdd.variables(len(table.inputs))
    found = []
    for state in reachable:
        covered = bdd.ZERO
        for _s, cube, _n, _o in table.rows_of(state):
            covered |= bdd.cube_bdd(Cube.from_string(cube), var)
        if covered.is_one():
            continue
        guard = short_guard(~covered, bdd.ZERO, var, table.inputs)
        found.append(_warning(
            table, "uncovered-inputs", "state", state,
            f"state {state!r}: no transition covers {guard}; the next state and outputs "
            "there are left to the minimizer (write otherwise = \"stay\", or "
            "otherwise = \"dont-care\" to mean it)"))
    return found


def _unreachable(table: StateTable, reachable: Sequence[str]) -> list[SpecWarning]:
    return [_warning(table, "unreachable-state", "state", s,
                     f"state {s!r} is unreachable from reset {table.reset!r}")
            for s in table.states if s not in reachable]


def _no_exit(table: StateTable, reachable: Sequence[str]) -> list[SpecWarning]:
    var = bdd.variables(len(table.inputs))
    found = []
    for state in reachable:
        rows = table.rows_of(state)
        if state in table.intent.final or not rows or any(r[2] != state for r in rows):
            continue
        covered = bdd.ZERO
        for _s, cube, _n, _o in rows:
            covered |= bdd.cube_bdd(Cube.from_string(cube), var)
        if covered.is_one():
            found.append(_warning(
                table, "no-exit", "state", state,
                f"state {state!r} is never left: every transition stays in it (declare it "
                "in final if it is meant to be)"))
    return found


def _unread(table: StateTable) -> list[SpecWarning]:
    """Inputs on which nothing depends: in every state, the points that give each (next
    state, outputs) are the same whatever the input's bits (a BDD's support)."""
    var = bdd.variables(len(table.inputs))
    index = {v: i for i, v in enumerate(var)}
    read: set[int] = set()
    for state in table.states:
        results: dict[tuple[str | None, str | None], object] = {}
        for _s, cube, nxt, outs in table.rows_of(state):
            points = bdd.cube_bdd(Cube.from_string(cube), var)
            results[nxt, outs] = results.get((nxt, outs), bdd.ZERO) | points
        for points in results.values():
            read |= {index[v] for v in points.support}  # type: ignore[attr-defined]
    found, at = [], 0
    for port, width in ports_of(table.inputs):
        bits = set(range(at, at + (width or 1)))
        at += width or 1
        if not bits & read:
            found.append(_warning(table, "unread-input", "input", port,
                                  f"input {port!r} is never read: no transition depends on it"))
    return found


def _constant(table: StateTable, reachable: Sequence[str]) -> list[SpecWarning]:
    if table.kind == "moore":
        words = [table.output_cube_of(s) for s in reachable]
    else:
        words = [r[3] or "" for s in reachable for r in table.rows_of(s)]
    found = []
    for port, width, span in port_spans(table.outputs):
        chars = {c for w in words if w for c in w[span]}
        value = "all ones" if width else "1"
        if "1" not in chars:
            how = ("never set: free everywhere" if "0" not in chars else
                   "0 everywhere" if "-" not in chars else "0 or free everywhere")
            found.append(_warning(table, "output-never-1", "output", port,
                                  f"output {port!r} is never {'non-zero' if width else '1'} "
                                  f"({how})"))
        elif "0" not in chars:
            found.append(_warning(table, "output-never-0", "output", port,
                                  f"output {port!r} is never 0 ({value} "
                                  f"{'everywhere' if '-' not in chars else 'or free everywhere'})"))
    return found


def _dont_care(table: StateTable) -> list[SpecWarning]:
    var = bdd.variables(len(table.inputs))
    found = []
    for state in table.states:
        empty = bdd.ZERO
        for _s, cube, nxt, outs in table.rows_of(state):
            if nxt is None and set(outs or "-") <= {"-"}:
                empty |= bdd.cube_bdd(Cube.from_string(cube), var)
        if not empty.is_zero():
            guard = short_guard(empty, bdd.ZERO, var, table.inputs)
            found.append(_warning(
                table, "dont-care-transition", "state", state,
                f"state {state!r}: the transition under {guard} says nothing (next state "
                "\"-\" and every output free)"))
    return found


def warning_lines(warnings: Sequence[SpecWarning], *, limit: int = 5,
                  word: str = "warning") -> list[str]:
    """The warnings as lines, grouped by identifier: up to ``limit`` of each, then one line
    counting the rest (``warning: 12 more [unread-input] ...``)."""
    lines: list[str] = []
    for ident in WARNINGS:
        group = [w for w in warnings if w.id == ident]
        shown = group if len(group) <= limit else group[:limit - 1]
        lines += [f"{word}: {w.text()}" for w in shown]
        if len(group) > len(shown):
            rest = [w.subject for w in group[len(shown):]]
            subjects = ", ".join(rest[:8]) + (", ..." if len(rest) > 8 else "")
            lines.append(f"{word}: {len(group) - len(shown)} more [{ident}]: {subjects}")
    return lines



def strict_message(machine: str, warnings: Sequence[SpecWarning]) -> str:
    """What a strict build says when it refuses ``warnings``."""
    count = f"{len(warnings)} warning{'s' if len(warnings) != 1 else ''}"
    return "\n".join([f"{machine}: {count}, and strict builds refuse warnings (accept one "
                      "with accept_warnings in the spec, or --accept ID):",
                      *warning_lines(warnings, word="  error")])
