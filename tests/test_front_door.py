"""Bad and extreme input at the front door: each gets a located error and exit 2 (or a
clear refusal), never a traceback, a hang or a half-written file.  One test per class of
failure found by fuzzing; tests/test_fuzz.py covers them at random."""

from __future__ import annotations

import math
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from fsmsynth import CostWeights, OptionError, StateTable, TableError, minimize_sop, synthesize
from fsmsynth.cli import main
from fsmsynth.stages.reduce import minimize_states

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
LOCKER = str(EXAMPLES / "parcel_locker.toml")


def error_of(capsys: pytest.CaptureFixture[str], argv: list[str]) -> tuple[int, str]:
    code = main(argv)
    return code, capsys.readouterr().err


def test_unwritable_outputs_are_a_located_error(tmp_path: Path,
                                                capsys: pytest.CaptureFixture[str]) -> None:
    blocker = tmp_path / "file"
    blocker.write_text("x")
    code, err = error_of(capsys, ["build", LOCKER, "-o", str(blocker)])
    assert code == 2 and err.startswith(f"fsmsynth: error: cannot write {blocker}/")
    (tmp_path / "out" / "parcel_locker.v").mkdir(parents=True)
    code, err = error_of(capsys, ["build", LOCKER, "-o", str(tmp_path / "out")])
    assert code == 2
    assert err == (f"fsmsynth: error: cannot write {tmp_path / 'out' / 'parcel_locker.v'}: "
                   "Is a directory\n")
    # Nothing half-done: the JSON beside it was not written either.
    assert not (tmp_path / "out" / "parcel_locker.json").exists()
    assert [p.name for p in (tmp_path / "out").iterdir()] == ["parcel_locker.v"]


