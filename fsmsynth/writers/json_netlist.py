"""The netlist as JSON, in fsmsynth's own documented schema (docs/guide/commands.md).

Schema ``fsmsynth-netlist``, version 1::

    {"schema": "fsmsynth-netlist", "version": 1, "module": NAME,
     "clock": "clk", "reset": "rst",
     "inputs": [NAME, ...], "outputs": [{"port": NAME, "net": NET}, ...],
     "gates": [{"name": G, "kind": "not|and|or|const0|const1|...|lut", "inputs": [NET, ...],
                "output": NET, "cell": CELL, "table": HEX}, ...],
     "flip_flops": [{"name": F, "kind": "d|t|jk|sr", "bit": B, "pins": {PIN: NET, ...},
                     "q": NET, "reset_value": 0|1, "reset_kind": "clear|set",
                     "edge": "rising|falling"}, ...],
     "cost": {...}}

``cell`` (the target's cell) and ``table`` (for kind ``lut``) appear only on mapped
netlists.  Keys are written in a fixed order and the text is byte-identical for equal netlists.
"""

from __future__ import annotations

import json
from collections.abc import Mapping

from fsmsynth.base.names import port_bits, ports_of
from fsmsynth.stages.netlist import Gate, Netlist

SCHEMA = "fsmsynth-netlist"
VERSION = 1


def netlist_data(netlist: Netlist, cost: Mapping[str, object] | None = None) -> dict[str, object]:
    """The netlist as plain JSON-ready data."""
    data: dict[str, object] = {
        "schema": SCHEMA,
        "version": VERSION,
        "module": netlist.name,
        "clock": netlist.clock,
        "reset": netlist.reset,
        "reset_style": netlist.reset_style,
        "reset_active": netlist.reset_active,
        "enable": netlist.enable,
        "inputs": list(netlist.inputs),
        "outputs": [{"port": p, "net": n} for p, n in netlist.outputs],
        # The module's ports as the Verilog declares them: a vector is one port whose bits
        # (most significant first) are the 1-bit names used everywhere else.
        "ports": [{"name": name, "direction": direction, "width": width or 1,
                   "bits": port_bits(name, width)}
                  for direction, names in (("input", netlist.inputs),
                                           ("output", [p for p, _n in netlist.outputs]))
                  for name, width in ports_of(names)],
        "gates": [_gate(g) for g in netlist.gates],
        "flip_flops": [{"name": ff.name, "kind": ff.storage.name, "bit": ff.bit,
                        "pins": {pin: net for pin, net in ff.pins}, "q": ff.q,
                        "reset_value": ff.reset_value, "reset_kind": ff.reset_kind,
                        "edge": ff.edge}
                       for ff in netlist.flip_flops],
    }
    if cost is not None:
        data["cost"] = dict(cost)
    return data


def write_json_netlist(netlist: Netlist, cost: Mapping[str, object] | None = None) -> str:
    """JSON text of the netlist (and its cost summary when given)."""
    return json.dumps(netlist_data(netlist, cost), indent=2) + "\n"


def _gate(g: Gate) -> dict[str, object]:
    """A gate; a target's cell also gives its name, a table gate its truth table (hex, bit
    m is the output when input i is m >> i & 1)."""
    entry: dict[str, object] = {"name": g.name, "kind": g.kind, "inputs": list(g.inputs),
                                "output": g.output}
    if g.cell:
        entry["cell"] = g.cell
    if g.table is not None:
        entry["table"] = f"{g.table:x}"
    return entry
