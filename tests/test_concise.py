"""Text output that fits a screen for a big machine, the whole in --verbose and --json.

Reference: a generated 48-state, 12-input controller (benchmarks/controllers.py); the limit
of 60 lines is the issue's, common practice for a terminal, no source.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

from fsmsynth.cli import main
from fsmsynth.writers.spec_toml import write_spec

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "benchmarks"))
from controllers import controller

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@pytest.fixture(scope="module")
def big_spec(tmp_path_factory: pytest.TempPathFactory) -> Path:
    spec = tmp_path_factory.mktemp("big") / "ctrl.toml"
    spec.write_text(write_spec(controller(48, 12, n_outputs=6, seed=5)))
    return spec


def test_a_48_state_build_fits_a_screen_and_verbose_gives_the_whole(
        big_spec: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["build", str(big_spec), "-o", str(tmp_path)]) == 0
    short = capsys.readouterr().out.splitlines()
    assert len(short) <= 60
    assert short[0] == "ctrl: 48 states, D flip-flops, binary encoding (6 bits; --json lists " \
                       "the codes)"
    assert any(line.startswith("  12 signals; the longest: ") for line in short)
    assert "(a summary of a big machine: --verbose prints every equation and glitch)" in short
    assert main(["build", str(big_spec), "-o", str(tmp_path), "--verbose"]) == 0
    full = capsys.readouterr().out
    assert main(["build", str(big_spec), "-o", str(tmp_path), "--json"]) == 0
    report = json.loads(capsys.readouterr().out)
    for signal, expression in report["equations"].items():
        assert f"  {signal} = {expression}" in full
    assert len(full.splitlines()) > 60


def test_a_small_build_still_prints_everything(tmp_path: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["build", str(EXAMPLES / "parcel_locker.toml"), "-o", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "  J0 = " not in out and "  D0 = " in out and "summary" not in out


def test_compare_shows_repeated_kinds_as_counts(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["compare", str(EXAMPLES / "dock_leveler.toml"), "--storages", "jk,best",
                 "--encodings", "one-hot"]) == 0
    out = capsys.readouterr().out
    assert "5 jk" in out and "jk jk" not in out


def test_a_search_reports_progress_in_a_log(monkeypatch: pytest.MonkeyPatch,
                                            capsys: pytest.CaptureFixture[str]) -> None:
    """When stderr is not a terminal (a build log), a search writes a line every few
    seconds; here every update, to see it in a short search."""
    from fsmsynth import read_table, synthesize
    from fsmsynth.stages.assign import scoring
    monkeypatch.setattr(scoring, "LOG_EVERY", 0.0)
    synthesize(read_table(EXAMPLES / "dock_leveler.toml"), "d", "anneal", budget=40)
    lines = capsys.readouterr().err.splitlines()
    assert lines and all(", best " in line and " s so far" in line for line in lines)
