"""Readers: spec files to :class:`~fsmsynth.model.table.StateTable`.  They never write files."""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path

from fsmsynth.base.errors import OptionError
from fsmsynth.formats.csv_table import parse_csv, read_csv
from fsmsynth.formats.spec_toml import parse_spec, read_spec
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine

__all__ = ["parse_csv", "parse_spec", "read_csv", "read_spec", "read_table"]


def read_table(path: str | Path, settings: Mapping[str, str] | None = None
               ) -> StateTable | TimedMachine:
    """Read a ``.csv`` state table or a TOML spec (any other suffix).

    A TOML spec with timers or counters gives a
    :class:`~fsmsynth.model.timers.TimedMachine`.  ``settings`` (``name``, ``reset``,
    ``kind``) override a CSV table's settings row; a TOML spec has keys of its own for
    them, so they are refused there."""
    if Path(path).suffix.lower() == ".csv":
        return read_csv(path, settings)
    if settings:
        raise OptionError(f"{', '.join('--' + k for k in settings)}: these set a CSV table's "
                          f"settings; {path} is a TOML spec, whose keys say them")
    return read_spec(path)
