"""The ``fsmsynth`` command: argument parsing and printing only; the work is the library's."""

from __future__ import annotations

import argparse
import csv
import io
import json
import math
import os
import signal
import sys
from collections import Counter
from collections.abc import Callable, Sequence
from concurrent.futures import Executor, ProcessPoolExecutor
from dataclasses import replace
from pathlib import Path

from fsmsynth.build_options import BuildOptions
from fsmsynth.check import check_table
from fsmsynth.compare import DEFAULT_ENCODINGS, DEFAULT_STORAGES, compare
from fsmsynth.convert import convert_storage
from fsmsynth.cost import DEFAULT_WEIGHTS, CostWeights
from fsmsynth.errors import FsmSynthError, OptionError, VerificationError
from fsmsynth.files import write_all_if_changed, write_bytes_if_changed, write_if_changed
from fsmsynth.formats import read_table
from fsmsynth.formats.cells_toml import read_cells
from fsmsynth.formats.csv_table import SETTINGS
from fsmsynth.formats.delays_toml import read_delays
from fsmsynth.formats.project_toml import read_project
from fsmsynth.formats.weights_toml import read_weights
from fsmsynth.frozen import FrozenMap
from fsmsynth.invariants import check_invariants, constrain_outputs, kept_by_reduction
from fsmsynth.logic.cover import METHODS as LOGIC_METHODS
from fsmsynth.pipeline import UNUSED_POLICIES, Design, synthesize
from fsmsynth.project import (
    DesignOutcome,
    build_project,
    design_files,
    outcome_line,
    synthesize_with,
)
from fsmsynth.reduce import StateMinimization, minimize_states
from fsmsynth.storage import STORAGES
from fsmsynth.sweep import sweep
from fsmsynth.table import StateTable
from fsmsynth.targets import Target
from fsmsynth.timing import timing
from fsmsynth.version import __version__
from fsmsynth.writers.dot import render, suffix_format, write_netlist_dot, write_state_diagram
from fsmsynth.writers.kmap import write_karnaugh
from fsmsynth.writers.spec_toml import write_spec

CAUTION = (
    "Caution: this logic is only as safe as the table it came from. Synchronise asynchronous\n"
    "inputs before they reach the machine, define unused states and drive reset, and verify\n"
    "timing in the target technology. For safety interlocks and machinery, local codes and\n"
    "licensed engineering practice decide, not this tool."
)


def _encoding_arg(text: str) -> str | dict[str, str]:
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


def _storage_arg(text: str) -> str | list[str]:
    """A kind name, ``best``, or one kind per state bit, bit 0 first: ``jk,d,d``."""
    if "," in text:
        return [part.strip() for part in text.split(",")]
    return text


def _target_arg(text: str) -> str | Target:
    """A built-in target's name, or a cell library file (``.toml``)."""
    return read_cells(text) if text.lower().endswith(".toml") else text


def _target_options(command: argparse.ArgumentParser) -> None:
    command.add_argument("--target", default="two-level",
                         help="what the logic is built from: two-level (default), nand2, "
                              "gates2, cmos, lut4, lut6, pterms:N, or a cell library .toml")
    command.add_argument("--map-for", default="area", choices=("area", "delay"),
                         help="what technology mapping minimizes (default area)")


def _weights_arg(path: str | None) -> CostWeights:
    return read_weights(path) if path else DEFAULT_WEIGHTS


def _positive(text: str) -> int:
    """argparse type: a whole number of at least 1."""
    try:
        value = int(text)
    except ValueError:
        value = 0
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r}: give a whole number of at least 1")
    return value


def _seconds(text: str) -> float:
    """argparse type: a finite number of seconds greater than 0."""
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"{text!r}: give a finite number of seconds > 0")
    return value


def _list_arg(text: str) -> list[str]:
    return [part.strip() for part in text.split(",") if part.strip()]


def _table_settings(command: argparse.ArgumentParser) -> None:
    """Options that set a CSV table's settings (its settings row, when it has one)."""
    group = command.add_argument_group("CSV table settings")
    group.add_argument("--name", help="machine name (default: the file's name)")
    group.add_argument("--reset", help="reset state (default: the first row's state)")
    group.add_argument("--kind", choices=("mealy", "moore"), help="default mealy")


