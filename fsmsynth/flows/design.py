"""The result of :func:`fsmsynth.flows.pipeline.synthesize`: every stage's output, kept for
inspection, with the netlist's HDL and JSON texts derived on demand."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from functools import cached_property

from fsmsynth.checks.hazards import GlitchReport, glitch_report
from fsmsynth.checks.invariants import InvariantCheck, constrain_outputs
from fsmsynth.checks.proof import Verification
from fsmsynth.checks.spec_warnings import SpecWarning
from fsmsynth.logic.cost import Cost
from fsmsynth.logic.cover import Cover
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.logic.functions import LogicFunctions
from fsmsynth.map.expr import Expr
from fsmsynth.map.factor import factor
from fsmsynth.map.realize import MappedDesign
from fsmsynth.model.clocking import Clocking
from fsmsynth.model.storage import Storage
from fsmsynth.model.table import StateTable
from fsmsynth.stages.assign.scoring import (
    SearchResult,
    transitions,
)
from fsmsynth.stages.counters import TimedLogic
from fsmsynth.stages.encode import Encoding
from fsmsynth.stages.equations import Equation
from fsmsynth.stages.netlist import Netlist
from fsmsynth.stages.reduce.tabulation import StateMinimization
from fsmsynth.stages.registered import delayed_machine
from fsmsynth.stages.unroll import unroll_for_bench
from fsmsynth.writers.json_netlist import write_json_netlist
from fsmsynth.writers.rtl_machine import RtlMachine, rtl_machine
from fsmsynth.writers.rtl_verilog import assertion_lines as verilog_assertions
from fsmsynth.writers.rtl_verilog import state_name_lines as verilog_state_names
from fsmsynth.writers.rtl_verilog import write_rtl_verilog
from fsmsynth.writers.rtl_vhdl import assertion_lines as vhdl_assertions
from fsmsynth.writers.rtl_vhdl import write_rtl_vhdl
from fsmsynth.writers.verilog import write_verilog
from fsmsynth.writers.vhdl import write_vhdl


@dataclass(frozen=True)
class Design:
    """Everything :func:`synthesize` computed, stage by stage.

    Attributes
    ----------
    table:
        The specification as given; the netlist is verified against it.
    minimization:
        The state minimization (``None`` when skipped); ``minimization.table`` is the table
        that was encoded.
    storages:
        Storage kind of each state bit, bit 0 first.
    encoding:
        The state codes.
    unused:
        What unused codes do (``"dont-care"`` or ``"safe"``).
    functions:
        The excitation and output functions, with their on- and off-sets.
    cover:
        The chosen sum of products of each function.
    equations:
        Signal name -> :class:`~fsmsynth.stages.equations.Equation`: flip-flop pins (``D0``, ``J1``,
        ``K1``, ...) then outputs by their declared names.
    netlist:
        Gates and flip-flops.
    cost:
        Cost summary and the ranking number ``cost.total``.
    verification:
        The proof that the netlist realizes the table (``None`` when skipped).
    assignment:
        For a searched encoding (``"exhaustive"``, ``"anneal"``): what the search found and
        how it ended (evaluations, proven, interrupted); ``None`` otherwise.
    invariants:
        The proof that the table's invariants hold on the netlist: an empty check (truthy,
        ``summary()`` "no invariants to prove") when the table has none; ``None`` only
        when verification was skipped (``check=False``).
    mapping:
        On a target other than ``"two-level"``: the mapped design (cells, areas, depth,
        storage report, array fit); ``netlist`` and ``cost`` are then the mapped ones, and
        ``two_level_cost`` keeps the two-level figures.
    """

    table: StateTable
    minimization: StateMinimization | None
    storages: tuple[Storage, ...]
    encoding: Encoding
    unused: str
    functions: LogicFunctions
    cover: Cover
    equations: Mapping[str, Equation]
    netlist: Netlist
    cost: Cost
    verification: Verification | None
    assignment: SearchResult | None = None
    invariants: InvariantCheck | None = None
    mapping: MappedDesign | None = None
    two_level_cost: Cost | None = None
    registered: StateTable | None = None
    """With registered outputs, the machine that was encoded: the (reduced) table itself for
    a Moore machine, its delayed machine (:func:`fsmsynth.stages.registered.delayed_machine`) for a
    Mealy one."""
    hazard_free: tuple[str, ...] = ()
    """Outputs whose sums of products were given the consensus terms that remove static
    hazards under single-input changes."""
    warnings: tuple[SpecWarning, ...] = ()
    """What the spec says that its designer may not have meant
    (:mod:`fsmsynth.checks.spec_warnings`), less the accepted ones."""
    timed: TimedLogic | None = None
    """For a machine with timers and counters (:mod:`fsmsynth.flows.timed`): how they were
    built.  ``table`` is then the control machine (readings as inputs, actions as outputs)
    and ``netlist``, ``cost`` and ``equations`` cover the whole design."""

    @property
    def multi_bit_steps(self) -> tuple[tuple[str, str, int], ...]:
        """Transitions ``(state, next state, bits that change)`` of the encoded table whose
        codes differ in more than one bit (where function hazards can happen)."""
        codes = self.encoding.codes
        return tuple((a, b, bin(codes[a] ^ codes[b]).count("1"))
                     for a, b in transitions(self.encoded_table)
                     if bin(codes[a] ^ codes[b]).count("1") > 1)

    @cached_property
    @exclusive
    def glitches(self) -> GlitchReport:
        """Which outputs can glitch and how (:mod:`fsmsynth.checks.hazards`), on the two-level
        sums of products; glitch-free outputs are named too."""
        return glitch_report(self.encoded_table, self.encoding, self.functions, self.cover)

    @cached_property
    @exclusive
    def factored(self) -> dict[str, Expr]:
        """Each signal's cover in factored (multi-level) form (:mod:`fsmsynth.map.factor`),
        over ``cover.variables``; ``expr.text(design.cover.variables)`` prints it and
        ``expr.to_sympy(design.cover.variables)`` converts it."""
        return {name: factor(terms) for name, terms in zip(self.cover.names, self.cover.terms)}

    @cached_property
    def verilog(self) -> str:
        """Structural Verilog of the netlist."""
        bits = self._state_bits("verilog")
        names = verilog_state_names(self.rtl, *bits) if bits[0] != "{}" else []
        return write_verilog(self.netlist, header=self.header(),
                             checks=names + verilog_assertions(self.rtl, *bits))

    @cached_property
    def vhdl(self) -> str:
        """Structural VHDL (IEEE 1076-2008) of the netlist; names VHDL cannot take are a
        :class:`~fsmsynth.base.errors.TableError` naming them."""
        return write_vhdl(self.netlist, header=self.header(),
                          checks=vhdl_assertions(self.rtl, *self._state_bits("vhdl")))

    def _state_bits(self, hdl: str) -> tuple[str, Callable[[str], str]]:
        """The present state code of the netlist (its state flip-flops, most significant
        first) and each state's code, as ``hdl`` writes them, for the assertions."""
        m = self.rtl
        width = self.state_width
        nets = [ff.q for ff in self.netlist.flip_flops[:width]][::-1]  # bit 0 first
        codes = {s.name: format(s.code, f"0{m.width}b")[m.width - width:] for s in m.states}
        if hdl == "verilog":
            return "{" + ", ".join(nets) + "}", lambda s: f"{len(nets)}'b{codes[s]}"
        if len(nets) == 1:
            return nets[0], lambda s: f"'{codes[s]}'"
        return (f"std_logic_vector'({' & '.join(nets)})", lambda s: f'"{codes[s]}"')

    @cached_property
    @exclusive
    def rtl(self) -> RtlMachine:
        """The machine as register-transfer-level HDL describes it
        (:mod:`fsmsynth.writers.rtl_machine`): the encoded states with their codes, whatever
        the storage kind or target; timers and counters built as blocks are registers beside
        it (:mod:`fsmsynth.writers.rtl_blocks`)."""
        base = (self.minimization.table if self.minimization
                else constrain_outputs(self.table))
        codes = dict(self.encoding.codes)
        width = self.state_width
        if self.registered is not None:  # the output bits sit above the state's own code
            mask = (1 << width) - 1
            own = {name.rsplit("/", 1)[0] if self.table.kind == "mealy" else name: code & mask
                   for name, code in reversed(list(codes.items()))}
            free = (c for c in range(1 << max(width, 1)) if c not in own.values())
            codes = {s: own[s] if s in own else next(free) for s in base.states}
        return rtl_machine(base, codes, width, method=self.encoding.method.split(",")[0],
                           unused=self.unused, registered=self.registered is not None,
                           edge=self.netlist.flip_flops[0].edge if self.netlist.flip_flops
                           else "rising", spec=self.table,
                           members={r: tuple(sorted(m)) for r, m in
                                    self.minimization.classes.items()}
                           if self.minimization else None, clocking=self.clocking,
                           timed=self.timed.machine if self.timed is not None
                           and self.timed.choice == "counters" else None)

    @cached_property
    def rtl_verilog(self) -> str:
        """Register-transfer-level Verilog (IEEE 1364-2005) of the machine: same module name
        and ports as :attr:`verilog` (:mod:`fsmsynth.writers.rtl_verilog`)."""
        return write_rtl_verilog(self.rtl, header=self.header())

    @cached_property
    def rtl_vhdl(self) -> str:
        """Register-transfer-level VHDL (IEEE 1076-2008) of the machine: same entity as
        :attr:`vhdl` (:mod:`fsmsynth.writers.rtl_vhdl`)."""
        return write_rtl_vhdl(self.rtl, header=self.header())

    @cached_property
    def json(self) -> str:
        """The netlist in fsmsynth's JSON schema, with the cost summary."""
        return write_json_netlist(self.netlist, self.cost.as_dict())

    @property
    def encoded_table(self) -> StateTable:
        """The table whose states were encoded: the reduced one, or the original (or, with
        registered outputs, the machine that carries them)."""
        if self.registered is not None:
            return self.registered
        return self.minimization.table if self.minimization else self.table

    @cached_property
    def reference(self) -> StateTable:
        """The table the netlist is verified against, and testbenches come from: the table,
        or for registered Mealy outputs its delayed machine (outputs one clock later)."""
        if self.registered is not None and self.table.kind == "mealy":
            return delayed_machine(self.table, keep_dont_cares=True)
        if self._bench is not None:
            return self._bench[0]  # the unrolled timed machine: the whole design's ports
        return self.table

    @property
    def bench_states(self) -> tuple[str, ...] | None:
        """The states of :attr:`reference` a bench tests: all (``None``), or for timers and
        counters built as blocks one state of the unrolled table per control state and
        readings (:func:`fsmsynth.stages.unroll.unroll_for_bench`); the proof covers the other
        counter values."""
        return None if self._bench is None else self._bench[1]

    @cached_property
    def _bench(self) -> tuple[StateTable, tuple[str, ...]] | None:
        """For timers and counters built as blocks, the unrolled table and the states a bench
        tests, from one unrolling."""
        if self.timed is not None and self.timed.choice == "counters":
            return unroll_for_bench(self.timed.machine)
        return None

    @property
    def state_width(self) -> int:
        """Code bits of the state itself: the encoding's, less the registered outputs' bits
        placed above them."""
        return self.encoding.width - (len(self.table.outputs) if self.registered else 0)

    @property
    def clocking(self) -> Clocking:
        """The clock, reset and enable conventions the netlist, HDL and benches follow."""
        return self.netlist.clocking

    @property
    def states_removed(self) -> int:
        """How many states minimization removed (unreachable and merged)."""
        return len(self.table.states) - len(self.encoded_table.states)

    @property
    def storage(self) -> str:
        """The storage kind name, ``"mixed"`` when bits differ, or ``"none"`` for a machine of
        one state (it needs no flip-flop: its outputs are functions of the inputs)."""
        kinds = {s.name for s in self.storages}
        if not kinds:
            return "none"
        return kinds.pop() if len(kinds) == 1 else "mixed"

    def header(self) -> str:
        """Comment lines describing how the design was made."""
        codes = (", ".join(f"{s}={self.encoding.code_string(s)}"
                           for s in self.encoded_table.states)
                 if self.encoding.width else "one state, no code bits")
        storage = self.storage
        if storage == "mixed":
            storage += " (" + ", ".join(f"Q{b} {s.name}" for b, s in enumerate(self.storages)) + ")"
        edges = sorted({ff.edge for ff in self.netlist.flip_flops}) or ["rising"]
        target = ""
        if self.mapping is not None:
            target = f"; target: {self.mapping.target}"
        if self.registered is not None:
            target += ("; outputs registered: each one clock after the inputs that produce "
                       "it" if self.table.kind == "mealy" else
                       "; outputs registered (Moore timing kept)")
        return (f"storage: {storage}; clock edge: {', '.join(edges)}; "
                f"encoding: {self.encoding.method} ({codes}); unused codes: {self.unused}"
                f"{target}; {self.clocking.describe()}\n"
                "Caution: synchronise asynchronous inputs, and verify timing in the target "
                "technology.")
