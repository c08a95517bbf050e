"""Read a timing delay model from TOML (see docs/guide/checks.md, "Timing").

```toml
clock_to_q = 60.0        # ps, flip-flop clock-to-output, longest
clock_to_q_min = 40.0    # ps, shortest (contamination)
setup = 30.0
hold = 15.0
input_delay = 60.0       # when inputs settle after the clock edge, longest / shortest
input_delay_min = 40.0
[gate.and]               # delay = base + per_input * (fan-in - 1); *_min for shortest
base = 25.0
per_input = 8.0
base_min = 12.0
per_input_min = 3.0
```
"""

from __future__ import annotations

from dataclasses import fields, replace
from pathlib import Path

from fsmsynth.base.errors import OptionError, SpecFileError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.checks.timing import Delays, GateDelay
from fsmsynth.formats.text_files import non_negative, read_toml_table


def read_delays(path: str | Path) -> Delays:
    """A delay model from a TOML file; keys not given keep the default value."""
    p = Path(path)
    data = read_toml_table(p)
    defaults = Delays()
    scalars = {f.name for f in fields(Delays)} - {"gates"}
    changes: dict[str, float] = {}
    for key, value in data.items():
        if key == "gate":
            continue
        if key not in scalars:
            raise SpecFileError(f"unknown key {key!r}: use gate, {', '.join(sorted(scalars))}",
                                path=str(p))
        changes[key] = non_negative(value, key, p)
    gates = dict(defaults.gates)
    raw_gates = data.get("gate", {})
    if not isinstance(raw_gates, dict):
        raise SpecFileError("[gate] must hold tables such as [gate.and]", path=str(p))
    gate_keys = {f.name for f in fields(GateDelay)}
    for kind, spec in raw_gates.items():
        if not isinstance(spec, dict) or set(spec) - gate_keys:
            raise SpecFileError(f"[gate.{kind}] takes {', '.join(sorted(gate_keys))}",
                                path=str(p))
        base = gates.get(kind, GateDelay(0.0))
        try:
            gates[kind] = replace(base, **{k: non_negative(v, f"gate.{kind}.{k}", p)
                                           for k, v in spec.items()})
        except OptionError as exc:
            raise SpecFileError(f"[gate.{kind}]: {exc}", path=str(p)) from None
    try:
        return replace(defaults, gates=FrozenMap(gates), **changes)
    except OptionError as exc:
        raise SpecFileError(str(exc), path=str(p)) from None
