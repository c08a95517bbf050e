"""Static timing of a netlist: clock period, maximum frequency, hold check, critical path.

Arrival times are measured from the active clock edge.  Flip-flop outputs change between
``clock_to_q_min`` (contamination) and ``clock_to_q`` (propagation) after the edge;
primary inputs are assumed synchronised to the same clock and to settle within
``input_delay_min .. input_delay`` after it (by default the clock-to-Q window of the
synchronising flip-flops).  Each gate adds its delay, which depends on
its kind and fan-in.  Then

* setup: ``T_clk >= t_clk->Q + t_logic,max + t_setup`` over every path ending at a
  flip-flop data pin, so the minimum period is the worst such sum;
* hold: ``t_clk->Q,min + t_logic,min >= t_hold`` at every data pin, and the slack is the
  difference.

Paths from primary inputs to Mealy outputs do not end at a flip-flop and are reported on
their own.

References
----------
Harris, D. M. and Harris, S. L., *Digital Design and Computer Architecture*, 2nd ed.,
Morgan Kaufmann, 2013, section 3.5.2 (setup and hold time constraints), from memory.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from fsmsynth.base.errors import OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic.cost import finite_non_negative
from fsmsynth.stages.netlist import Netlist


@dataclass(frozen=True, slots=True)
class GateDelay:
    """Delay of one gate kind: ``base + per_input * (fan-in - 1)``, longest and shortest."""

    base: float
    per_input: float = 0.0
    base_min: float | None = None
    per_input_min: float = 0.0

    def __post_init__(self) -> None:
        for key in ("base", "per_input", "base_min", "per_input_min"):
            value = getattr(self, key)
            if not (value is None and key == "base_min") and not finite_non_negative(value):
                raise OptionError(f"gate delay {key} must be a finite number >= 0, "
                                  f"not {value!r}")
        if self.shortest(2) > self.longest(2) or self.per_input_min > self.per_input:
            raise OptionError(f"gate delay: the shortest delay ({self.shortest(2):g} ps at 2 "
                              f"inputs) exceeds the longest ({self.longest(2):g} ps); give "
                              "base_min <= base and per_input_min <= per_input")

    def longest(self, fan_in: int) -> float:
        return self.base + self.per_input * max(0, fan_in - 1)

    def shortest(self, fan_in: int) -> float:
        base = self.base if self.base_min is None else self.base_min
        return base + self.per_input_min * max(0, fan_in - 1)


@dataclass(frozen=True, slots=True)
class Delays:
    """A delay model, in picoseconds.  The defaults are illustrative, not any technology's:
    replace them with your library's figures (API, or ``fsmsynth timing --delays d.toml``).
    """

    gates: Mapping[str, GateDelay] = field(default_factory=lambda: FrozenMap({
        "not": GateDelay(15, base_min=8),
        "buf": GateDelay(15, base_min=8),
        "and": GateDelay(25, 8, base_min=12, per_input_min=3),
        "or": GateDelay(25, 8, base_min=12, per_input_min=3),
        "nand": GateDelay(20, 6, base_min=10, per_input_min=2),
        "nor": GateDelay(20, 8, base_min=10, per_input_min=3),
        "xor": GateDelay(35, 10, base_min=18, per_input_min=4),
        "xnor": GateDelay(35, 10, base_min=18, per_input_min=4),
    }))
    cells: Mapping[str, GateDelay] = field(default_factory=lambda: FrozenMap({}))
    """Delays of named target cells (library cells, or LUTs as ``LUT4``), replacing the
    target's own relative delays."""
    clock_to_q: float = 60.0
    clock_to_q_min: float = 40.0
    setup: float = 30.0
    hold: float = 15.0
    # Synchronised inputs come from flip-flops on the same clock.
    input_delay: float = 60.0
    input_delay_min: float = 40.0

    def __post_init__(self) -> None:
        for key in ("clock_to_q", "clock_to_q_min", "setup", "hold", "input_delay",
                    "input_delay_min"):
            value = getattr(self, key)
            if not finite_non_negative(value):
                raise OptionError(f"delay {key} must be a finite number >= 0, not {value!r}")
        for low, high in (("clock_to_q_min", "clock_to_q"), ("input_delay_min", "input_delay")):
            if getattr(self, low) > getattr(self, high):
                raise OptionError(f"delay {low} ({getattr(self, low):g} ps) exceeds {high} "
                                  f"({getattr(self, high):g} ps): the shortest delay cannot be "
                                  "longer than the longest")
        for kind, model in (*self.gates.items(), *self.cells.items()):
            if not isinstance(model, GateDelay):
                raise OptionError(f"delay of {kind!r} must be a GateDelay, not {model!r}")


