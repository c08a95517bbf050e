"""The pipeline: state table to verified netlist, keeping every intermediate result."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property

from fsmsynth.cost import DEFAULT_WEIGHTS, Cost, CostWeights, cost_of, logic_shape
from fsmsynth.encode import Encoding, encode
from fsmsynth.equations import Equation
from fsmsynth.errors import OptionError, VerificationError
from fsmsynth.excite import LogicFunctions, excite
from fsmsynth.logic.cover import Cover, minimize_logic
from fsmsynth.netlist import Netlist, build_netlist
from fsmsynth.reduce import StateMinimization, minimize_states
from fsmsynth.storage import Storage, storage_named
from fsmsynth.table import StateTable
from fsmsynth.verify import Verification, verify
from fsmsynth.writers.json_netlist import write_json_netlist
from fsmsynth.writers.verilog import write_verilog

UNUSED_POLICIES = ("dont-care", "safe")


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
        Signal name -> :class:`~fsmsynth.equations.Equation`: flip-flop pins (``D0``, ``J1``,
        ``K1``, ...) then outputs by their declared names.
    netlist:
        Gates and flip-flops.
    cost:
        Cost summary and the ranking number ``cost.total``.
    verification:
        The proof that the netlist realizes the table (``None`` when skipped).
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

    @cached_property
    def verilog(self) -> str:
        """Structural Verilog of the netlist."""
        return write_verilog(self.netlist, header=self.header())

    @cached_property
    def json(self) -> str:
        """The netlist in fsmsynth's JSON schema, with the cost summary."""
        return write_json_netlist(self.netlist, self.cost.as_dict())

    @property
    def encoded_table(self) -> StateTable:
        """The table whose states were encoded: the reduced one, or the original."""
        return self.minimization.table if self.minimization else self.table

    @property
    def states_removed(self) -> int:
        """How many states minimization removed (unreachable and merged)."""
        return len(self.table.states) - len(self.encoded_table.states)

    @property
    def storage(self) -> str:
        """The storage kind name, or ``"mixed"`` when bits differ."""
        kinds = {s.name for s in self.storages}
        return kinds.pop() if len(kinds) == 1 else "mixed"

    def header(self) -> str:
        """Comment lines describing how the design was made."""
        codes = ", ".join(f"{s}={self.encoding.code_string(s)}"
                          for s in self.encoded_table.states)
        return (f"storage: {self.storage}; encoding: {self.encoding.method} ({codes}); "
                f"unused codes: {self.unused}\n"
                "Caution: synchronise asynchronous inputs, and verify timing in the target "
                "technology.")


def synthesize(table: StateTable, storage: str | Storage = "d",
               encoding: str | Mapping[str, int | str] = "binary", *,
               unused: str = "dont-care", weights: CostWeights = DEFAULT_WEIGHTS,
               minimize: bool = True, check: bool = True) -> Design:
    """Synthesize ``table`` into equations and a netlist, and prove the result.

    Parameters
    ----------
    table:
        The machine.
    storage:
        Flip-flop kind for every state bit: ``"d"``, ``"t"``, ``"jk"`` or ``"sr"``.
    encoding:
        ``"binary"``, ``"gray"``, ``"one-hot"`` or a mapping from state to code
        (see :func:`fsmsynth.encode.encode`).
    unused:
        ``"dont-care"`` (cheapest) or ``"safe"`` (every unused code goes to reset in one clock).
    weights:
        Cost weights used to choose between shared and separate covers and for ``cost.total``.
    minimize:
        Reduce the states first (:func:`fsmsynth.reduce.minimize_states`, on by default).
        A given encoding may then name states that were merged away; their codes are
        ignored.
    check:
        Run :func:`fsmsynth.verify.verify` (on by default).

    Raises
    ------
    OptionError
        Unknown storage kind, encoding or unused-code policy.
    EncodingError
        A given encoding that does not fit the table.
    VerificationError
        The netlist does not realize the table: a defect in fsmsynth, reported with its
        counterexample rather than returned as a wrong design.

    Examples
    --------
    >>> from fsmsynth import StateTable, synthesize
    >>> t = StateTable.from_rows(name="count3", inputs=[], outputs=["last"], reset="a",
    ...     rows=[("a", "", "b", "0"), ("b", "", "c", "0"), ("c", "", "a", "1")])
    >>> print(synthesize(t, "t").equations["T0"])
    T0 = Q1'
    """
    if unused not in UNUSED_POLICIES:
        raise OptionError(f"unused codes {unused!r}: use one of {', '.join(UNUSED_POLICIES)}")
    kind = storage_named(storage)
    reduction = minimize_states(table) if minimize else None
    work = reduction.table if reduction else table
    if reduction and isinstance(encoding, Mapping):
        encoding = {s: c for s, c in encoding.items() if s in work.states or s not in table.states}
    codes = encode(work, encoding)
    storages = (kind,) * codes.width
    functions = excite(work, codes, storages, unused=unused)
    cover = minimize_logic(functions, weights)
    equations = {name: Equation(signal=name, variables=cover.variables, terms=terms)
                 for name, terms in zip(cover.names, cover.terms)}
    netlist = build_netlist(table.name, table.inputs, table.outputs, cover, storages,
                            codes.codes[work.reset])
    flip_flops: dict[str, int] = {}
    for s in storages:
        flip_flops[s.name] = flip_flops.get(s.name, 0) + 1
    cost = cost_of(logic_shape(cover.terms), flip_flops, weights)
    proof = None
    if check:
        safe = codes.unused_codes() if unused == "safe" else ()
        proof = verify(netlist, table, safe_unused=safe)
        if not proof:
            raise VerificationError(f"{table.name}: {proof.summary()}", proof)
    return Design(table=table, minimization=reduction, storages=storages, encoding=codes,
                  unused=unused, functions=functions, cover=cover, equations=equations,
                  netlist=netlist, cost=cost, verification=proof)
