"""Register-transfer-level Verilog (IEEE 1364-2005) of a machine: what a reviewer reads
against the spec, and what an FPGA flow recognises as a state machine.

The module has the name and ports of the structural one (:mod:`fsmsynth.writers.verilog`),
so the same testbench drives either: named state codes (``localparam``), one clocked block
for the state register (and registered outputs), one combinational block with the outputs'
defaults first and a ``case`` over the state, each state's transitions as an if/else-if
chain with a comment naming the spec line, and the unused-code policy as the ``default``
branch.  Each invariant is a check at every clock edge that reports with ``$error`` and
sits between ``ifndef SYNTHESIS`` guards, so synthesis leaves it out.
"""

from __future__ import annotations

from collections.abc import Callable

from fsmsynth.base.names import port_spans, ports_of
from fsmsynth.logic.cube import Cube
from fsmsynth.version import __version__
from fsmsynth.writers.rtl_blocks import verilog_lines as blocks_verilog
from fsmsynth.writers.rtl_machine import RtlInvariant, RtlMachine, RtlState
from fsmsynth.writers.verilog import register_block


def _literals(cube: Cube, signals: tuple[str, ...]) -> list[str]:
    """The literals of a cube over ``signals`` (1-bit names, vectors MSB first): a vector
    fixed whole is a comparison (``mode == 2'd3``), others their bits (``~mode[0]``)."""
    parts, text = [], cube.to_string(len(signals))
    for port, width, span in port_spans(signals):
        chars = text[span]
        if width is not None and "-" not in chars:
            parts.append(f"{port} == {width}'d{int(chars, 2)}")
            continue
        for k, char in enumerate(chars):
            name = port if width is None else f"{port}[{width - 1 - k}]"
            if char != "-":
                parts.append(name if char == "1" else f"~{name}")
    return parts


def expression(terms: tuple[Cube, ...], signals: tuple[str, ...]) -> str:
    """A sum of products as a Verilog expression (``1'b1`` for the empty product)."""
    products = [_literals(c, signals) for c in terms]
    if not products:
        return "1'b0"
    many = len(products) > 1
    texts = [" & ".join(f"({p})" if "==" in p and (many or len(lits) > 1) else p
                        for p in lits) or "1'b1" for lits in products]
    return " | ".join(f"({t})" if " & " in t and len(texts) > 1 else t for t in texts)


def _assignments(word: str, outputs: tuple[str, ...], suffix: str = "") -> list[str]:
    """``lamp = 1'b1;``: the outputs of ``word`` that differ from the default 0."""
    out = []
    for port, width, span in port_spans(outputs):
        value = int(word[span], 2)
        if value:
            out.append(f"{port}{suffix} = {width}'d{value};" if width
                       else f"{port}{suffix} = 1'b1;")
    return out


def _code(m: RtlMachine, value: int) -> str:
    return f"{m.width}'b{value:0{m.width}b}"


def _chain(m: RtlMachine, state: RtlState, suffix: str) -> list[str]:
    """A state's branches as an if/else-if chain (plain statements for a lone ``else``)."""
    lines: list[str] = []
    chain = state.branches
    for k, branch in enumerate(chain):
        body = [f"state_next = {m.constant(branch.to)};"]
        body += _assignments(branch.word, m.outputs, suffix) if branch.word else []
        if state.last_is_else and len(chain) == 1:
            return body
        if state.last_is_else and k == len(chain) - 1:
            head = "else begin"
        else:
            head = f"{'else if' if k else 'if'} ({expression(branch.terms, m.inputs)}) begin"
        lines += [head, *(f"    {b}" for b in body), "end"]
    return lines


def _case(m: RtlMachine, suffix: str, moore_words: bool) -> list[str]:
    lines = ["case (state)"]
    for state in m.states:
        where = f" (spec line {state.line})" if state.line else ""
        lines.append(f"    {m.constant(state.name)}: begin  // {state.name}{where}")
        body = _assignments(state.word, m.outputs, suffix) if state.word and moore_words else []
        body += _chain(m, state, suffix)
        if not state.branches:
            body.append(f"// stays in {state.name}")
        lines += [f"        {b}" for b in body] + ["    end"]
    if m.unused_codes and m.unused_safe:
        lines.append(f"    default: state_next = {m.constant(m.reset)};  // unused codes "
                     "go to reset (unused = \"safe\")")
    elif m.unused_codes:
        lines.append(f"    default: state_next = {{{m.width}{{1'bx}}}};  // unused codes: "
                     "don't care (unused = \"dont-care\")")
    else:
        lines.append("    default: state_next = state;  // every code names a state")
    return lines + ["endcase"]


