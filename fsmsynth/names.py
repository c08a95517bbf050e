"""Which names a table may give its machine, inputs and outputs.

Names become Verilog ports and equation variables, so they must be legal Verilog identifiers
(IEEE 1364-2005, section 3.7.1: a letter or underscore, then letters, digits, ``_`` or ``$``),
must not be reserved words (section 3.7.3 and annex B), and must not collide with the names
fsmsynth itself puts in the netlist and the equations.
"""

from __future__ import annotations

import re

_IDENTIFIER = re.compile(r"[A-Za-z_][A-Za-z0-9_$]*\Z")

# IEEE 1364-2005, annex B (list of keywords).
VERILOG_KEYWORDS = frozenset(
    """
    always and assign automatic begin buf bufif0 bufif1 case casex casez cell cmos config
    deassign default defparam design disable edge else end endcase endconfig endfunction
    endgenerate endmodule endprimitive endspecify endtable endtask event for force forever
    fork function generate genvar highz0 highz1 if ifnone incdir include initial inout input
    instance integer join large liblist library localparam macromodule medium module nand
    negedge nmos nor noshowcancelled not notif0 notif1 or output parameter pmos posedge
    primitive pull0 pull1 pulldown pullup pulsestyle_onevent pulsestyle_ondetect rcmos real
    realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1 scalared showcancelled
    signed small specify specparam strong0 strong1 supply0 supply1 table task time tran
    tranif0 tranif1 tri tri0 tri1 triand trior trireg unsigned use uwire vectored wait wand
    weak0 weak1 while wire wor xnor xor
    """.split()
)

# Ports every generated module has.
PORT_NAMES = frozenset({"clk", "rst"})

# Internal nets and cell modules of generated Verilog start with this prefix.
RESERVED_PREFIX = "fs_"

# Equation variables (Q0, Q1, ...) and flip-flop input names (D0, J2, E1, ...).
_EQUATION_NAME = re.compile(r"[QDTJKSRE][0-9]+\Z")


def name_problem(name: object) -> str | None:
    """Why ``name`` cannot name a machine, input or output, or ``None`` when it can."""
    if not isinstance(name, str) or not _IDENTIFIER.match(name):
        return (
            "is not a legal Verilog identifier: start with a letter or _, "
            "then use letters, digits, _ or $"
        )
    if name in VERILOG_KEYWORDS:
        return "is a Verilog keyword: choose another name"
    if name in PORT_NAMES:
        return "is the name of the clock or reset port of every generated module: rename it"
    if name.startswith(RESERVED_PREFIX):
        return f"starts with {RESERVED_PREFIX!r}, which is reserved for generated nets: rename it"
    if _EQUATION_NAME.match(name):
        return (
            "looks like a state variable or flip-flop input in the equations "
            "(Q0, D1, J2, ...): rename it"
        )
    return None
