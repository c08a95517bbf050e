"""Commands on one design: build, timing, compare and convert, and what they print.
"""

from __future__ import annotations

import argparse
import csv
import io
import json
from collections import Counter
from pathlib import Path

from fsmsynth.base.frozen import FrozenMap
from fsmsynth.checks.timing import timing
from fsmsynth.cli.arguments import (
    encoding_arg,
    read_machine_arg,
    read_table_arg,
    storage_arg,
    target_arg,
    weights_arg,
)
from fsmsynth.cli.printing import (
    CAUTION,
    accepted_arg,
    article,
    minimization_lines,
    print_warnings,
    run_warnings,
    target_lines,
)
from fsmsynth.flows.build_options import BuildOptions
from fsmsynth.flows.compare import compare
from fsmsynth.flows.convert import convert_storage
from fsmsynth.flows.design import Design
from fsmsynth.flows.files import write_all_if_changed
from fsmsynth.flows.project import (
    design_files,
    synthesize_with,
)
from fsmsynth.formats.delays_toml import read_delays
from fsmsynth.map.targets import target_named
from fsmsynth.model.timers import Timer


def design_report(design: Design) -> dict[str, object]:
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
        "invariants": (design.invariants.summary()
                       if design.invariants and design.invariants.invariants else None),
        "glitches": [{"output": g.output, "kind": g.kind, "state": g.state, "inputs": g.inputs,
                      "changing": g.changing, "next_state": g.next_state}
                     for g in design.glitches.glitches],
        "glitch_free": list(design.glitches.glitch_free),
        "hazard_free_outputs": list(design.hazard_free),
        "multi_bit_steps": [list(x) for x in design.multi_bit_steps],
        "warnings": [w.as_dict() for w in design.warnings],
        "timers": None if design.timed is None else {
            "built": design.timed.choice,
            "blocks": [{"name": b.block.name, "kind": type(b.block).__name__.lower(),
                        "size": b.block.cycles if isinstance(b.block, Timer) else b.block.limit,
                        "width": b.block.width, "storage": b.storage.name,
                        "cost": b.cost.total} for b in design.timed.blocks],
            "costs": dict(design.timed.alternatives)},
    }


def options_of(args: argparse.Namespace) -> BuildOptions:
    """The build options of ``arguments.design_options`` (and, for ``build``, the files to
    write): ``build`` and ``timing`` make the same design from the same options."""
    storage = storage_arg(args.storage)
    encoding = encoding_arg(args.encoding)
    files = ({"hdl": tuple(args.hdl), "testbench": args.testbench, "cocotb": args.cocotb,
              "bench_vcd": args.bench_vcd, "report": args.report}
             if args.command == "build" else {})
    return BuildOptions(
        storage=tuple(storage) if isinstance(storage, list) else storage,
        encoding=FrozenMap(encoding) if isinstance(encoding, dict) else encoding,
        unused=args.unused, minimize=not args.no_minimize, logic=args.logic,
        weights=weights_arg(args.weights), seed=args.seed, budget=args.budget,
        width=args.width, clock_edge=args.clock_edge, jobs=args.jobs,
        time_limit=args.time_limit, force=args.force, target=target_arg(args.target),
        map_for=args.map_for, outputs=args.outputs, unit_distance=args.unit_distance,
        strict=args.strict, accept_warnings=accepted_arg(args),
        clock_port=args.clock_port, reset_port=args.reset_port, reset_style=args.reset_style,
        reset_active=args.reset_active, enable_port=args.enable_port,
        timers=args.timers, **files)


def build_command(args: argparse.Namespace) -> int:
    table = read_machine_arg(args)
    options = options_of(args)
    design = synthesize_with(table, options)
    print_warnings(design.warnings)
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
        report = design_report(design)
        report["files"] = written
        print(json.dumps(report, indent=2))
        return 0
    lines = report_lines(design, args, written, full=True)
    if not args.verbose and len(lines) > SCREEN:  # a big machine: a summary that fits
        lines = report_lines(design, args, written, full=False)
    print("\n".join(lines))
    if not args.quiet:
        print()
        print(CAUTION)
    return 0


