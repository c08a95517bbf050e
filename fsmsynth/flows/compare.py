"""Compare storage kinds and encodings of one machine by the cost of the verified design."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from concurrent.futures import Executor
from dataclasses import dataclass, replace

from fsmsynth.base.choices import DEFAULT_ENCODINGS, DEFAULT_STORAGES
from fsmsynth.base.errors import OptionError
from fsmsynth.flows.pipeline import synthesize
from fsmsynth.formats.spec_toml import parse_spec
from fsmsynth.logic.cost import DEFAULT_WEIGHTS, CostWeights
from fsmsynth.map.targets import Target, target_named
from fsmsynth.model.storage import STORAGES
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine
from fsmsynth.writers.spec_toml import write_spec


@dataclass(frozen=True, slots=True)
class ComparisonRow:
    """One (storage, encoding) design and its cost.

    ``storage`` is the kind asked for (``"best"`` included); ``kinds`` the kind of each
    state bit that resulted.  ``cost`` is :meth:`fsmsynth.logic.cost.Cost.as_dict` data.
    """

    storage: str
    encoding: str
    kinds: tuple[str, ...]
    cost: Mapping[str, object]
    verified: bool
    logic: str
    proven: bool
    timers: Mapping[str, float] | None = None
    """For a machine with timers and counters: the total cost of each way it was built
    (``counters``, and ``unrolled`` where unrolling was possible); the row is the cheaper."""

    @property
    def total(self) -> float:
        """The ranking number."""
        return float(self.cost["total"])  # type: ignore[arg-type]


@dataclass(frozen=True, slots=True)
class Comparison:
    """Designs of one machine, cheapest first (ties: fewer gate inputs, then by name)."""

    machine: str
    rows: tuple[ComparisonRow, ...]
    target: str = "two-level"

    @property
    def best(self) -> ComparisonRow:
        """The cheapest design."""
        return self.rows[0]


def _one(spec: str | TimedMachine, storage: str, encoding: str, weights: CostWeights,
         logic: str, minimize: bool, unused: str, target: str | Target = "two-level",
         map_for: str = "area") -> ComparisonRow:
    """Synthesize one combination; takes spec text (or a timed machine) so that it pickles
    for process pools.  Timers and counters are built both ways, keeping the cheaper."""
    machine = spec if isinstance(spec, TimedMachine) else parse_spec(spec)
    design = synthesize(machine, storage, encoding, weights=weights, logic=logic,
                        minimize=minimize, unused=unused, target=target, map_for=map_for,
                        timers="cheaper")
    kinds = tuple(s.name for s in design.storages)
    if design.timed is not None:
        kinds += tuple(f"{b.block.name}:{b.storage.name}" for b in design.timed.blocks)
    return ComparisonRow(storage=storage, encoding=encoding, kinds=kinds,
                         cost=design.cost.as_dict(), verified=bool(design.verification),
                         logic=design.cover.method, proven=design.cover.proven,
                         timers=None if design.timed is None
                         else dict(design.timed.alternatives))


def compare(table: StateTable | TimedMachine, storages: Sequence[str] = DEFAULT_STORAGES,
            encodings: Sequence[str] = DEFAULT_ENCODINGS, *, executor: Executor | None = None,
            weights: CostWeights = DEFAULT_WEIGHTS, logic: str = "heuristic",
            minimize: bool = True, unused: str = "dont-care",
            target: str | Target = "two-level", map_for: str = "area") -> Comparison:
    """Synthesize and verify every (storage, encoding) pair and rank them by ``cost.total``.

    Parameters
    ----------
    storages, encodings:
        What to try; storage ``"best"`` is the per-bit choice of :func:`synthesize`.
    executor:
        A :class:`concurrent.futures.Executor` (a process pool, or a cluster executor with
        that interface) to run the designs on; by default they run here, one by one.
    table:
        The machine; for one with timers and counters (a
        :class:`~fsmsynth.model.timers.TimedMachine`) each row prices the counters with its
        storage kind, builds the machine unrolled too where it can, keeps the cheaper, and
        gives both costs on ``row.timers``.
    weights, logic, minimize, unused, target, map_for:
        As for :func:`fsmsynth.synthesize`; with a target, designs rank by its area and
        each row's ``cost`` has the target's figures (cells, areas, depth, storage).
    """
    if not storages or not encodings:
        raise OptionError("compare: give at least one storage kind and one encoding")
    spec = table if isinstance(table, TimedMachine) else write_spec(table)
    target = target_named(target)
    # "best" is the cheapest of every single kind and the per-bit choice: run each of those
    # once, shared with the single kinds asked for, instead of again inside synthesize().
    kinds = [k for k in STORAGES if k in storages or "best" in storages]
    jobs = [(s, e) for s in [*kinds, *(["per-bit"] if "best" in storages else [])]
            for e in encodings]
    if executor is None:
        done = [_one(spec, s, e, weights, logic, minimize, unused, target, map_for)
                for s, e in jobs]
    else:
        futures = [executor.submit(_one, spec, s, e, weights, logic, minimize, unused, target,
                                   map_for) for s, e in jobs]
        done = [f.result() for f in futures]
    by_job = dict(zip(jobs, done))
    rows = []
    for s in storages:
        for e in encodings:
            if s != "best":
                rows.append(by_job[(s, e)])
                continue
            options = [by_job[(k, e)] for k in STORAGES] + [by_job[("per-bit", e)]]
            cheapest = min(options, key=lambda r: (r.total, r.cost["gate_inputs"]))
            rows.append(replace(cheapest, storage="best"))
    ranked = sorted(rows, key=lambda r: (r.total, r.cost["gate_inputs"], r.storage,
                                         r.encoding))
    return Comparison(machine=table.name, rows=tuple(ranked), target=target.name)
