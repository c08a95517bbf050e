"""Design-space sweeps: every machine x storage kind x encoding x target, built, proven and
costed, here or on any :class:`concurrent.futures.Executor` (a process pool, a Dask cluster).

Each (machine, option set) is one task; tables and options pickle and travel to the workers,
rows come back, and the rows are put in task order, so a sweep gives the same rows whatever
ran it and in whatever order the tasks ended (wall times aside, which is why the CSV and
JSON writers leave them out unless asked).
"""

from __future__ import annotations

import csv
import io
import json
import time
from collections.abc import Iterable, Sequence
from concurrent.futures import Executor
from dataclasses import asdict, dataclass, fields, replace
from typing import Any

from fsmsynth.base.errors import FsmSynthError, OptionError
from fsmsynth.flows.build_options import DEFAULT_OPTIONS, BuildOptions
from fsmsynth.flows.parallel import each_as_done
from fsmsynth.flows.project import synthesize_with
from fsmsynth.map.targets import Target, target_named
from fsmsynth.model.table import StateTable


@dataclass(frozen=True, slots=True)
class SweepRow:
    """One design of a sweep.  Cost columns are None where the design failed (``error``
    says why) or where the target has no such figure (cells, areas and depth belong to
    mapped targets)."""

    machine: str
    storage: str
    encoding: str
    target: str
    states: int | None = None
    flip_flops: int | None = None
    product_terms: int | None = None
    literals: int | None = None
    gate_inputs: int | None = None
    cells: int | None = None
    logic_area: float | None = None
    flip_flop_area: float | None = None
    depth: int | None = None
    total: float | None = None
    verified: bool = False
    error: str = ""
    seconds: float = 0.0


COLUMNS = tuple(f.name for f in fields(SweepRow))


@dataclass(frozen=True, slots=True)
class Sweep:
    """The rows of a sweep in task order (machine, then storage, encoding, target, as
    given); ``interrupted`` when Ctrl-C stopped it (the finished rows are kept)."""

    rows: tuple[SweepRow, ...]
    interrupted: bool = False

    def __len__(self) -> int:
        return len(self.rows)

    def records(self, times: bool = True) -> list[dict[str, Any]]:
        """The rows as plain dicts (``seconds`` left out unless ``times``)."""
        out = []
        for row in self.rows:
            record = asdict(row)
            if not times:
                del record["seconds"]
            out.append(record)
        return out

    def to_csv(self, times: bool = False) -> str:
        """The rows as CSV with a header; empty cells for None.  Wall times are left out
        unless ``times``, so that equal sweeps give equal bytes."""
        buffer = io.StringIO()
        columns = [c for c in COLUMNS if times or c != "seconds"]
        writer = csv.DictWriter(buffer, fieldnames=columns, lineterminator="\n")
        writer.writeheader()
        for record in self.records(times):
            writer.writerow({k: ("" if v is None else v) for k, v in record.items()})
        return buffer.getvalue()

    def to_json(self, times: bool = False) -> str:
        """The rows as a JSON list of objects (wall times as for :meth:`to_csv`)."""
        return json.dumps(self.records(times), indent=1) + "\n"

    def to_dataframe(self) -> Any:
        """The rows as a pandas DataFrame (needs pandas, which fsmsynth does not require)."""
        try:
            import pandas
        except ImportError:
            raise ImportError("Sweep.to_dataframe needs pandas: pip install pandas; "
                              "records() and to_csv() need nothing") from None
        return pandas.DataFrame(self.records(), columns=list(COLUMNS))


def sweep_one(table: StateTable, storage: str, encoding: str, target: str | Target,
              options: BuildOptions = DEFAULT_OPTIONS) -> SweepRow:
    """Build and prove one design of a sweep; a failure is a row with ``error`` set."""
    started = time.perf_counter()
    resolved = target_named(target)
    row = SweepRow(machine=table.name, storage=storage, encoding=encoding,
                   target=resolved.name)
    try:
        design = synthesize_with(table, replace(options, storage=storage, encoding=encoding,
                                                target=resolved))
    except FsmSynthError as exc:
        return replace(row, error=str(exc), seconds=time.perf_counter() - started)
    if design.assignment is not None and design.assignment.interrupted:
        raise KeyboardInterrupt  # Ctrl-C ended a search early: stop the sweep, not the row
    cost = design.cost.as_dict()

    def count(key: str) -> int | None:
        value = cost.get(key)
        return sum(value.values()) if isinstance(value, dict) else None

    def number(key: str) -> Any:
        value = cost.get(key)
        return value if isinstance(value, (int, float)) else None

    return replace(row, states=len(design.encoded_table.states),
                   flip_flops=count("flip_flops"), product_terms=number("product_terms"),
                   literals=number("literals"), gate_inputs=number("gate_inputs"),
                   cells=count("cells"), logic_area=number("logic_area"),
                   flip_flop_area=number("flip_flop_area"), depth=number("depth"),
                   total=float(design.cost.total), verified=bool(design.verification),
                   seconds=time.perf_counter() - started)


def sweep(tables: Iterable[StateTable], storages: Sequence[str] = ("d",),
          encodings: Sequence[str] = ("binary",),
          targets: Sequence[str | Target] = ("two-level",), *,
          executor: Executor | None = None,
          options: BuildOptions | Sequence[BuildOptions] = DEFAULT_OPTIONS,
          progress: bool = False) -> Sweep:
    """Build and prove every machine with every storage kind, encoding and target.

    Parameters
    ----------
    tables:
        The machines.
    storages, encodings, targets:
        What to try (names as for :func:`fsmsynth.synthesize`; targets also as
        :class:`~fsmsynth.map.targets.Target` objects).
    executor:
        Where to run the designs: any :class:`concurrent.futures.Executor` (a process pool,
        ``dask.distributed.Client(address).get_executor()``); by default here, one by one.
    options:
        The other build options (``unused``, ``outputs``, ``logic``, ...): one
        :class:`~fsmsynth.BuildOptions` for every machine, or one per machine in the order
        of ``tables`` (a project's per-spec options; ``fsmsynth sweep`` passes those).  The
        sweep's storage, encoding and target replace theirs.
    progress:
        Show a progress bar (tqdm) on standard error.

    Returns
    -------
    Sweep
        One row per design in task order.  Ctrl-C stops the sweep: queued designs are
        cancelled and the finished rows returned with ``interrupted`` set.
    """
    from tqdm import tqdm

    tables = list(tables)
    if isinstance(options, BuildOptions):
        per_table = [options] * len(tables)
    else:
        per_table = list(options)
        if len(per_table) != len(tables) or not all(
                isinstance(o, BuildOptions) for o in per_table):
            raise OptionError(f"options: give one BuildOptions, or one per table "
                              f"({len(tables)}), not {len(per_table)} values")
    tasks = [(table, s, e, t, own) for table, own in zip(tables, per_table) for s in storages
             for e in encodings for t in targets]
    done: dict[int, SweepRow] = {}
    interrupted = False
    bar = tqdm(total=len(tasks), disable=not progress, unit="design")
    try:
        if executor is None:
            for i, task in enumerate(tasks):
                done[i] = sweep_one(*task)
                bar.update()
        else:
            for i, future in each_as_done(executor, sweep_one, tasks):
                done[i] = future.result()
                bar.update()
    except KeyboardInterrupt:
        interrupted = True
    finally:
        bar.close()
    return Sweep(rows=tuple(done[i] for i in sorted(done)), interrupted=interrupted)
