"""Generated controllers of the kind designers have: many inputs, each state watching a few.

Shared by the many-input benchmark and by tests that need such machines at scale.  Each
state watches 2-4 of the inputs; its rows partition what it watches (every combination of
the watched inputs has one row, with ``-`` for every other input), about one row in four is
a self-loop, and about one output value in ten is a don't care.
"""

from __future__ import annotations

import itertools
import random

from fsmsynth import StateTable


def controller(n_states: int, n_inputs: int, n_outputs: int = 3, seed: int = 0,
               watch: tuple[int, int] = (2, 4), dont_care: float = 0.1) -> StateTable:
    """A random controller (see the module docstring); the same seed gives the same table."""
    rng = random.Random(seed)
    states = [f"s{i}" for i in range(n_states)]
    rows = []
    for i, state in enumerate(states):
        watched = sorted(rng.sample(range(n_inputs), min(n_inputs, rng.randint(*watch))))
        for values in itertools.product("01", repeat=len(watched)):
            cube = ["-"] * n_inputs
            for var, v in zip(watched, values):
                cube[var] = v
            nxt = state if rng.random() < 0.25 else states[rng.randrange(n_states)]
            if rng.random() < 0.5:
                nxt = states[(i + 1) % n_states] if rng.random() < 0.5 else nxt
            out = "".join("-" if rng.random() < dont_care else rng.choice("01")
                          for _ in range(n_outputs))
            rows.append((state, "".join(cube), nxt, out))
    return StateTable.from_rows(
        name="ctrl", inputs=[f"i{j}" for j in range(n_inputs)],
        outputs=[f"o{j}" for j in range(n_outputs)], rows=rows, reset="s0", states=states)
