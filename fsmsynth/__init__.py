"""fsmsynth: from a state table to verified next-state and output logic and a gate netlist."""

from fsmsynth.base.errors import (
    EncodingError,
    FsmSynthError,
    InvariantError,
    NetlistError,
    OptionError,
    SpecFileError,
    TableError,
    VerificationError,
)
from fsmsynth.checks.invariants import (
    InvariantCheck,
    InvariantViolation,
    check_invariants,
    constrain_outputs,
)
from fsmsynth.checks.proof import Counterexample, Verification
from fsmsynth.checks.simulate import simulate
from fsmsynth.checks.timing import Delays, GateDelay, TimingReport, timing
from fsmsynth.checks.verify import verify
from fsmsynth.flows.compare import Comparison, ComparisonRow, compare
from fsmsynth.flows.convert import StorageConversion, convert_storage
from fsmsynth.flows.pipeline import Design, synthesize
from fsmsynth.logic.cost import Cost, CostWeights
from fsmsynth.logic.sop import SopCover, minimize_sop
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
    "StateTable", "Storage", "STORAGES", "Encoding", "Equation", "Netlist", "Gate", "FlipFlop",
    "Cost", "CostWeights",
    # stages
    "minimize_states", "StateMinimization", "encode", "minimize_sop", "SopCover",
    "synthesize", "Design", "verify", "simulate", "Verification", "Counterexample",
    "compare", "Comparison", "ComparisonRow", "convert_storage", "StorageConversion",
    "timing", "TimingReport", "Delays", "GateDelay",
    "check_invariants", "constrain_outputs", "InvariantCheck", "InvariantViolation",
    # errors
    "FsmSynthError", "TableError", "SpecFileError", "OptionError", "EncodingError",
    "NetlistError", "VerificationError", "InvariantError",
    "__version__",
]
