"""fsmsynth: from a state table to verified next-state and output logic and a gate netlist.

Everything a script needs is importable from here; each name is a function or a type (never a
module under a function's name).  The pipeline's stages live in the folders below
(``model``, ``stages``, ``checks``, ``flows``, ...); DEVELOPERS.md maps them.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # what type checkers and readers see; at run time names load on first use
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
    from fsmsynth.checks.timed_proof import check_timed_invariants, verify_timed
    from fsmsynth.checks.timing import Delays, GateDelay, TimingReport, timing
    from fsmsynth.checks.trace import Trace, replay, write_trace_vcd
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
    from fsmsynth.model.timers import Counter, TimedMachine, Timer
    from fsmsynth.stages.counters import TimedLogic
    from fsmsynth.stages.encode import Encoding, encode
    from fsmsynth.stages.equations import Equation
    from fsmsynth.stages.netlist import FlipFlop, Gate, Netlist
    from fsmsynth.stages.reduce import minimize_states
    from fsmsynth.stages.reduce.tabulation import StateMinimization
    from fsmsynth.stages.unroll import unroll
    from fsmsynth.version import __version__

_WHERE: dict[str, tuple[str, str]] = {
    'Trace': ('fsmsynth.checks.trace', 'Trace'),
    'replay': ('fsmsynth.checks.trace', 'replay'),
    'write_trace_vcd': ('fsmsynth.checks.trace', 'write_trace_vcd'),
    'EncodingError': ('fsmsynth.base.errors', 'EncodingError'),
    'FsmSynthError': ('fsmsynth.base.errors', 'FsmSynthError'),
    'InvariantError': ('fsmsynth.base.errors', 'InvariantError'),
    'NetlistError': ('fsmsynth.base.errors', 'NetlistError'),
    'OptionError': ('fsmsynth.base.errors', 'OptionError'),
    'SpecFileError': ('fsmsynth.base.errors', 'SpecFileError'),
    'TableError': ('fsmsynth.base.errors', 'TableError'),
    'VerificationError': ('fsmsynth.base.errors', 'VerificationError'),
    'WarningsAsErrors': ('fsmsynth.base.errors', 'WarningsAsErrors'),
    'InvariantCheck': ('fsmsynth.checks.invariants', 'InvariantCheck'),
    'InvariantViolation': ('fsmsynth.checks.invariants', 'InvariantViolation'),
    'check_invariants': ('fsmsynth.checks.invariants', 'check_invariants'),
    'constrain_outputs': ('fsmsynth.checks.invariants', 'constrain_outputs'),
    'Counterexample': ('fsmsynth.checks.proof', 'Counterexample'),
    'Verification': ('fsmsynth.checks.proof', 'Verification'),
    'simulate': ('fsmsynth.checks.simulate', 'simulate'),
    'WARNINGS': ('fsmsynth.checks.spec_warnings', 'WARNINGS'),
    'SpecWarning': ('fsmsynth.checks.spec_warnings', 'SpecWarning'),
    'spec_warnings': ('fsmsynth.checks.spec_warnings', 'spec_warnings'),
    'TableReport': ('fsmsynth.checks.table_check', 'TableReport'),
    'check_table': ('fsmsynth.checks.table_check', 'check_table'),
    'Delays': ('fsmsynth.checks.timing', 'Delays'),
    'GateDelay': ('fsmsynth.checks.timing', 'GateDelay'),
    'TimingReport': ('fsmsynth.checks.timing', 'TimingReport'),
    'timing': ('fsmsynth.checks.timing', 'timing'),
    'verify': ('fsmsynth.checks.verify', 'verify'),
    'BuildOptions': ('fsmsynth.flows.build_options', 'BuildOptions'),
    'Project': ('fsmsynth.flows.build_options', 'Project'),
    'ProjectSpec': ('fsmsynth.flows.build_options', 'ProjectSpec'),
    'Comparison': ('fsmsynth.flows.compare', 'Comparison'),
    'ComparisonRow': ('fsmsynth.flows.compare', 'ComparisonRow'),
    'compare': ('fsmsynth.flows.compare', 'compare'),
    'StorageConversion': ('fsmsynth.flows.convert', 'StorageConversion'),
    'convert_storage': ('fsmsynth.flows.convert', 'convert_storage'),
    'Design': ('fsmsynth.flows.design', 'Design'),
    'synthesize': ('fsmsynth.flows.pipeline', 'synthesize'),
    'DesignOutcome': ('fsmsynth.flows.project', 'DesignOutcome'),
    'ProjectBuild': ('fsmsynth.flows.project', 'ProjectBuild'),
    'build_project': ('fsmsynth.flows.project', 'build_project'),
    'read_project': ('fsmsynth.flows.project_file', 'read_project'),
    'Sweep': ('fsmsynth.flows.sweep', 'Sweep'),
    'SweepRow': ('fsmsynth.flows.sweep', 'SweepRow'),
    'sweep': ('fsmsynth.flows.sweep', 'sweep'),
    'read_table': ('fsmsynth.formats', 'read_table'),
    'ExactCube': ('fsmsynth.language.transitions', 'ExactCube'),
    'Cost': ('fsmsynth.logic.cost', 'Cost'),
    'CostWeights': ('fsmsynth.logic.cost', 'CostWeights'),
    'SopCover': ('fsmsynth.logic.sop', 'SopCover'),
    'minimize_sop': ('fsmsynth.logic.sop', 'minimize_sop'),
    'Target': ('fsmsynth.map.targets', 'Target'),
    'target_named': ('fsmsynth.map.targets', 'target_named'),
    'Clocking': ('fsmsynth.model.clocking', 'Clocking'),
    'Intent': ('fsmsynth.model.intent', 'Intent'),
    'STORAGES': ('fsmsynth.model.storage', 'STORAGES'),
    'Storage': ('fsmsynth.model.storage', 'Storage'),
    'StateTable': ('fsmsynth.model.table', 'StateTable'),
    'TimedMachine': ('fsmsynth.model.timers', 'TimedMachine'),
    'Timer': ('fsmsynth.model.timers', 'Timer'),
    'Counter': ('fsmsynth.model.timers', 'Counter'),
    'TimedLogic': ('fsmsynth.stages.counters', 'TimedLogic'),
    'unroll': ('fsmsynth.stages.unroll', 'unroll'),
    'verify_timed': ('fsmsynth.checks.timed_proof', 'verify_timed'),
    'check_timed_invariants': ('fsmsynth.checks.timed_proof', 'check_timed_invariants'),
    'Encoding': ('fsmsynth.stages.encode', 'Encoding'),
    'encode': ('fsmsynth.stages.encode', 'encode'),
    'Equation': ('fsmsynth.stages.equations', 'Equation'),
    'FlipFlop': ('fsmsynth.stages.netlist', 'FlipFlop'),
    'Gate': ('fsmsynth.stages.netlist', 'Gate'),
    'Netlist': ('fsmsynth.stages.netlist', 'Netlist'),
    'minimize_states': ('fsmsynth.stages.reduce', 'minimize_states'),
    'StateMinimization': ('fsmsynth.stages.reduce.tabulation', 'StateMinimization'),
    '__version__': ('fsmsynth.version', '__version__'),
}
"""Each public name and the module (and name there) it comes from."""



def __getattr__(name: str) -> Any:
    """Load a public name on first use (PEP 562), so that ``import fsmsynth`` and the command
    line start quickly: sympy, scipy and the rest load only when a name needs them."""
    if name not in _WHERE:
        raise AttributeError(f"module 'fsmsynth' has no attribute {name!r}")
    module, attribute = _WHERE[name]
    value = getattr(importlib.import_module(module), attribute)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *_WHERE})


__all__ = [
    # model
    "StateTable", "ExactCube", "Intent", "Clocking", "Storage", "STORAGES", "Encoding", "Equation",
    "Netlist", "Gate", "FlipFlop",
    "Cost", "CostWeights", "TimedMachine", "Timer", "Counter", "TimedLogic",
    # stages
    "minimize_states", "StateMinimization", "encode", "minimize_sop", "SopCover",
    "synthesize", "Design", "verify", "simulate", "Verification", "Counterexample",
    "unroll", "verify_timed", "check_timed_invariants",
    "compare", "Comparison", "ComparisonRow", "convert_storage", "StorageConversion",
    "timing", "TimingReport", "Delays", "GateDelay", "Trace", "replay", "write_trace_vcd",
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