SCREEN = 60
"""Lines ``build`` prints before it summarises (``--verbose`` prints everything)."""


def report_lines(design: Design, args: argparse.Namespace, written: dict[str, bool], *,
                 full: bool) -> list[str]:
    """What ``build`` prints: everything, or with ``full`` false a summary of the equations
    and the glitches (counts, the longest equations, one verdict per output)."""
    table, encoded = design.table, design.encoded_table
    codes = (", ".join(f"{s}={design.encoding.code_string(s)}" for s in encoded.states)
             if design.encoding.width else "one state, no code bits")
    if not full and len(encoded.states) > 16:
        codes = f"{design.encoding.width} bits; --json lists the codes"
    per_bit = (", ".join(f"Q{b} {s.name.upper()}" for b, s in enumerate(design.storages))
               if full else ", ".join(f"{n} {k.upper()}" for k, n in Counter(
                   [s.name for s in design.storages]).items()))
    kinds = ("no" if design.storage == "none" else
             design.storage.upper() if design.storage != "mixed" else f"mixed ({per_bit})")
    count = len(encoded.states)
    out = [f"{table.name}: {count} state{'s' if count != 1 else ''}, {kinds} flip-flops, "
           f"{design.encoding.method} encoding ({codes})"]
    if design.assignment is not None:
        a = design.assignment
        ending = (", interrupted: best so far" if a.interrupted else
                  ", time limit reached: best so far" if a.timed_out else
                  ", proven best" if a.proven else "")
        out.append(f"state assignment ({design.encoding.method}): cost {a.cost:g} after "
                   f"{a.evaluated} assignments{ending}, scored on {a.scored_on} in "
                   f"{a.seconds:g} s")
    if design.minimization is not None:
        out += minimization_lines(design.minimization, len(table.states))
    if design.timed is not None:
        out += ["timers and counters:"] + [f"  {line}" for line in design.timed.describe()]
    out += ["", "Equations:"] + _equation_lines(design, full)
    c = design.two_level_cost or design.cost  # the two-level figures, on any target
    proof = (", proven minimal sums of products" if design.cover.proven
             else "" if design.cover.method == "heuristic" else ", time limit: not proven minimal")
    out += ["", "Cost (two-level):" if design.mapping is not None else "Cost:",
            f"  product terms {c.product_terms}, literals {c.literals}",
            "  gates " + ", ".join(f"{k.upper()} {n}" for k, n in c.gates.items())
            + f"; gate inputs {c.gate_inputs}",
            "  flip-flops " + (", ".join(f"{k.upper()} {n}" for k, n in c.flip_flops.items())
                               or "none"),
            f"  total {c.total:g} (gate inputs + flip-flop weights)",
            f"  two-level minimization: {design.cover.method}{proof}"]
    if design.mapping is not None:
        out += [""] + target_lines(design)
    out.append("")
    if args.unit_distance:
        steps = design.multi_bit_steps
        out += ["transitions more than one bit apart: " + (", ".join(
            f"{a} -> {b} ({n} bits)" for a, b, n in steps) if steps else "none"), ""]
    out.append("Glitches (two-level outputs"
               + (", hazard-free covers" if design.hazard_free else "") + "):")
    out += _glitch_lines(design, full)
    out.append("")
    assert design.verification is not None
    out.append(design.verification.summary())
    if design.invariants is not None and design.invariants.invariants:
        out.append(design.invariants.summary())
    out += [f"{'wrote' if changed else 'unchanged'} {path}" for path, changed in written.items()]
    if not full:
        out.append("(a summary of a big machine: --verbose prints every equation and glitch)")
    return out


def _equation_lines(design: Design, full: bool) -> list[str]:
    equations = list(design.equations.values())
    if full:
        return [f"  {eq}" for eq in equations]
    longest = sorted(equations, key=lambda eq: (-len(eq.terms), eq.signal))[:3]
    lines = [f"  {len(equations)} signals; the longest: "
             + ", ".join(f"{eq.signal} ({len(eq.terms)} products)" for eq in longest)]
    shown = [eq for eq in equations if len(str(eq)) <= 96][:8]
    lines += [f"  {eq}" for eq in shown]
    if len(shown) < len(equations):
        lines.append(f"  ... {len(equations) - len(shown)} more (--verbose prints them, "
                     "--json gives them)")
    return lines


