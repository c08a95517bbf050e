"""The report page of a design: ``fsmsynth build --report`` writes ``<name>.html``.

One self-contained page (:mod:`fsmsynth.writers.report_html`): the spec in brief and its
warnings, the state diagram as inline SVG (drawn by Graphviz when it is installed), the
codes, the equations, the cost, the comparison of storage kinds and encodings as a chart
(when one is given), the glitch report, the timing critical path, the invariants' proofs,
and the first cycles of a run of the machine as a waveform.
"""

from __future__ import annotations

import html
from collections.abc import Sequence

from fsmsynth.checks.timing import timing
from fsmsynth.checks.trace import Trace, replay
from fsmsynth.flows.compare import Comparison
from fsmsynth.flows.design import Design
from fsmsynth.model.table import StateTable
from fsmsynth.writers.dot import render, write_state_diagram
from fsmsynth.writers.report_html import (
    Section,
    bar_chart_svg,
    table_html,
    text_block,
    waveform_svg,
    write_report_page,
)

SECTIONS = ("summary", "diagram", "encoding", "equations", "cost", "comparison", "glitches",
            "timing", "invariants", "waveform")
"""The sections' anchors, in page order (``comparison`` only when one is given)."""


def report_page(design: Design, *, comparison: Comparison | None = None,
                cycles: int = 16) -> str:
    """The report page of ``design`` (see the module docstring); the same design gives the
    same page."""
    table = design.table
    sections = [
        Section("summary", "Summary", _summary(design)),
        Section("diagram", "State diagram", _diagram(design)),
        Section("encoding", "State codes", table_html(
            [["state", "code"]] + [[s, design.encoding.code_string(s)]
                                   for s in design.encoded_table.states])),
        Section("equations", "Equations",
                text_block("\n".join(str(eq) for eq in design.equations.values()))),
        Section("cost", "Cost", table_html(
            [["figure", "value"]] + [[k, v] for k, v in design.cost.as_dict().items()
                                     if not isinstance(v, dict)])),
    ]
    if comparison is not None:
        bars = [(f"{r.storage} / {r.encoding}", float(r.total)) for r in comparison.rows]
        sections.append(Section("comparison", "Comparison", bar_chart_svg(bars)))
    report = timing(design)
    sections += [
        Section("glitches", "Glitches", text_block("\n".join(design.glitches.lines()))),
        Section("timing", "Timing (default delays)", text_block("\n".join(report.lines()))),
        Section("invariants", "Invariants", text_block(
            design.invariants.summary() if design.invariants is not None
            and design.invariants.invariants else "no invariants in the spec")),
        Section("waveform", f"The first {cycles} cycles of a run from reset",
                waveform_svg(walk(design.reference, cycles), cycles=cycles)
                + '<p class="note">Inputs chosen to visit the states (each cycle the '
                "transition to the least visited next state); outputs as the table gives "
                "them, grey where free.</p>"),
    ]
    return write_report_page(f"{table.name}: fsmsynth design report", sections)


def walk(table: StateTable, cycles: int) -> Trace:
    """A run from reset that visits the states: each cycle, the row whose next state has
    been visited least (first in table order on ties), its free inputs at 0."""
    visits = dict.fromkeys(table.states, 0)
    state: str | None = table.reset
    words: list[str] = []
    for _ in range(cycles):
        if state is None:
            break
        visits[state] += 1
        rows = table.rows_of(state)
        if not rows:
            words.append("0" * len(table.inputs))
            state = None
            continue
        _s, cube, nxt, _o = min(rows, key=lambda r: visits.get(r[2] or "", 10 ** 9))
        words.append(cube.replace("-", "0"))
        state = nxt
    return replay(table, words)


def _summary(design: Design) -> str:
    t = design.table
    facts: list[Sequence[object]] = [
             ["machine", t.name], ["kind", t.kind], ["states", len(t.states)],
             ["encoded states", len(design.encoded_table.states)],
             ["inputs", " ".join(t.inputs)], ["outputs", " ".join(t.outputs)],
             ["reset", t.reset], ["storage", design.storage],
             ["encoding", design.encoding.method], ["unused codes", design.unused],
             ["verified", design.verification.summary() if design.verification else "no"]]
    warnings = "".join(f'<li class="warning">{html.escape(w.text())}</li>'
                       for w in design.warnings)
    return table_html([["fact", "value"], *facts]) + (
        f"<p>Warnings:</p><ul>{warnings}</ul>" if warnings else "<p>No warnings.</p>")


def _diagram(design: Design) -> str:
    dot = write_state_diagram(design.table, warnings=design.warnings)
    try:
        svg = render(dot, "svg").decode("utf-8")
    except FileNotFoundError:
        return ('<p class="note">Graphviz is not installed (apt-get install graphviz): the '
                "diagram's DOT text instead.</p>" + text_block(dot))
    return svg[svg.index("<svg"):]  # inline: no XML prolog or document type
