"""Saving generated files: atomically, all of a build together, and only what changed."""

from __future__ import annotations

import os
import tempfile
from collections.abc import Mapping
from pathlib import Path

from fsmsynth.base.errors import OutputError


def write_if_changed(path: str | Path, text: str) -> bool:
    """Text version of :func:`write_bytes_if_changed` (UTF-8)."""
    return write_bytes_if_changed(path, text.encode("utf-8"))


def write_bytes_if_changed(path: str | Path, data: bytes) -> bool:
    """:func:`write_all_if_changed` for one file; returns whether it was written."""
    return write_all_if_changed({path: data})[str(path)]


def write_all_if_changed(files: Mapping[str | Path, bytes | str]) -> dict[str, bool]:
    """Write every file whose content differs from what it holds; leave the others alone.

    Each new content goes to a temporary file beside its target; only when all of them are
    written do they replace their targets (``os.replace``, one step each), so a reader never
    sees a half-written file, an interrupted build (Ctrl-C, SIGTERM, a full disk) leaves
    the previous files and no temporaries, and an unchanged file keeps its timestamp.
    Text is saved as UTF-8.  Returns, per path, whether it was written.

    Raises
    ------
    OutputError
        ``cannot write PATH: reason`` when a target or its folder cannot be written; then
        nothing was replaced.
    """
    wanted = {Path(p): (d.encode("utf-8") if isinstance(d, str) else d)
              for p, d in files.items()}
    changed: dict[Path, bytes] = {}
    for target, data in wanted.items():
        try:
            if target.read_bytes() == data:
                continue
        except FileNotFoundError:
            pass
        except OSError as exc:
            raise OutputError(f"cannot write {target}: {exc.strerror or exc}",
                              path=str(target)) from None
        changed[target] = data
    temporaries: dict[Path, str] = {}
    current: Path | None = None
    try:
        for target, data in changed.items():
            current = target
            target.parent.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{target.name[:80]}.", suffix=".tmp",
                                       dir=target.parent)
            temporaries[target] = tmp
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
            os.chmod(tmp, 0o644)
        for target, tmp in temporaries.items():
            current = target
            os.replace(tmp, target)
    except OSError as exc:
        _remove(temporaries.values())
        raise OutputError(f"cannot write {current}: {exc.strerror or exc}",
                          path=str(current)) from None
    except BaseException:
        _remove(temporaries.values())
        raise
    return {str(p): p in changed for p in wanted}


def _remove(paths: object) -> None:
    for tmp in list(paths):  # type: ignore[call-overload]
        Path(tmp).unlink(missing_ok=True)
