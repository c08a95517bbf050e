"""Many machines at once: a project of specs, built in parallel and rebuilt only when needed.

A :class:`Project` (read from a project file by :func:`fsmsynth.flows.project_file.
read_project`) lists specs and the :class:`BuildOptions` of each.  :func:`build_project`
builds every design whose spec, options or fsmsynth version changed since the last build
(content hashes kept in ``.fsmsynth-cache.json`` in the output folder), on worker processes
or any :class:`concurrent.futures.Executor` (a Dask cluster's included).  Tables and options
travel to the workers (they pickle); the files come back as text and are written here,
atomically, so a build on a cluster gives the same bytes as one on this machine.  One
design failing (bad input, failed proof) is reported with its located error and does not
stop the others.
"""

from __future__ import annotations

import hashlib
import json
import os
import time
from collections.abc import Callable, Mapping
from concurrent.futures import Executor, ProcessPoolExecutor
from dataclasses import dataclass, replace
from pathlib import Path

from fsmsynth.base.errors import FsmSynthError, OutputError, WarningsAsErrors
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.flows.build_options import BuildOptions, Project, ProjectSpec
from fsmsynth.flows.design import Design
from fsmsynth.flows.files import write_all_if_changed
from fsmsynth.flows.parallel import each_as_done
from fsmsynth.flows.pipeline import synthesize
from fsmsynth.formats import read_table
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine
from fsmsynth.version import __version__
from fsmsynth.writers.cocotb_bench import write_cocotb_bench
from fsmsynth.writers.testbench import write_testbench
from fsmsynth.writers.vhdl import write_vhdl_testbench

CACHE_NAME = ".fsmsynth-cache.json"


def synthesize_with(table: StateTable | TimedMachine, options: BuildOptions) -> Design:
    """:func:`fsmsynth.synthesize` with the options of ``options``."""
    storage = list(options.storage) if isinstance(options.storage, tuple) else options.storage
    return synthesize(table, storage, options.encoding, unused=options.unused,
                      minimize=options.minimize, logic=options.logic, weights=options.weights,
                      seed=options.seed, budget=options.budget, width=options.width,
                      clock_edge=options.clock_edge, jobs=options.jobs,
                      time_limit=options.time_limit, force=options.force,
                      target=options.target, map_for=options.map_for,
                      outputs=options.outputs, unit_distance=options.unit_distance,
                      accept_warnings=options.accept_warnings, strict=options.strict,
                      timers=options.timers,
                      clocking=options.clocking_for(
                          table.control if isinstance(table, TimedMachine) else table))


def design_files(design: Design, options: BuildOptions) -> dict[str, str]:
    """The files a build writes for ``design``, by file name: the HDL of ``options.hdl``,
    the JSON netlist, and the testbenches asked for (made from the table alone)."""
    name = design.table.name
    files: dict[str, str] = {}
    if "verilog" in options.hdl:
        files[f"{name}.v"] = design.verilog
    if "vhdl" in options.hdl:
        files[f"{name}.vhd"] = design.vhdl
    if "verilog-rtl" in options.hdl:
        files[f"{name}_rtl.v"] = design.rtl_verilog
    if "vhdl-rtl" in options.hdl:
        files[f"{name}_rtl.vhd"] = design.rtl_vhdl
    files[f"{name}.json"] = design.json
    if options.testbench and {"verilog", "verilog-rtl"} & set(options.hdl):
        files[f"{name}_tb.v"] = write_testbench(
            design.reference, clocking=design.clocking,
            vcd=f"{name}.vcd" if options.bench_vcd else None, tested=design.bench_states)
    if options.testbench and {"vhdl", "vhdl-rtl"} & set(options.hdl):
        files[f"{name}_tb.vhd"] = write_vhdl_testbench(design.reference,
                                                       clocking=design.clocking,
                                                       tested=design.bench_states)
    if options.report:
        from fsmsynth.flows.report import report_page  # Graphviz and the page: on request
        files[f"{name}.html"] = report_page(design)
    if options.cocotb:
        files[f"{name}_cocotb.py"] = write_cocotb_bench(design.reference,
                                                        clocking=design.clocking,
                                                        tested=design.bench_states)
    return files


