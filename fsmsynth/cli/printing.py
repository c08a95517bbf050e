"""Text the commands share: the caution block and the lines that describe a reduction and a
mapped design."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from fsmsynth.base.errors import OptionError, WarningsAsErrors
from fsmsynth.checks.spec_warnings import (
    SpecWarning,
    accept_problem,
    spec_warnings,
    strict_message,
    warning_lines,
)
from fsmsynth.flows.design import Design
from fsmsynth.model.table import StateTable
from fsmsynth.stages.reduce.tabulation import StateMinimization

CAUTION = (
    "Caution: this logic is only as safe as the table it came from. Synchronise asynchronous\n"
    "inputs before they reach the machine, define unused states and drive reset, and verify\n"
    "timing in the target technology. For safety interlocks and machinery, local codes and\n"
    "licensed engineering practice decide, not this tool."
)


def target_lines(design: Design) -> list[str]:
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


def minimization_lines(m: StateMinimization, before: int) -> list[str]:
    lines = [f"state minimization ({m.method}): {before} -> {len(m.table.states)} states"
             + ("" if m.proven else " (time limit reached: not proven minimal)")]
    if m.unreachable:
        lines.append(f"  unreachable, dropped: {', '.join(m.unreachable)}")
    for members in m.merged:
        lines.append(f"  merged: {', '.join(members)}")
    return lines

def article(title: str) -> str:
    """``a`` or ``an`` before a name read letter by letter (an SR flip-flop, a JK one)."""
    return "an" if title[:1].upper() in "AEFHILMNORSX" else "a"



def accepted_arg(args: argparse.Namespace) -> tuple[str, ...]:
    """The warnings ``--accept`` names, checked."""
    problem = accept_problem(args.accept)
    if problem:
        raise OptionError(f"--accept: {problem}")
    return tuple(args.accept)


def run_warnings(table: StateTable, args: argparse.Namespace) -> tuple[SpecWarning, ...]:
    """The spec's warnings less those accepted, printed on stderr; with ``--strict`` a
    :class:`~fsmsynth.base.errors.WarningsAsErrors` (exit 2) when any are left."""
    warnings = spec_warnings(table, accepted_arg(args))
    if args.strict and warnings:
        raise WarningsAsErrors(strict_message(table.name, warnings), warnings)
    print_warnings(warnings)
    return warnings


def print_warnings(warnings: Sequence[SpecWarning]) -> None:
    """The warnings, grouped, on stderr (so that a JSON report on stdout stays whole)."""
    for line in warning_lines(warnings):
        print(line, file=sys.stderr)
