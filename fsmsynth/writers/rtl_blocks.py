"""Timers and counters as register-transfer-level HDL: a value register per block, loaded,
counted and cleared by the control machine's actions, and the readings as comparisons of
its value (the semantics of :mod:`fsmsynth.model.timers`, written as hand RTL would)."""

from __future__ import annotations

from dataclasses import dataclass

from fsmsynth.language.timer_words import action_signal
from fsmsynth.model.clocking import Clocking
from fsmsynth.model.timers import TimedMachine, Timer
from fsmsynth.writers.verilog import register_block
from fsmsynth.writers.vhdl import register_process


@dataclass(frozen=True, slots=True)
class RtlBlock:
    """One timer or counter: its value register ``<name>_value`` of ``width`` bits, its
    highest value ``top`` (a timer's load, a counter's limit), the actions the control
    machine drives (``start``; ``count``, ``clear``) and its readings ``(signal, op,
    number)`` with ``op`` a comparison of the value."""

    name: str
    timer: bool
    width: int
    top: int
    actions: tuple[str, ...]
    readings: tuple[tuple[str, str, int], ...]
    describe: str

    @property
    def register(self) -> str:
        return f"{self.name}_value"


def rtl_blocks(machine: TimedMachine) -> tuple[RtlBlock, ...]:
    """The blocks of ``machine`` as the RTL writers print them."""
    actions = machine.action_signals()
    found = []
    for b in machine.blocks:
        timer = isinstance(b, Timer)
        reads = tuple((r.signal, "==", 0 if timer else b.top) if r.op == "done"
                      else (r.signal, r.op, r.value)
                      for r in machine.readings if r.block == b.name)
        found.append(RtlBlock(b.name, timer, b.width, b.top,
                              tuple(a for _s, n, a in actions if n == b.name), reads,
                              b.describe()))
    return tuple(found)


def verilog_lines(blocks: tuple[RtlBlock, ...], edge: str, c: Clocking) -> list[str]:
    """Declarations, one register block per timer or counter, and the readings."""
    lines: list[str] = []
    for b in blocks:
        w, reg = b.width, b.register
        lines += ["", f"// {b.describe}: " + ("a start loads the count, then it counts down "
                                              "to 0 and holds." if b.timer else
                                              "counts up to the limit and holds; a clear "
                                              "sets 0."),
                  f"reg [{w - 1}:0] {reg};"]
        if b.timer:
            load = ([f"if ({action_signal(b.name, 'start')}) {reg} <= {w}'d{b.top};", "else "]
                    if "start" in b.actions else [""])
            load[-1] += f"if ({reg} != {w}'d0) {reg} <= {reg} - {w}'d1;"
        else:
            load = ([f"if ({action_signal(b.name, 'clear')}) {reg} <= {w}'d0;", "else "]
                    if "clear" in b.actions else [""])
            if "count" in b.actions:
                load[-1] += (f"if ({action_signal(b.name, 'count')} && {reg} != {w}'d{b.top}) "
                             f"{reg} <= {reg} + {w}'d1;")
            else:
                load[-1] += f"{reg} <= {reg};"
        lines += register_block(edge, c, [f"{reg} <= {w}'d0;"], load, c.reset,
                                c.enable or "", c.clock)
        lines += [f"assign {s} = ({reg} {op} {w}'d{n});" for s, op, n in b.readings]
    return lines


_VHDL_OPS = {"==": "=", "!=": "/=", "<": "<", "<=": "<=", ">": ">", ">=": ">="}


def vhdl_declarations(blocks: tuple[RtlBlock, ...]) -> list[str]:
    """The value registers, as naturals of their range."""
    return [f"signal {b.register} : natural range 0 to {(1 << b.width) - 1};" for b in blocks]


def vhdl_lines(blocks: tuple[RtlBlock, ...], edge: str, c: Clocking) -> list[str]:
    """One clocked process per timer or counter, and the readings."""
    lines: list[str] = []
    for b in blocks:
        reg = b.register
        if b.timer:
            load = ([f"if {action_signal(b.name, 'start')} = '1' then", f"  {reg} <= {b.top};",
                     f"elsif {reg} /= 0 then"] if "start" in b.actions
                    else [f"if {reg} /= 0 then"])
            load += [f"  {reg} <= {reg} - 1;", "end if;"]
        else:
            load = ([f"if {action_signal(b.name, 'clear')} = '1' then", f"  {reg} <= 0;"]
                    if "clear" in b.actions else [])
            if "count" in b.actions:
                load += [f"{'els' if load else ''}if {action_signal(b.name, 'count')} = '1' and "
                         f"{reg} /= {b.top} then", f"  {reg} <= {reg} + 1;"]
            load += ["end if;"] if load else ["null;"]
        lines += ["", f"-- {b.describe}"]
        lines += register_process(f"{b.name}_register", edge, c, [f"{reg} <= 0;"], load)
        lines += [f"{s} <= '1' when {reg} {_VHDL_OPS[op]} {n} else '0';"
                  for s, op, n in b.readings]
    return lines
