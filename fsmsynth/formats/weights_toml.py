"""Read cost weights from TOML (see docs/guide/synthesis.md, "Cost").

```toml
gate_input = 1.0          # weight of each gate input
default_flip_flop = 6.0   # flip-flop kinds not listed below
[gate]                    # weight of each gate, by kind
not = 0.0
and = 0.0
or = 0.0
[flip_flop]               # weight of each flip-flop, by storage kind
jk = 9.0
```
"""

from __future__ import annotations

from pathlib import Path

from fsmsynth.base.errors import SpecFileError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.formats.text_files import non_negative, read_toml_table
from fsmsynth.logic.cost import GATE_KINDS, CostWeights
from fsmsynth.model.storage import STORAGES


def read_weights(path: str | Path) -> CostWeights:
    """Cost weights from a TOML file; every key is optional."""
    p = Path(path)
    data = read_toml_table(p)
    allowed = {"gate_input", "default_flip_flop", "gate", "flip_flop"}
    for key in data:
        if key not in allowed:
            raise SpecFileError(f"unknown key {key!r}: use {', '.join(sorted(allowed))}",
                                path=str(p))

    def number(value: object, where: str) -> float:
        return non_negative(value, where, p)

    def table(key: str, names: tuple[str, ...] | list[str]) -> dict[str, float]:
        raw = data.get(key, {})
        if not isinstance(raw, dict):
            raise SpecFileError(f"[{key}] must be a table", path=str(p))
        for name in raw:
            if name not in names:
                raise SpecFileError(f"[{key}] {name!r}: use one of {', '.join(names)}",
                                    path=str(p))
        return {n: number(v, f"[{key}] {n}") for n, v in raw.items()}

    defaults = CostWeights()
    gates = dict(defaults.gate)
    gates.update(table("gate", GATE_KINDS))
    return CostWeights(
        gate=FrozenMap(gates),
        gate_input=number(data.get("gate_input", defaults.gate_input), "gate_input"),
        flip_flop=FrozenMap(table("flip_flop", sorted(STORAGES))),
        default_flip_flop=number(data.get("default_flip_flop", defaults.default_flip_flop),
                                 "default_flip_flop"),
    )
