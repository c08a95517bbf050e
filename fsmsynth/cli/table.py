"""Commands on a state table itself: reduce, diagram, kmap and check.
"""

from __future__ import annotations

import argparse
import json
import sys
from dataclasses import replace
from pathlib import Path

from fsmsynth.base.errors import OptionError
from fsmsynth.checks.invariants import check_invariants, constrain_outputs, kept_by_reduction
from fsmsynth.checks.spec_warnings import spec_warnings, warning_lines
from fsmsynth.checks.table_check import check_table
from fsmsynth.checks.timed_proof import check_timed_invariants
from fsmsynth.checks.trace import violation_trace, write_trace_vcd
from fsmsynth.cli.arguments import (
    encoding_arg,
    read_machine_arg,
    read_table_arg,
    storage_arg,
    target_arg,
)
from fsmsynth.cli.printing import accepted_arg, minimization_lines
from fsmsynth.flows.files import write_bytes_if_changed, write_if_changed
from fsmsynth.flows.pipeline import synthesize
from fsmsynth.flows.rewrite import rewrite_spec
from fsmsynth.formats.text_files import read_text
from fsmsynth.model.timers import TimedMachine
from fsmsynth.stages.reduce import minimize_states
from fsmsynth.stages.unroll import unroll
from fsmsynth.writers.dot import render, suffix_format, write_netlist_dot, write_state_diagram
from fsmsynth.writers.kmap import MAX_VARIABLES, support, write_karnaugh
from fsmsynth.writers.spec_toml import write_spec


def reduce_command(args: argparse.Namespace) -> int:
    table = read_table_arg(args)
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
    for line in minimization_lines(result, len(table.states)):
        print(line)
    for state, members in result.classes.items():
        print(f"  {state} = {{{', '.join(sorted(members))}}}")
    if args.out:
        print(f"{'wrote' if changed else 'unchanged'} {args.out}")
    else:
        print()
        print(text, end="")
    return 0


def diagram_command(args: argparse.Namespace) -> int:
    fmt = suffix_format(args.out) if args.out else None  # a bad name fails before any work
    table = read_machine_arg(args)
    notes = None
    if isinstance(table, TimedMachine) and not args.netlist:
        notes = table.state_notes()
        table = table.control
    if args.netlist:
        design = synthesize(table, storage_arg(args.storage), encoding_arg(args.encoding),
                            target=target_arg(args.target))
        text = write_netlist_dot(design.netlist)
    else:
        text = write_state_diagram(table, warnings=spec_warnings(table),
                                   focus=tuple(args.focus or ()), notes=notes)
    if not args.out:
        print(text, end="")
        return 0
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


def kmap_command(args: argparse.Namespace) -> int:
    table = read_table_arg(args)
    design = synthesize(table, storage_arg(args.storage), encoding_arg(args.encoding))
    functions = design.functions
    names = [f.name for f in functions.functions]
    if args.signal and args.signal not in names:
        raise OptionError(f"no signal {args.signal!r}: this design has {', '.join(names)}")
    skipped = []
    for f in functions.functions:
        if args.signal in (None, f.name):
            width = len(support(f))
            if width > MAX_VARIABLES and args.signal is None:
                skipped.append(f"{f.name} ({width} variables)")
                continue
            try:
                text = write_karnaugh(f, functions.variables)
            except ValueError as exc:
                raise OptionError(str(exc)) from None
            print(text)
            print(f"  {design.equations[f.name]}")
            print()
    if skipped:
        print(f"not drawn (Karnaugh maps go up to {MAX_VARIABLES} variables): "
              + ", ".join(skipped))
    return 0


def check_command(args: argparse.Namespace) -> int:
    machine = read_machine_arg(args)
    table = machine.control if isinstance(machine, TimedMachine) else machine
    report = check_table(table, accepted_arg(args))
    if isinstance(machine, TimedMachine):
        kept = check_timed_invariants(machine)
        unrolled = unroll(machine, signals=True) if kept.walked and kept.violation else None
        trace = violation_trace(unrolled, kept) if unrolled is not None else None
    else:
        kept = check_invariants(table)
        trace = violation_trace(table, kept)
    status = 0 if kept and not (args.strict and report.warnings) else 2
    if args.vcd and trace is not None:  # the run that breaks it, for a waveform viewer
        write_if_changed(args.vcd, write_trace_vcd(trace, table.name))
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
            "warnings": [w.as_dict() for w in report.warnings],
            "trace": trace.rows() if trace is not None else None,
        }, indent=2))
        return status
    print(f"{args.spec}: valid {table.kind} table '{table.name}': {len(table.states)} states, "
          f"{len(table.inputs)} inputs, {len(table.outputs)} outputs, reset {table.reset!r}")
    if isinstance(machine, TimedMachine):
        print("  timers and counters: " + "; ".join(b.describe() for b in machine.blocks)
              + " (their readings and actions count among the inputs and outputs)")
    for line in report.lines(besides_warnings=True):
        print(f"  note: {line}")
    for line in warning_lines(report.warnings, word="  error" if args.strict else "  warning"):
        print(line)
    if report.completely_specified and not report.unreachable:
        print("  every state reachable, every transition specified")
    if args.strict and report.warnings:
        print(f"  {len(report.warnings)} warning{'s' if len(report.warnings) > 1 else ''}, "
              "and --strict refuses warnings")
    if table.invariants:
        print(f"  {kept.summary()}")
    if trace is not None:
        print("".join(f"    {line}\n" for line in trace.table_text(note=False).splitlines()),
              end="")
        if args.vcd:
            print(f"  wrote {args.vcd} (the same run as a value change dump)")
    return status


def rewrite_command(args: argparse.Namespace) -> int:
    text = rewrite_spec(read_text(args.spec), args.spec, guards=args.guards)
    if not args.out:
        print(text, end="")
        return 0
    changed = write_if_changed(args.out, text)
    print(f"{'wrote' if changed else 'unchanged'} {args.out}")
    return 0
