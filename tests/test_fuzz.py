"""A fuzzed front door: mutated bundled specs, random option values, hostile settings files.

Every run must end with exit status 0, 1 or 2 and never a traceback (any exception that
leaves ``main`` fails the test); an error names the file at fault.  CI runs a share of the
cases (about half a minute); ``FSMSYNTH_FUZZ=3000 python -m pytest tests/test_fuzz.py`` runs
more.  Hypothesis runs derandomized, so a CI failure repeats.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fsmsynth.cli import main

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
SPECS = sorted(p for p in EXAMPLES.iterdir() if p.suffix in (".toml", ".csv"))
CASES = int(os.environ.get("FSMSYNTH_FUZZ", "60"))
FUZZ = settings(max_examples=CASES, deadline=None, database=None,
                suppress_health_check=list(HealthCheck))

ODD = ["\x00", "\x0c", "\t", "\r\n", "\n", "\ufeff", "\u2028", "é", "💡", '"', "'", "[", "]",
       "{", "}", "=", ",", "#", "-", "0", "1", "x" * 300, "\\", " ", "nan", "inf", "-1",
       "9" * 40, '""', "[]", "true"]


@st.composite
def mutated(draw: st.DrawFn) -> tuple[str, bytes]:
    """A bundled spec (its suffix and bytes) after one to four random edits."""
    source = draw(st.sampled_from(SPECS))
    text = source.read_text()
    for _ in range(draw(st.integers(1, 4))):
        where = draw(st.integers(0, len(text)))
        edit = draw(st.sampled_from(["insert", "delete", "truncate", "duplicate", "swap",
                                     "crlf", "many"]))
        if edit == "insert":
            text = text[:where] + draw(st.sampled_from(ODD)) + text[where:]
        elif edit == "delete":
            text = text[:where] + text[where + draw(st.integers(1, 40)):]
        elif edit == "truncate":
            text = text[:where]
        elif edit == "duplicate":
            lines = text.split("\n")
            i = draw(st.integers(0, len(lines) - 1))
            text = "\n".join(lines[:i + 1] + [lines[i]] + lines[i + 1:])
        elif edit == "swap":
            a, b = draw(st.sampled_from([("0", "1"), ("1", "-"), ('"', "'"), ("mealy", "moore"),
                                         ("[", "("), ("=", ":")]))
            text = text[:where] + text[where:].replace(a, b, 1)
        elif edit == "crlf":
            text = text.replace("\n", "\r\n")
        else:
            lines = text.split("\n")
            i = draw(st.integers(0, len(lines) - 1))
            text = "\n".join(lines[:i] + [lines[i]] * draw(st.integers(50, 2000)) + lines[i:])
    data = text.encode("utf-8")
    if draw(st.integers(0, 9)) == 0:
        cut = draw(st.integers(0, len(data)))
        data = data[:cut] + b"\xff\xfe" + data[cut:]
    return source.suffix, data


def run(argv: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str]:
    try:
        code = main(argv)
    except SystemExit as exc:  # argparse's own usage errors
        code = exc.code if isinstance(exc.code, int) else 2
    err = capsys.readouterr().err
    assert code in (0, 1, 2), (argv, code, err)
    assert "Traceback" not in err
    if code:
        assert err.startswith(("fsmsynth: error: ", "usage: ")), err
    return code, err


@FUZZ
@given(case=mutated(), command=st.sampled_from(["check", "build", "reduce"]))
def test_mutated_specs(case: tuple[str, bytes], command: str,
                       tmp_path_factory: pytest.TempPathFactory,
                       capsys: pytest.CaptureFixture[str]) -> None:
    folder = tmp_path_factory.mktemp("fuzz")
    spec = folder / f"spec{case[0]}"
    spec.write_bytes(case[1])
    argv = [command, str(spec)]
    if command == "build":
        argv += ["-o", str(folder / "out"), "--quiet", "--no-minimize"]
    code, err = run(argv, capsys)
    if code == 2 and "cannot write" not in err:
        assert err.startswith(f"fsmsynth: error: {spec}"), err  # names the file (and line)
    if code == 0 and command == "build":
        names = sorted(p.name for p in (folder / "out").iterdir())
        assert len(names) == 2 and not any(n.endswith(".tmp") for n in names)


OPTION_VALUES = st.sampled_from(["", ",", "d", "jk,d", "best", "x", "-1", "0", "3", "99",
                                 "1e20", "nan", "inf", "binary", "one-hot", "anneal",
                                 "adjacency", "locked=00", "locked=0,open=0", "é", "a=b=c"])


@FUZZ
@given(option=st.sampled_from(["--storage", "--encoding", "--width", "--budget", "--seed",
                               "--jobs", "--time-limit", "--unused", "--logic",
                               "--clock-edge"]), value=OPTION_VALUES)
def test_bad_build_options(option: str, value: str, tmp_path_factory: pytest.TempPathFactory,
                           capsys: pytest.CaptureFixture[str]) -> None:
    folder = tmp_path_factory.mktemp("opt")
    argv = ["build", str(EXAMPLES / "parcel_locker.toml"), option, value, "-o",
            str(folder), "--quiet"]
    if option in ("--width", "--budget", "--seed", "--time-limit"):
        argv += ["--encoding", "anneal", "--budget" if option != "--budget" else "--seed",
                 "20" if option != "--budget" else "1"]
    run(argv, capsys)


@FUZZ
@given(kind=st.sampled_from(["weights", "delays"]),
       text=st.lists(st.sampled_from([
           "gate_input = 1", "gate_input = nan", "gate_input = -3", "gate_input = 'x'",
           "default_flip_flop = inf", "[gate]", "not = 2", "and = true", "[flip_flop]",
           "jk = 1e308", "zz = 1", "clock_to_q = 5", "clock_to_q_min = 500", "setup = nan",
           "[gate.and]", "base = -1", "base_min = 1000", "per_input = 2", "hold = 1",
           "= =", "[[x]]", "\x00"]), max_size=6))
def test_hostile_settings_files(kind: str, text: list[str],
                                tmp_path_factory: pytest.TempPathFactory,
                                capsys: pytest.CaptureFixture[str]) -> None:
    folder = tmp_path_factory.mktemp("settings")
    path = folder / f"{kind}.toml"
    path.write_text("\n".join(text) + "\n")
    spec = str(EXAMPLES / "greenhouse_vent.toml")
    if kind == "weights":
        argv = ["compare", spec, "--weights", str(path), "--encodings", "binary"]
    else:
        argv = ["timing", spec, "--delays", str(path)]
    code, err = run(argv, capsys)
    if code == 2:
        assert err.startswith(f"fsmsynth: error: {path}"), err


def test_outputs_are_byte_identical_across_hash_seeds(tmp_path: Path) -> None:
    outputs = []
    for seed in ("0", "12345"):
        out = tmp_path / seed
        env = {**os.environ, "PYTHONHASHSEED": seed}
        subprocess.run([sys.executable, "-m", "fsmsynth.cli", "build",
                        str(EXAMPLES / "conveyor_sorter.toml"), "--storage", "best",
                        "--encoding", "anneal", "--budget", "60", "--testbench", "-o", str(out)],
                       env=env, check=True, capture_output=True)
        outputs.append({p.name: p.read_bytes() for p in sorted(out.iterdir())})
    assert outputs[0] == outputs[1] and len(outputs[0]) == 3
