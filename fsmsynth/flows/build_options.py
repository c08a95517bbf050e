"""What a build is asked to do: the options of one design, and a project of many specs.

Plain immutable values that pickle, so that they travel to worker processes and cluster
workers unchanged; :mod:`fsmsynth.flows.project` builds them, :mod:`fsmsynth.flows.project_file`
reads them from a project file.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields, replace
from pathlib import Path

from fsmsynth.base.choices import LOGIC_METHODS, TIMER_CHOICES, UNUSED_POLICIES
from fsmsynth.base.errors import OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.checks.spec_warnings import accept_problem
from fsmsynth.flows.pipeline import OUTPUT_KINDS
from fsmsynth.logic.cost import DEFAULT_WEIGHTS, CostWeights
from fsmsynth.map.targets import Target, target_named
from fsmsynth.model.clocking import DEFAULT_CLOCKING, LEVELS, RESET_STYLES, Clocking
from fsmsynth.model.storage import STORAGES
from fsmsynth.model.table import StateTable
from fsmsynth.stages.assign.scoring import SEARCHES
from fsmsynth.stages.encode import METHODS as ENCODE_METHODS
from fsmsynth.stages.netlist import EDGES

HDLS = ("verilog", "vhdl", "verilog-rtl", "vhdl-rtl")
"""HDL outputs by name: structural netlists, and register-transfer-level machines."""
ENCODINGS = (*ENCODE_METHODS, *SEARCHES)
"""Every encoding by name: the direct ones and the searches."""
CHOICES: dict[str, tuple[str, ...]] = {
    "logic": LOGIC_METHODS, "unused": UNUSED_POLICIES, "outputs": OUTPUT_KINDS,
    "clock_edge": EDGES, "map_for": ("area", "delay"),
    "timers": TIMER_CHOICES}


def _whole(value: object, least: int) -> bool:
    return isinstance(value, int) and not isinstance(value, bool) and value >= least


def option_problem(key: str, value: object) -> str | None:
    """Why ``value`` is not a value of build option ``key`` (a field of
    :class:`BuildOptions`), naming the choices; ``None`` when it is one.  Checked when
    options are built, so that a project file's bad value is an error at its line, not a
    failure of every design."""
    kinds = sorted(STORAGES)
    if key == "storage":
        given = value if isinstance(value, tuple) else (value,)
        wrong = [k for k in given if k not in STORAGES and (
            isinstance(value, tuple) or k not in ("best", "per-bit"))]
        if wrong or not given:
            return (f"storage {wrong[0] if wrong else value!r}: use one of "
                    f"{', '.join(kinds)}, best or per-bit, or one kind per state bit")
    elif key == "encoding" and isinstance(value, str) and value not in ENCODINGS:
        return (f"unknown encoding {value!r}: use one of {', '.join(ENCODINGS)}, or a mapping "
                "from state to code")
    elif key in CHOICES and value not in CHOICES[key]:
        return f"{key} {value!r}: use one of {', '.join(CHOICES[key])}"
    elif key == "target" and isinstance(value, str):
        try:
            target_named(value)
        except OptionError as exc:
            return str(exc)
    elif key == "hdl" and (not value or not isinstance(value, tuple)
                           or any(h not in HDLS for h in value)):
        shown = ",".join(value) if isinstance(value, tuple) else repr(value)
        return f"hdl {shown}: give one or more of {', '.join(HDLS)}"
    elif key == "accept_warnings":
        problem = (accept_problem(value) if isinstance(value, tuple) else
                   f"give a list of warnings, not {value!r}")
        return f"accept_warnings: {problem}" if problem else None
    elif key in ("reset_style", "reset_active") and value is not None and value not in (
            RESET_STYLES if key == "reset_style" else LEVELS):
        return (f"{key} {value!r}: use "
                f"{' or '.join(RESET_STYLES if key == 'reset_style' else LEVELS)}")
    elif key == "strict" and not isinstance(value, bool):
        return f"strict {value!r}: give true or false"
    elif key in ("jobs", "width") and value is not None and not _whole(value, 1):
        return f"{key} {value!r}: give a whole number of at least 1"
    elif key == "budget" and value is not None and not _whole(value, 0):
        return f"budget {value!r}: give a whole number of steps >= 0"
    elif key == "seed" and not _whole(value, -(2**63)):
        return f"seed {value!r}: give a whole number"
    elif key == "time_limit" and value is not None and not (
            isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value) and value > 0):
        return f"time_limit {value!r}: give a finite number of seconds > 0"
    return None


@dataclass(frozen=True, slots=True)
class BuildOptions:
    """How one design is built: the options of :func:`fsmsynth.synthesize` and which files
    to write.  ``storage`` is a kind, ``"best"``, or a tuple of kinds (bit 0 first);
    ``encoding`` a name or a map from state to code; ``target`` a built-in target's name or
    a :class:`~fsmsynth.map.targets.Target` (a cell library)."""

    storage: str | tuple[str, ...] = "d"
    encoding: str | FrozenMap[str, str] = "binary"
    logic: str = "heuristic"
    unused: str = "dont-care"
    outputs: str = "combinational"
    minimize: bool = True
    clock_edge: str = "rising"
    target: str | Target = "two-level"
    map_for: str = "area"
    weights: CostWeights = DEFAULT_WEIGHTS
    seed: int = 0
    budget: int | None = None
    width: int | None = None
    unit_distance: bool = False
    jobs: int = 1
    time_limit: float | None = None
    force: bool = False
    strict: bool = False
    accept_warnings: tuple[str, ...] = ()
    clock_port: str | None = None
    reset_port: str | None = None
    reset_style: str | None = None
    reset_active: str | None = None
    enable_port: str | None = None
    timers: str = "counters"
    hdl: tuple[str, ...] = ("verilog",)
    testbench: bool = False
    bench_vcd: bool = False
    report: bool = False
    cocotb: bool = False

    def __post_init__(self) -> None:
        for f in fields(self):
            problem = option_problem(f.name, getattr(self, f.name))
            if problem:
                raise OptionError(problem)
        self.clocking_for(None)  # a bad port name or style is an OptionError here
        if self.cocotb and "verilog" not in self.hdl:
            raise OptionError("cocotb runs the Verilog design in Icarus: keep verilog in hdl")

    def clocking_for(self, table: StateTable | None) -> Clocking | None:
        """The conventions these options ask for, over those of ``table``'s spec; ``None``
        when they ask for none (the spec's, or the defaults, then apply)."""
        asked = {"clock": self.clock_port, "reset": self.reset_port,
                 "reset_style": self.reset_style, "reset_active": self.reset_active,
                 "enable": self.enable_port}
        given: dict[str, str] = {k: v for k, v in asked.items() if v is not None}
        if not given:
            return None
        base = (table.clocking if table is not None else None) or DEFAULT_CLOCKING
        return replace(base, **given)

    def fingerprint(self) -> str:
        """Text that changes exactly when an option does (``repr`` of every field; the
        values are immutable types with stable representations)."""
        return "\n".join(f"{f.name}={getattr(self, f.name)!r}" for f in fields(self))


@dataclass(frozen=True, slots=True)
class ProjectSpec:
    """One spec of a project: its file, its build options, and the extra files whose
    content the build depends on (a cell library, a weights file)."""

    path: Path
    options: BuildOptions = field(default_factory=BuildOptions)
    depends_on: tuple[Path, ...] = ()

    @property
    def label(self) -> str:
        """The spec's file name without its suffix: how the project file and reports name it."""
        return self.path.stem


@dataclass(frozen=True, slots=True)
class Project:
    """Specs to build and where the files go; ``sweep`` holds the project's sweep lists
    (``storages``, ``encodings``, ``targets``) when it gives them."""

    path: Path
    out: Path
    specs: tuple[ProjectSpec, ...]
    sweep: FrozenMap[str, tuple[str, ...]] = field(default_factory=lambda: FrozenMap({}))


DEFAULT_OPTIONS = BuildOptions()
"""Every option at its default."""
