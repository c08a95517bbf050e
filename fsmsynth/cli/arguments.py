"""The command line's parser and argument types: what each command accepts, checked as it is read.
"""

from __future__ import annotations

import argparse
import math
from typing import TYPE_CHECKING, Any

# Only modules that load nothing heavy: `fsmsynth --version` and `--help` build the parser
# without the library (the readers are imported where an argument is read).
from fsmsynth.base.choices import (
    DEFAULT_ENCODINGS,
    DEFAULT_STORAGES,
    LOGIC_METHODS,
    TIMER_CHOICES,
    UNUSED_POLICIES,
)
from fsmsynth.base.errors import OptionError
from fsmsynth.model.storage import STORAGES
from fsmsynth.version import __version__

if TYPE_CHECKING:
    from fsmsynth.logic.cost import CostWeights
    from fsmsynth.map.targets import Target


def encoding_arg(text: str) -> str | dict[str, str]:
    """``binary``/``gray``/``one-hot``, or ``state=code,state=code`` (codes MSB first)."""
    if "=" not in text:
        return text
    mapping = {}
    for item in text.split(","):
        state, sep, code = item.partition("=")
        if not sep or not state.strip() or not code.strip():
            raise OptionError(f"--encoding {text!r}: write state=code pairs separated by commas")
        if state.strip() in mapping:
            raise OptionError(f"--encoding {text!r}: state {state.strip()!r} is given two codes")
        mapping[state.strip()] = code.strip()
    return mapping


def storage_arg(text: str) -> str | list[str]:
    """A kind name, ``best``, or one kind per state bit, bit 0 first: ``jk,d,d``."""
    if "," in text:
        return [part.strip() for part in text.split(",")]
    return text


def target_arg(text: str) -> str | Target:
    """A built-in target's name, or a cell library file (``.toml``)."""
    from fsmsynth.formats.cells_toml import read_cells
    return read_cells(text) if text.lower().endswith(".toml") else text


def target_options(command: argparse.ArgumentParser) -> None:
    command.add_argument("--target", default="two-level",
                         help="what the logic is built from: two-level (default), nand2, "
                              "gates2, cmos, lut4, lut6, pterms:N, or a cell library .toml")
    command.add_argument("--map-for", default="area", choices=("area", "delay"),
                         help="what technology mapping minimizes (default area)")


def weights_arg(path: str | None) -> CostWeights:
    from fsmsynth.formats.weights_toml import read_weights
    from fsmsynth.logic.cost import DEFAULT_WEIGHTS
    return read_weights(path) if path else DEFAULT_WEIGHTS


def positive(text: str) -> int:
    """argparse type: a whole number of at least 1."""
    try:
        value = int(text)
    except ValueError:
        value = 0
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r}: give a whole number of at least 1")
    return value


def seconds(text: str) -> float:
    """argparse type: a finite number of seconds greater than 0."""
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"{text!r}: give a finite number of seconds > 0")
    return value


def list_arg(text: str) -> list[str]:
    return [part.strip() for part in text.split(",") if part.strip()]


def table_settings(command: argparse.ArgumentParser) -> None:
    """Options that set a CSV table's settings (its settings row, when it has one)."""
    group = command.add_argument_group("CSV table settings")
    group.add_argument("--name", help="machine name (default: the file's name)")
    group.add_argument("--reset", help="reset state (default: the first row's state)")
    group.add_argument("--kind", choices=("mealy", "moore"), help="default mealy")


TIMED_COMMANDS = ("build", "compare", "check", "diagram")
"""The commands that take a spec with timers and counters."""


def read_table_arg(args: argparse.Namespace) -> Any:
    """The spec's table; a spec with timers and counters is refused (see
    :func:`read_machine_arg`)."""
    from fsmsynth.model.timers import TimedMachine
    machine = read_machine_arg(args)
    if isinstance(machine, TimedMachine):
        raise OptionError(f"{args.spec}: {args.command} does not take timers and counters "
                          f"yet; {', '.join(TIMED_COMMANDS)} do")
    return machine


def read_machine_arg(args: argparse.Namespace) -> Any:
    """The spec's table, or its timed machine when it declares timers or counters."""
    from fsmsynth.formats import read_table
    from fsmsynth.formats.csv_table import SETTINGS
    settings = {k: getattr(args, k) for k in SETTINGS if getattr(args, k) is not None}
    return read_table(args.spec, settings or None)


