"""Read a project file: the specs of many machines, where their files go, and how each is
built (see docs/guide/projects.md).

```toml
out = "build"                         # output folder, relative to this file (default build)
specs = ["controllers/*.toml", "rail_crossing.csv"]   # files or globs, relative to this file

[defaults]                            # options for every spec (each one optional)
storage = "d"                         # d, t, jk, sr, de, best, or one kind per bit: "jk,d"
encoding = "binary"                   # or gray, one-hot, adjacency, exhaustive, anneal
unused = "safe"
hdl = ["verilog", "vhdl"]
testbench = true

[spec.dock_leveler]                   # options for one spec, by its file name without suffix
storage = "jk"
target = "libraries/cells.toml"       # a built-in target's name, or a cell library file

[sweep]                               # what `fsmsynth sweep` tries on every spec
storages = ["d", "jk", "t", "sr"]
encodings = ["binary", "gray", "one-hot"]
targets = ["two-level", "nand2"]
```

Option keys: ``storage``, ``encoding``, ``logic``, ``unused``, ``outputs``, ``minimize``,
``clock_edge``, ``target``, ``map_for``, ``weights`` (a weights file), ``seed``, ``budget``,
``width``, ``unit_distance``, ``jobs``, ``time_limit``, ``force``, ``hdl``, ``testbench``,
``cocotb``, ``strict``, ``accept_warnings`` (a list), ``clock_port``, ``reset_port``,
``reset_style``, ``reset_active``, ``enable_port``: the options of ``fsmsynth build``, with
underscores.
"""

from __future__ import annotations

import glob
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from fsmsynth.base.errors import FsmSynthError, SpecFileError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.flows.build_options import BuildOptions, Project, ProjectSpec, option_problem
from fsmsynth.formats.cells_toml import read_cells
from fsmsynth.formats.text_files import line_of, read_text
from fsmsynth.formats.weights_toml import read_weights

TOP_KEYS = ("out", "specs", "defaults", "spec", "sweep")
SWEEP_KEYS = ("storages", "encodings", "targets")
_KINDS: dict[str, tuple[type, ...]] = {
    "storage": (str, list), "encoding": (str, dict), "logic": (str,), "unused": (str,),
    "outputs": (str,), "minimize": (bool,), "clock_edge": (str,), "target": (str,),
    "map_for": (str,), "weights": (str,), "seed": (int,), "budget": (int,), "width": (int,),
    "unit_distance": (bool,), "jobs": (int,), "time_limit": (int, float), "force": (bool,),
    "hdl": (str, list), "testbench": (bool,), "bench_vcd": (bool,), "report": (bool,),
    "cocotb": (bool,),
    "strict": (bool,),
    "accept_warnings": (list,), "clock_port": (str,), "reset_port": (str,),
    "reset_style": (str,), "reset_active": (str,), "enable_port": (str,),
}
SPEC_SUFFIXES = (".toml", ".csv")


