"""Register-transfer-level VHDL (IEEE 1076-2008) of a machine, the counterpart of
:mod:`fsmsynth.writers.rtl_verilog`.

The entity is the structural one's (:mod:`fsmsynth.writers.vhdl`), so the same testbench
drives either.  The states are an enumerated type whose codes are given by the
``enum_encoding`` attribute (read by synthesis tools) and listed in a comment; one clocked
process holds the state register (and registered outputs), one combinational process
(``process (all)``) assigns the outputs' defaults first and then a ``case`` over the state.
With an enumeration every value is a state, so the unused-code policy belongs to the
netlist; the ``when others`` branch says what it does.  Each invariant is an ``assert`` in
a clocked process between ``pragma translate_off``/``translate_on`` comments.
"""

from __future__ import annotations

from collections.abc import Callable

from fsmsynth.base.names import port_spans, ports_of
from fsmsynth.logic.cube import Cube
from fsmsynth.version import __version__
from fsmsynth.writers.rtl_blocks import vhdl_declarations as blocks_declarations
from fsmsynth.writers.rtl_blocks import vhdl_lines as blocks_vhdl
from fsmsynth.writers.rtl_machine import RtlMachine, RtlState
from fsmsynth.writers.rtl_verilog import held_conditions
from fsmsynth.writers.vhdl import check_vhdl_names, port_lines, register_process


def _literals(cube: Cube, signals: tuple[str, ...]) -> list[str]:
    parts, text = [], cube.to_string(len(signals))
    for port, width, span in port_spans(signals):
        chars = text[span]
        if width is not None and "-" not in chars:
            parts.append(f'{port} = "{chars}"')
            continue
        for k, char in enumerate(chars):
            name = port if width is None else f"{port}({width - 1 - k})"
            if char != "-":
                parts.append(f"{name} = '{char}'")
    return parts


def expression(terms: tuple[Cube, ...], signals: tuple[str, ...]) -> str:
    """A sum of products as a VHDL condition (``true`` for the empty product)."""
    products = [_literals(c, signals) for c in terms]
    if not products:
        return "false"
    texts = [" and ".join(lits) or "true" for lits in products]
    return " or ".join(f"({t})" if " and " in t and len(texts) > 1 else t for t in texts)


def _value(bits: str, width: int | None) -> str:
    return f"'{bits}'" if width is None else f'"{bits}"'


def _assignments(word: str, outputs: tuple[str, ...], suffix: str) -> list[str]:
    out = []
    for port, width, span in port_spans(outputs):
        bits = word[span]
        if "1" in bits:
            out.append(f"{port}{suffix} <= {_value(bits, width)};")
    return out


def _state_case(m: RtlMachine, state: RtlState, suffix: str, moore_words: bool) -> list[str]:
    where = f" (spec line {state.line})" if state.line else ""
    body = (_assignments(state.word, m.outputs, suffix)
            if state.word and moore_words else [])
    chain = state.branches
    for k, branch in enumerate(chain):
        inner = [f"state_next <= {m.constant(branch.to)};"]
        inner += _assignments(branch.word, m.outputs, suffix) if branch.word else []
        if state.last_is_else and len(chain) == 1:
            body += inner
            break
        last_else = state.last_is_else and k == len(chain) - 1
        body.append("else" if last_else else
                    f"{'elsif' if k else 'if'} {expression(branch.terms, m.inputs)} then")
        body += [f"  {x}" for x in inner]
        if k == len(chain) - 1:
            body.append("end if;")
    return ([f"when {m.constant(state.name)} =>  -- {state.name}{where}"]
            + [f"  {x}" for x in body or ["null;  -- stays"]])


def _logic(m: RtlMachine, suffix: str) -> list[str]:
    lines = ["logic : process (all)", "begin",
             "  state_next <= state;  -- an open next state stays"]
    lines += [f"  {p}{suffix} <= {_value('0' * (w or 1), w)};" for p, w in ports_of(m.outputs)]
    lines.append("  case state is")
    moore_words = not (m.registered and m.kind == "moore")
    for state in m.states:
        lines += [f"    {x}" for x in _state_case(m, state, suffix, moore_words)]
    policy = ("unused codes go to reset (unused = \"safe\"), in the netlist"
              if m.unused_safe else "unused codes are don't cares (unused = \"dont-care\")")
    lines += [f"    when others =>  -- every value is a state; {policy}",
              f"      state_next <= {m.constant(m.reset)};", "  end case;"]
    if not moore_words:
        lines.append("  case state_next is  -- registered Moore outputs: those of the next state")
        for state in m.states:
            assert state.word is not None
            body = _assignments(state.word, m.outputs, "_d")
            lines.append(f"    when {m.constant(state.name)} => "
                         + (" ".join(body) if body else "null;"))
        lines += ["    when others => null;", "  end case;"]
    return lines + ["end process;"]


