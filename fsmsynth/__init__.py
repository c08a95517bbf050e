"""fsmsynth: from a state table to verified next-state and output logic and a gate netlist.

Everything a script needs is importable from here; each name is a function or a type (never a
module under a function's name).  The pipeline's stages live in the folders below
(``model``, ``stages``, ``checks``, ``flows``, ...); DEVELOPERS.md maps them.
"""

from fsmsynth.base.errors import (
    EncodingError,
    FsmSynthError,
    InvariantError,
    NetlistError,
    OptionError,
    SpecFileError,
    TableError,
    VerificationError,
    WarningsAsErrors,
)
from fsmsynth.checks.invariants import (
    InvariantCheck,
    InvariantViolation,
    check_invariants,
    constrain_outputs,
)
from fsmsynth.checks.proof import Counterexample, Verification
from fsmsynth.checks.simulate import simulate
from fsmsynth.checks.spec_warnings import WARNINGS, SpecWarning, spec_warnings
from fsmsynth.checks.table_check import TableReport, check_table
from fsmsynth.checks.timing import Delays, GateDelay, TimingReport, timing
from fsmsynth.checks.verify import verify
from fsmsynth.flows.build_options import BuildOptions, Project, ProjectSpec
from fsmsynth.flows.compare import Comparison, ComparisonRow, compare
from fsmsynth.flows.convert import StorageConversion, convert_storage
from fsmsynth.flows.design import Design
from fsmsynth.flows.pipeline import synthesize
from fsmsynth.flows.project import DesignOutcome, ProjectBuild, build_project
from fsmsynth.flows.project_file import read_project
from fsmsynth.flows.sweep import Sweep, SweepRow, sweep
from fsmsynth.formats import read_table
from fsmsynth.language.transitions import ExactCube
from fsmsynth.logic.cost import Cost, CostWeights
from fsmsynth.logic.sop import SopCover, minimize_sop
from fsmsynth.map.targets import Target, target_named
from fsmsynth.model.clocking import Clocking
from fsmsynth.model.intent import Intent
from fsmsynth.model.storage import STORAGES, Storage
from fsmsynth.model.table import StateTable
from fsmsynth.stages.encode import Encoding, encode
from fsmsynth.stages.equations import Equation
from fsmsynth.stages.netlist import FlipFlop, Gate, Netlist
from fsmsynth.stages.reduce import minimize_states
from fsmsynth.stages.reduce.tabulation import StateMinimization
from fsmsynth.version import __version__

__all__ = [
    # model
    "StateTable", "ExactCube", "Intent", "Clocking", "Storage", "STORAGES", "Encoding", "Equation",
    "Netlist", "Gate", "FlipFlop",
    "Cost", "CostWeights",
    # stages
    "minimize_states", "StateMinimization", "encode", "minimize_sop", "SopCover",
    "synthesize", "Design", "verify", "simulate", "Verification", "Counterexample",
    "compare", "Comparison", "ComparisonRow", "convert_storage", "StorageConversion",
    "timing", "TimingReport", "Delays", "GateDelay",
    "check_invariants", "constrain_outputs", "InvariantCheck", "InvariantViolation",
    "check_table", "TableReport", "spec_warnings", "SpecWarning", "WARNINGS",
    "Target", "target_named",
    # many designs
    "read_table", "read_project", "build_project", "ProjectBuild", "DesignOutcome",
    "BuildOptions", "Project", "ProjectSpec", "sweep", "Sweep", "SweepRow",
    # errors
    "FsmSynthError", "TableError", "SpecFileError", "OptionError", "EncodingError",
    "NetlistError", "VerificationError", "InvariantError", "WarningsAsErrors",
    "__version__",
]
