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


def _one(spec: str, storage: str, encoding: str, weights: CostWeights, logic: str,
         minimize: bool, unused: str, target: str | Target = "two-level",
         map_for: str = "area") -> ComparisonRow:
    """Synthesize one combination; takes spec text so that it pickles for process pools."""
    design = synthesize(parse_spec(spec), storage, encoding, weights=weights, logic=logic,
                        minimize=minimize, unused=unused, target=target, map_for=map_for)
    return ComparisonRow(storage=storage, encoding=encoding,
                         kinds=tuple(s.name for s in design.storages),
                         cost=design.cost.as_dict(), verified=bool(design.verification),
                         logic=design.cover.method, proven=design.cover.proven)


def compare(table: StateTable, storages: Sequence[str] = DEFAULT_STORAGES,
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
    weights, logic, minimize, unused, target, map_for:
        As for :func:`fsmsynth.synthesize`; with a target, designs rank by its area and
        each row's ``cost`` has the target's figures (cells, areas, depth, storage).
    """
    if not storages or not encodings:
        raise OptionError("compare: give at least one storage kind and one encoding")
    spec = write_spec(table)
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