@dataclass(frozen=True, slots=True)
class PathStep:
    """One element on a timing path and the arrival time at its output."""

    element: str
    kind: str
    net: str
    delay: float
    arrival: float


def _path_lines(steps: Sequence[PathStep]) -> list[str]:
    """A timing path as a time line: when each net on it settles and what drives it, then
    what the flip-flop pin at its end requires."""
    width = max((len(s.net) for s in steps[:-1]), default=0)
    lines = []
    for step in steps:
        when = f"    {step.arrival:>7g} ps  "
        if step.kind == "setup":
            lines.append(f"{when}{'':<{width}}  must be steady at {step.element}: setup "
                         f"{step.delay:g} ps before the edge")
        elif step.kind == "hold":
            lines.append(f"{when}{'':<{width}}  must stay until {step.element}: hold "
                         f"{step.delay:g} ps after the edge")
        elif step.kind == "input":
            lines.append(f"{when}{step.net:<{width}}  input, {step.delay:g} ps after the edge")
        elif step.kind.endswith(" ff"):
            lines.append(f"{when}{step.net:<{width}}  from {step.element} ({step.kind}), "
                         f"{step.delay:g} ps after the edge")
        else:
            lines.append(f"{when}{step.net:<{width}}  through {step.element} ({step.kind}), "
                         f"{step.delay:g} ps")
    return lines


@dataclass(frozen=True, slots=True)
class TimingReport:
    """Outcome of :func:`timing` (times in ps, frequency in MHz).

    Attributes
    ----------
    min_period:
        Smallest clock period meeting every setup constraint.
    max_frequency:
        ``1 / min_period`` in MHz.
    worst_hold_slack:
        Smallest ``arrival_min - t_hold`` over all flip-flop data pins; negative is a hold
        violation.
    critical_path:
        The setup-critical path from its start (flip-flop or input) to the data pin, gate by
        gate, the last step being the setup time.
    hold_path:
        The shortest path to the pin with the worst hold slack.
    input_to_output:
        Longest combinational delay from a primary input to an output (Mealy outputs), or
        ``None`` when no output depends on an input directly.
    """

    min_period: float
    max_frequency: float
    worst_hold_slack: float
    critical_path: tuple[PathStep, ...]
    hold_path: tuple[PathStep, ...]
    input_to_output: float | None
    edge: str

    @property
    def hold_met(self) -> bool:
        """Whether every data pin meets its hold time."""
        return self.worst_hold_slack >= 0

    def lines(self) -> list[str]:
        """The report as text lines."""
        if not self.critical_path and math.isinf(self.worst_hold_slack):
            out = ["no flip-flops (one state): no clock period or hold constraint"]
        else:
            out = [f"minimum clock period {self.min_period:g} ps "
                   f"(maximum frequency {self.max_frequency:.1f} MHz), {self.edge} edge",
                   f"slowest path, {self.critical_path[-1].element} last "
                   "(each line: when the signal is there, which net, and how):"]
            out += _path_lines(self.critical_path)
            status = "met" if self.hold_met else "VIOLATED"
            out.append(f"hold {status}: worst slack {self.worst_hold_slack:g} ps, on the "
                       f"fastest path to {self.hold_path[-1].element}:")
            out += _path_lines(self.hold_path)
        if self.input_to_output is not None:
            out.append(f"input-to-output (Mealy) paths: up to {self.input_to_output:g} ps; "
                       "add the delay of what drives the inputs and reads the outputs")
        return out


_NONE = (-math.inf, None)


def _gate_delay(g: Any, delays: Delays, longest: bool, cells: Mapping[str, float]) -> float:
    """A gate's delay: the model's delay of its cell when it gives one, else a target cell's
    own delay (in units of the model's 2-input NAND), else the model's delay of its kind and
    fan-in."""
    if g.cell in delays.cells:
        own = delays.cells[g.cell]
        return own.longest(1) if longest else own.shortest(1)
    if g.cell in cells:
        nand = delays.gates.get("nand")
        unit = (nand.longest(2) if longest else nand.shortest(2)) if nand else 1.0
        return cells[g.cell] * unit
    model = delays.gates.get(g.kind)
    if model is None:
        raise ValueError(f"no delay for gate kind {g.kind!r}: add it to the delay model")
    return model.longest(len(g.inputs)) if longest else model.shortest(len(g.inputs))


