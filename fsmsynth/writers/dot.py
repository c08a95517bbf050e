"""Graphviz DOT text: the state diagram of a table, in the words of its spec (guards over
named inputs, outputs by name), and a schematic of a netlist.

The text is always produced; :func:`render` turns it into SVG or PNG when Graphviz's
``dot`` program is installed.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from fsmsynth.base.errors import OptionError
from fsmsynth.base.names import did_you_mean, port_spans
from fsmsynth.checks.spec_warnings import SpecWarning, reachable_states
from fsmsynth.language.guards import short_guard
from fsmsynth.logic import bdd
from fsmsynth.model.regions import StateRegions, pieces, state_regions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.netlist import Netlist


def _q(text: str) -> str:
    return json.dumps(text)


def write_state_diagram(table: StateTable, *, warnings: Sequence[SpecWarning] = (),
                        focus: Sequence[str] = (),
                        notes: Mapping[str, Sequence[str]] | None = None) -> str:
    """State diagram in the designer's words: one node per state, one edge per (state,
    next state) pair, labelled with the conditions (guards over the named inputs and
    vectors, minimized per state) and the outputs each sets by name (``pump=1 level=3``;
    outputs at 0 are left out).

    Moore nodes carry their outputs.  A transition every state takes alike (an emergency
    stop) is drawn once, from an ``every state`` box, and left out of the states' own
    conditions, which are tried after it.  The reset state has an arrow from nowhere;
    unreachable states are grey and dashed; states some warning names are orange, with the
    warning in their tooltip.  Open next states go dashed to a ``?`` node.

    A machine of many states reads best a part at a time: with ``focus`` only those states,
    the states they go to and the states that go to them are drawn, with the edges into and
    out of the focus states (neighbours are drawn grey).  ``notes`` adds lines under a
    state's name (the timers a state waits on: ``purge: 300 cycles``).
    """
    for state in focus:
        if state not in table.states:
            raise OptionError(f"focus: no state {state!r}{did_you_mean(state, table.states)}")
    var = bdd.variables(len(table.inputs))
    regions = state_regions(table, var)
    groups = {s: _groups(table, s, regions[s]) for s in table.states}
    reachable = set(reachable_states(table))
    every = _every_state(table, groups, reachable)
    shown = _shown(table, groups, every, focus)

    def drawn(a: str | None, b: str | None) -> bool:
        return not focus or a in focus or b in focus
    title = f"{table.name} ({table.kind})"
    lines = [f"digraph {_q(table.name)} {{", "  rankdir=LR;", f"  label={_q(title)};",
             "  labelloc=t;", "  nodesep=0.35;", "  ranksep=0.6;",
             "  node [shape=ellipse, fontname=Helvetica, fontsize=11];",
             "  edge [fontname=Helvetica, fontsize=9];"]
    warned: dict[str, list[str]] = {}
    for w in warnings:
        if w.subject in table.states:
            warned.setdefault(w.subject, []).append(f"[{w.id}] {w.message}")
    for s in (x for x in table.states if x in shown):
        label = s
        if table.kind == "moore":
            said = _said(table.output_cube_of(s), table.outputs)
            label += f"\n{said}" if said else ""
        for note in (notes or {}).get(s, ()):
            label += f"\n{note}"
        attrs = [f"label={_q(label)}"]
        if s == table.reset:
            attrs.append("peripheries=2")
        if s not in reachable:
            attrs += ["style=dashed", "color=grey50", "fontcolor=grey50"]
        if s in warned:
            attrs += ["color=darkorange", "penwidth=2", f"tooltip={_q(' '.join(warned[s]))}"]
        if focus and s not in focus:
            attrs += ["fontcolor=grey40", "color=grey60"]
        lines.append(f"  {_q(s)} [{', '.join(attrs)}];")
    if table.reset in shown:
        lines += ["  start [shape=point, label=\"\"];", f"  start -> {_q(table.reset)};"]
    open_next = False
    if any(drawn(None, to) for to, _w in every):
        lines.append("  every [shape=box, style=rounded, label=\"every state\"];")
        for (to, word), points in every.items():
            if not drawn(None, to):
                continue
            text = short_guard(points, bdd.ZERO, var, table.inputs)
            lines.append(f"  every -> {_q(to)} [label={_q(_edge(text, word, table))}, "
                         "style=bold];")
    taken = bdd.ZERO
    for points in every.values():
        taken |= points
    for s in (x for x in table.states if x in shown):
        by_target: dict[str | None, list[str]] = {}
        covered = bdd.ZERO
        for points in groups[s].values():
            covered |= points
        free = taken | ~covered  # what every state does first, and what nothing specifies
        for (nxt, word), points in groups[s].items():
            own = points & ~taken
            if own.is_zero() or not drawn(s, nxt):
                continue
            text = short_guard(own, free, var, table.inputs)
            by_target.setdefault(nxt, []).append(_edge(text, word, table))
        for nxt, labels in by_target.items():
            target = _q(nxt) if nxt is not None else "unknown"
            style = "" if nxt is not None else ", style=dashed"
            open_next |= nxt is None
            lines.append(f"  {_q(s)} -> {target} [label={_q(chr(10).join(labels))}{style}];")
    if open_next:
        lines.append("  unknown [shape=plaintext, label=\"?\"];")
    lines.append("}")
    return "\n".join(lines) + "\n"


def _shown(table: StateTable, groups: dict[str, dict[tuple[str | None, str], Any]],
           every: dict[tuple[str, str], Any], focus: Sequence[str]) -> set[str]:
    """The states to draw: all, or the focus states and their neighbours."""
    if not focus:
        return set(table.states)
    shown = set(focus)
    for s in table.states:
        for nxt, _word in groups[s]:
            if s in focus and nxt is not None:
                shown.add(nxt)
            if nxt in focus:
                shown.add(s)
    shown |= {to for to, _w in every if to in focus}
    return shown


def _said(word: str, outputs: tuple[str, ...]) -> str:
    """``pump=1 level=3``: the outputs a word sets to something other than 0, by name
    (free ones and zeros left out)."""
    parts = []
    for port, _width, span in port_spans(outputs):
        chars = word[span]
        if "1" in chars and "-" not in chars:
            parts.append(f"{port}={int(chars, 2)}")
        elif "1" in chars:
            parts.append(f"{port}={chars}")
    return " ".join(parts)


def _edge(guard: str, word: str, table: StateTable) -> str:
    said = _said(word, table.outputs) if table.kind == "mealy" else ""
    return guard + (f" / {said}" if said else "")


def _groups(table: StateTable, state: str, here: StateRegions) -> dict[tuple[str | None, str], Any]:
    """A state's input points by (next state, output word), leaving out the points where
    nothing is specified."""
    found: dict[tuple[str | None, str], Any] = {}
    n_out = len(table.outputs) if table.kind == "mealy" else 0
    for points, nxt, word in pieces(here, n_out):
        if nxt is None and set(word) <= {"-"}:
            continue
        found[nxt, word] = found[nxt, word] | points if (nxt, word) in found else points
    return found


def _every_state(table: StateTable, groups: dict[str, dict[tuple[str | None, str], Any]],
                 reachable: set[str]) -> dict[tuple[str, str], Any]:
    """Transitions every reachable state takes alike, when there are three states or more:
    the same next state and outputs on the same input points in every state (the target may
    add points of its own), which is what ``[[every_state]]`` entries say."""
    states = [s for s in table.states if s in reachable]
    if len(states) < 3:
        return {}
    found = {}
    for key in groups[states[0]]:
        if key[0] is None or not all(key in groups[s] for s in states):
            continue
        common = bdd.ONE
        for s in states:
            common &= groups[s][key]
        # What every state does alike, and nothing more in any state but the target (whose
        # own transitions to itself may say the same): not a coincidence of conditions.
        alike = all((groups[s][key] ^ common).is_zero() for s in states if s != key[0])
        if alike and not common.is_zero():
            found[key] = common
    return found  # type: ignore[return-value]


_SHAPES = {"not": "invtriangle", "buf": "triangle", "and": "box", "or": "ellipse",
           "const0": "plaintext", "const1": "plaintext"}


def write_netlist_dot(netlist: Netlist) -> str:
    """Schematic of a netlist, structural or mapped: inputs on the left, outputs on the
    right, flip-flops as records of their pins, and each gate, library cell or look-up table
    labelled with what it is (``AND``, ``NAND2``, ``LUT4``) and the net it drives, named as
    in the Verilog (``d0_p2``: the second product of ``D0``)."""
    lines = [f"digraph {_q(netlist.name)} {{", "  rankdir=LR;", "  nodesep=0.25;",
             "  ranksep=0.5;", "  node [fontname=Helvetica, fontsize=10];",
             "  edge [arrowsize=0.6];"]
    driver: dict[str, str] = {}  # net -> DOT endpoint of what drives it
    lines.append("  { rank=source; "
                 + " ".join(_q("in:" + i) for i in netlist.inputs) + " }")
    for i in netlist.inputs:
        lines.append(f"  {_q('in:' + i)} [shape=cds, label={_q(i)}];")
        driver[i] = _q("in:" + i)
    for ff in netlist.flip_flops:
        pins = "|".join(f"<{p.lower()}>{p}" for p, _n in ff.pins)
        record = "{{" + pins + "}|" + f"{ff.storage.name.upper()} Q{ff.bit}" + "|<q>Q}"
        lines.append(f"  {_q(ff.name)} [shape=record, label={_q(record)}];")
        driver[ff.q] = _q(ff.name) + ":q"
    for g in netlist.gates:
        what = g.cell or (g.kind.upper() if not g.kind.startswith("const") else g.kind[-1])
        net = g.output.removeprefix("fs_")
        label = what if g.kind.startswith("const") else f"{what}\n{net}"
        shape = "box" if g.table is not None else _SHAPES.get(g.kind, "box")
        lines.append(f"  {_q(g.name)} [shape={shape}, label={_q(label)}];")
        driver[g.output] = _q(g.name)
    for g in netlist.gates:
        for net in g.inputs:
            lines.append(f"  {driver[net]} -> {_q(g.name)};")
    for ff in netlist.flip_flops:
        for pin, net in ff.pins:
            lines.append(f"  {driver[net]} -> {_q(ff.name)}:{pin.lower()};")
    lines.append("  { rank=sink; "
                 + " ".join(_q("out:" + p) for p, _n in netlist.outputs) + " }")
    for port, net in netlist.outputs:
        lines.append(f"  {_q('out:' + port)} [shape=cds, label={_q(port)}];")
        lines.append(f"  {driver[net]} -> {_q('out:' + port)};")
    lines.append("}")
    return "\n".join(lines) + "\n"


def render(dot_text: str, fmt: str = "svg") -> bytes:
    """The picture, by Graphviz's ``dot``; raises FileNotFoundError when it is not installed."""
    program = shutil.which("dot")
    if program is None:
        raise FileNotFoundError("Graphviz 'dot' is not installed (apt-get install graphviz)")
    done = subprocess.run([program, f"-T{fmt}"], input=dot_text.encode(), capture_output=True,
                          check=True, timeout=120)
    return done.stdout


PICTURES = ("svg", "png", "pdf")
"""Picture formats ``dot`` renders; ``.dot`` and ``.gv`` files get the DOT text itself."""


def suffix_format(path: str | Path) -> str | None:
    """``"svg"``, ``"png"`` or ``"pdf"`` from a file name, ``None`` for DOT text (``.dot``,
    ``.gv``); OptionError for any other name, which would otherwise get DOT text under a
    picture's suffix."""
    ext = Path(path).suffix.lower().lstrip(".")
    if ext in ("dot", "gv"):
        return None
    if ext not in PICTURES:
        raise OptionError(f"{path}: write .dot or .gv for Graphviz text, or .svg, .png or "
                          ".pdf for a picture")
    return ext