def warning_options(command: argparse.ArgumentParser) -> None:
    """``--strict`` and ``--accept``: what the spec warnings do in this run."""
    command.add_argument("--strict", action="store_true",
                         help="refuse a spec with warnings (exit 2) instead of building it")
    command.add_argument("--accept", type=list_arg, action="extend", default=[],
                         metavar="WARNING",
                         help="accept these warnings in this run: identifiers (unread-input) "
                              "or identifier:subject (no-exit:lockout), comma-separated")


def design_options(command: argparse.ArgumentParser) -> None:
    """The options that shape a design: ``build`` and ``timing`` take the same, so that
    ``timing`` times the netlist ``build`` writes."""
    target_options(command)
    warning_options(command)
    command.add_argument("--storage", default="d", type=str,
                         help=f"flip-flop kind: {', '.join(sorted(STORAGES))}, best (cheapest per "
                              "bit), or one kind per state bit, bit 0 first (jk,d); default d")
    command.add_argument("--encoding", default="binary", type=str,
                         help="binary, gray, one-hot, outputs (Moore), adjacency, exhaustive, "
                              "anneal, or state=code,... (default binary)")
    command.add_argument("--seed", type=int, default=0, help="seed of the anneal search (0)")
    command.add_argument("--budget", type=int, help="steps of the anneal search (default 400)")
    command.add_argument("--jobs", type=positive, default=1,
                         help="worker processes for a searched encoding (default 1)")
    command.add_argument("--time-limit", type=seconds, default=None,
                         help="seconds for a searched encoding; then the best found so far")
    command.add_argument("--force", action="store_true",
                         help="run an exhaustive search however many assignments it has")
    command.add_argument("--width", type=int,
                         help="code width in bits for adjacency, exhaustive and anneal")
    command.add_argument("--unit-distance", action="store_true",
                         help="searched encodings: codes one bit apart across every transition "
                              "where possible (no function hazards there)")
    command.add_argument("--outputs", default="combinational",
                         choices=("combinational", "hazard-free", "registered"),
                         help="hazard-free: add the consensus terms that remove static hazards "
                              "of the outputs under single-input changes; registered: each "
                              "output from its own flip-flop (Mealy outputs one clock later); "
                              "default combinational")
    command.add_argument("--timers", default="counters", choices=TIMER_CHOICES,
                         help="timers and counters: counters (a block beside the machine), "
                              "unrolled (into states), or cheaper (build both, keep the "
                              "cheaper); default counters")
    command.add_argument("--unused", default="dont-care", choices=UNUSED_POLICIES,
                         help="unused state codes: don't cares, or safe (go to reset)")
    command.add_argument("--logic", default="heuristic", choices=LOGIC_METHODS,
                         help="two-level minimizer: heuristic (Espresso), exact, or auto "
                              "(exact up to 10 variables); default heuristic")
    command.add_argument("--weights", help="cost weights TOML file (docs/guide/synthesis.md)")
    command.add_argument("--clock-edge", default="rising", choices=("rising", "falling"),
                         help="edge the flip-flops sample on (default rising)")
    group = command.add_argument_group(
        "clock and reset conventions (default: the spec's [clocking], else clk and an "
        "asynchronous active-high rst)")
    group.add_argument("--clock-port", metavar="NAME", help="name of the clock port")
    group.add_argument("--reset-port", metavar="NAME", help="name of the reset port")
    group.add_argument("--reset-style", choices=("async", "sync"),
                       help="asynchronous reset, or synchronous (at the clock edge)")
    group.add_argument("--reset-active", choices=("high", "low"),
                       help="the reset level that resets")
    group.add_argument("--enable-port", metavar="NAME",
                       help="add a clock enable (active high) by this name: while it is 0 "
                            "no flip-flop changes")
    command.add_argument("--no-minimize", action="store_true",
                         help="keep every state (skip state minimization)")


def parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="fsmsynth",
        description="Synthesize next-state and output logic and a gate netlist from a state table.")
    parser.add_argument("--version", action="version", version=f"fsmsynth {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)

    build = sub.add_parser("build", help="synthesize, verify and write Verilog and JSON")
    build.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(build)
    design_options(build)
    build.add_argument("--check", action="store_true",
                       help="write nothing; exit 1 naming every output file that is missing "
                            "or differs from what the spec gives now")
    build.add_argument("-o", "--out", default="build", help="output folder (default build/)")
    build.add_argument("--testbench", action="store_true",
                       help="also write <name>_tb.v (and <name>_tb.vhd with --hdl vhdl), a "
                            "self-checking testbench from the table")
    build.add_argument("--report", action="store_true",
                       help="also write <name>.html: one self-contained page with the diagram, "
                            "codes, equations, cost, glitches, timing, invariants and a waveform")
    build.add_argument("--bench-vcd", action="store_true",
                       help="with --testbench: the Verilog bench dumps <name>.vcd (every port "
                            "and the design's state_name) when it runs")
    build.add_argument("--cocotb", action="store_true",
                       help="also write <name>_cocotb.py: the same checks and a random run "
                            "against the table, driven from Python by cocotb (run it with "
                            "python <name>_cocotb.py; needs pip install fsmsynth[sim])")
    build.add_argument("--hdl", default="verilog", type=list_arg,
                       help="which HDL files to write, comma-separated: verilog, vhdl "
                            "(structural netlists), verilog-rtl, vhdl-rtl (readable "
                            "register-transfer-level machines); default verilog")
    build.add_argument("--json", action="store_true", help="print a JSON report instead of text")
    build.add_argument("-v", "--verbose", action="store_true",
                       help="print every equation and glitch even when that is more than a "
                            "screen (a big machine is summarised by default)")
    build.add_argument("-q", "--quiet", action="store_true",
                       help="leave out the caution block (for build logs; the cautions still "
                            "apply and stay in the Verilog header)")

    reduce = sub.add_parser("reduce", help="minimize the states and write the reduced table")
    reduce.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(reduce)
    reduce.add_argument("-o", "--out", help="write the reduced spec here (default: print it)")
    reduce.add_argument("--keep-unreachable", action="store_true",
                        help="class every state, reachable from reset or not")
    reduce.add_argument("--time-limit", type=seconds, default=10.0,
                        help="seconds for the exact search (default 10)")
    reduce.add_argument("--json", action="store_true", help="print a JSON report instead of text")

    tim = sub.add_parser("timing", help="clock period, hold check and critical path")
    tim.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(tim)
    design_options(tim)
    tim.add_argument("--delays", help="delay model TOML file (see docs/guide/checks.md, Timing)")
    tim.add_argument("--json", action="store_true", help="print JSON")
    tim.add_argument("-q", "--quiet", action="store_true",
                     help="leave out the note that the delays are illustrative")

    diag = sub.add_parser("diagram", help="state diagram or netlist schematic (Graphviz DOT)")
    diag.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(diag)
    diag.add_argument("--focus", type=list_arg, metavar="STATE[,STATE]",
                      help="draw these states, their neighbours and the edges between them "
                           "(a large machine a part at a time)")
    diag.add_argument("--netlist", action="store_true",
                      help="draw the synthesized netlist instead of the state diagram")
    diag.add_argument("--storage", default="d", type=str, help="for --netlist (default d)")
    diag.add_argument("--encoding", default="binary", type=str, help="for --netlist")
    diag.add_argument("--target", default="two-level",
                      help="for --netlist: draw the design mapped onto this target (cells, "
                           "LUTs), as for build")
    diag.add_argument("-o", "--out", help="file to write: .dot text, or .svg/.png/.pdf "
                                          "(needs Graphviz); default: print the DOT text")

    kmap = sub.add_parser("kmap", help="Karnaugh map of a flip-flop input or output")
    kmap.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(kmap)
    kmap.add_argument("signal", nargs="?", help="signal (D0, J1, an output); default: all")
    kmap.add_argument("--storage", default="d", type=str, help="as for build (default d)")
    kmap.add_argument("--encoding", default="binary", type=str, help="as for build")

    comp = sub.add_parser("compare", help="cost of every storage kind and encoding, best first")
    comp.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(comp)
    target_options(comp)
    comp.add_argument("--storages", type=list_arg, default=list(DEFAULT_STORAGES),
                      help=f"comma-separated (default {','.join(DEFAULT_STORAGES)})")
    comp.add_argument("--encodings", type=list_arg, default=list(DEFAULT_ENCODINGS),
                      help=f"comma-separated (default {','.join(DEFAULT_ENCODINGS)})")
    comp.add_argument("--logic", default="heuristic", choices=LOGIC_METHODS)
    comp.add_argument("--weights", help="cost weights TOML file (docs/guide/synthesis.md)")
    comp.add_argument("--jobs", type=positive, default=1,
                      help="run designs on this many worker processes (default 1)")
    warning_options(comp)
    fmt = comp.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print JSON")
    fmt.add_argument("--csv", action="store_true", help="print CSV")

    rew = sub.add_parser("rewrite", help="write an older spec file (cube rows, from = \"*\") "
                                         "in today's form, the same machine")
    rew.add_argument("spec", help="the older .toml spec")
    rew.add_argument("-o", "--out", help="write it here (default: print it); may be the spec "
                                         "itself")
    rew.add_argument("--guards", action="store_true",
                     help="cube rows: write guards where they say the same machine (default: "
                          "one exact entry per row)")

    conv = sub.add_parser("convert", help="logic that makes one flip-flop kind act as another")
    conv.add_argument("target", help=f"kind to build: {', '.join(sorted(STORAGES))}")
    conv.add_argument("--using", required=True, help="kind of cell available")
    conv.add_argument("--json", action="store_true", help="print JSON")

    check = sub.add_parser("check", help="validate a state table and report what it leaves open")
    check.add_argument("spec", help="state table: .toml spec or .csv table")
    table_settings(check)
    warning_options(check)
    check.add_argument("--vcd", metavar="FILE.vcd",
                       help="where an invariant breaks, write the run that breaks it as a "
                            "value change dump (IEEE 1364 VCD)")
    check.add_argument("--json", action="store_true", help="print a JSON report instead of text")
    many = sub.add_parser("build-all", help="build every spec of a project file, in parallel, "
                          "rebuilding only what changed")
    many.add_argument("project", nargs="?", default="fsmsynth.toml",
                      help="project file (default fsmsynth.toml)")
    cluster_options(many, "designs")
    many.add_argument("--check", action="store_true",
                      help="write nothing; exit 1 naming every design whose files are missing "
                           "or differ from what its spec gives now")
    many.add_argument("--rebuild", action="store_true",
                      help="build every design, changed or not")
    warning_options(many)
    many.add_argument("-q", "--quiet", action="store_true", help="leave out the caution block")

    sw = sub.add_parser("sweep", help="every spec of a project x storage x encoding x target: "
                        "cost and proof, as CSV or JSON")
    sw.add_argument("project", nargs="?", default="fsmsynth.toml",
                    help="project file (default fsmsynth.toml)")
    cluster_options(sw, "designs")
    sw.add_argument("--storages", type=list_arg,
                    help="comma-separated (default: the project's [sweep] list, else d)")
    sw.add_argument("--encodings", type=list_arg,
                    help="comma-separated (default: the project's [sweep] list, else binary)")
    sw.add_argument("--targets", type=list_arg,
                    help="comma-separated: built-in names or cell library .toml files "
                         "(default: the project's [sweep] list, else two-level)")
    sw.add_argument("--csv", help="write the rows to this CSV file")
    sw.add_argument("--json", help="write the rows to this JSON file")
    sw.add_argument("--times", action="store_true",
                    help="add each design's wall time to the files (then two runs differ)")
    sw.add_argument("--progress", action=argparse.BooleanOptionalAction, default=None,
                    help="progress bar on standard error (default: when it is a terminal)")
    for command in sub.choices.values():  # its own usage for its own mistakes
        command.set_defaults(command_parser=command)
    return parser


def cluster_options(command: argparse.ArgumentParser, what: str) -> None:
    command.add_argument("--jobs", type=positive, default=None,
                         help=f"worker processes for the {what} (default: the cores)")
    command.add_argument("--scheduler", metavar="ADDRESS",
                         help="run on a Dask distributed cluster at ADDRESS (tcp://host:8786); "
                              "needs pip install fsmsynth[cluster]")