def _arrivals(netlist: Netlist, delays: Delays, sources: Mapping[str, float],
              longest: bool, cells: Mapping[str, float]) -> dict[str, tuple[float, str | None]]:
    """Arrival time of every net and the gate input net it came through."""
    pick = max if longest else min
    sentinel = -math.inf if longest else math.inf
    arrival: dict[str, tuple[float, str | None]] = {net: (t, None) for net, t in sources.items()}
    for g in netlist.gates:
        if g.kind.startswith("const"):
            continue
        ins = [(arrival[i][0], i) for i in g.inputs if i in arrival]
        if not ins:
            continue
        t, via = pick(ins)
        if t == sentinel:
            continue
        arrival[g.output] = (t + _gate_delay(g, delays, longest, cells), via)
    return arrival


def _trace(netlist: Netlist, arrival: Mapping[str, tuple[float, str | None]], net: str,
           delays: Delays, longest: bool, start_kinds: Mapping[str, tuple[str, str, float]],
           cells: Mapping[str, float]) -> list[PathStep]:
    driver = {g.output: g for g in netlist.gates}
    steps: list[PathStep] = []
    current: str | None = net
    while current is not None:
        t, via = arrival[current]
        g = driver.get(current)
        if g is None:
            element, kind, d = start_kinds[current]
            steps.append(PathStep(element, kind, current, d, t))
            break
        d = _gate_delay(g, delays, longest, cells)
        steps.append(PathStep(g.name, g.cell or g.kind, current, d, t))
        current = via
    return steps[::-1]


def timing(design: Any, delays: Delays | None = None) -> TimingReport:
    """Minimum period, maximum frequency, worst hold slack and critical path of a design.

    Parameters
    ----------
    design:
        A :class:`~fsmsynth.flows.pipeline.Design` or a :class:`~fsmsynth.stages.netlist.Netlist`.
    delays:
        The delay model (default: :class:`Delays`, illustrative values).
    """
    netlist: Netlist = design.netlist if hasattr(design, "netlist") else design
    mapping = getattr(design, "mapping", None)
    cells: Mapping[str, float] = mapping.cell_delays if mapping is not None else {}
    d = delays or Delays()
    starts: dict[str, tuple[str, str, float]] = {}
    early_starts: dict[str, tuple[str, str, float]] = {}
    late: dict[str, float] = {}
    early: dict[str, float] = {}
    for ff in netlist.flip_flops:
        late[ff.q], early[ff.q] = d.clock_to_q, d.clock_to_q_min
        starts[ff.q] = (ff.name, f"{ff.storage.name} ff", d.clock_to_q)
        early_starts[ff.q] = (ff.name, f"{ff.storage.name} ff", d.clock_to_q_min)
    for i in netlist.inputs:
        late[i], early[i] = d.input_delay, d.input_delay_min
        starts[i] = (i, "input", d.input_delay)
        early_starts[i] = (i, "input", d.input_delay_min)
    longest = _arrivals(netlist, d, late, True, cells)
    shortest = _arrivals(netlist, d, early, False, cells)

    worst: tuple[float, str, str] | None = None
    hold: tuple[float, str, str] | None = None
    for ff in netlist.flip_flops:
        for pin, net in ff.pins:
            if net not in longest:
                continue  # tied to a constant: no path
            required = longest[net][0] + d.setup
            if worst is None or required > worst[0]:
                worst = (required, net, f"{ff.name}.{pin.lower()}")
            slack = shortest[net][0] - d.hold
            if hold is None or slack < hold[0]:
                hold = (slack, net, f"{ff.name}.{pin.lower()}")
    critical: tuple[PathStep, ...] = ()
    hold_steps: tuple[PathStep, ...] = ()
    if worst is None or hold is None:
        period, hold_slack = 0.0, math.inf
    else:
        period = worst[0]
        path = _trace(netlist, longest, worst[1], d, True, starts, cells)
        critical = (*path, PathStep(worst[2], "setup", worst[1], d.setup, worst[0]))
        hold_slack = hold[0]
        hold_steps = (*_trace(netlist, shortest, hold[1], d, False, early_starts, cells),
                      PathStep(hold[2], "hold", hold[1], d.hold, hold[0] + d.hold))
    from_inputs = _arrivals(netlist, d, {i: d.input_delay for i in netlist.inputs}, True,
                              cells)
    io_delay = max((from_inputs[net][0] for _p, net in netlist.outputs if net in from_inputs),
                   default=None)
    edge = netlist.flip_flops[0].edge if netlist.flip_flops else "rising"
    return TimingReport(min_period=period,
                        max_frequency=(1e6 / period) if period > 0 else math.inf,
                        worst_hold_slack=hold_slack, critical_path=tuple(critical),
                        hold_path=tuple(hold_steps), input_to_output=io_delay, edge=edge)
