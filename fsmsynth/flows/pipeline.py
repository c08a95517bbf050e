"""The pipeline: state table to verified netlist, keeping every intermediate result."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace

from fsmsynth.base.choices import UNUSED_POLICIES
from fsmsynth.base.errors import (
    InvariantError,
    OptionError,
    VerificationError,
    WarningsAsErrors,
)
from fsmsynth.base.names import port_bits, ports_of
from fsmsynth.checks.hazards import hazard_free
from fsmsynth.checks.invariants import InvariantCheck, check_invariants, constrain_outputs
from fsmsynth.checks.spec_warnings import spec_warnings, strict_message
from fsmsynth.checks.trace import replay, violation_trace
from fsmsynth.checks.verify import verify
from fsmsynth.flows.design import Design
from fsmsynth.flows.searched_codes import StorageChoice, per_bit, searched_codes
from fsmsynth.flows.timed import synthesize_timed
from fsmsynth.logic.cost import DEFAULT_WEIGHTS, CostWeights, cost_of, logic_shape
from fsmsynth.logic.cover import minimize_logic
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.logic.functions import LogicFunctions
from fsmsynth.map.realize import map_design
from fsmsynth.map.targets import Target, target_named
from fsmsynth.model.clocking import DEFAULT_CLOCKING, Clocking
from fsmsynth.model.storage import STORAGES, Storage
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine
from fsmsynth.stages.assign.scoring import (
    SEARCHES,
    SearchResult,
)
from fsmsynth.stages.encode import METHODS as ENCODE_METHODS
from fsmsynth.stages.encode import Encoding, encode
from fsmsynth.stages.equations import Equation
from fsmsynth.stages.excite import excite
from fsmsynth.stages.netlist import EDGES, build_netlist
from fsmsynth.stages.one_hot import built_from_structure, one_hot_cover
from fsmsynth.stages.reduce import minimize_states
from fsmsynth.stages.reduce.tabulation import StateMinimization
from fsmsynth.stages.registered import delayed_machine, registered_codes


@exclusive
def synthesize(table: StateTable | TimedMachine, storage: StorageChoice = "d",
               encoding: str | Mapping[str, int | str] = "binary", *,
               unused: str = "dont-care", weights: CostWeights = DEFAULT_WEIGHTS,
               logic: str = "heuristic", minimize: bool = True, check: bool = True,
               seed: int = 0, budget: int | None = None, width: int | None = None,
               clock_edge: str = "rising", jobs: int = 1, time_limit: float | None = None,
               force: bool = False, target: str | Target = "two-level",
               map_for: str = "area",
               outputs: str | Mapping[str, str] = "combinational",
               unit_distance: bool = False, accept_warnings: Sequence[str] = (),
               strict: bool = False, clocking: Clocking | None = None,
               timers: str = "counters") -> Design:
    """Synthesize ``table`` into equations and a netlist, and prove the result.

    Parameters
    ----------
    table:
        The machine: a :class:`~fsmsynth.model.table.StateTable`, or a
        :class:`~fsmsynth.model.timers.TimedMachine` (a control machine with timers and
        counters; :mod:`fsmsynth.flows.timed`).
    storage:
        Flip-flop kind for every state bit: ``"d"``, ``"t"``, ``"jk"``, ``"sr"`` or ``"de"``
        (D with clock enable); a sequence or a mapping giving the kind of each state bit
        (bit 0 first); or ``"per-bit"``: for the chosen encoding each bit's excitation is
        independent, so each bit gets the kind whose own logic is cheapest; or ``"best"``:
        the cheapest of ``"per-bit"`` and every single kind for all bits, so never costlier
        than any of them.
    encoding:
        ``"binary"``, ``"gray"``, ``"one-hot"`` or a mapping from state to code
        (see :func:`fsmsynth.stages.encode.encode`); or a search for cheap logic
        (:mod:`fsmsynth.stages.assign`): ``"adjacency"`` (assignment rules), ``"exhaustive"``
        (every assignment up to bit permutation, plus one-hot; proven best) or ``"anneal"``
        (simulated annealing).  Searches score assignments with the storage kind asked for
        (D when it is ``"best"``).
    unused:
        ``"dont-care"`` (cheapest) or ``"safe"`` (every unused code goes to reset in one clock).
    weights:
        Cost weights used to choose between shared and separate covers and for ``cost.total``.
    logic:
        Two-level minimizer: ``"heuristic"`` (Espresso), ``"exact"`` (proven minimum
        covers), or ``"auto"`` (exact up to 10 variables, Espresso beyond); the chosen
        one and whether it proved minimality are on ``design.cover``.
    minimize:
        Reduce the states first (:func:`fsmsynth.stages.reduce.minimize_states`, on by default).
        A given encoding may then name states that were merged away; their codes are
        ignored.
    check:
        Run :func:`fsmsynth.checks.verify.verify` (on by default).
    seed, budget:
        For ``"anneal"``: the random seed (same seed, same codes) and the number of steps
        (default 400).  Ctrl-C stops a search and keeps the best found.
    jobs:
        Worker processes that share the scoring of a searched encoding (default 1: all in
        this process); the result is the same.  Two on two cores halve the time of an
        8-state exhaustive search.
    time_limit:
        Seconds for a searched encoding (default: none); when they run out, the best
        assignment found so far is used and ``design.assignment.timed_out`` is set.
    force:
        Run ``"exhaustive"`` even beyond :data:`fsmsynth.stages.assign.EXHAUSTIVE_LIMIT`
        assignments (refused otherwise, naming the count).
    clock_edge:
        ``"rising"`` (default) or ``"falling"``: the edge every flip-flop samples on.
    width:
        Code width in bits for ``"adjacency"``, ``"exhaustive"`` and ``"anneal"`` (default:
        the fewest that fit); wider codes often simplify the logic.
    target:
        What the design is built from (:mod:`fsmsynth.map.targets`): ``"two-level"`` (default),
        ``"nand2"``, ``"gates2"``, ``"cmos"``, ``"lut4"``, ``"lut6"``, ``"pterms:N"`` or a
        :class:`~fsmsynth.map.targets.Target` (a cell library read from a file).  The covers
        are factored and mapped onto it, the mapped netlist is verified, and ``cost.total``
        is the target's area; ``"best"`` storage then picks by that area.
    map_for:
        ``"area"`` (default) or ``"delay"``: what technology mapping minimizes.
    outputs:
        ``"combinational"`` (default: minimum sums of products) or ``"hazard-free"``:
        outputs get the consensus terms that remove every static hazard under a
        single-input change (:func:`fsmsynth.checks.hazards.hazard_free`); or a mapping from
        output name to one of those.  ``"registered"``: every output from a D flip-flop of
        its own (:mod:`fsmsynth.stages.registered`); Moore timing is kept, Mealy outputs come one
        clock later, and the netlist is verified against that (``design.reference``).
        ``design.glitches`` reports what can still glitch.
    clocking:
        The clock, reset and enable ports and how the flip-flops reset
        (:class:`~fsmsynth.model.clocking.Clocking`: asynchronous or synchronous, active
        high or low, an optional clock enable); by default what the spec's ``[clocking]``
        says, else ``clk`` and an asynchronous active-high ``rst``.  The netlist, the HDL and
        the benches follow it.
    timers:
        For a timed machine: ``"counters"`` (default: each timer and counter a block of
        the same storage kind beside the control machine), ``"unrolled"`` (one plain table
        whose states carry the values) or ``"cheaper"`` (both, keeping the cheaper);
        ``design.timed`` reports the blocks and the costs.
    accept_warnings, strict:
        ``design.warnings`` holds the spec's warnings
        (:func:`fsmsynth.checks.spec_warnings.spec_warnings`), less those the spec or
        ``accept_warnings`` accept (identifiers, or ``id:subject``); with ``strict`` any
        left are a :class:`~fsmsynth.base.errors.WarningsAsErrors`, before any work.

    Raises
    ------
    OptionError
        Unknown storage kind, encoding or unused-code policy.
    EncodingError
        A given encoding that does not fit the table.
    VerificationError
        The netlist does not realize the table: a defect in fsmsynth, reported with its
        counterexample rather than returned as a wrong design.
    InvariantError
        The table breaks one of its invariants (whatever its don't cares become), or the
        netlist does; with the shortest input sequence from reset that shows it.

    Notes
    -----
    The table's invariants (:mod:`fsmsynth.checks.invariants`) are proven on the table first; then
    the don't-care outputs that could break one are fixed before minimization
    (:func:`fsmsynth.checks.invariants.constrain_outputs`), and the netlist is proven to keep them.

    Examples
    --------
    >>> from fsmsynth import StateTable, synthesize
    >>> t = StateTable.from_rows(name="count3", inputs=[], outputs=["last"], reset="a",
    ...     rows=[("a", "", "b", "0"), ("b", "", "c", "0"), ("c", "", "a", "1")])
    >>> print(synthesize(t, "t").equations["T0"])
    T0 = Q1'
    """
    if isinstance(table, TimedMachine):
        return synthesize_timed(
            table, storage, encoding, synthesize=synthesize, timers=timers, check=check,
            unused=unused, weights=weights, logic=logic, minimize=minimize, seed=seed,
            budget=budget, width=width, clock_edge=clock_edge, jobs=jobs,
            time_limit=time_limit, force=force, target=target, map_for=map_for,
            outputs=outputs, unit_distance=unit_distance, accept_warnings=accept_warnings,
            strict=strict, clocking=clocking)
    _check_arguments(table, weights, seed, unused, clock_edge)
    conventions = _clocking_for(table, clocking)
    warnings = spec_warnings(table, accept_warnings)
    if strict and warnings:
        raise WarningsAsErrors(strict_message(table.name, warnings), warnings)
    _prove_on_table(table)
    constrained = constrain_outputs(table)
    reduction = minimize_states(constrained) if minimize else None
    work = reduction.table if reduction else constrained
    if reduction and isinstance(encoding, Mapping):
        encoding = {s: c for s, c in encoding.items() if s in work.states or s not in table.states}
    recipe = _Recipe(table=table, reduction=reduction, work=work, unused=unused,
                     weights=weights, logic=logic, smooth=_smoothed(table, outputs),
                     target=target_named(target), map_for=_map_goal(map_for))
    codes, search = _state_codes(recipe, encoding, storage, seed, budget, width, jobs,
                                 time_limit, force, unit_distance)
    chosen = _built(recipe, codes, storage, outputs)
    if clock_edge != "rising":
        chosen = replace(chosen, netlist=replace(chosen.netlist, flip_flops=tuple(
            replace(ff, edge=clock_edge) for ff in chosen.netlist.flip_flops)))
    chosen = replace(chosen, netlist=chosen.netlist.with_clocking(conventions))
    chosen = replace(chosen, assignment=search, warnings=warnings)
    return _proved(chosen) if check else chosen


def _clocking_for(table: StateTable, clocking: Clocking | None) -> Clocking:
    """The conventions asked for, else the spec's, else the defaults; refused when a port
    name is also one of the machine's."""
    chosen = clocking or table.clocking or DEFAULT_CLOCKING
    if not isinstance(chosen, Clocking):
        raise OptionError(f"clocking must be a Clocking, not {chosen!r}")
    taken = {p for p, _w in ports_of([*table.inputs, *table.outputs])} | {table.name}
    for port in chosen.ports:
        if port in taken:
            raise OptionError(f"port {port!r} (clock, reset or enable) is also a name of the "
                              f"machine {table.name!r}: rename one")
    return chosen


def _check_arguments(table: StateTable, weights: CostWeights, seed: int, unused: str,
                     clock_edge: str) -> None:
    """Refuse arguments of the wrong type or value before any work is done."""
    if not isinstance(table, StateTable):
        raise OptionError(f"synthesize() takes a StateTable (StateTable.from_rows, or "
                          f"fsmsynth.formats.read_table), not {type(table).__name__}")
    if not isinstance(weights, CostWeights):
        raise OptionError(f"weights must be a CostWeights, not {weights!r}")
    if isinstance(seed, bool) or not isinstance(seed, int):
        raise OptionError(f"seed {seed!r}: give a whole number")
    if unused not in UNUSED_POLICIES:
        raise OptionError(f"unused codes {unused!r}: use one of {', '.join(UNUSED_POLICIES)}")
    if clock_edge not in EDGES:
        raise OptionError(f"clock edge {clock_edge!r}: use one of {', '.join(EDGES)}")


def _prove_on_table(table: StateTable) -> None:
    """The table's own invariants hold whatever its don't cares become, or InvariantError."""
    if table.invariants:
        on_table = check_invariants(table)
        if not on_table:
            raise InvariantError(f"{table.name}: {on_table.summary()}", on_table,
                                 violation_trace(table, on_table))


def _map_goal(map_for: str) -> str:
    if map_for not in ("area", "delay"):
        raise OptionError(f"map for {map_for!r}: use 'area' or 'delay'")
    return map_for


@dataclass(frozen=True, slots=True)
class _Recipe:
    """What every candidate design of one :func:`synthesize` call shares: the table as given,
    its reduction and the table that is encoded, and the options of logic and mapping."""

    table: StateTable
    reduction: StateMinimization | None
    work: StateTable
    unused: str
    weights: CostWeights
    logic: str
    smooth: tuple[str, ...]
    target: Target
    map_for: str

    def design(self, work: StateTable, codes: Encoding, storages: tuple[Storage, ...],
               smooth: tuple[str, ...], output_offset: int | None = None) -> Design:
        """One candidate: built from ``work`` with these codes and kinds, then mapped."""
        return _mapped(_build(self.table, self.reduction, work, codes, storages, self.unused,
                              self.weights, self.logic, smooth, output_offset),
                       self.target, self.map_for)


def _state_codes(recipe: _Recipe, encoding: str | Mapping[str, int | str],
                 storage: StorageChoice, seed: int, budget: int | None, width: int | None,
                 jobs: int, time_limit: float | None, force: bool, unit_distance: bool
                 ) -> tuple[Encoding, SearchResult | None]:
    """The state codes: from a search of :mod:`fsmsynth.stages.assign`, or as given."""
    for given, name in ((seed != 0, "seed"), (budget is not None, "budget")):
        if given and encoding != "anneal":
            raise OptionError(f"{name} applies to the anneal encoding")
    if isinstance(encoding, str) and encoding in SEARCHES:
        return searched_codes(recipe.work, encoding, storage, recipe.unused, recipe.weights,
                       recipe.logic, seed, budget, width, jobs, time_limit, force,
                       recipe.target, recipe.map_for, unit_distance)
    if unit_distance:
        raise OptionError("unit_distance applies to the adjacency, exhaustive and anneal "
                          "encodings (gray already steps one bit along its numbering)")
    if width is not None:
        raise OptionError("width applies to adjacency, exhaustive and anneal encodings")
    if isinstance(encoding, str) and encoding not in ENCODE_METHODS:
        raise OptionError(f"unknown encoding {encoding!r}: use one of "
                          f"{', '.join((*ENCODE_METHODS, *SEARCHES))}, or a mapping from "
                          "state to code")
    return encode(recipe.work, encoding), None


def _built(recipe: _Recipe, codes: Encoding, storage: StorageChoice,
           outputs: str | Mapping[str, str]) -> Design:
    """The design for the storage asked for: registered outputs, the cheapest of every kind
    (``"best"``), the cheapest kind per bit (``"per-bit"``), or the kinds given."""
    work = recipe.work
    if outputs == "registered":
        if storage in ("best", "per-bit"):
            raise OptionError("registered outputs: give one storage kind (or one per state "
                              "bit); the output registers are D flip-flops")
        if recipe.table.invariants and recipe.table.kind == "mealy":
            raise OptionError("registered Mealy outputs move one clock later, so the "
                              "invariants' timing would change: not supported yet")
        machine = work if work.kind == "moore" else delayed_machine(work)
        codes_r = registered_codes(machine, codes, delayed=work.kind == "mealy")
        kinds = per_bit(storage, codes.width) + (STORAGES["d"],) * len(work.outputs)
        plain = _build(recipe.table, recipe.reduction, machine, codes_r, kinds, recipe.unused,
                       recipe.weights, recipe.logic, (), output_offset=codes.width)
        return _mapped(replace(plain, registered=machine), recipe.target, recipe.map_for)
    if storage == "best":
        candidates = [(k,) * codes.width for k in STORAGES.values()]
        candidates.append(_cheapest_per_bit(work, codes, recipe.unused, recipe.weights,
                                            recipe.logic))
        designs = [recipe.design(work, codes, c, recipe.smooth)
                   for c in dict.fromkeys(candidates)]
        return min(designs, key=lambda d: (d.cost.total, d.cost.gate_inputs))
    if storage == "per-bit":
        kinds = _cheapest_per_bit(work, codes, recipe.unused, recipe.weights, recipe.logic)
    else:
        kinds = per_bit(storage, codes.width)
    return recipe.design(work, codes, kinds, recipe.smooth)


def _cheapest_per_bit(table: StateTable, codes: Encoding, unused: str, weights: CostWeights,
                      logic: str) -> tuple[Storage, ...]:
    """For each state bit, the kind whose own pin logic (minimized alone) costs least."""
    excited = {kind.name: excite(table, codes, (kind,) * codes.width, unused=unused)
               for kind in STORAGES.values()}
    choice = []
    for bit in range(codes.width):
        best: tuple[float, str] | None = None
        for kind in STORAGES.values():
            functions = excited[kind.name]
            pins = {f"{p}{bit}" for p in kind.pins}
            own = LogicFunctions(
                variables=functions.variables,
                functions=tuple(f for f in functions.functions if f.name in pins),
                exclusive=tuple(x for x in functions.exclusive if x[0] in pins))
            shape = logic_shape(minimize_logic(own, weights, logic).terms)
            price = cost_of(shape, {kind.name: 1}, weights).total
            if best is None or price < best[0]:
                best = (price, kind.name)
        assert best is not None
        choice.append(STORAGES[best[1]])
    return tuple(choice)


def _build(table: StateTable, reduction: StateMinimization | None, work: StateTable,
           codes: Encoding, storages: tuple[Storage, ...], unused: str, weights: CostWeights,
           logic: str, smooth: tuple[str, ...] = (), output_offset: int | None = None
           ) -> Design:
    functions = excite(work, codes, storages, unused=unused)
    if output_offset is None and built_from_structure(work, codes, storages, unused):
        cover = one_hot_cover(work, codes, functions.variables)  # from the transitions
    else:
        cover = minimize_logic(functions, weights, logic)
    if codes.method == "outputs":
        output_offset = 0
    if output_offset is not None:
        # Output j is state bit offset + j on every used code: a wire from that flip-flop.
        terms = list(cover.terms)
        for j, name in enumerate(work.outputs):
            bit = output_offset + j
            terms[cover.names.index(name)] = (Cube(care=1 << bit, value=1 << bit),)
        cover = replace(cover, terms=tuple(terms))
    if smooth:
        n = len(cover.variables)
        inputs = list(range(codes.width, n))
        terms = list(cover.terms)
        for name in smooth:
            f = functions.function(name)
            at = cover.names.index(name)
            terms[at] = hazard_free(cover.terms[at], f.on, f.off, inputs, n)
        cover = replace(cover, terms=tuple(terms))
    equations = {name: Equation(signal=name, variables=cover.variables, terms=terms)
                 for name, terms in zip(cover.names, cover.terms)}
    netlist = build_netlist(table.name, table.inputs, table.outputs, cover, storages,
                            codes.codes[work.reset])
    flip_flops: dict[str, int] = {}
    for s in storages:
        flip_flops[s.name] = flip_flops.get(s.name, 0) + 1
    cost = cost_of(logic_shape(cover.terms), flip_flops, weights)
    return Design(table=table, minimization=reduction, storages=storages, encoding=codes,
                  unused=unused, functions=functions, cover=cover, equations=equations,
                  netlist=netlist, cost=cost, verification=None, hazard_free=smooth)


OUTPUT_KINDS = ("combinational", "hazard-free", "registered")


def _smoothed(table: StateTable, outputs: str | Mapping[str, str]) -> tuple[str, ...]:
    """The output bits to make hazard-free (a vector output names all its bits)."""
    if outputs == "registered":
        return ()
    ports = {port: port_bits(port, width) for port, width in ports_of(table.outputs)}
    if isinstance(outputs, str):
        outputs = dict.fromkeys(ports, outputs)
    if not isinstance(outputs, Mapping):
        raise OptionError(f"outputs {outputs!r}: give 'combinational', 'hazard-free' or a "
                          "dict of output -> one of them")
    chosen: list[str] = []
    for name, kind in outputs.items():
        if kind not in OUTPUT_KINDS:
            raise OptionError(f"outputs of {name!r}: {kind!r}; use one of "
                              f"{', '.join(OUTPUT_KINDS)}")
        if kind == "registered":
            raise OptionError("registered outputs apply to every output: give "
                              "outputs='registered'")
        if name not in ports:
            raise OptionError(f"outputs: unknown output {name!r} (outputs: "
                              f"{', '.join(ports) or 'none'})")
        if kind == "hazard-free":
            chosen += ports[name]
    return tuple(b for b in table.outputs if b in chosen)


def _mapped(design: Design, target: Target, goal: str) -> Design:
    """``design`` built on ``target`` (unchanged for ``"two-level"``)."""
    if target.kind == "two-level":
        return design
    mapping = map_design(design.table.name, design.table.inputs, design.table.outputs,
                         design.cover, design.storages, design.netlist.reset_code, target, goal)
    two = design.cost
    cost = replace(two, total=round(mapping.area, 6), target=target.name,
                   cells=mapping.cells, logic_area=round(mapping.logic_area, 6),
                   flip_flop_area=round(mapping.flip_flop_area, 6), depth=mapping.depth,
                   storage=mapping.storage)
    return replace(design, netlist=mapping.netlist, cost=cost, mapping=mapping,
                   two_level_cost=two)


def _proved(design: Design) -> Design:
    """The design with its verification, or VerificationError with the counterexample."""
    safe = design.encoding.unused_cubes() if design.unused == "safe" else ()
    proof = verify(design.netlist, design.reference, safe_unused=safe)
    if not proof:
        cex = proof.counterexample
        trace = (replay(design.reference, cex.inputs, cex.describe())
                 if cex is not None and cex.start_code is None else None)
        raise VerificationError(f"{design.table.name}: {proof.summary()}", proof, trace)
    if not design.table.invariants:  # nothing to prove: an empty result, never None
        return replace(design, verification=proof,
                       invariants=InvariantCheck(invariants=(), walked=0, on="netlist"))
    kept = check_invariants(design.table, design.netlist)
    if not kept:
        raise InvariantError(f"{design.table.name}: {kept.summary()}", kept,
                             violation_trace(design.table, kept))
    return replace(design, verification=proof, invariants=kept)