def test_long_machine_name_cannot_be_a_file_name(tmp_path: Path,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    spec = tmp_path / "long.toml"
    name = "m" * 260
    spec.write_text(Path(LOCKER).read_text().replace('"parcel_locker"', f'"{name}"'))
    code, err = error_of(capsys, ["build", str(spec), "-o", str(tmp_path)])
    assert code == 2
    assert err == f"fsmsynth: error: cannot write {tmp_path / name}.v: File name too long\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["long.toml"]


@pytest.mark.parametrize("argv", [["--storages", ","], ["--encodings", ""]])
def test_empty_option_lists(argv: list[str], capsys: pytest.CaptureFixture[str]) -> None:
    code, err = error_of(capsys, ["compare", LOCKER, *argv])
    assert code == 2
    assert err == "fsmsynth: error: compare: give at least one storage kind and one encoding\n"


def test_huge_csv_cell(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = tmp_path / "big.csv"
    path.write_text("state,a,next,y\n" + "s" * 200_000 + ",1,-,0\n")
    code, err = error_of(capsys, ["check", str(path)])
    assert code == 0, err  # a long state name is legal, only unusual


@pytest.mark.parametrize(("width", "message"), [
    ("30", "width 30 for 4 states: give at most 5 bits (wider codes cost logic and search "
           "time without helping)"),
    ("1", "width 1 is too small for 4 states: give a whole number of at least 2 bits"),
])
def test_unreasonable_widths(width: str, message: str,
                             capsys: pytest.CaptureFixture[str]) -> None:
    code, err = error_of(capsys, ["build", LOCKER, "--encoding", "anneal", "--width", width])
    assert code == 2 and err == f"fsmsynth: error: {message}\n"


def test_safe_unused_codes_with_wide_codes_are_not_enumerated() -> None:
    # 16 states one-hot: 65,520 unused codes, expressed as cubes; 40-bit given codes too.
    rows = [(f"s{i}", "1", f"s{(i + 1) % 16}", "1" if i == 15 else "0") for i in range(16)]
    rows += [(f"s{i}", "0", f"s{i}", "0") for i in range(16)]
    table = StateTable.from_rows(name="ring", inputs=["go"], outputs=["last"], rows=rows,
                                 reset="s0")
    started = time.monotonic()
    design = synthesize(table, "d", "one-hot", unused="safe", minimize=False)
    assert design.verification and design.verification.safe_unused
    codes = {f"s{i}": format(1 << (i * 2), "040b") for i in range(16)}
    given = synthesize(table, "jk", codes, unused="safe", minimize=False)
    assert given.verification and given.verification.safe_unused
    assert time.monotonic() - started < 60


def test_exact_logic_refuses_what_it_cannot_enumerate() -> None:
    rows = [("a", "1" + "-" * 19, "b", "1"), ("a", "0" + "-" * 19, "a", "0"),
            ("b", "-" * 20, "a", "0")]
    table = StateTable.from_rows(name="wide", inputs=[f"x{i}" for i in range(20)],
                                 outputs=["y"], rows=rows, reset="a")
    with pytest.raises(OptionError) as info:
        synthesize(table, "d", logic="exact")
    assert str(info.value) == (
        "exact two-level minimization over 21 variables (state bits and inputs): it "
        "enumerates 2**21 points, and works up to 16; use logic 'heuristic' or 'auto'")
    assert synthesize(table, "d", logic="auto").verification


def test_chain_of_compatible_states_reduces_to_one_quickly() -> None:
    # s_i --1--> s_(i+1), outputs all don't care: every state is compatible with every
    # other, and one state suffices (the maximal compatible implies nothing outside itself).
    rows = [(f"s{i}", "1", f"s{i + 1}", "-") for i in range(31)] + [("s31", "1", "s31", "-")]
    table = StateTable.from_rows(name="chain", inputs=["x"], outputs=["y"], rows=rows,
                                 reset="s0")
    started = time.monotonic()
    result = minimize_states(table)
    assert time.monotonic() - started < 5
    assert len(result.table.states) == 1 and result.proven


@pytest.mark.parametrize("limit", [math.nan, math.inf, 0, -1])
def test_time_limit_must_be_a_real_duration(limit: float) -> None:
    table = StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], reset="a",
                                 rows=[("a", "-", "a", "0")])
    with pytest.raises(OptionError) as info:
        minimize_states(table, time_limit=limit)
    assert str(info.value) == f"time limit {limit!r}: give a finite number of seconds > 0"


def test_user_state_named_like_a_merged_state() -> None:
    # b and d merge (both output 1, back to a); a user state is already called "b+d".
    rows = [("a", "0", "b", "0"), ("a", "1", "d", "0"), ("b", "-", "a", "1"),
            ("d", "-", "a", "1"), ("b+d", "-", "a", "-")]
    table = StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], rows=rows, reset="a",
                                 states=["a", "b+d", "b", "d"])
    result = minimize_states(table, reachable_only=False)
    assert len(set(result.table.states)) == len(result.table.states)


@pytest.mark.parametrize("text", ["gate_input = nan", "default_flip_flop = inf",
                                  "[gate]\nnot = -1"])
def test_weights_must_be_finite(text: str, tmp_path: Path,
                                capsys: pytest.CaptureFixture[str]) -> None:
    weights = tmp_path / "w.toml"
    weights.write_text(text + "\n")
    code, err = error_of(capsys, ["build", LOCKER, "--weights", str(weights), "-o",
                                  str(tmp_path)])
    assert code == 2 and err.startswith(f"fsmsynth: error: {weights}: ")
    assert "must be a finite number >= 0" in err
    with pytest.raises(OptionError):
        CostWeights(gate_input=math.nan)


def test_state_name_with_a_line_break_is_rejected() -> None:
    with pytest.raises(TableError) as info:
        StateTable.from_rows(name="m", inputs=["x"], outputs=["y"], reset="a",
                             rows=[("a", "-", "b\nc", "0"), ("b\nc", "-", "a", "1")])
    assert str(info.value) == ("row 1: state 'b\\nc' contains a control character (a line "
                               "break, tab, ...): state names are printable text")