@dataclass(frozen=True, slots=True)
class BuiltDesign:
    """What a worker sends back: the files as text and the figures of the summary."""

    files: FrozenMap[str, str]
    machine: str
    states: int
    storage: str
    cost: float
    verified: bool
    seconds: float
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class Refused:
    """A design a strict build refused for its warnings (the message lists them)."""

    message: str


@dataclass(frozen=True, slots=True)
class DesignOutcome:
    """One design of a project build.

    ``status`` is ``"rebuilt"`` (files written or found equal), ``"up to date"`` (nothing
    changed since the last build: not even read), ``"current"`` or ``"stale"`` (a
    ``check`` run: the files on disk are, or are not, what the spec gives now) or
    ``"failed"`` (``error`` says why, naming the file and line, state or input at fault) or
    ``"refused"`` (a strict build, and the spec has warnings: ``error`` lists them).
    ``written`` names the files that were replaced; ``warnings`` are the spec's warnings as
    lines (:mod:`fsmsynth.checks.spec_warnings`).
    """

    spec: str
    status: str
    machine: str = ""
    states: int | None = None
    storage: str = ""
    cost: float | None = None
    verified: bool | None = None
    seconds: float = 0.0
    error: str = ""
    written: tuple[str, ...] = ()
    stale: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()

    @property
    def ok(self) -> bool:
        """Neither failed, refused nor stale."""
        return self.status not in ("failed", "refused", "stale")


