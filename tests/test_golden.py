"""Every bundled example gives byte for byte the files and reports recorded in tests/golden/.

The recorded files were produced by `tests/golden/regenerate.py`; a change that alters an
output on purpose runs that script and commits the new files with it.
"""

from __future__ import annotations

import difflib
import importlib.util
from pathlib import Path

GOLDEN = Path(__file__).resolve().parent / "golden"


def _regenerate_module():  # type: ignore[no-untyped-def]
    spec = importlib.util.spec_from_file_location("golden_regenerate", GOLDEN / "regenerate.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_bundled_examples_give_the_recorded_outputs(tmp_path: Path) -> None:
    regenerate = _regenerate_module()
    regenerate.produce(tmp_path)
    recorded = (GOLDEN / "files" / "MANIFEST").read_text().splitlines()
    now = regenerate.manifest(tmp_path).splitlines()
    changed = sorted(set(recorded) ^ set(now))
    diffs = []
    for line in changed:
        name = line.split()[-1]
        old = GOLDEN / "files" / name
        new = tmp_path / name
        if old.is_file() and new.is_file():
            diffs.extend(difflib.unified_diff(old.read_text().splitlines(),
                                              new.read_text().splitlines(), name, name,
                                              lineterm="", n=1))
    assert now == recorded, "\n".join(changed + diffs[:200])