@pytest.mark.parametrize(("replace", "line", "message"), [
    (('kind = "mealy"', 'kind = "Moore"'), 8, "kind 'Moore': use 'mealy' or 'moore'"),
])
def test_spec_errors_name_their_line(replace: tuple[str, str], line: int, message: str,
                                     tmp_path: Path) -> None:
    from fsmsynth.formats import read_table

    spec = tmp_path / "s.toml"
    text = Path(LOCKER).read_text().replace(*replace)
    spec.write_text(text)
    assert [n for n, t in enumerate(text.split("\n"), 1) if replace[1] in t] == [line]
    with pytest.raises(TableError) as info:
        read_table(spec)
    assert str(info.value) == f"{spec}:{line}: {message}"


def test_bom_and_form_feed_in_csv(tmp_path: Path) -> None:
    from fsmsynth.formats import read_table

    path = tmp_path / "t.csv"
    path.write_bytes(b"\xef\xbb\xbf# a comment\x0c with a form feed\nstate,a,next,y\n"
                     b"s,1,t,0\ns,0,s,0\nt,-,s,1\nu,-,nowhere,1\n")
    with pytest.raises(TableError) as info:
        read_table(path)
    assert str(info.value).startswith(f"{path}:6: ")


@pytest.mark.parametrize(("call", "message"), [
    (lambda: minimize_sop(-1, [0]), "n_inputs -1: give a whole number from 1 to 16 for "
                                    "method 'exact' (the function is given by its 2**n "
                                    "minterms)"),
    (lambda: minimize_sop(2.5, [0]), "n_inputs 2.5: give a whole number from 1 to 16 for "  # type: ignore[arg-type]
                                     "method 'exact' (the function is given by its 2**n "
                                     "minterms)"),
    (lambda: minimize_sop(3, None), "on must be a list of minterm numbers (or one list per "  # type: ignore[arg-type]
                                    "output), not None"),
    (lambda: minimize_sop(24, [0], method="heuristic"), "n_inputs 24: give a whole number "
                                                        "from 1 to 20 for method 'heuristic' "
                                                        "(the function is given by its 2**n "
                                                        "minterms)"),
    (lambda: StateTable.from_rows(name="m", inputs=None, outputs=[], rows=[None],  # type: ignore[arg-type]
                                  reset="a"), "inputs must be a list of names, not None"),
    (lambda: synthesize(StateTable.from_rows(name="m", inputs=[], outputs=["y"], reset="a",
                                             rows=[("a", "", "a", "1")]),
                        weights=None),  # type: ignore[arg-type]
     "weights must be a CostWeights, not None"),
])
def test_wrong_argument_types_raise_our_errors(call: object, message: str) -> None:
    with pytest.raises((OptionError, TableError)) as info:
        call()  # type: ignore[operator]
    assert str(info.value) == message


