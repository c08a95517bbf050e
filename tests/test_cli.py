"""The command line: output, files, exit codes, no tracebacks."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from fsmsynth.cli import main

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
LOCKER = str(EXAMPLES / "parcel_locker.toml")


def test_build_prints_equations_cost_and_proof(tmp_path: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["build", LOCKER, "--storage", "jk", "--encoding", "binary",
                 "-o", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "J0 = " in out and "K1 = " in out and "unlock = " in out
    assert "product terms" in out and "flip-flops JK 2" in out
    assert "verified: netlist matches the table from reset" in out
    assert "Synchronise asynchronous" in out
    assert (tmp_path / "parcel_locker.v").read_text().startswith("// parcel_locker")
    data = json.loads((tmp_path / "parcel_locker.json").read_text())
    assert data["schema"] == "fsmsynth-netlist" and data["module"] == "parcel_locker"
    assert [ff["kind"] for ff in data["flip_flops"]] == ["jk", "jk"]


def test_build_twice_rewrites_nothing(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    main(["build", LOCKER, "-o", str(tmp_path)])
    first = {p.name: (p.read_bytes(), p.stat().st_mtime_ns) for p in tmp_path.iterdir()}
    capsys.readouterr()
    main(["build", LOCKER, "-o", str(tmp_path)])
    assert "unchanged" in capsys.readouterr().out
    assert {p.name: (p.read_bytes(), p.stat().st_mtime_ns) for p in tmp_path.iterdir()} == first


def test_build_json_report(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    main(["build", str(EXAMPLES / "greenhouse_vent.toml"), "--storage", "t", "--json",
          "-o", str(tmp_path)])
    report = json.loads(capsys.readouterr().out)
    assert report["verified"] is True and report["storage"] == "t"
    assert set(report["equations"]) >= {"T0", "T1", "motor_open", "motor_close"}


def test_build_with_given_codes(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["build", LOCKER, "--encoding", "locked=11,unlocked=01,open=10,warn=00",
                 "-o", str(tmp_path)]) == 0
    assert "locked=11" in capsys.readouterr().out


def test_check_reports(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(EXAMPLES / "rail_crossing.csv")]) == 0
    assert "valid mealy table 'rail_crossing'" in capsys.readouterr().out


def test_bad_spec_exits_nonzero_without_traceback(tmp_path: Path) -> None:
    spec = tmp_path / "bad.toml"
    spec.write_text(Path(LOCKER).read_text().replace('cube = "-01", to = "warn"',
                                                     'cube = "-01", to = "wran"'))
    run = subprocess.run([sys.executable, "-m", "fsmsynth.cli", "build", str(spec), "-o",
                          str(tmp_path)], capture_output=True, text=True)
    assert run.returncode == 2
    assert "Traceback" not in run.stderr
    assert run.stderr == (f"fsmsynth: error: {spec}:24: transition 8: to state 'wran' is not "
                          "declared in states; did you mean 'warn'? (locked, unlocked, open, "
                          "warn)\n")


def test_unknown_encoding_is_a_clear_error(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["build", LOCKER, "--encoding", "johnson"]) == 2
    assert capsys.readouterr().err == ("fsmsynth: error: unknown encoding 'johnson': use one of "
                                       "binary, gray, one-hot, outputs, adjacency, exhaustive, "
                                       "anneal, or a mapping from state to code\n")


SORTER = str(EXAMPLES / "conveyor_sorter.toml")


def test_reduce_prints_classes_and_writes_a_spec_that_reads_back(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "reduced.toml"
    assert main(["reduce", SORTER, "-o", str(out)]) == 0
    text = capsys.readouterr().out
    assert "state minimization (hopcroft): 4 -> 2 states" in text
    assert "merged: wait, scan_good, scan_good2" in text
    from fsmsynth.formats import read_table
    reduced = read_table(out)
    assert reduced.states == ("wait", "scan_bad") and reduced.reset == "wait"


def test_build_reports_removed_states_and_can_skip_minimization(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    main(["build", SORTER, "-o", str(tmp_path), "--json"])
    report = json.loads(capsys.readouterr().out)
    assert report["states"]["given"] == 4 and report["states"]["encoded"] == 2
    main(["build", SORTER, "-o", str(tmp_path), "--no-minimize"])
    assert "conveyor_sorter: 4 states" in capsys.readouterr().out


def test_quiet_build_leaves_out_the_caution_block(tmp_path: Path,
                                                  capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["build", LOCKER, "-o", str(tmp_path), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "Caution" not in out and out.rstrip().endswith("parcel_locker.json")
    # The Verilog header keeps its cautions.
    assert "// Caution: synchronise" in (tmp_path / "parcel_locker.v").read_text()


def test_header_names_every_bit_kind_and_the_clock_edge() -> None:
    from fsmsynth import synthesize
    from fsmsynth.formats import read_table

    design = synthesize(read_table(LOCKER), ["jk", "d"], clock_edge="falling")
    assert design.header().startswith(
        "storage: mixed (Q0 jk, Q1 d); clock edge: falling; encoding: binary ")


def test_convert_names_cell_and_target_pins_apart(capsys: pytest.CaptureFixture[str]) -> None:
    # A D flip-flop from a DE cell: the cell's own D pin and the target's D are two signals.
    assert main(["convert", "d", "--using", "de"]) == 0
    assert capsys.readouterr().out.splitlines()[:3] == [
        "D flip-flop from a D flip-flop with clock enable (Q+ = D):",
        "  D = Q'", "  E = Q' D_d + Q D_d'"]
    assert main(["convert", "jk", "--using", "sr"]) == 0
    assert capsys.readouterr().out.startswith("JK flip-flop from an SR flip-flop ")


def test_timing_and_its_model_are_public() -> None:
    import fsmsynth

    assert {"timing", "TimingReport", "Delays", "GateDelay", "NetlistError"} <= set(
        fsmsynth.__all__)


def test_a_subcommand_reports_an_unknown_option_with_its_own_usage(
        capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["diagram", LOCKER, "--jobs", "2"])
    assert stop.value.code == 2
    err = capsys.readouterr().err
    assert err.startswith("usage: fsmsynth diagram ")
    assert err.endswith("fsmsynth diagram: error: unrecognized arguments: --jobs 2\n")


@pytest.mark.parametrize("extra, message", [
    (["--seed", "3"], "seed applies to the anneal encoding"),
    (["--budget", "9", "--encoding", "adjacency"], "budget applies to the anneal encoding"),
    (["--width", "3"], "width applies to adjacency, exhaustive and anneal encodings"),
])
def test_a_search_option_with_an_encoding_it_does_not_apply_to_is_refused(
        capsys: pytest.CaptureFixture[str], extra: list[str], message: str) -> None:
    """One rule for --seed, --budget and --width (seed and budget were ignored)."""
    assert main(["build", LOCKER, *extra]) == 2
    assert capsys.readouterr().err == f"fsmsynth: error: {message}\n"


def test_build_help_lists_every_encoding(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit):
        main(["build", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    for name in ("binary", "gray", "one-hot", "outputs", "adjacency", "exhaustive", "anneal"):
        assert name in text.split("--encoding ENCODING")[-1].split("--seed")[0], name