def _read_inputs(m: RtlMachine) -> set[str]:
    """The input ports some branch condition reads."""
    read, at = set(), 0
    terms = [c for s in m.states for b in s.branches for c in b.terms]
    for port, width in ports_of(m.inputs):
        bits = range(at, at + (width or 1))
        at += width or 1
        if any(c.literal_char(b) != "-" for c in terms for b in bits):
            read.add(port)
    return read


def _ports(m: RtlMachine) -> list[str]:
    decls = [f"input  wire {p}" for p in m.clocking.ports]
    decls += [f"input  wire {_range(w)}{p}" for p, w in ports_of(m.ports_in)]
    decls += [f"output reg  {_range(w)}{p}" for p, w in ports_of(m.ports_out)]
    read = _read_inputs(m)
    unread = {f"input  wire {_range(w)}{p}" for p, w in ports_of(m.ports_in)
              if p not in read and not m.invariants}
    lines = []
    for i, decl in enumerate(decls):
        text = f"    {decl}{',' if i < len(decls) - 1 else ''}"
        if decl in unread:
            lines += ["    /* verilator lint_off UNUSED */  // no condition reads this input",
                      text, "    /* verilator lint_on UNUSED */"]
        else:
            lines.append(text)
    return lines


def _range(width: int | None) -> str:
    return "" if width is None else f"[{width - 1}:0] "


def _registers(m: RtlMachine) -> list[str]:
    reset_word = m.reset_word()
    on_reset = [f"state <= {m.constant(m.reset)};"]
    on_edge = ["state <= state_next;"]
    if m.registered:
        for port, width, span in port_spans(m.outputs):
            value = int(reset_word[span], 2)
            on_reset.append(f"{port} <= {width}'d{value};" if width else f"{port} <= 1'b{value};")
            on_edge.append(f"{port} <= {port}_d;")
    what = "State register" + (" and output registers" if m.registered else "")
    c = m.clocking
    return [f"// {what}: {m.edge} edge, {c.describe()}; reset to {m.reset}.",
            *register_block(m.edge, c, on_reset, on_edge, c.reset, c.enable or "", c.clock)]


def _defaults(m: RtlMachine, suffix: str) -> list[str]:
    return ["state_next = state;  // an open next state stays"] + [
        f"{p}{suffix} = {(w or 1)}'d0;" if w else f"{p}{suffix} = 1'b0;"
        for p, w in ports_of(m.outputs)]


def assertion_lines(m: RtlMachine, state: str = "state",
                    code: Callable[[str], str] | None = None) -> list[str]:
    """Each invariant as a check at every clock edge out of reset that reports with
    ``$error``, inside ``ifndef SYNTHESIS``; ``state`` is the expression of the present
    code and ``code`` names a state's code (a structural netlist gives its flip-flops and
    literal codes)."""
    if not m.invariants:
        return []
    named = code or m.constant
    signals = (*m.inputs, *m.outputs)
    lines = ["", "`ifndef SYNTHESIS", "/* verilator lint_off SYNCASYNCNET */  // rst: "
             "asynchronous in the registers, a plain condition here",
             "// Invariants of the spec, checked at every clock edge out of reset (left out "
             "of synthesis)."]
    clock = "posedge" if m.edge == "rising" else "negedge"
    c = m.clocking
    running = f"!{c.reset}" if c.reset_active == "high" else c.reset
    for inv in m.invariants:
        held = held_conditions(inv, signals, lambda s: f"{state} != {named(s)}", expression,
                               " || ")
        if not held:
            continue
        text = inv.text.replace('"', "'")
        lines += [f"// invariant {inv.number}: {inv.text}",
                  f"always @({clock} {c.clock})",
                  f"    if ({running} && !({' && '.join(held)}))",
                  f"        $error(\"invariant {inv.number} broken: {text}\");"]
    return lines + ["/* verilator lint_on SYNCASYNCNET */", "`endif"]


