"""How a design is clocked and reset: the conventions of the project it goes into.

Every flip-flop samples on one clock edge (``clock_edge``, elsewhere); this record says the
rest: the names of the clock, reset and clock-enable ports, whether the reset acts at once
(asynchronous) or at the clock edge (synchronous), its active level, and whether a clock
enable holds the state when it is inactive (active high).  The defaults are the ports
``clk`` and ``rst``, an asynchronous active-high reset and no enable.
"""

from __future__ import annotations

from dataclasses import dataclass

from fsmsynth.base.errors import OptionError
from fsmsynth.base.names import PORT_NAMES, name_problem, split_bit

RESET_STYLES = ("async", "sync")
LEVELS = ("high", "low")


@dataclass(frozen=True, slots=True)
class Clocking:
    """Clock, reset and enable conventions.

    Attributes
    ----------
    clock:
        Name of the clock port.
    reset:
        Name of the reset port.
    reset_style:
        ``"async"`` (the reset loads the reset code at once, whatever the clock) or
        ``"sync"`` (at the next clock edge; until then the state is unknown).
    reset_active:
        ``"high"`` or ``"low"``: the level that resets.
    enable:
        Name of the clock-enable port (active high: while it is 0, no flip-flop changes; a
        synchronous reset still acts), or ``None`` for none.
    """

    clock: str = "clk"
    reset: str = "rst"
    reset_style: str = "async"
    reset_active: str = "high"
    enable: str | None = None

    def __post_init__(self) -> None:
        problem = clocking_problem(self)
        if problem:
            raise OptionError(problem)

    @property
    def ports(self) -> tuple[str, ...]:
        """The clock, reset and (when there is one) enable port names."""
        return (self.clock, self.reset) + ((self.enable,) if self.enable else ())

    @property
    def asserted(self) -> str:
        """The reset port's value that resets: ``"1"`` or ``"0"``."""
        return "1" if self.reset_active == "high" else "0"

    @property
    def released(self) -> str:
        """The reset port's value in normal operation."""
        return "0" if self.reset_active == "high" else "1"

    def describe(self) -> str:
        """``asynchronous active-high reset rst, clock clk`` and the enable, for headers."""
        style = "asynchronous" if self.reset_style == "async" else "synchronous"
        enable = f", clock enable {self.enable} (active high)" if self.enable else ""
        return (f"clock {self.clock}, {style} active-{self.reset_active} reset "
                f"{self.reset}{enable}")


def clocking_problem(c: Clocking) -> str | None:
    """Why ``c`` is not a usable set of conventions, or ``None``."""
    if c.reset_style not in RESET_STYLES:
        return f"reset style {c.reset_style!r}: use {' or '.join(RESET_STYLES)}"
    if c.reset_active not in LEVELS:
        return f"reset active level {c.reset_active!r}: use {' or '.join(LEVELS)}"
    for role, name in (("clock", c.clock), ("reset", c.reset), ("enable", c.enable)):
        if name is None and role == "enable":
            continue
        why = ("is not a name" if not isinstance(name, str) else
               "must be a 1-bit port, not a vector's bit" if split_bit(name) else
               None if name in PORT_NAMES else name_problem(name))
        if why:
            return f"{role} port {name!r} {why}"
    names = [n for n in (c.clock, c.reset, c.enable) if n]
    if len(set(names)) != len(names):
        return f"clock, reset and enable ports need three different names, not {names}"
    return None


DEFAULT_CLOCKING = Clocking()
"""``clk``, ``rst`` (asynchronous, active high), no enable."""