def _read(args: argparse.Namespace) -> StateTable:
    settings = {k: getattr(args, k) for k in SETTINGS if getattr(args, k) is not None}
    return read_table(args.spec, settings or None)


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="fsmsynth",
        description="Synthesize next-state and output logic and a gate netlist from a state table.")
    parser.add_argument("--version", action="version", version=f"fsmsynth {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)

    build = sub.add_parser("build", help="synthesize, verify and write Verilog and JSON")
    build.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(build)
    _target_options(build)
    build.add_argument("--storage", default="d", type=str,
                       help=f"flip-flop kind: {', '.join(sorted(STORAGES))}, best (cheapest per "
                            "bit), or one kind per state bit, bit 0 first (jk,d); default d")
    build.add_argument("--encoding", default="binary", type=str,
                       help="binary, gray, one-hot, adjacency, exhaustive, anneal, or "
                            "state=code,... (default binary)")
    build.add_argument("--seed", type=int, default=0, help="seed of the anneal search (0)")
    build.add_argument("--budget", type=int, help="steps of the anneal search (default 400)")
    build.add_argument("--jobs", type=_positive, default=1,
                       help="worker processes for a searched encoding (default 1)")
    build.add_argument("--time-limit", type=_seconds, default=None,
                       help="seconds for a searched encoding; then the best found so far")
    build.add_argument("--force", action="store_true",
                       help="run an exhaustive search however many assignments it has")
    build.add_argument("--width", type=int,
                       help="code width in bits for adjacency, exhaustive and anneal")
    build.add_argument("--unit-distance", action="store_true",
                       help="searched encodings: codes one bit apart across every transition "
                            "where possible (no function hazards there)")
    build.add_argument("--outputs", default="combinational",
                       choices=("combinational", "hazard-free", "registered"),
                       help="hazard-free: add the consensus terms that remove static hazards "
                            "of the outputs under single-input changes; registered: each "
                            "output from its own flip-flop (Mealy outputs one clock later); "
                            "default combinational")
    build.add_argument("--unused", default="dont-care", choices=UNUSED_POLICIES,
                       help="unused state codes: don't cares, or safe (go to reset)")
    build.add_argument("--logic", default="heuristic", choices=LOGIC_METHODS,
                       help="two-level minimizer: heuristic (Espresso), exact, or auto "
                            "(exact up to 10 variables); default heuristic")
    build.add_argument("--weights", help="cost weights TOML file (see README, Cost)")
    build.add_argument("--clock-edge", default="rising", choices=("rising", "falling"),
                       help="edge the flip-flops sample on (default rising)")
    build.add_argument("--check", action="store_true",
                       help="write nothing; exit 1 naming every output file that is missing "
                            "or differs from what the spec gives now")
    build.add_argument("--no-minimize", action="store_true",
                       help="keep every state (skip state minimization)")
    build.add_argument("-o", "--out", default="build", help="output folder (default build/)")
    build.add_argument("--testbench", action="store_true",
                       help="also write <name>_tb.v (and <name>_tb.vhd with --hdl vhdl), a "
                            "self-checking testbench from the table")
    build.add_argument("--cocotb", action="store_true",
                       help="also write <name>_cocotb.py: the same checks and a random run "
                            "against the table, driven from Python by cocotb (run it with "
                            "python <name>_cocotb.py; needs pip install fsmsynth[sim])")
    build.add_argument("--hdl", default="verilog", type=_list_arg,
                       help="which HDL files to write: verilog, vhdl or verilog,vhdl "
                            "(default verilog)")
    build.add_argument("--json", action="store_true", help="print a JSON report instead of text")
    build.add_argument("-q", "--quiet", action="store_true",
                       help="leave out the caution block (for build logs; the cautions still "
                            "apply and stay in the Verilog header)")

    reduce = sub.add_parser("reduce", help="minimize the states and write the reduced table")
    reduce.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(reduce)
    reduce.add_argument("-o", "--out", help="write the reduced spec here (default: print it)")
    reduce.add_argument("--keep-unreachable", action="store_true",
                        help="class every state, reachable from reset or not")
    reduce.add_argument("--time-limit", type=_seconds, default=10.0,
                        help="seconds for the exact search (default 10)")
    reduce.add_argument("--json", action="store_true", help="print a JSON report instead of text")

    tim = sub.add_parser("timing", help="clock period, hold check and critical path")
    tim.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(tim)
    _target_options(tim)
    tim.add_argument("--storage", default="d", type=str, help="as for build (default d)")
    tim.add_argument("--encoding", default="binary", type=str, help="as for build")
    tim.add_argument("--logic", default="heuristic", choices=LOGIC_METHODS)
    tim.add_argument("--clock-edge", default="rising", choices=("rising", "falling"))
    tim.add_argument("--delays", help="delay model TOML file (see README, Timing)")
    tim.add_argument("--json", action="store_true", help="print JSON")
    tim.add_argument("-q", "--quiet", action="store_true",
                     help="leave out the note that the delays are illustrative")

    diag = sub.add_parser("diagram", help="state diagram or netlist schematic (Graphviz DOT)")
    diag.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(diag)
    diag.add_argument("--netlist", action="store_true",
                      help="draw the synthesized netlist instead of the state diagram")
    diag.add_argument("--storage", default="d", type=str, help="for --netlist (default d)")
    diag.add_argument("--encoding", default="binary", type=str, help="for --netlist")
    diag.add_argument("-o", "--out", help="file to write: .dot text, or .svg/.png/.pdf "
                                          "(needs Graphviz); default: print the DOT text")

    kmap = sub.add_parser("kmap", help="Karnaugh map of a flip-flop input or output")
    kmap.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(kmap)
    kmap.add_argument("signal", nargs="?", help="signal (D0, J1, an output); default: all")
    kmap.add_argument("--storage", default="d", type=str, help="as for build (default d)")
    kmap.add_argument("--encoding", default="binary", type=str, help="as for build")

    comp = sub.add_parser("compare", help="cost of every storage kind and encoding, best first")
    comp.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(comp)
    _target_options(comp)
    comp.add_argument("--storages", type=_list_arg, default=list(DEFAULT_STORAGES),
                      help=f"comma-separated (default {','.join(DEFAULT_STORAGES)})")
    comp.add_argument("--encodings", type=_list_arg, default=list(DEFAULT_ENCODINGS),
                      help=f"comma-separated (default {','.join(DEFAULT_ENCODINGS)})")
    comp.add_argument("--logic", default="heuristic", choices=LOGIC_METHODS)
    comp.add_argument("--weights", help="cost weights TOML file (see README, Cost)")
    comp.add_argument("--jobs", type=_positive, default=1,
                      help="run designs on this many worker processes (default 1)")
    fmt = comp.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print JSON")
    fmt.add_argument("--csv", action="store_true", help="print CSV")

    conv = sub.add_parser("convert", help="logic that makes one flip-flop kind act as another")
    conv.add_argument("target", help=f"kind to build: {', '.join(sorted(STORAGES))}")
    conv.add_argument("--using", required=True, help="kind of cell available")
    conv.add_argument("--json", action="store_true", help="print JSON")

    check = sub.add_parser("check", help="validate a state table and report what it leaves open")
    check.add_argument("spec", help="state table: .toml spec or .csv table")
    _table_settings(check)
    check.add_argument("--json", action="store_true", help="print a JSON report instead of text")
    many = sub.add_parser("build-all", help="build every spec of a project file, in parallel, "
                          "rebuilding only what changed")
    many.add_argument("project", nargs="?", default="fsmsynth.toml",
                      help="project file (default fsmsynth.toml)")
    _cluster_options(many, "designs")
    many.add_argument("--check", action="store_true",
                      help="write nothing; exit 1 naming every design whose files are missing "
                           "or differ from what its spec gives now")
    many.add_argument("--rebuild", action="store_true",
                      help="build every design, changed or not")
    many.add_argument("-q", "--quiet", action="store_true", help="leave out the caution block")

    sw = sub.add_parser("sweep", help="every spec of a project x storage x encoding x target: "
                        "cost and proof, as CSV or JSON")
    sw.add_argument("project", nargs="?", default="fsmsynth.toml",
                    help="project file (default fsmsynth.toml)")
    _cluster_options(sw, "designs")
    sw.add_argument("--storages", type=_list_arg,
                    help="comma-separated (default: the project's [sweep] list, else d)")
    sw.add_argument("--encodings", type=_list_arg,
                    help="comma-separated (default: the project's [sweep] list, else binary)")
    sw.add_argument("--targets", type=_list_arg,
                    help="comma-separated: built-in names or cell library .toml files "
                         "(default: the project's [sweep] list, else two-level)")
    sw.add_argument("--csv", help="write the rows to this CSV file")
    sw.add_argument("--json", help="write the rows to this JSON file")
    sw.add_argument("--times", action="store_true",
                    help="add each design's wall time to the files (then two runs differ)")
    sw.add_argument("--progress", action=argparse.BooleanOptionalAction, default=None,
                    help="progress bar on standard error (default: when it is a terminal)")
    return parser


def _cluster_options(command: argparse.ArgumentParser, what: str) -> None:
    command.add_argument("--jobs", type=_positive, default=None,
                         help=f"worker processes for the {what} (default: the cores)")
    command.add_argument("--scheduler", metavar="ADDRESS",
                         help="run on a Dask distributed cluster at ADDRESS (tcp://host:8786); "
                              "needs pip install fsmsynth[cluster]")


def _executor(args: argparse.Namespace) -> tuple[Executor | None, Callable[[], None]]:
    """The executor of --scheduler or --jobs, and how to close it."""
    if args.scheduler:
        try:
            from distributed import Client
        except ImportError:
            raise OptionError("--scheduler needs Dask distributed: pip install "
                              "fsmsynth[cluster]") from None
        try:
            client = Client(args.scheduler, timeout=30)  # type: ignore[no-untyped-call]
        except (OSError, TimeoutError) as exc:
            raise OptionError(f"--scheduler {args.scheduler}: cannot reach the scheduler "
                              f"({exc})") from None
        return client.get_executor(), client.close  # type: ignore[no-untyped-call]
    jobs = args.jobs or os.cpu_count() or 1
    if jobs == 1:
        return None, lambda: None
    pool = ProcessPoolExecutor(max_workers=jobs)
    return pool, lambda: pool.shutdown(wait=False, cancel_futures=True)


def _build_all(args: argparse.Namespace) -> int:
    project = read_project(args.project)
    executor, close = (_executor(args) if args.scheduler else (None, lambda: None))

    def line(outcome: DesignOutcome, done: int, total: int) -> None:
        print(outcome_line(outcome, done, total), flush=True)

    try:
        result = build_project(project, jobs=args.jobs, executor=executor, check=args.check,
                               rebuild=args.rebuild, on_outcome=line)
    finally:
        close()
    print()
    for text in result.summary_lines():
        print(text)
    print()
    print(f"{len(result.outcomes)} designs: "
          + ", ".join(f"{n} {status}" for status, n in sorted(
              Counter(o.status for o in result.outcomes).items())))
    if result.interrupted:
        print("fsmsynth: interrupted; finished designs are written and cached",
              file=sys.stderr)
        return 130
    if not args.check and not args.quiet:
        print()
        print(CAUTION)
    return 0 if result.ok else 1


def _sweep(args: argparse.Namespace) -> int:
    project = read_project(args.project)
    tables, unreadable = [], []
    for spec in project.specs:  # a bad spec is reported and left out; the others are swept
        try:
            tables.append(read_table(spec.path))
        except FsmSynthError as exc:
            unreadable.append(str(exc))
            print(f"fsmsynth: error: {exc}", file=sys.stderr)
    lists = project.sweep

    def choice(given: list[str] | None, key: str, default: str) -> list[str]:
        return given or list(lists.get(key, (default,)))

    targets: list[str | Target] = [_target_arg(t) for t in choice(args.targets, "targets",
                                                                    "two-level")]
    executor, close = _executor(args)
    progress = sys.stderr.isatty() if args.progress is None else args.progress
    try:
        result = sweep(tables, choice(args.storages, "storages", "d"),
                       choice(args.encodings, "encodings", "binary"), targets,
                       executor=executor, progress=progress)
    finally:
        close()
    files: dict[str | Path, bytes | str] = {}
    if args.csv:
        files[args.csv] = result.to_csv(times=args.times)
    if args.json:
        files[args.json] = result.to_json(times=args.times)
    if files:
        write_all_if_changed(files)
    else:
        print(result.to_csv(times=args.times), end="")
    failed = [r for r in result.rows if r.error or not r.verified]
    for row in failed:
        print(f"{row.machine} {row.storage} {row.encoding} {row.target}: "
              f"{row.error or 'not verified'}", file=sys.stderr)
    if files:
        print(f"{len(result.rows)} designs ({len(failed)} failed) -> "
              f"{', '.join(str(f) for f in files)}")
    if result.interrupted:
        print(f"fsmsynth: interrupted; {len(result.rows)} finished rows kept", file=sys.stderr)
        return 130
    return 1 if failed or unreadable else 0


def _target_lines(design: Design) -> list[str]:
    """What the design became on its target."""
    m, c = design.mapping, design.cost
    assert m is not None
    two = design.two_level_cost
    lines = [f"On target {m.target}: total {c.total:g} (logic {c.logic_area:g} + flip-flops "
             f"{c.flip_flop_area:g}), depth {c.depth}"
             + (f"; two-level total was {two.total:g}" if two else ""),
             "  cells " + ", ".join(f"{k} {n}" for k, n in c.cells.items())]
    for kind, entry in c.storage.items():
        built = entry["built_from"]
        how = "own cells" if built == kind else (
            f"built from {str(built).upper()} flip-flops plus logic of area "
            f"{entry['conversion_area']}")
        lines.append(f"  {kind.upper()} flip-flops: {entry['flip_flops']}, area "
                     f"{entry['flip_flop_area']}, {how}")
    if m.fit is not None:
        lines += ["  " + line for line in m.fit.lines()]
    if m.target in ("nand2", "gates2", "cmos", "lut4", "lut6") or m.target.startswith(
            "pterms:"):
        lines.append("  (built-in target: illustrative areas and delays; give a cell library "
                     "file with your vendor's figures)")
    return lines


def _minimization_lines(m: StateMinimization, before: int) -> list[str]:
    lines = [f"state minimization ({m.method}): {before} -> {len(m.table.states)} states"
             + ("" if m.proven else " (time limit reached: not proven minimal)")]
    if m.unreachable:
        lines.append(f"  unreachable, dropped: {', '.join(m.unreachable)}")
    for members in m.merged:
        lines.append(f"  merged: {', '.join(members)}")
    return lines


def _report(design: Design) -> dict[str, object]:
    m = design.minimization
    return {
        "machine": design.table.name,
        "storage": design.storage,
        "encoding": {"method": design.encoding.method,
                     "codes": {s: design.encoding.code_string(s)
                               for s in design.encoded_table.states}},
        "unused": design.unused,
        "assignment": None if design.assignment is None else {
            "cost": design.assignment.cost, "evaluated": design.assignment.evaluated,
            "proven": design.assignment.proven, "interrupted": design.assignment.interrupted,
            "timed_out": design.assignment.timed_out,
            "scored_on": design.assignment.scored_on, "seconds": design.assignment.seconds},
        "states": {"given": len(design.table.states), "encoded": len(design.encoded_table.states),
                   "merged": [list(c) for c in m.merged] if m else [],
                   "unreachable": list(m.unreachable) if m else [],
                   "proven_minimal": m.proven if m else None},
        "equations": {name: eq.expression for name, eq in design.equations.items()},
        "cost": design.cost.as_dict(),
        "logic": {"method": design.cover.method, "proven_minimal": design.cover.proven},
        "flip_flops": [s.name for s in design.storages],
        "verified": bool(design.verification),
        "verification": design.verification.summary() if design.verification else None,
        "invariants": design.invariants.summary() if design.invariants else None,
        "glitches": [{"output": g.output, "kind": g.kind, "state": g.state, "inputs": g.inputs,
                      "changing": g.changing, "next_state": g.next_state}
                     for g in design.glitches.glitches],
        "glitch_free": list(design.glitches.glitch_free),
        "hazard_free_outputs": list(design.hazard_free),
        "multi_bit_steps": [list(x) for x in design.multi_bit_steps],
    }


def _build(args: argparse.Namespace) -> int:
    table = _read(args)
    storage = _storage_arg(args.storage)
    encoding = _encoding_arg(args.encoding)
    options = BuildOptions(
        storage=tuple(storage) if isinstance(storage, list) else storage,
        encoding=FrozenMap(encoding) if isinstance(encoding, dict) else encoding,
        unused=args.unused, minimize=not args.no_minimize, logic=args.logic,
        weights=_weights_arg(args.weights), seed=args.seed, budget=args.budget,
        width=args.width, clock_edge=args.clock_edge, jobs=args.jobs,
        time_limit=args.time_limit, force=args.force, target=_target_arg(args.target),
        map_for=args.map_for, outputs=args.outputs, unit_distance=args.unit_distance,
        hdl=tuple(args.hdl), testbench=args.testbench, cocotb=args.cocotb)
    design = synthesize_with(table, options)
    out = Path(args.out)
    files = {out / name: text for name, text in design_files(design, options).items()}
    if args.check:
        stale = [str(p) for p, text in files.items()
                 if not p.is_file() or p.read_bytes() != text.encode("utf-8")]
        for path in stale:
            print(f"stale: {path}")
        if not stale:
            print(f"up to date: {', '.join(str(p) for p in files)}")
        return 1 if stale else 0
    written = write_all_if_changed({str(p): text for p, text in files.items()})
    if args.json:
        report = _report(design)
        report["files"] = written
        print(json.dumps(report, indent=2))
        return 0
    encoded = design.encoded_table
    codes = ", ".join(f"{s}={design.encoding.code_string(s)}" for s in encoded.states)
    kinds = (design.storage.upper() if design.storage != "mixed" else
             "mixed (" + ", ".join(f"Q{b} {s.name.upper()}" for b, s in
                                   enumerate(design.storages)) + ")")
    print(f"{table.name}: {len(encoded.states)} states, {kinds} flip-flops, "
          f"{design.encoding.method} encoding ({codes})")
    if design.assignment is not None:
        a = design.assignment
        ending = (", interrupted: best so far" if a.interrupted else
                  ", time limit reached: best so far" if a.timed_out else
                  ", proven best" if a.proven else "")
        print(f"state assignment ({design.encoding.method}): cost {a.cost:g} after "
              f"{a.evaluated} assignments{ending}, scored on {a.scored_on} in {a.seconds:g} s")
    if design.minimization is not None:
        for line in _minimization_lines(design.minimization, len(table.states)):
            print(line)
    print()
    print("Equations:")
    for eq in design.equations.values():
        print(f"  {eq}")
    c = design.two_level_cost or design.cost  # the two-level figures, on any target
    print()
    print("Cost (two-level):" if design.mapping is not None else "Cost:")
    print(f"  product terms {c.product_terms}, literals {c.literals}")
    print("  gates " + ", ".join(f"{k.upper()} {n}" for k, n in c.gates.items())
          + f"; gate inputs {c.gate_inputs}")
    print("  flip-flops " + ", ".join(f"{k.upper()} {n}" for k, n in c.flip_flops.items()))
    print(f"  total {c.total:g} (gate inputs + flip-flop weights)")
    proof = (", proven minimal sums of products" if design.cover.proven
             else "" if design.cover.method == "heuristic" else ", time limit: not proven minimal")
    print(f"  two-level minimization: {design.cover.method}{proof}")
    if design.mapping is not None:
        print()
        for line in _target_lines(design):
            print(line)
    print()
    if args.unit_distance:
        steps = design.multi_bit_steps
        print("transitions more than one bit apart: " + (", ".join(
            f"{a} -> {b} ({n} bits)" for a, b, n in steps) if steps else "none"))
        print()
    print("Glitches (two-level outputs"
          + (", hazard-free covers" if design.hazard_free else "") + "):")
    for line in design.glitches.lines():
        print(f"  {line}")
    print()
    assert design.verification is not None
    print(design.verification.summary())
    if design.invariants is not None:
        print(design.invariants.summary())
    for path, changed in written.items():
        print(f"{'wrote' if changed else 'unchanged'} {path}")
    if not args.quiet:
        print()
        print(CAUTION)
    return 0


def _reduce(args: argparse.Namespace) -> int:
    table = _read(args)
    result = minimize_states(constrain_outputs(table), reachable_only=not args.keep_unreachable,
                             time_limit=args.time_limit)
    kept = kept_by_reduction(table, result.table)
    dropped = [t for t in table.invariants if t not in kept]
    comment = (f"{table.name}: reduced by fsmsynth from {Path(args.spec).name} "
               f"({len(table.states)} -> {len(result.table.states)} states)")
    if table.invariants:
        comment += ("\nits don't-care outputs were first fixed where an invariant needs it"
                    + "".join(f"\ninvariant not carried over (it names states): {t}"
                              for t in dropped))
    text = write_spec(replace(result.table, invariants=kept), comment=comment, guards=True)
    changed = write_if_changed(args.out, text) if args.out else False
    if args.json:
        print(json.dumps({
            "machine": table.name, "method": result.method, "proven": result.proven,
            "states_before": len(table.states), "states_after": len(result.table.states),
            "classes": {s: sorted(m) for s, m in result.classes.items()},
            "unreachable": list(result.unreachable), "input_classes": result.input_classes,
            "file": args.out}, indent=2))
        return 0
    for line in _minimization_lines(result, len(table.states)):
        print(line)
    for state, members in result.classes.items():
        print(f"  {state} = {{{', '.join(sorted(members))}}}")
    if args.out:
        print(f"{'wrote' if changed else 'unchanged'} {args.out}")
    else:
        print()
        print(text, end="")
    return 0


def _timing(args: argparse.Namespace) -> int:
    table = _read(args)
    design = synthesize(table, _storage_arg(args.storage), _encoding_arg(args.encoding),
                        logic=args.logic, clock_edge=args.clock_edge,
                        target=_target_arg(args.target), map_for=args.map_for)
    report = timing(design, read_delays(args.delays) if args.delays else None)
    if args.json:
        def steps(path: tuple[object, ...]) -> list[dict[str, object]]:
            return [{"element": s.element, "kind": s.kind, "net": s.net,  # type: ignore[attr-defined]
                     "delay": s.delay, "arrival": s.arrival} for s in path]  # type: ignore[attr-defined]
        print(json.dumps({"machine": table.name, "min_period_ps": report.min_period,
                          "max_frequency_mhz": report.max_frequency,
                          "worst_hold_slack_ps": report.worst_hold_slack,
                          "hold_met": report.hold_met, "edge": report.edge,
                          "critical_path": steps(report.critical_path),
                          "hold_path": steps(report.hold_path),
                          "input_to_output_ps": report.input_to_output}, indent=2))
        return 0
    print(f"{table.name}: {design.storage.upper()} flip-flops, {design.encoding.method} encoding")
    for line in report.lines():
        print(line)
    if not args.quiet:
        print("Delays are illustrative unless given with --delays: verify timing in the "
              "target technology.")
    return 0


def _compare(args: argparse.Namespace) -> int:
    table = _read(args)
    options = dict(storages=args.storages, encodings=args.encodings, logic=args.logic,
                   weights=_weights_arg(args.weights), target=_target_arg(args.target),
                   map_for=args.map_for)
    if args.jobs > 1:
        from concurrent.futures import ProcessPoolExecutor
        with ProcessPoolExecutor(max_workers=args.jobs) as pool:
            result = compare(table, executor=pool, **options)
    else:
        result = compare(table, **options)
    if result.target == "two-level":
        header = ["rank", "storage", "encoding", "flip_flops", "total", "gate_inputs",
                  "product_terms", "literals", "not", "and", "or", "verified"]
    else:
        header = ["rank", "storage", "encoding", "flip_flops", "total", "logic_area",
                  "flip_flop_area", "conversion_area", "depth", "cells", "verified"]
    records = []
    for rank, row in enumerate(result.rows, start=1):
        gates = row.cost["gates"]
        assert isinstance(gates, dict)
        if result.target == "two-level":
            records.append([rank, row.storage, row.encoding, " ".join(row.kinds), row.total,
                            row.cost["gate_inputs"], row.cost["product_terms"],
                            row.cost["literals"], gates.get("not", 0), gates.get("and", 0),
                            gates.get("or", 0), row.verified])
            continue
        cells = row.cost["cells"]
        storage = row.cost["storage"]
        assert isinstance(cells, dict) and isinstance(storage, dict)
        conversion = round(sum(float(v["conversion_area"]) for v in storage.values()), 4)
        records.append([rank, row.storage, row.encoding, " ".join(row.kinds), row.total,
                        row.cost["logic_area"], row.cost["flip_flop_area"], conversion,
                        row.cost["depth"], " ".join(f"{k}:{n}" for k, n in cells.items()),
                        row.verified])
    if args.json:
        print(json.dumps({"machine": result.machine,
                          "designs": [dict(zip(header, r)) for r in records]}, indent=2))
        return 0
    if args.csv:
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(records)
        print(buffer.getvalue(), end="")
        return 0
    texts = [[str(x if not isinstance(x, float) else f"{x:g}") for x in r] for r in records]
    widths = [max(len(h), *(len(t[i]) for t in texts)) for i, h in enumerate(header)]
    on = "" if result.target == "two-level" else f" on {result.target}"
    print(f"{result.machine}: {len(records)} designs{on}, cheapest first")
    for line in [header, *texts]:
        print("  ".join(cell.ljust(w) for cell, w in zip(line, widths)).rstrip())
    return 0


def _diagram(args: argparse.Namespace) -> int:
    table = _read(args)
    if args.netlist:
        design = synthesize(table, _storage_arg(args.storage), _encoding_arg(args.encoding))
        text = write_netlist_dot(design.netlist)
    else:
        text = write_state_diagram(table)
    if not args.out:
        print(text, end="")
        return 0
    fmt = suffix_format(args.out)
    if fmt is None:
        changed = write_if_changed(args.out, text)
    else:
        try:
            picture = render(text, fmt)
        except FileNotFoundError as exc:
            print(f"fsmsynth: error: {exc}; write a .dot file instead", file=sys.stderr)
            return 2
        changed = write_bytes_if_changed(args.out, picture)
    print(f"{'wrote' if changed else 'unchanged'} {args.out}")
    return 0


def _kmap(args: argparse.Namespace) -> int:
    table = _read(args)
    design = synthesize(table, _storage_arg(args.storage), _encoding_arg(args.encoding))
    functions = design.functions
    names = [f.name for f in functions.functions]
    if args.signal and args.signal not in names:
        raise OptionError(f"no signal {args.signal!r}: this design has {', '.join(names)}")
    for f in functions.functions:
        if args.signal in (None, f.name):
            try:
                text = write_karnaugh(f, functions.variables)
            except ValueError as exc:
                raise OptionError(str(exc)) from None
            print(text)
            print(f"  {design.equations[f.name]}")
            print()
    return 0


def _convert(args: argparse.Namespace) -> int:
    result = convert_storage(args.target, using=args.using)
    if args.json:
        print(json.dumps({"target": result.target.name, "using": result.using.name,
                          "equations": {p: e.expression for p, e in result.equations.items()},
                          "verified": bool(result.design.verification)}, indent=2))
        return 0
    print(f"{result.target.title} from {_article(result.using.title)} {result.using.title} "
          f"({result.target.equation}):")
    for eq in result.equations.values():
        print(f"  {eq}")
    assert result.design.verification is not None
    print(result.design.verification.summary())
    return 0


def _article(title: str) -> str:
    """``a`` or ``an`` before a name read letter by letter (an SR flip-flop, a JK one)."""
    return "an" if title[:1].upper() in "AEFHILMNORSX" else "a"


def _check(args: argparse.Namespace) -> int:
    table = _read(args)
    report = check_table(table)
    kept = check_invariants(table)
    status = 0 if kept else 2
    if args.json:
        broken = kept.violation
        print(json.dumps({
            "machine": table.name, "kind": table.kind, "states": list(table.states),
            "inputs": list(table.inputs), "outputs": list(table.outputs), "reset": table.reset,
            "unreachable": list(report.unreachable),
            "unspecified": {s: list(c) for s, c in report.unspecified},
            "dont_care_next": [list(x) for x in report.dont_care_next],
            "invariants": {"hold": bool(kept), "conditions": list(table.invariants),
                           "broken": None if broken is None else {
                               "invariant": broken.invariant, "inputs": list(broken.inputs),
                               "states": list(broken.states), "outputs": broken.outputs}},
        }, indent=2))
        return status
    print(f"{args.spec}: valid {table.kind} table '{table.name}': {len(table.states)} states, "
          f"{len(table.inputs)} inputs, {len(table.outputs)} outputs, reset {table.reset!r}")
    for line in report.lines():
        print(f"  note: {line}")
    if report.completely_specified and not report.unreachable:
        print("  every state reachable, every transition specified")
    if table.invariants:
        print(f"  {kept.summary()}")
    return status


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0 ok, 2 bad input, 1 failure)."""
    args = _parser().parse_args(argv)
    try:
        commands = {"build": _build, "reduce": _reduce, "compare": _compare, "timing": _timing,
                    "diagram": _diagram, "kmap": _kmap,
                    "convert": _convert, "check": _check, "build-all": _build_all,
                    "sweep": _sweep}
        return commands[args.command](args)
    except FsmSynthError as exc:
        print(f"fsmsynth: error: {exc}", file=sys.stderr)
        return 1 if isinstance(exc, VerificationError) else 2
    except KeyboardInterrupt:
        print("fsmsynth: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # The reader (``| head``) went away: stop quietly, as command-line tools do.
        sys.stdout = open(os.devnull, "w")  # noqa: SIM115
        return 0


def _terminate(signum: int, _frame: object) -> None:
    """SIGTERM: unwind like Ctrl-C, so that no half-written output or temporary stays."""
    raise SystemExit(128 + signum)


def run() -> None:
    """Entry point of the ``fsmsynth`` command."""
    signal.signal(signal.SIGTERM, _terminate)
    sys.exit(main())


if __name__ == "__main__":
    run()
