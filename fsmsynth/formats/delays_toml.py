"""Read a timing delay model from TOML (see README, "Timing").

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

import tomllib
from dataclasses import fields, replace
from pathlib import Path

from fsmsynth.errors import SpecFileError
from fsmsynth.frozen import FrozenMap
from fsmsynth.timing import Delays, GateDelay


def read_delays(path: str | Path) -> Delays:
    """A delay model from a TOML file; keys not given keep the default value."""
    p = Path(path)
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise SpecFileError(f"cannot read the file: {exc.strerror}", path=str(p)) from None
    except tomllib.TOMLDecodeError as exc:
        raise SpecFileError(f"not valid TOML: {exc}", path=str(p)) from None
    defaults = Delays()
    scalars = {f.name for f in fields(Delays)} - {"gates"}
    changes: dict[str, float] = {}
    for key, value in data.items():
        if key == "gate":
            continue
        if key not in scalars:
            raise SpecFileError(f"unknown key {key!r}: use gate, {', '.join(sorted(scalars))}",
                                path=str(p))
        changes[key] = _number(value, key, p)
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
        gates[kind] = replace(base, **{k: _number(v, f"gate.{kind}.{k}", p)
                                       for k, v in spec.items()})
    return replace(defaults, gates=FrozenMap(gates), **changes)


def _number(value: object, where: str, path: Path) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or value < 0:
        raise SpecFileError(f"{where} must be a number >= 0, not {value!r}", path=str(path))
    return float(value)
