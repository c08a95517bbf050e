"""A run of a machine cycle by cycle, for people and for waveform viewers.

Counterexamples (:class:`~fsmsynth.checks.proof.Counterexample`,
:class:`~fsmsynth.checks.invariants.InvariantViolation`) are input sequences from reset.
:func:`replay` turns one into a :class:`Trace`: per cycle the table's state, the inputs, the
outputs the table gives (``-`` where free) and, in the last cycle, what went wrong;
:meth:`Trace.table_text` writes it as a cycle table (inputs by name, vectors as numbers)
and :func:`write_trace_vcd` as a value change dump (IEEE 1364-2005, section 18), written
with pyvcd, with the state's name as a string variable any viewer shows.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from dataclasses import dataclass

from fsmsynth.base.names import port_spans, ports_of
from fsmsynth.checks.invariants import InvariantCheck
from fsmsynth.model.table import StateTable


@dataclass(frozen=True, slots=True)
class TraceCycle:
    """One clock cycle: the present state (``None`` once the table leaves it open), the
    input word, and the output cube the table gives."""

    state: str | None
    inputs: str
    outputs: str


@dataclass(frozen=True, slots=True)
class Trace:
    """A run from reset: the table's 1-bit input and output names, its cycles, and what
    the last cycle shows (``note``: the failure, in words)."""

    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    cycles: tuple[TraceCycle, ...]
    note: str = ""

    def rows(self) -> list[list[str]]:
        """The cycle table: a header, then per cycle its number, state, each input port
        and each output port (vectors as numbers; ``-`` where free)."""
        in_ports, out_ports = ports_of(self.inputs), ports_of(self.outputs)
        head = ["cycle", "state", *(p for p, _w in in_ports), *(p for p, _w in out_ports)]
        body = [[str(k), c.state or "?", *_values(c.inputs, self.inputs),
                 *_values(c.outputs, self.outputs)]
                for k, c in enumerate(self.cycles, start=1)]
        return [head, *body]

    def table_text(self, *, note: bool = True) -> str:
        """The cycle table as aligned text, the note last (unless ``note`` is false)."""
        rows = self.rows()
        widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
        lines = ["  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows]
        return "\n".join(lines + ([self.note] if self.note and note else [])) + "\n"


def _values(word: str, names: Sequence[str]) -> list[str]:
    out = []
    for _port, _width, span in port_spans(names):
        chars = word[span]
        out.append(str(int(chars, 2)) if "-" not in chars and chars else chars or "-")
    return out


def replay(table: StateTable, inputs: Sequence[str], note: str = "") -> Trace:
    """The table's run from reset under ``inputs`` (one ``0``/``1`` word per cycle)."""
    cycles: list[TraceCycle] = []
    state: str | None = table.reset
    for word in inputs:
        current = state
        if current is None:
            cycles.append(TraceCycle(None, word, "-" * len(table.outputs)))
            continue
        nxt, outs = table.lookup(current, word)
        cycles.append(TraceCycle(current, word, outs))
        state = nxt
    return Trace(table.inputs, table.outputs, tuple(cycles), note)


def violation_trace(table: StateTable, check: InvariantCheck) -> Trace | None:
    """The run that breaks an invariant, as a trace (``None`` when none breaks)."""
    broken = check.violation
    if broken is None:
        return None
    return replay(table, broken.inputs, broken.describe())


def write_trace_vcd(trace: Trace, name: str, *, period: int = 10) -> str:
    """The trace as VCD text: ``clk`` (rising at the middle of each cycle), every input and
    output port (vectors whole; free output bits as ``x``) and ``state`` (the state's
    name), one cycle per ``period`` nanoseconds.  The same trace gives the same text."""
    from vcd import VCDWriter  # loaded only when a waveform is written (start-up time)

    text = io.StringIO()
    with VCDWriter(text, timescale="1 ns", date="(fsmsynth: no date, for reproducible "
                   "files)", version="fsmsynth") as writer:
        clk = writer.register_var(name, "clk", "wire", size=1, init=0)
        state = writer.register_var(name, "state", "string", init="")
        ins = [(writer.register_var(name, p, "wire", size=w or 1), w, span)
               for p, w, span in port_spans(trace.inputs)]
        outs = [(writer.register_var(name, p, "wire", size=w or 1), w, span)
                for p, w, span in port_spans(trace.outputs)]
        for k, cycle in enumerate(trace.cycles):
            t = k * period
            writer.change(state, t, cycle.state or "?")
            for variables, word in ((ins, cycle.inputs), (outs, cycle.outputs)):
                for var, width, span in variables:
                    value = word[span].replace("-", "x")
                    writer.change(var, t, value if width else value[0])
            writer.change(clk, t + period // 2, 1)
            writer.change(clk, t + period - 1, 0)
    return text.getvalue()
