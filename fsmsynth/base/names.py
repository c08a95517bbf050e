"""Which names a table may give its machine, inputs and outputs.

Names become Verilog ports and equation variables, so they must be legal Verilog identifiers
(IEEE 1364-2005, section 3.7.1: a letter or underscore, then letters, digits, ``_`` or ``$``),
must not be reserved words (section 3.7.3 and annex B), and must not collide with the names
fsmsynth itself puts in the netlist and the equations.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Sequence

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


_BIT = re.compile(r"(?P<base>[A-Za-z_][A-Za-z0-9_$]*)\[(?P<index>0|[1-9][0-9]*)\]\Z")


def bit_name(base: str, index: int) -> str:
    """The name of bit ``index`` of vector port ``base``: ``mode[1]`` (bit 0 least
    significant), which is also its bit-select in Verilog."""
    return f"{base}[{index}]"


def port_bits(base: str, width: int | None) -> list[str]:
    """The 1-bit names of a port, most significant first: ``[base]`` for a plain bit
    (``width`` ``None``, as :func:`ports_of` gives it), ``base[w-1] .. base[0]`` for a
    vector."""
    if width is None:
        return [base]
    return [bit_name(base, i) for i in range(width - 1, -1, -1)]


def split_bit(name: str) -> tuple[str, int] | None:
    """``("mode", 1)`` for ``"mode[1]"``; ``None`` for a 1-bit name."""
    match = _BIT.match(name)
    return (match.group("base"), int(match.group("index"))) if match else None


def ports_of(names: Sequence[str]) -> list[tuple[str, int | None]]:
    """The ports of a list of 1-bit names: ``(name, None)`` for a plain bit, ``(base,
    width)`` for the bits ``base[width-1] .. base[0]`` of a vector (listed together, most
    significant first, as :func:`vector_problem` requires)."""
    ports: list[tuple[str, int | None]] = []
    for name in names:
        bit = split_bit(name)
        if bit is None:
            ports.append((name, None))
        elif not ports or ports[-1][0] != bit[0]:
            ports.append((bit[0], bit[1] + 1))
    return ports


def vector_problem(names: Sequence[str]) -> str | None:
    """Why bit names do not form whole vectors (``v[w-1]`` down to ``v[0]`` in a row, and no
    other name ``v``), or ``None``.  The names are distinct (the caller checks that), so a
    vector cannot appear twice: each of its runs would end in the same ``v[0]``."""
    plain = {n for n in names if split_bit(n) is None}
    at = 0
    while at < len(names):
        bit = split_bit(names[at])
        if bit is None:
            at += 1
            continue
        base, top = bit
        want = port_bits(base, top + 1)
        if list(names[at:at + len(want)]) != want:
            return (f"the bits of vector {base!r} must be listed together, most significant "
                    f"first: {', '.join(want)}")
        if base in plain:
            return f"{base!r} is both a 1-bit name and a vector"
        at += len(want)
    return None


def name_problem(name: object) -> str | None:
    """Why ``name`` cannot name a machine, input or output, or ``None`` when it can.

    A bit of a vector port, ``mode[1]``, is judged by its vector's name."""
    if isinstance(name, str):
        bit = split_bit(name)
        if bit is not None:
            return name_problem(bit[0])
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


def port_spans(names: Sequence[str]) -> list[tuple[str, int | None, slice]]:
    """:func:`ports_of` with each port's place in a word over ``names`` (one character per
    1-bit name): ``word[span]`` is the port's characters, most significant first."""
    spans: list[tuple[str, int | None, slice]] = []
    at = 0
    for port, width in ports_of(names):
        spans.append((port, width, slice(at, at + (width or 1))))
        at += width or 1
    return spans


def did_you_mean(name: str, known: Sequence[str]) -> str:
    """``"; did you mean 'on'?"`` for the known names closest to a misspelled ``name``
    (at most three, by difflib's similarity ratio of at least 0.6), or ``""``."""
    close = difflib.get_close_matches(name, list(dict.fromkeys(known)), n=3, cutoff=0.6)
    if not close:
        return ""
    return "; did you mean " + " or ".join(repr(c) for c in close) + "?"
