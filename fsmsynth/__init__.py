"""fsmsynth: from a state table to verified next-state and output logic and a gate netlist."""

from fsmsynth.cost import Cost, CostWeights
from fsmsynth.encode import Encoding, encode
from fsmsynth.equations import Equation
from fsmsynth.errors import (
    EncodingError,
    FsmSynthError,
    OptionError,
    SpecFileError,
    TableError,
    VerificationError,
)
from fsmsynth.netlist import FlipFlop, Gate, Netlist
from fsmsynth.pipeline import Design, synthesize
from fsmsynth.storage import STORAGES, Storage
from fsmsynth.table import StateTable
from fsmsynth.verify import Counterexample, Verification, simulate, verify
from fsmsynth.version import __version__

__all__ = [
    # model
    "StateTable", "Storage", "STORAGES", "Encoding", "Equation", "Netlist", "Gate", "FlipFlop",
    "Cost", "CostWeights",
    # stages
    "encode", "synthesize", "Design", "verify", "simulate", "Verification", "Counterexample",
    # errors
    "FsmSynthError", "TableError", "SpecFileError", "OptionError", "EncodingError",
    "VerificationError",
    "__version__",
]
