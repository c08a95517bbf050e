"""Readers: spec files to :class:`~fsmsynth.table.StateTable`.  They never write files."""

from __future__ import annotations

from pathlib import Path

from fsmsynth.formats.csv_table import parse_csv, read_csv
from fsmsynth.formats.spec_toml import parse_spec, read_spec
from fsmsynth.table import StateTable

__all__ = ["parse_csv", "parse_spec", "read_csv", "read_spec", "read_table"]


def read_table(path: str | Path) -> StateTable:
    """Read a ``.csv`` state table or a TOML spec (any other suffix)."""
    if Path(path).suffix.lower() == ".csv":
        return read_csv(path)
    return read_spec(path)
