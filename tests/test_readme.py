"""The README's Python example runs, and its sample output is what the tool prints."""

from __future__ import annotations

import re
from pathlib import Path

from fsmsynth.cli import main

ROOT = Path(__file__).resolve().parent.parent
README = (ROOT / "README.md").read_text()


def test_python_example_runs(tmp_path: Path, monkeypatch: object) -> None:
    block = re.search(r"```python\n(.*?)```", README, re.S)
    assert block is not None
    monkeypatch.chdir(tmp_path)  # type: ignore[attr-defined]
    namespace: dict[str, object] = {}
    exec(compile(block.group(1), "README.md", "exec"), namespace)
    assert namespace["design"].verification.equivalent  # type: ignore[attr-defined]
    assert (tmp_path / "door.v").read_text().startswith("// door")


def test_sample_build_output_is_current(tmp_path: Path, capsys: object) -> None:
    sample = re.search(r"## What `fsmsynth build` prints\n\n```\n(.*?)\nCaution", README, re.S)
    assert sample is not None
    main(["build", str(ROOT / "examples" / "parcel_locker.toml"), "--storage", "jk",
          "--encoding", "binary", "-o", str(tmp_path / "build")])
    out = capsys.readouterr().out.replace(str(tmp_path) + "/", "")  # type: ignore[attr-defined]
    assert out.startswith(sample.group(1))
