"""Synthesis of a timed machine (:mod:`fsmsynth.model.timers`): the control machine through
the whole pipeline, each timer and counter as a block of the same storage kind, composed
into one netlist and proven (:mod:`fsmsynth.checks.timed_proof`); or the machine unrolled
into one plain table; or both, keeping the cheaper."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from typing import Any

from fsmsynth.base.choices import TIMER_CHOICES as TIMERS
from fsmsynth.base.errors import (
    InvariantError,
    OptionError,
    TableError,
    VerificationError,
)
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.checks.invariants import check_invariants
from fsmsynth.checks.timed_proof import check_timed_invariants, verify_timed
from fsmsynth.checks.trace import replay, violation_trace
from fsmsynth.flows.design import Design
from fsmsynth.logic.cost import DEFAULT_WEIGHTS
from fsmsynth.model.storage import STORAGES
from fsmsynth.model.timers import TimedMachine
from fsmsynth.stages.compose import compose
from fsmsynth.stages.counters import TimedLogic, block_logic, total_cost
from fsmsynth.stages.unroll import UNROLL_LIMIT, unroll

TIMER_CHOICES = TIMERS
"""How timers and counters are built: as counter blocks, unrolled into states, or both ways
keeping the cheaper (``"cheaper"`` unrolls only up to :data:`CHEAPER_UNROLL_LIMIT`
states, and only without invariants)."""


CHEAPER_UNROLL_LIMIT = 600
"""``timers="cheaper"`` builds the unrolled machine too only up to this many states (beyond,
a counter is always the cheaper, and minimizing the logic of thousands of states is slow)."""

Synthesizer = Callable[..., Design]


def synthesize_timed(machine: TimedMachine, storage: Any, encoding: Any, *,
                     synthesize: Synthesizer, timers: str = "counters", check: bool = True,
                     **options: Any) -> Design:
    """Synthesize ``machine`` (see :func:`fsmsynth.synthesize`, which calls this for a
    :class:`~fsmsynth.model.timers.TimedMachine` and passes itself as ``synthesize``, the
    synthesizer of plain tables); ``timers`` is one of :data:`TIMER_CHOICES`.
    ``design.timed`` says how it was built and what the other way cost."""
    if timers not in TIMER_CHOICES:
        raise OptionError(f"timers {timers!r}: use one of {', '.join(TIMER_CHOICES)}")
    for key, plain in (("target", "two-level"), ("outputs", "combinational")):
        value = options.get(key, plain)
        if getattr(value, "name", value) != plain:
            raise OptionError(f"{key} {value!r}: a design with timers or counters is built "
                              f"for {key} {plain!r} only (for now)")
    built: dict[str, Design] = {}
    if timers in ("counters", "cheaper"):
        built["counters"] = _with_counters(machine, storage, encoding, check, options,
                                           synthesize)
    if timers == "unrolled" or (timers == "cheaper" and not machine.control.invariants):
        try:
            table = unroll(machine, limit=CHEAPER_UNROLL_LIMIT if timers == "cheaper"
                           else UNROLL_LIMIT)
        except TableError:
            if timers == "unrolled":
                raise
        else:
            flat = synthesize(table, storage, encoding, check=check, **options)
            built["unrolled"] = replace(flat, timed=TimedLogic(machine=machine,
                                                                  choice="unrolled"))
    elif timers == "unrolled":
        raise OptionError(f"{machine.name}: invariants are proven on timers as counters; "
                          "build it with timers='counters'")
    costs = FrozenMap({k: d.cost.total for k, d in built.items()})
    choice = min(built, key=lambda k: (built[k].cost.total, k != "counters"))
    chosen = built[choice]
    assert chosen.timed is not None
    return replace(chosen, timed=replace(chosen.timed, alternatives=costs))


def _with_counters(machine: TimedMachine, storage: Any, encoding: Any, check: bool,
                   options: dict[str, Any], synthesize: Synthesizer) -> Design:
    control_table = machine.control
    if control_table.invariants:
        spec = check_timed_invariants(machine)
        if not spec:
            raise InvariantError(f"{machine.name}: {spec.summary()}", spec)
        # Invariants that hold whatever the readings guide the control's don't cares.
        local = tuple(i for i in control_table.invariants
                      if check_invariants(replace(control_table, invariants=(i,))))
        control_table = replace(control_table, invariants=local)
    control = synthesize(control_table, storage, encoding, check=check, **options)
    unused = options.get("unused", "dont-care")
    kind = storage if isinstance(storage, str) and storage in STORAGES else "best"
    actions = machine.action_signals()
    blocks = tuple(
        block_logic(b, [r for r in machine.readings if r.block == b.name],
                    [a for _s, n, a in actions if n == b.name], kind, unused=unused,
                    weights=options.get("weights", DEFAULT_WEIGHTS),
                    logic=options.get("logic", "heuristic"))
        for b in machine.blocks)
    netlist = compose(control.netlist, [(b.block.name, b.netlist) for b in blocks],
                      machine.inputs, [s for s, _n, _a in actions],
                      [r.signal for r in machine.readings])
    equations = dict(control.equations)
    for b in blocks:
        equations.update(b.equations)
    design = replace(control, table=machine.control, netlist=netlist,
                     cost=total_cost([control.cost, *(b.cost for b in blocks)]),
                     equations=equations, verification=None, invariants=None,
                     timed=TimedLogic(machine=machine, choice="counters", blocks=blocks,
                                      control=control.netlist))
    return _proved(design) if check else design


def _proved(design: Design) -> Design:
    """The composed design with its proof and its invariants' proof, or the error."""
    assert design.timed is not None
    machine = design.timed.machine
    proof = verify_timed(design.netlist, machine, safe=design.unused == "safe")
    if not proof:
        cex = proof.counterexample
        trace = None
        if cex is not None and cex.states and proof.note == "by the unrolled table":
            trace = replay(unroll(machine), cex.inputs, cex.describe())
        raise VerificationError(f"{machine.name}: {proof.summary()}", proof, trace)
    kept = check_timed_invariants(machine, design.netlist)
    if not kept:
        trace = None
        if kept.violation is not None and len(kept.violation.states) and kept.walked:
            try:
                trace = violation_trace(unroll(machine, signals=True), kept)
            except (TableError, KeyError, ValueError):
                trace = None
        raise InvariantError(f"{machine.name}: {kept.summary()}", kept, trace)
    return replace(design, verification=proof, invariants=kept)
