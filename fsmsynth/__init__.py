"""fsmsynth: from a state table to verified next-state and output logic and a gate netlist."""

from fsmsynth.compare import Comparison, ComparisonRow, compare
from fsmsynth.convert import StorageConversion, convert_storage
from fsmsynth.cost import Cost, CostWeights
from fsmsynth.encode import Encoding, encode
from fsmsynth.equations import Equation
from fsmsynth.errors import (
    EncodingError,
    FsmSynthError,
    InvariantError,
    NetlistError,
    OptionError,
    SpecFileError,
    TableError,
    VerificationError,
)
from fsmsynth.invariants import (
    InvariantCheck,
    InvariantViolation,
    check_invariants,
    constrain_outputs,
)
from fsmsynth.logic.sop import SopCover, minimize_sop
from fsmsynth.netlist import FlipFlop, Gate, Netlist
from fsmsynth.pipeline import Design, synthesize
from fsmsynth.reduce import StateMinimization, minimize_states
from fsmsynth.storage import STORAGES, Storage
from fsmsynth.table import StateTable
from fsmsynth.timing import Delays, GateDelay, TimingReport, timing
from fsmsynth.verify import Counterexample, Verification, simulate, verify
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