@dataclass(frozen=True, slots=True)
class ProjectBuild:
    """Every design of a build, in project order; ``interrupted`` when Ctrl-C stopped it."""

    outcomes: tuple[DesignOutcome, ...]
    interrupted: bool = False

    @property
    def ok(self) -> bool:
        return not self.interrupted and all(o.ok for o in self.outcomes)

    def summary_lines(self) -> list[str]:
        """A table: design, states, storage, cost, verified, time, status."""
        head = ("design", "states", "storage", "cost", "verified", "time", "status")
        rows = [head] + [(
            o.spec, "" if o.states is None else str(o.states), o.storage,
            "" if o.cost is None else f"{o.cost:g}",
            "" if o.verified is None else ("yes" if o.verified else "NO"),
            f"{o.seconds:.2f} s" if o.status in ("rebuilt", "current", "stale") else "",
            o.status) for o in self.outcomes]
        widths = [max(len(r[i]) for r in rows) for i in range(len(head))]
        return ["  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows]


def build_one(table: StateTable | TimedMachine, options: BuildOptions) -> BuiltDesign:
    """Synthesize, prove and write one design, in memory (what a worker runs)."""
    started = time.perf_counter()
    design = synthesize_with(table, options)
    if design.assignment is not None and design.assignment.interrupted:
        raise KeyboardInterrupt  # Ctrl-C ended a search early: stop the build
    files = design_files(design, options)
    return BuiltDesign(files=FrozenMap(files), machine=table.name,
                       states=len(design.encoded_table.states), storage=design.storage,
                       cost=design.cost.total, verified=bool(design.verification),
                       seconds=time.perf_counter() - started,
                       warnings=tuple(w.text() for w in design.warnings))


def _built_or_error(table: StateTable | TimedMachine, options: BuildOptions
                    ) -> BuiltDesign | Refused | str:
    """:func:`build_one`, with a failure returned as its message (so that one bad design
    does not stop the others, and the message survives any executor)."""
    try:
        return build_one(table, options)
    except WarningsAsErrors as exc:
        return Refused(str(exc))
    except FsmSynthError as exc:
        return str(exc)


def spec_key(spec: ProjectSpec) -> str:
    """The content hash a design is rebuilt on: fsmsynth's version, the spec file's bytes,
    the options, and the bytes of every file the options depend on."""
    digest = hashlib.sha256(f"fsmsynth {__version__}\n".encode())
    for path in (spec.path, *spec.depends_on):
        digest.update(b"\0file\0" + _read_bytes(path))
    digest.update(b"\0options\0" + spec.options.fingerprint().encode())
    return digest.hexdigest()


def _read_bytes(path: Path) -> bytes:
    try:
        return path.read_bytes()
    except OSError as exc:
        raise OutputError(f"{path}: cannot read the file: {exc.strerror or exc}",
                          path=str(path)) from None


def _digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def read_cache(out: Path) -> dict[str, dict[str, object]]:
    """The cache of the last build in ``out`` (empty when missing or unreadable: then
    everything is rebuilt, which is always safe)."""
    try:
        data = json.loads((out / CACHE_NAME).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    designs = data.get("designs") if isinstance(data, dict) else None
    return designs if isinstance(designs, dict) else {}


def _cache_text(entries: Mapping[str, Mapping[str, object]]) -> str:
    return json.dumps({"fsmsynth": __version__, "designs": dict(sorted(entries.items()))},
                      indent=1, sort_keys=True) + "\n"


def _up_to_date(entry: Mapping[str, object] | None, key: str, out: Path) -> bool:
    if not entry or entry.get("key") != key:
        return False
    files = entry.get("files")
    if not isinstance(files, dict) or not files:
        return False
    for name, digest in files.items():
        try:
            if _digest((out / name).read_bytes()) != digest:
                return False
        except OSError:
            return False
    return True


def build_project(project: Project, *, jobs: int | None = None,
                  executor: Executor | None = None, check: bool = False,
                  rebuild: bool = False,
                  on_outcome: Callable[[DesignOutcome, int, int], None] | None = None
                  ) -> ProjectBuild:
    """Build every spec of ``project`` whose spec, options or fsmsynth version changed.

    Parameters
    ----------
    jobs:
        Worker processes when no ``executor`` is given (default: the machine's cores;
        1 builds here, one design after another).
    executor:
        Any :class:`concurrent.futures.Executor` to build on (a process pool, Dask's
        ``Client.get_executor()``).  Files are written here in either case.
    check:
        Write nothing: build every design in memory and report, per design, whether the
        files on disk are ``"current"`` or ``"stale"``.
    rebuild:
        Build every design, changed or not.
    on_outcome:
        Called as each design ends, with the outcome, how many have ended, and how many
        there are (for a progress line).

    Ctrl-C stops the build: finished designs keep their files and cache entries, the rest
    are cancelled, and the result has ``interrupted`` set.
    """
    out = project.out
    cache = read_cache(out)
    entries: dict[str, dict[str, object]] = {
        label: dict(entry) for label, entry in cache.items()
        if isinstance(entry, dict) and label in {s.label for s in project.specs}}
    outcomes: dict[str, DesignOutcome] = {}
    todo: list[tuple[ProjectSpec, str, StateTable | TimedMachine]] = []
    total = len(project.specs)

    def finish(outcome: DesignOutcome) -> None:
        outcomes[outcome.spec] = outcome
        if on_outcome is not None:
            on_outcome(outcome, len(outcomes), total)

    for spec in project.specs:
        try:
            key = spec_key(spec)
        except OutputError as exc:
            finish(DesignOutcome(spec=spec.label, status="failed", error=str(exc)))
            continue
        entry = cache.get(spec.label)
        if not (check or rebuild) and isinstance(entry, dict) and _up_to_date(entry, key, out):
            finish(_from_cache(spec.label, entry))
            continue
        try:
            table = read_table(spec.path)
        except FsmSynthError as exc:
            finish(DesignOutcome(spec=spec.label, status="failed", error=str(exc)))
            continue
        todo.append((spec, key, table))

    machines: dict[str, str] = {}
    for label, entry in entries.items():
        if isinstance(entry.get("machine"), str):
            machines[str(entry["machine"])] = label
    own_pool = None
    if executor is None and len(todo) > 1 and (jobs or os.cpu_count() or 1) > 1:
        own_pool = executor = ProcessPoolExecutor(max_workers=min(jobs or os.cpu_count() or 1,
                                                                  len(todo)))
    interrupted = False
    try:
        if executor is None:
            for spec, key, table in todo:
                finish(_record(spec, key, _built_or_error(table, spec.options), out, check,
                               entries, machines))
        else:
            calls = [(table, spec.options) for spec, _key, table in todo]
            for i, future in each_as_done(executor, _built_or_error, calls):
                spec, key, _table = todo[i]
                try:
                    result: BuiltDesign | Refused | str = future.result()
                except Exception as exc:  # a worker lost (killed, out of memory)
                    result = f"{spec.path}: the build did not finish: {exc!r}"
                finish(_record(spec, key, result, out, check, entries, machines))
    except KeyboardInterrupt:
        interrupted = True
    finally:
        if own_pool is not None:
            own_pool.shutdown(wait=not interrupted, cancel_futures=True)
    ordered = tuple(outcomes[s.label] for s in project.specs if s.label in outcomes)
    return ProjectBuild(outcomes=ordered, interrupted=interrupted)


def _from_cache(label: str, entry: Mapping[str, object]) -> DesignOutcome:
    def number(key: str) -> float | None:
        value = entry.get(key)
        return float(value) if isinstance(value, (int, float)) else None

    states = entry.get("states")
    warnings = entry.get("warnings")
    return DesignOutcome(spec=label, status="up to date", machine=str(entry.get("machine", "")),
                         states=states if isinstance(states, int) else None,
                         storage=str(entry.get("storage", "")), cost=number("cost"),
                         verified=bool(entry.get("verified")),
                         warnings=tuple(str(w) for w in warnings)
                         if isinstance(warnings, list) else ())


def _record(spec: ProjectSpec, key: str, result: BuiltDesign | Refused | str, out: Path,
            check: bool, entries: dict[str, dict[str, object]],
            machines: dict[str, str]) -> DesignOutcome:
    """Write (or, for ``check``, compare) one design's files and its cache entry."""
    if isinstance(result, str):
        return DesignOutcome(spec=spec.label, status="failed", error=result)
    if isinstance(result, Refused):
        return DesignOutcome(spec=spec.label, status="refused", error=result.message)
    owner = machines.get(result.machine)
    if owner is not None and owner != spec.label:
        return DesignOutcome(spec=spec.label, status="failed", error=(
            f"{spec.path}: machine {result.machine!r} is also built from spec {owner!r}: "
            "their files would overwrite each other (rename one machine)"))
    machines[result.machine] = spec.label
    built = DesignOutcome(spec=spec.label, status="rebuilt", machine=result.machine,
                          states=result.states, storage=result.storage, cost=result.cost,
                          verified=result.verified, seconds=result.seconds,
                          warnings=result.warnings)
    if check:
        stale = tuple(name for name, text in result.files.items()
                      if not (out / name).is_file()
                      or (out / name).read_bytes() != text.encode("utf-8"))
        return replace(built, status="stale" if stale else "current", stale=stale)
    try:
        written = write_all_if_changed({out / name: text for name, text in result.files.items()})
        entries[spec.label] = {
            "key": key, "machine": result.machine, "states": result.states,
            "storage": result.storage, "cost": result.cost, "verified": result.verified,
            "warnings": list(result.warnings), "files": {name: _digest(text.encode("utf-8"))
                      for name, text in sorted(result.files.items())}}
        write_all_if_changed({out / CACHE_NAME: _cache_text(entries)})
    except OutputError as exc:
        return replace(built, status="failed", error=str(exc))
    return replace(built, written=tuple(sorted(Path(p).name for p, c in written.items() if c)))


def outcome_line(outcome: DesignOutcome, done: int, total: int) -> str:
    """The progress line of one design."""
    width = len(str(total))
    head = f"[{done:>{width}}/{total}] {outcome.spec}: "
    if outcome.status in ("failed", "refused"):
        return head + outcome.status.upper() + ": " + outcome.error
    parts = [outcome.status]
    if outcome.states is not None:
        parts.append(f"{outcome.states} states")
    if outcome.storage:
        parts.append(outcome.storage.upper())
    if outcome.cost is not None:
        parts.append(f"cost {outcome.cost:g}")
    if outcome.verified is not None:
        parts.append("verified" if outcome.verified else "NOT VERIFIED")
    if outcome.status != "up to date":
        parts.append(f"{outcome.seconds:.2f} s")
    if outcome.stale:
        parts.append("stale: " + ", ".join(outcome.stale))
    if outcome.warnings:
        parts.append(f"{len(outcome.warnings)} warning{'s' if len(outcome.warnings) > 1 else ''}")
    return head + ", ".join(parts)
