"""Storage conversion: build one flip-flop kind from a cell of another kind plus logic.

The target kind is treated as a two-state Moore machine whose inputs are its own pins and
whose output is its state; synthesizing that machine with the other kind gives the
converting logic, proven like every design.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from fsmsynth.flows.design import Design
from fsmsynth.flows.pipeline import synthesize
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.storage import Storage, storage_named
from fsmsynth.model.table import StateTable
from fsmsynth.stages.equations import Equation


@dataclass(frozen=True, slots=True)
class StorageConversion:
    """Logic that makes a cell of kind ``using`` behave as kind ``target``.

    ``equations`` maps each pin of the ``using`` cell (``J``, ``K``) to its equation over
    ``Q`` (the cell's state) and the pins of the target kind; ``design`` keeps the full
    synthesis (netlist, Verilog, verification).  A target pin named like a pin of the cell
    (D from a DE cell) is written with the target kind after it (``D_d``), so that no name
    stands for two signals.
    """

    target: Storage
    using: Storage
    equations: Mapping[str, Equation]
    design: Design


def characteristic_machine(kind: Storage) -> StateTable:
    """The kind as a two-state Moore machine: inputs its pins, output ``Q`` its state."""
    rows = [(f"q{q}", values, None if nxt is None else f"q{nxt}", None)
            for values, q, nxt in kind.characteristic]
    return StateTable.from_rows(name=f"{kind.name}_cell", kind="moore", inputs=list(kind.pins),
                                outputs=["Q"], rows=rows, reset="q0", states=["q0", "q1"],
                                state_outputs={"q0": "0", "q1": "1"})


@exclusive
def convert_storage(target: str | Storage, using: str | Storage, *,
                    logic: str = "exact") -> StorageConversion:
    """The logic to realize ``target`` with a ``using`` cell (for example T from JK).

    Examples
    --------
    >>> c = convert_storage("t", using="jk")
    >>> [str(e) for e in c.equations.values()]
    ['J = T', 'K = T']
    """
    want, have = storage_named(target), storage_named(using)
    machine = characteristic_machine(want)
    design = synthesize(machine, have, {"q0": 0, "q1": 1}, logic=logic, minimize=False)
    variables = tuple("Q" if v == "Q0" else f"{v}_{want.name}" if v in have.pins else v
                      for v in design.cover.variables)
    equations = {pin: Equation(signal=pin, variables=variables,
                               terms=design.equations[f"{pin}0"].terms) for pin in have.pins}
    return StorageConversion(target=want, using=have, equations=equations, design=design)
