"""One-hot next-state and output logic from the structure one-hot gives.

With one flip-flop per state and every other code a don't care, flip-flop ``s`` must be 1
after a clock exactly when the machine was in some state ``p`` and took a transition from
``p`` to ``s``: ``D_s = sum over p of Q_p * cond(p -> s)``, where ``cond(p -> s)`` is the
input condition of those transitions.  Each state's conditions (and, in a Mealy machine,
its output conditions) are minimized once, together, over the inputs alone, with the
state's unspecified points as don't cares; nothing else needs minimizing.  This replaces
two-level minimization of ``n`` functions of ``n + inputs`` variables, which grows with the
square of the states, by ``n`` small minimizations over the inputs.

References
----------
Golson, S., "One-hot state machine design for FPGAs", *Proc. 3rd PLD Design Conference*,
1993 (next-state equations of one-hot machines written from the transitions into each
state; from memory).
"""

from __future__ import annotations

from collections.abc import Sequence

from fsmsynth.logic.cover import Cover
from fsmsynth.logic.cube import CUBE_ORDER, Cube
from fsmsynth.logic.espresso import espresso_cover
from fsmsynth.model.storage import Storage
from fsmsynth.model.table import StateTable
from fsmsynth.stages.encode import Encoding

ONE_HOT_STRUCTURE_ABOVE = 16
"""One-hot machines of more states than this get their D logic from the structure (below,
the general minimizer, which may use more of the don't cares, is fast enough)."""


def built_from_structure(table: StateTable, encoding: Encoding,
                         storages: Sequence[Storage], unused: str) -> bool:
    """Whether a design's logic comes from :func:`one_hot_cover`: D flip-flops, unused codes
    don't cares, more than :data:`ONE_HOT_STRUCTURE_ABOVE` states, and every code a single
    bit of its own (however the codes were chosen: asked for, given, or found by a
    search)."""
    n = len(table.states)
    return (n > ONE_HOT_STRUCTURE_ABOVE and unused == "dont-care" and encoding.width == n
            and all(s.name == "d" for s in storages)
            and {encoding.codes[s] for s in table.states} == {1 << b for b in range(n)})


def one_hot_cover(table: StateTable, encoding: Encoding, variables: tuple[str, ...]) -> Cover:
    """The cover of every D pin (``D0`` ...) and output of ``table`` one-hot encoded by
    ``encoding`` (each code a single bit), over ``variables`` (``Q0`` ..., then the inputs),
    as the module docstring builds it."""
    k, n = encoding.width, len(table.inputs)
    bit = {s: encoding.codes[s].bit_length() - 1 for s in table.states}
    assert all(encoding.codes[s] == 1 << bit[s] for s in table.states), "not one-hot"
    names = [f"D{b}" for b in range(k)] + list(table.outputs)
    terms: dict[str, set[Cube]] = {name: set() for name in names}
    for p in table.states:
        rows = table.rows_of(p)
        here = Cube(care=1 << bit[p], value=1 << bit[p])
        targets = sorted({nxt for _s, _c, nxt, _o in rows if nxt is not None},
                         key=table.states.index)
        signals: list[str] = [f"D{bit[s]}" for s in targets]
        ons: list[list[Cube]] = [[] for _ in targets]
        offs: list[list[Cube]] = [[] for _ in targets]
        for _s, cube_text, nxt, _o in rows:
            if nxt is None:
                continue
            cube = Cube.from_string(cube_text)
            for j, s in enumerate(targets):
                (ons if s == nxt else offs)[j].append(cube)
        if table.kind == "mealy":
            for o, name in enumerate(table.outputs):
                signals.append(name)
                ons.append([Cube.from_string(c) for _s, c, _n, w in rows if w and w[o] == "1"])
                offs.append([Cube.from_string(c) for _s, c, _n, w in rows if w and w[o] == "0"])
        else:
            for name, ch in zip(table.outputs, table.output_cube_of(p)):
                if ch == "1":
                    terms[name].add(here)
        if n:
            found = espresso_cover(n, ons, offs)
        else:
            found = [(Cube.universe(),) if on else () for on in ons]
        for signal, cubes in zip(signals, found):
            for cube in cubes:
                term = here.intersection(cube.shifted(k))
                assert term is not None
                terms[signal].add(term)
    return Cover(variables=variables, names=tuple(names),
                 terms=tuple(tuple(sorted(terms[name], key=CUBE_ORDER)) for name in names))