def read_project(path: str | Path) -> Project:
    """The project in ``path``; every mistake is a :class:`SpecFileError` naming the file
    and the line of the key at fault."""
    p = Path(path)
    text = read_text(p)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SpecFileError(f"not valid TOML: {exc}", path=str(p)) from None
    lines = text.splitlines()

    def fail(message: str, section: str | None, key: str | None) -> SpecFileError:
        return SpecFileError(message, path=str(p), line=line_of(lines, section, key))

    for key in data:
        if key not in TOP_KEYS:
            raise fail(f"unknown key {key!r}: use {', '.join(TOP_KEYS)}", None, key)
    base = p.resolve().parent
    out = data.get("out", "build")
    if not isinstance(out, str) or not out:
        raise fail("out must be a folder name", None, "out")
    patterns = data.get("specs")
    if (not isinstance(patterns, list) or not patterns
            or not all(isinstance(x, str) and x for x in patterns)):
        raise fail("specs must be a list of spec files or globs, like [\"*.toml\"]", None,
                   "specs")
    paths: list[Path] = []
    for pattern in patterns:
        found = sorted(Path(m) for m in glob.glob(str(base / pattern), recursive=True))
        found = [f for f in found if f.resolve() != p.resolve() and f.is_file()]
        if not found:
            raise fail(f"specs: {pattern!r} names no file", None, "specs")
        for f in found:
            if f.suffix.lower() not in SPEC_SUFFIXES:
                raise fail(f"specs: {f.name} is not a .toml spec or a .csv table", None,
                           "specs")
        paths.extend(found)
    paths = list(dict.fromkeys(paths))
    labels: dict[str, Path] = {}
    for f in paths:
        if f.stem in labels:
            raise fail(f"specs: {labels[f.stem].name} and {f.name} have the same name; "
                       "rename one (a spec is named by its file name without suffix)",
                       None, "specs")
        labels[f.stem] = f

    defaults = data.get("defaults", {})
    if not isinstance(defaults, dict):
        raise fail("[defaults] must be a table of options", "defaults", None)
    per_spec = data.get("spec", {})
    if not isinstance(per_spec, dict):
        raise fail("[spec.NAME] must be tables of options", None, "spec")
    for label, options in per_spec.items():
        section = f"spec.{label}"
        if label not in labels:
            raise fail(f"[{section}]: no spec named {label!r} (specs: "
                       f"{', '.join(labels)})", section, None)
        if not isinstance(options, dict):
            raise fail(f"[{section}] must be a table of options", section, None)
    specs = [_spec(f, defaults, per_spec.get(label, {}), base, fail, label)
             for label, f in labels.items()]
    return Project(path=p, out=(base / out), specs=tuple(specs),
                   sweep=_sweep(data.get("sweep", {}), fail))


def _spec(f: Path, defaults: Mapping[str, Any], own: Mapping[str, Any], base: Path,
          fail: Any, label: str) -> ProjectSpec:
    """The spec ``f`` with the ``defaults`` and its ``own`` options (which win)."""
    def where(key: str) -> str:
        return f"spec.{label}" if key in own else "defaults"

    values: dict[str, Any] = {}
    depends: list[Path] = []
    for key, raw in {**defaults, **own}.items():
        if key not in _KINDS:
            raise fail(f"unknown option {key!r}: use {', '.join(_KINDS)}", where(key), key)
        kinds = _KINDS[key]
        if (isinstance(raw, bool) and bool not in kinds) or not isinstance(raw, kinds):
            wanted = " or ".join({str: "text", list: "a list", dict: "a table", bool:
                                  "true/false", int: "a whole number", float: "a number"}[k]
                                 for k in kinds)
            raise fail(f"{key} must be {wanted}, not {raw!r}", where(key), key)
        value: Any = raw
        try:
            if key == "storage":
                value = tuple(value) if isinstance(value, list) else (
                    tuple(x.strip() for x in value.split(",")) if "," in value else value)
            elif key == "encoding" and isinstance(value, dict):
                value = FrozenMap({str(k): str(v) for k, v in value.items()})
            elif key == "accept_warnings":
                value = tuple(value)
            elif key == "hdl":
                value = tuple(value) if isinstance(value, list) else tuple(
                    x.strip() for x in value.split(",") if x.strip())
            elif key == "target" and value.lower().endswith(".toml"):
                depends.append(base / value)
                value = read_cells(base / value)
            elif key == "weights":
                depends.append(base / value)
                value = read_weights(base / value)
        except SpecFileError:
            raise
        except FsmSynthError as exc:
            raise fail(f"{key}: {exc}", where(key), key) from None
        problem = option_problem(key, value)
        if problem:
            raise fail(problem, where(key), key)
        values[key] = value
    try:
        options = BuildOptions(**values)
    except FsmSynthError as exc:
        raise fail(str(exc), "spec." + label if own else "defaults", None) from None
    return ProjectSpec(path=f, options=options, depends_on=tuple(depends))


def _sweep(data: object, fail: Any) -> FrozenMap[str, tuple[str, ...]]:
    if not isinstance(data, dict):
        raise fail("[sweep] must be a table", "sweep", None)
    lists: dict[str, tuple[str, ...]] = {}
    for key, value in data.items():
        if key not in SWEEP_KEYS:
            raise fail(f"unknown key {key!r} in [sweep]: use {', '.join(SWEEP_KEYS)}",
                       "sweep", key)
        if not isinstance(value, list) or not value or not all(
                isinstance(x, str) and x for x in value):
            raise fail(f"[sweep] {key} must be a list of names", "sweep", key)
        lists[key] = tuple(value)
    return FrozenMap(lists)
