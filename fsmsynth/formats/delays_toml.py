"""Read a timing delay model from TOML (see docs/guide/checks.md, "Timing").

```toml
unit = "ps"              # or "ns": every value in the file is in this unit
clock_to_q = 60.0        # flip-flop clock-to-output, longest
clock_to_q_min = 40.0    # shortest (contamination)
setup = 30.0
hold = 15.0
input_delay = 60.0       # when inputs settle after the clock edge, longest / shortest
input_delay_min = 40.0
[gate.and]               # delay = base + per_input * (fan-in - 1); *_min for shortest
base = 25.0
per_input = 8.0
base_min = 12.0
per_input_min = 3.0
[cell.AOI21]             # a target's cell (a library cell, or a LUT as LUT4): its delay
delay = 31.0
delay_min = 18.0
```

Every mistake is an error naming the file and the line: an unknown key, unit, gate kind or
(when the design's target is known) cell.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection
from dataclasses import fields, replace
from pathlib import Path

from fsmsynth.base.errors import OptionError, SpecFileError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.checks.timing import Delays, GateDelay
from fsmsynth.formats.text_files import line_of, read_text, read_toml_table

UNITS = {"ps": 1.0, "ns": 1000.0}
"""Units a file may state, as picoseconds (the model's unit)."""


def read_delays(path: str | Path, cells: Collection[str] | None = None) -> Delays:
    """A delay model from a TOML file; keys not given keep the default value.

    ``cells`` are the cell names the design's target has (``None``: not checked); a
    ``[cell.NAME]`` table for any other name is an error at its line.
    """
    p = Path(path)
    data = read_toml_table(p)
    lines = read_text(p).splitlines()

    def fail(message: str, table: str | None = None, key: str | None = None) -> SpecFileError:
        return SpecFileError(message, path=str(p), line=line_of(lines, table, key))

    unit_name = data.get("unit", "ps")
    if unit_name not in UNITS:
        raise fail(f"unit {unit_name!r}: use ps or ns", None, "unit")
    unit = UNITS[unit_name]
    defaults = Delays()
    scalars = {f.name for f in fields(Delays)} - {"gates", "cells"}
    changes: dict[str, float] = {}
    for key, value in data.items():
        if key in ("gate", "cell", "unit"):
            continue
        if key not in scalars:
            raise fail(f"unknown key {key!r}: use unit, gate, cell, "
                       f"{', '.join(sorted(scalars))}", None, key)
        changes[key] = _number(value, key, None, key, unit, fail)
    gates = dict(defaults.gates)
    for kind, spec in _tables(data, "gate", fail).items():
        if kind not in defaults.gates:
            raise fail(f"[gate.{kind}]: unknown gate kind; use "
                       f"{', '.join(sorted(defaults.gates))} (a target's cells go in "
                       f"[cell.NAME])", f"gate.{kind}")
        gates[kind] = _model(spec, gates[kind], f"gate.{kind}",
                             {f.name for f in fields(GateDelay)}, unit, fail)
    own: dict[str, GateDelay] = {}
    for name, spec in _tables(data, "cell", fail).items():
        if cells is not None and name not in cells:
            raise fail(f"[cell.{name}]: the target has no cell {name!r} (cells: "
                       f"{', '.join(sorted(cells)) or 'none'})", f"cell.{name}")
        given = {"base" if k == "delay" else "base_min" if k == "delay_min" else k: v
                 for k, v in spec.items()}
        own[name] = _model(given, GateDelay(0.0), f"cell.{name}", {"base", "base_min"},
                           unit, fail, shown={"base": "delay", "base_min": "delay_min"})
    try:
        return replace(defaults, gates=FrozenMap(gates), cells=FrozenMap(own), **changes)
    except OptionError as exc:
        raise SpecFileError(str(exc), path=str(p)) from None


Fail = Callable[..., SpecFileError]


def _tables(data: dict[str, object], key: str, fail: Fail) -> dict[str, dict[str, object]]:
    raw = data.get(key, {})
    if not isinstance(raw, dict) or not all(isinstance(v, dict) for v in raw.values()):
        raise fail(f"[{key}] must hold tables such as [{key}.NAME]", None, key)
    return raw


def _number(value: object, label: str, table: str | None, key: str, unit: float,
            fail: Fail) -> float:
    """A delay in ps from a value in the file's unit, or an error at its line."""
    if (isinstance(value, bool) or not isinstance(value, (int, float))
            or not math.isfinite(value) or value < 0):
        raise fail(f"{label} must be a finite number >= 0, not {value!r}", table, key)
    return float(value) * unit


def _model(spec: dict[str, object], base: GateDelay, where: str, keys: set[str], unit: float,
           fail: Fail, shown: dict[str, str] | None = None) -> GateDelay:
    names = shown or {k: k for k in keys}
    wrong = set(spec) - keys
    if wrong:
        raise fail(f"[{where}] takes {', '.join(sorted(names[k] for k in keys))}, not "
                   f"{', '.join(sorted(names.get(k, k) for k in wrong))}", where)
    try:
        return replace(base, **{k: _number(v, f"{where}.{names[k]}", where, names[k], unit,
                                           fail) for k, v in spec.items()})
    except OptionError as exc:
        raise fail(f"[{where}]: {exc}", where) from None