def _glitch_lines(design: Design, full: bool) -> list[str]:
    report = design.glitches
    if full:
        return [f"  {line}" for line in report.lines()]
    verdicts = report.lines(cases=0)
    if len(verdicts) <= 12:
        return [f"  {line}" for line in verdicts]
    glitching = sorted({g.output for g in report.glitches})
    kinds = Counter([g.kind for g in report.glitches])
    return [f"  {len(glitching)} of {len(report.outputs)} outputs can glitch ("
            + ", ".join(f"{k} {n}" for k, n in sorted(kinds.items())) + " cases)"
            + (": " + ", ".join(glitching[:12]) + (", ..." if len(glitching) > 12 else "")
               if glitching else "")]


def timing_command(args: argparse.Namespace) -> int:
    table = read_table_arg(args)
    options = options_of(args)
    design = synthesize_with(table, options)
    print_warnings(design.warnings)
    target = target_named(options.target)
    cells = {c.name for c in target.cells} | {f"LUT{k}" for k in range(1, target.lut_size + 1)}
    delays = read_delays(args.delays, cells=cells) if args.delays else None
    report = timing(design, delays)
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
    kinds = "no" if design.storage == "none" else design.storage.upper()
    print(f"{table.name}: {kinds} flip-flops, {design.encoding.method} encoding")
    for line in report.lines():
        print(line)
    if not args.quiet:
        print("Delays are illustrative unless given with --delays: verify timing in the "
              "target technology." if delays is None else
              f"Delays from {args.delays}: verify timing in the target technology.")
    return 0


def compare_command(args: argparse.Namespace) -> int:
    table = read_machine_arg(args)
    warnings = run_warnings(getattr(table, "control", table), args)
    options = dict(storages=args.storages, encodings=args.encodings, logic=args.logic,
                   weights=weights_arg(args.weights), target=target_arg(args.target),
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
    if any(row.timers for row in result.rows):  # timers: both ways side by side
        header += ["counters", "unrolled"]
        for record, row in zip(records, result.rows):
            ways = row.timers or {}
            record += [ways.get("counters", ""), ways.get("unrolled", "")]
    if args.json:
        print(json.dumps({"machine": result.machine,
                          "designs": [dict(zip(header, r)) for r in records],
                          "warnings": [w.as_dict() for w in warnings]}, indent=2))
        return 0
    if args.csv:
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(records)
        print(buffer.getvalue(), end="")
        return 0
    texts = [[str(x if not isinstance(x, float) else f"{x:g}") for x in r] for r in records]
    for text in texts:  # repeated kinds as counts: "6 jk" for a kind per bit of six bits
        text[3] = ", ".join(f"{n} {k}" if ":" not in k else k
                            for k, n in Counter(text[3].split()).items())
    widths = [max(len(h), *(len(t[i]) for t in texts)) for i, h in enumerate(header)]
    on = "" if result.target == "two-level" else f" on {result.target}"
    print(f"{result.machine}: {len(records)} designs{on}, cheapest first")
    for line in [header, *texts]:
        print("  ".join(cell.ljust(w) for cell, w in zip(line, widths)).rstrip())
    return 0


def convert_command(args: argparse.Namespace) -> int:
    result = convert_storage(args.target, using=args.using)
    if args.json:
        print(json.dumps({"target": result.target.name, "using": result.using.name,
                          "equations": {p: e.expression for p, e in result.equations.items()},
                          "verified": bool(result.design.verification)}, indent=2))
        return 0
    print(f"{result.target.title} from {article(result.using.title)} {result.using.title} "
          f"({result.target.equation}):")
    for eq in result.equations.values():
        print(f"  {eq}")
    assert result.design.verification is not None
    print(result.design.verification.summary())
    return 0