def _registers(m: RtlMachine) -> list[str]:
    on_reset = [f"state <= {m.constant(m.reset)};"]
    on_edge = ["state <= state_next;"]
    if m.registered:
        word = m.reset_word()
        for port, width, span in port_spans(m.outputs):
            on_reset.append(f"{port} <= {_value(word[span], width)};")
            on_edge.append(f"{port} <= {port}_d;")
    what = "State register" + (" and output registers" if m.registered else "")
    return [f"-- {what}: {m.edge} edge, {m.clocking.describe()}; reset to {m.reset}.",
            *register_process("registers", m.edge, m.clocking, on_reset, on_edge)]


def assertion_lines(m: RtlMachine, state: str = "state",
                    code: Callable[[str], str] | None = None) -> list[str]:
    """Each invariant as an ``assert`` in a clocked process, out of reset, between
    ``pragma translate_off``/``translate_on``; ``state`` and ``code`` as for
    :func:`fsmsynth.writers.rtl_verilog.assertion_lines`."""
    signals = (*m.inputs, *m.outputs)
    named = code or m.constant
    lines: list[str] = []
    c = m.clocking
    clock = f"{'rising' if m.edge == 'rising' else 'falling'}_edge({c.clock})"
    for inv in m.invariants:
        held = held_conditions(inv, signals, lambda s: f"{state} /= {named(s)}",
                               expression, " or ")
        if not held:
            continue
        text = inv.text.replace('"', "'")
        lines += [f"-- invariant {inv.number}: {inv.text}",
                  f"invariant_{inv.number} : process ({c.clock})", "begin",
                  f"  if {clock} and {c.reset} = '{c.released}' then",
                  f"    assert {' and '.join(held)}",
                  f"      report \"invariant {inv.number} broken: {text}\" severity error;",
                  "  end if;", "end process;"]
    if not lines:
        return []
    return ["", "-- Invariants of the spec, checked at every clock edge out of reset.",
            "-- pragma translate_off", *lines, "-- pragma translate_on"]


def write_rtl_vhdl(m: RtlMachine, *, header: str = "") -> str:
    """The RTL VHDL text of ``m``; names VHDL cannot take are refused as for the
    structural VHDL."""
    check_vhdl_names(m.name, m.inputs, m.outputs, m.clocking)  # internal signals included
    suffix = "_d" if m.registered else ""
    codes = " ".join(f"{s.code:0{m.width}b}" for s in m.states)
    lines = [f"-- generated by fsmsynth {__version__}; do not edit, regenerate it from the "
             "specification.",
             "-- Register-transfer-level VHDL, IEEE 1076-2008: the machine state by state (the "
             "structural netlist implements it).",
             *(f"-- {h}" for h in header.splitlines()),
             "library ieee;", "use ieee.std_logic_1164.all;", "",
             f"entity {m.name} is", "  port (", *port_lines(m.ports_in, m.ports_out, m.clocking),
             "  );",
             f"end entity {m.name};", "", f"architecture rtl of {m.name} is",
             f"  -- States and their codes ({m.method} encoding): "
             + ", ".join(f"{s.name}={s.code:0{m.width}b}" for s in m.states) + ".",
             "  type state_type is ("
             + ", ".join(m.constant(s.name) for s in m.states) + ");",
             "  attribute enum_encoding : string;",
             f"  attribute enum_encoding of state_type : type is \"{codes}\";",
             "  signal state, state_next : state_type;"]
    if m.registered:
        lines += [f"  signal {p}_d : "
                  + ("std_logic" if w is None else f"std_logic_vector({w - 1} downto 0)") + ";"
                  for p, w in ports_of(m.outputs)]
    if m.blocks:
        lines += ["  -- The timers' and counters' readings and the machine's actions on them."]
        lines += [f"  signal {s} : std_logic;" for s in m.internal]
        lines += [f"  {x}" for x in blocks_declarations(m.blocks)]
    lines.append("begin")
    lines += [f"  {x}" for x in _registers(m)]
    lines += [f"  {x}" if x else "" for x in blocks_vhdl(m.blocks, m.edge, m.clocking)]
    lines += [""]
    lines += ["  -- Next state and outputs: the defaults, then what each state says."]
    lines += [f"  {x}" for x in _logic(m, suffix)]
    lines += [f"  {x}" if x else "" for x in assertion_lines(m)]
    lines += ["end architecture rtl;"]
    return "\n".join(lines) + "\n"
