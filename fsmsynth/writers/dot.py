"""Graphviz DOT text: the state diagram of a table and a schematic of a netlist.

The text is always produced; :func:`render` turns it into SVG or PNG when Graphviz's
``dot`` program is installed.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

from fsmsynth.base.errors import OptionError
from fsmsynth.model.table import StateTable
from fsmsynth.stages.netlist import Netlist


def _q(text: str) -> str:
    return json.dumps(text)


def write_state_diagram(table: StateTable) -> str:
    """State diagram: one node per state (the reset state marked by an arrow from nowhere),
    one edge per (state, next state, outputs) labelled with its input cubes.

    Mealy edges read ``inputs / outputs``; Moore nodes carry their outputs.  Cubes list the
    inputs in declared order (named in the graph label); rows whose next state is a don't
    care are drawn as dashed edges to a ``?`` node.
    """
    title = (f"{table.name}: inputs {' '.join(table.inputs)} / "
             f"outputs {' '.join(table.outputs)}")
    lines = [f"digraph {_q(table.name)} {{", "  rankdir=LR;", f"  label={_q(title)};",
             "  labelloc=t;", "  node [shape=circle, fontname=Helvetica];",
             "  edge [fontname=Helvetica, fontsize=10];",
             "  start [shape=point, label=\"\"];"]
    for s in table.states:
        label = s if table.kind == "mealy" else f"{s}\n{table.output_cube_of(s)}"
        lines.append(f"  {_q(s)} [label={_q(label)}];")
    lines.append(f"  start -> {_q(table.reset)};")
    edges: dict[tuple[str, str | None, str], list[str]] = {}
    for state, cube, nxt, out in table.rows:
        key = (state, nxt, out if table.kind == "mealy" and out else "")
        edges.setdefault(key, []).append(cube or "-")
    if any(nxt is None for _s, nxt, _o in edges):
        lines.append("  unknown [shape=plaintext, label=\"?\"];")
    for (state, nxt, out), cubes in edges.items():
        label = ", ".join(cubes) + (f" / {out}" if out else "")
        target = _q(nxt) if nxt is not None else "unknown"
        style = "" if nxt is not None else ", style=dashed"
        lines.append(f"  {_q(state)} -> {target} [label={_q(label)}{style}];")
    lines.append("}")
    return "\n".join(lines) + "\n"


_SHAPES = {"not": "invtriangle", "buf": "triangle", "and": "box", "or": "ellipse",
           "const0": "plaintext", "const1": "plaintext"}


def write_netlist_dot(netlist: Netlist) -> str:
    """Schematic of a netlist: inputs, gates, flip-flops and outputs joined by their nets."""
    lines = [f"digraph {_q(netlist.name)} {{", "  rankdir=LR;",
             "  node [fontname=Helvetica, fontsize=10];"]
    driver: dict[str, str] = {}  # net -> DOT endpoint of what drives it
    for i in netlist.inputs:
        lines.append(f"  {_q('in:' + i)} [shape=cds, label={_q(i)}];")
        driver[i] = _q("in:" + i)
    for ff in netlist.flip_flops:
        pins = "|".join(f"<{p.lower()}>{p}" for p, _n in ff.pins)
        record = "{{" + pins + "}|" + f"{ff.storage.name.upper()} Q{ff.bit}" + "|<q>Q}"
        lines.append(f"  {_q(ff.name)} [shape=record, label={_q(record)}];")
        driver[ff.q] = _q(ff.name) + ":q"
    for g in netlist.gates:
        label = g.kind.upper() if not g.kind.startswith("const") else g.kind[-1]
        lines.append(f"  {_q(g.name)} [shape={_SHAPES.get(g.kind, 'box')}, label={_q(label)}];")
        driver[g.output] = _q(g.name)
    for g in netlist.gates:
        for net in g.inputs:
            lines.append(f"  {driver[net]} -> {_q(g.name)};")
    for ff in netlist.flip_flops:
        for pin, net in ff.pins:
            lines.append(f"  {driver[net]} -> {_q(ff.name)}:{pin.lower()};")
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
