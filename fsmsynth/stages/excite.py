"""Excitation: from a state table, an encoding and storage kinds to Boolean functions.

The functions are over the state variables ``Q0 .. Q<k-1>`` (variables ``0 .. k-1``) and the
inputs in declared order (variables ``k ..``).  Each function is incompletely specified: an
on-set and an off-set of cubes; every other point (unused codes, input combinations no row
lists, don't-care next states or outputs, don't-care pins of the excitation table) is free.
"""

from __future__ import annotations

from collections.abc import Sequence

from fsmsynth.base.errors import OptionError
from fsmsynth.logic.cube import CUBE_ORDER, Cube
from fsmsynth.logic.functions import Function, LogicFunctions
from fsmsynth.model.storage import Storage
from fsmsynth.model.table import StateTable
from fsmsynth.stages.encode import Encoding

__all__ = ["Function", "LogicFunctions", "excite", "logic_variables", "pin_signal"]


def pin_signal(storage: Storage, pin: str, bit: int) -> str:
    """Equation name of a flip-flop pin: pin name then state bit (``J2``)."""
    assert pin in storage.pins
    return f"{pin}{bit}"


def logic_variables(table: StateTable, width: int) -> tuple[str, ...]:
    """The variables of a design's functions: ``Q0 .. Q<width-1>``, then the inputs."""
    return tuple(f"Q{b}" for b in range(width)) + table.inputs


def excite(table: StateTable, encoding: Encoding,
           storages: Storage | Sequence[Storage], unused: str = "dont-care") -> LogicFunctions:
    """The next-state and output functions of ``table`` under ``encoding``.

    Parameters
    ----------
    table, encoding:
        The machine and its state codes.
    storages:
        One storage kind for every state bit, or a sequence with one per bit (bit 0 first).
    unused:
        ``"dont-care"``: codes no state has are free.  ``"safe"``: from every unused code the
        machine goes to the reset state's code on the next clock, whatever the inputs.

    Each row contributes, per state bit, the excitation-table entry for the bit's present and
    next value (an on-cube where the pin must be 1, an off-cube where it must be 0), and per
    output its specified value.  Cost: O(rows x (state bits x pins + outputs)).
    """
    k = encoding.width
    per_bit = (tuple(storages) if isinstance(storages, Sequence) else (storages,) * k)
    assert len(per_bit) == k
    names = [pin_signal(s, p, b) for b, s in enumerate(per_bit) for p in s.pins]
    on: dict[str, list[Cube]] = {n: [] for n in [*names, *table.outputs]}
    off: dict[str, list[Cube]] = {n: [] for n in on}

    def add_transition(space: Cube, code: int, next_code: int) -> None:
        for b, storage in enumerate(per_bit):
            pins = storage.pin_values(code >> b & 1, next_code >> b & 1)
            for pin, v in zip(storage.pins, pins):
                if v != "-":
                    (on if v == "1" else off)[pin_signal(storage, pin, b)].append(space)

    def add_outputs(space: Cube, cube: str) -> None:
        for name, v in zip(table.outputs, cube):
            if v != "-":
                (on if v == "1" else off)[name].append(space)

    for state, inputs, nxt, outs in table.rows:
        code = encoding.codes[state]
        space = Cube.minterm(code, k).intersection(Cube.from_string(inputs).shifted(k))
        assert space is not None
        if nxt is not None:
            add_transition(space, code, encoding.codes[nxt])
        if outs is not None:
            add_outputs(space, outs)
    if table.kind == "moore":
        for state in table.states:
            add_outputs(Cube.minterm(encoding.codes[state], k), table.output_cube_of(state))
    if unused == "safe":
        reset_code = encoding.codes[table.reset]
        for region in encoding.unused_cubes():
            # Each bit's pins depend only on that bit's present value: split the region of
            # unused codes on it where it is free, never into single codes.
            for b, storage in enumerate(per_bit):
                for q in (0, 1):
                    part = region.intersection(Cube(care=1 << b, value=q << b))
                    if part is None:
                        continue
                    pins = storage.pin_values(q, reset_code >> b & 1)
                    for pin, v in zip(storage.pins, pins):
                        if v != "-":
                            (on if v == "1" else off)[pin_signal(storage, pin, b)].append(part)
    elif unused != "dont-care":
        raise OptionError(f"unused codes {unused!r}: use 'dont-care' or 'safe'")

    exclusive = tuple((pin_signal(s, a, b), pin_signal(s, c, b))
                      for b, s in enumerate(per_bit) for a, c in s.exclusive)
    variables = logic_variables(table, k)
    return LogicFunctions(
        variables=variables,
        functions=tuple(Function(name=n, on=tuple(sorted(set(on[n]), key=CUBE_ORDER)),
                                 off=tuple(sorted(set(off[n]), key=CUBE_ORDER))) for n in on),
        exclusive=exclusive,
    )