@pytest.mark.parametrize(("argv", "message"), [
    (["--encoding", "anneal", "--budget", "-5"], "budget -5: give a whole number of steps >= 0"),
    (["--encoding", "locked=00,locked=01"],
     "--encoding 'locked=00,locked=01': state 'locked' is given two codes"),
])
def test_silently_accepted_options_are_refused(argv: list[str], message: str,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    code, err = error_of(capsys, ["build", LOCKER, *argv])
    assert code == 2 and err == f"fsmsynth: error: {message}\n"


def test_jobs_zero_is_refused(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as info:
        main(["build", LOCKER, "--jobs", "0"])
    assert info.value.code == 2
    assert "'0': give a whole number of at least 1" in capsys.readouterr().err


def _spawn(argv: list[str], tmp_path: Path) -> subprocess.Popen[str]:
    return subprocess.Popen([sys.executable, "-c", "from fsmsynth.cli import run; run()",
                             *argv], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            cwd=tmp_path)


@pytest.mark.parametrize("signum", [signal.SIGINT, signal.SIGTERM])
def test_a_signal_mid_build_leaves_no_partial_output(signum: int, tmp_path: Path) -> None:
    # An exhaustive search keeps the build busy; the signal arrives before any write.
    # Ctrl-C stops the search and the build completes with the best so far; SIGTERM ends
    # the command.  Either way every output is whole or absent, and no temporary remains.
    from fsmsynth.writers.spec_toml import write_spec

    rows = [(f"s{i}", x, f"s{(i * 3 + int(x)) % 10}", str((i + int(x)) % 2))
            for i in range(10) for x in "01"]
    spec = tmp_path / "ring.toml"
    spec.write_text(write_spec(StateTable.from_rows(name="ring", inputs=["x"], outputs=["y"],
                                                    rows=rows, reset="s0")))
    out = tmp_path / "out"
    run = _spawn(["build", str(spec), "--encoding", "exhaustive", "--force", "--no-minimize",
                  "-o", str(out)], tmp_path)
    time.sleep(4)
    run.send_signal(signum)
    _stdout, err = run.communicate(timeout=60)
    assert "Traceback" not in err
    assert run.returncode == (0 if signum == signal.SIGINT else 128 + signum)
    files = sorted(p.name for p in out.iterdir()) if out.exists() else []
    assert files in ([], ["ring.json", "ring.v"])
    for name in files:
        assert (out / name).read_text().strip()


def test_ctrl_c_outside_a_search_is_one_line(tmp_path: Path) -> None:
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    code = ("import os, signal, threading, time\n"
            "import fsmsynth.flows.pipeline as p\n"
            "from fsmsynth.cli import run\n"
            "def slow(*a, **k):\n    time.sleep(30)\n"
            "p.minimize_states = slow\n"
            "threading.Timer(1.0, lambda: os.kill(os.getpid(), signal.SIGINT)).start()\n"
            "run()\n")
    run = subprocess.run([sys.executable, "-c", code, "build", LOCKER, "-o", str(tmp_path)],
                         capture_output=True, text=True, env=env, timeout=60)
    assert run.returncode == 130 and run.stderr == "fsmsynth: interrupted\n"


MOORE_WIDE = """name = "wide"
kind = "moore"
inputs = ["a", "b", "c", "d", "e", "f", "g"]
outputs = ["y"]
reset = "s"
transition = [
  { from = "s", cube = "1111111", to = "t" },
  { from = "s", cube = "0------", to = "s" },
  { from = "t", cube = "-------", to = "s" },
]

[state_outputs]
s = { y = 0 }
t = { y = 1 }
"""


def test_kmap_draws_every_map_that_fits_and_lists_the_others(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """D0 depends on 8 variables (no map), the Moore output y on Q0 alone: y is drawn and D0
    listed (kmap stopped at D0 and drew nothing)."""
    spec = tmp_path / "wide.toml"
    spec.write_text(MOORE_WIDE)
    assert main(["kmap", str(spec)]) == 0
    out = capsys.readouterr().out
    assert "y:\n" in out and "y = Q0" in out
    assert out.rstrip().splitlines()[-1] == (
        "not drawn (Karnaugh maps go up to 6 variables): D0 (8 variables)")
    assert main(["kmap", str(spec), "D0"]) == 2
    assert "D0 depends on 8 variables" in capsys.readouterr().err


@pytest.mark.parametrize("name", ["k.jpg", "k.txt", "k"])
def test_diagram_refuses_a_file_type_it_does_not_write(
        tmp_path: Path, capsys: pytest.CaptureFixture[str], name: str) -> None:
    out = tmp_path / name
    assert main(["diagram", str(EXAMPLES / "parcel_locker.toml"), "-o", str(out)]) == 2
    assert capsys.readouterr().err == (
        f"fsmsynth: error: {out}: write .dot or .gv for Graphviz text, or .svg, .png or .pdf "
        "for a picture\n")
    assert not out.exists()
