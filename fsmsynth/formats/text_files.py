"""Reading the text of input files, with the errors every reader reports the same way."""

from __future__ import annotations

import math
import tomllib
from pathlib import Path
from typing import Any

from fsmsynth.base.errors import SpecFileError


def read_text(path: str | Path) -> str:
    """The UTF-8 text of ``path``; a missing, unreadable or non-UTF-8 file is a SpecFileError."""
    p = Path(path)
    try:
        return p.read_text(encoding="utf-8").removeprefix("\ufeff")
    except OSError as exc:
        raise SpecFileError(f"cannot read the file: {exc.strerror}", path=str(p)) from None
    except UnicodeDecodeError:
        raise SpecFileError("the file is not UTF-8 text", path=str(p)) from None


def read_toml_table(path: str | Path) -> dict[str, Any]:
    """The parsed TOML of a small settings file (weights, delays)."""
    try:
        return tomllib.loads(read_text(path))
    except tomllib.TOMLDecodeError as exc:
        raise SpecFileError(f"not valid TOML: {exc}", path=str(path)) from None


def non_negative(value: object, where: str, path: str | Path) -> float:
    """``value`` as a float, or a SpecFileError when it is not a number >= 0."""
    if (isinstance(value, bool) or not isinstance(value, (int, float))
            or not math.isfinite(value) or value < 0):
        raise SpecFileError(f"{where} must be a finite number >= 0, not {value!r}",
                            path=str(path))
    return float(value)


def line_of(lines: list[str], table: str | None, key: str | None) -> int | None:
    """The line (from 1) of ``key`` in TOML table ``[table]`` (None: the top level), or of
    the table's header when ``key`` is None; None when it cannot be found.  For error
    messages: TOML parsers give no positions for the values they return."""
    current: str | None = None
    for number, raw in enumerate(lines, 1):
        line = raw.split("#", 1)[0].strip()
        if line.startswith("["):
            current = line.strip("[] ").replace('"', "").replace(" ", "")
            if key is None and current == table:
                return number
            continue
        if key is not None and current == table and "=" in line \
                and line.split("=", 1)[0].strip().strip('"') == key:
            return number
    return None
