"""Saving generated text: atomically, and only when the content changed."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def write_if_changed(path: str | Path, text: str) -> bool:
    """Text version of :func:`write_bytes_if_changed` (UTF-8)."""
    return write_bytes_if_changed(path, text.encode("utf-8"))


def write_bytes_if_changed(path: str | Path, data: bytes) -> bool:
    """Write ``data`` to ``path`` unless the file already holds exactly that.

    The new content goes to a temporary file in the same folder, which then replaces the
    target in one step (``os.replace``), so a reader never sees a half-written file and an
    unchanged file keeps its timestamp.  Returns whether the file was written.
    """
    target = Path(path)
    try:
        if target.read_bytes() == data:
            return False
    except FileNotFoundError:
        pass
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(tmp, 0o644)
        os.replace(tmp, target)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return True
