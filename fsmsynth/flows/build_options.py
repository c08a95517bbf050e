"""What a build is asked to do: the options of one design, and a project of many specs.

Plain immutable values that pickle, so that they travel to worker processes and cluster
workers unchanged; :mod:`fsmsynth.flows.project` builds them, :mod:`fsmsynth.flows.project_file`
reads them from a project file.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields
from pathlib import Path

from fsmsynth.base.errors import OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic.cost import DEFAULT_WEIGHTS, CostWeights
from fsmsynth.map.targets import Target

HDLS = ("verilog", "vhdl")


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
    hdl: tuple[str, ...] = ("verilog",)
    testbench: bool = False
    cocotb: bool = False

    def __post_init__(self) -> None:
        unknown = [h for h in self.hdl if h not in HDLS]
        if unknown or not self.hdl:
            raise OptionError(f"hdl {','.join(self.hdl)}: give verilog, vhdl or both")
        if self.cocotb and "verilog" not in self.hdl:
            raise OptionError("cocotb runs the Verilog design in Icarus: keep verilog in hdl")

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
