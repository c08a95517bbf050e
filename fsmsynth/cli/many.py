"""Commands on many designs: build-all over a project file, and sweep.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections import Counter
from collections.abc import Callable
from concurrent.futures import Executor, ProcessPoolExecutor
from dataclasses import replace
from pathlib import Path

from fsmsynth.base.errors import FsmSynthError, OptionError
from fsmsynth.cli.arguments import target_arg
from fsmsynth.cli.printing import CAUTION, accepted_arg
from fsmsynth.flows.files import write_all_if_changed
from fsmsynth.flows.project import (
    DesignOutcome,
    build_project,
    outcome_line,
)
from fsmsynth.flows.project_file import read_project
from fsmsynth.flows.sweep import sweep
from fsmsynth.formats import read_table
from fsmsynth.map.targets import Target
from fsmsynth.model.table import StateTable


def executor_of(args: argparse.Namespace) -> tuple[Executor | None, Callable[[], None]]:
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


def build_all_command(args: argparse.Namespace) -> int:
    project = read_project(args.project)
    if args.strict or args.accept:  # this run's warning options, over the project's
        accepted = accepted_arg(args)
        project = replace(project, specs=tuple(
            replace(s, options=replace(s.options, strict=s.options.strict or args.strict,
                                       accept_warnings=(*s.options.accept_warnings,
                                                        *accepted)))
            for s in project.specs))
    executor, close = (executor_of(args) if args.scheduler else (None, lambda: None))

    def line(outcome: DesignOutcome, done: int, total: int) -> None:
        print(outcome_line(outcome, done, total), flush=True)
        for warning in outcome.warnings:
            print(f"    warning: {warning}", flush=True)

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
    if any(o.status == "refused" for o in result.outcomes):
        return 2
    return 0 if result.ok else 1


def sweep_command(args: argparse.Namespace) -> int:
    project = read_project(args.project)
    tables, options, unreadable = [], [], []
    for spec in project.specs:  # a bad spec is reported and left out; the others are swept
        try:
            table = read_table(spec.path)
            if not isinstance(table, StateTable):
                raise OptionError(f"{spec.path}: sweep does not take timers and counters "
                                  "yet; build-all does")
            tables.append(table)
            options.append(spec.options)  # the project's options, as build-all uses them
        except FsmSynthError as exc:
            unreadable.append(str(exc))
            print(f"fsmsynth: error: {exc}", file=sys.stderr)
    lists = project.sweep

    def choice(given: list[str] | None, key: str, default: str) -> list[str]:
        return given or list(lists.get(key, (default,)))

    targets: list[str | Target] = [target_arg(t) for t in choice(args.targets, "targets",
                                                                    "two-level")]
    executor, close = executor_of(args)
    progress = sys.stderr.isatty() if args.progress is None else args.progress
    try:
        result = sweep(tables, choice(args.storages, "storages", "d"),
                       choice(args.encodings, "encodings", "binary"), targets,
                       executor=executor, options=options, progress=progress)
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
