"""Hypothesis strategies: random state tables, cubes and functions.

Random machines are for property tests only; checks against published results live in
the test modules with their sources named.
"""

from __future__ import annotations

from hypothesis import strategies as st

from fsmsynth.model.table import StateTable


@st.composite
def input_partitions(draw: st.DrawFn, n_inputs: int) -> list[str]:
    """Disjoint input cubes that together cover the whole input space."""
    def split(prefix: list[str], depth: int) -> list[str]:
        free = [i for i, ch in enumerate(prefix) if ch == "-"]
        if not free or (depth > 0 and not draw(st.booleans())):
            return ["".join(prefix)]
        var = draw(st.sampled_from(free))
        out = []
        for v in "01":
            child = list(prefix)
            child[var] = v
            out += split(child, depth + 1)
        return out
    return split(["-"] * n_inputs, 0)


def _cube(draw: st.DrawFn, width: int, dont_care: bool) -> str:
    alphabet = "01-" if dont_care else "01"
    return "".join(draw(st.sampled_from(alphabet)) for _ in range(width))


@st.composite
def state_tables(draw: st.DrawFn, *, min_states: int = 2, max_states: int = 12,
                 min_inputs: int = 1, max_inputs: int = 4, min_outputs: int = 1,
                 max_outputs: int = 3, kind: str | None = None,
                 dont_cares: bool = True) -> StateTable:
    """A random valid Mealy or Moore table, possibly with don't cares and missing rows."""
    kind = kind or draw(st.sampled_from(["mealy", "moore"]))
    n = draw(st.integers(min_states, max_states))
    n_in = draw(st.integers(min_inputs, max_inputs))
    n_out = draw(st.integers(min_outputs, max_outputs))
    states = [f"s{i}" for i in range(n)]
    rows = []
    for s in states:
        for cube in draw(input_partitions(n_in)):
            if dont_cares and draw(st.integers(0, 9)) == 0:
                continue  # input combination left unspecified
            nxt = draw(st.sampled_from(states))
            if dont_cares and draw(st.integers(0, 7)) == 0:
                nxt = None
            out = _cube(draw, n_out, dont_cares) if kind == "mealy" else None
            rows.append((s, cube, nxt, out))
    state_outputs = ({s: _cube(draw, n_out, dont_cares) for s in states}
                     if kind == "moore" else None)
    reset = draw(st.sampled_from(states))
    return StateTable.from_rows(
        name="rand", kind=kind, inputs=[f"x{i}" for i in range(n_in)],
        outputs=[f"y{i}" for i in range(n_out)], rows=rows, reset=reset, states=states,
        state_outputs=state_outputs)