def state_name_lines(m: RtlMachine, state: str = "state",
                     code: Callable[[str], str] | None = None) -> list[str]:
    """``state_name``: the present state's name as text, for waveform viewers (a value change
    dump shows it as a string), inside ``ifndef SYNTHESIS``; ``state`` and ``code`` as for
    :func:`assertion_lines`."""
    named = code or m.constant
    size = 8 * max(len(s.name) for s in m.states)
    cases = [f"        {named(s.name)}: state_name = \"{s.name}\";" for s in m.states]
    return ["", "`ifndef SYNTHESIS",
            "/* verilator lint_off UNUSED */  // read by waveform viewers, not by logic",
            "// The present state's name, for waveform viewers (simulation only).",
            f"reg [{size - 1}:0] state_name;", "always @* begin",
            f"    case ({state})", *cases, "        default: state_name = \"?\";",
            "    endcase", "end", "/* verilator lint_on UNUSED */", "`endif"]


def held_conditions(inv: RtlInvariant, signals: tuple[str, ...], other_state: Callable[[str], str],
          written: Callable[[tuple[Cube, ...], tuple[str, ...]], str], either: str) -> list[str]:
    """An invariant's conditions: one, when every state has the same; else one per state
    where it says something, as "another state, or the condition"."""
    conditions = {t for _s, t in inv.per_state}
    if len(conditions) == 1 and None not in conditions:
        return [f"({written(inv.per_state[0][1] or (), signals)})"]
    return [f"({other_state(s)}{either}({written(t, signals)}))"
            for s, t in inv.per_state if t is not None]


def write_rtl_verilog(m: RtlMachine, *, header: str = "") -> str:
    """The RTL Verilog text of ``m``."""
    suffix = "_d" if m.registered else ""
    lines = [f"// {m.name}: generated by fsmsynth {__version__}; do not edit, regenerate it "
             "from the specification.",
             "// Register-transfer-level Verilog, IEEE 1364-2005: the machine state by state "
             "(the structural netlist implements it).",
             *(f"// {h}" if h else "//" for h in header.splitlines()),
             "`default_nettype none", "/* verilator lint_off DECLFILENAME */", "",
             f"module {m.name} (", *_ports(m), ");"]
    codes = ", ".join(f"{m.constant(s.name)} = {_code(m, s.code)}" for s in m.states)
    lines += [f"    // State codes ({m.method} encoding).", f"    localparam [{m.width - 1}:0] "
              + codes + ";", f"    reg [{m.width - 1}:0] state, state_next;"]
    if m.registered:
        lines += [f"    reg {_range(w)}{p}_d;" for p, w in ports_of(m.outputs)]
    if m.blocks:
        outs = set(m.outputs)
        lines += ["    // The timers' and counters' readings and the machine's actions on them."]
        lines += [f"    {'reg ' if s in outs else 'wire'} {s};" for s in m.internal]
    lines += [""] + [f"    {x}" for x in _registers(m)]
    lines += [f"    {x}" if x else "" for x in blocks_verilog(m.blocks, m.edge, m.clocking)]
    lines += [""]
    lines += ["    // Next state and outputs: the defaults, then what each state says.",
              "    always @* begin"]
    lines += [f"        {x}" for x in _defaults(m, suffix)]
    moore_words = not (m.registered and m.kind == "moore")
    lines += [f"        {x}" for x in _case(m, suffix, moore_words)]
    if not moore_words:
        lines += [f"        {x}" for x in _next_words(m)]
    lines += ["    end"]
    lines += [f"    {x}" if x else "" for x in state_name_lines(m)]
    lines += [f"    {x}" if x else "" for x in assertion_lines(m)]
    lines += ["endmodule", "/* verilator lint_on DECLFILENAME */", "`default_nettype wire"]
    return "\n".join(lines) + "\n"


def _next_words(m: RtlMachine) -> list[str]:
    """Registered Moore outputs load the outputs of the next state."""
    lines = ["case (state_next)  // registered Moore outputs: those of the next state"]
    for state in m.states:
        assert state.word is not None
        body = _assignments(state.word, m.outputs, "_d")
        if body:
            lines.append(f"    {m.constant(state.name)}: begin "
                         + " ".join(body) + " end")
    return lines + ["    default: ;", "endcase"]
