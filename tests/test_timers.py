"""Timers and counters: the composed netlist against a simulation of the spec's semantics
written here, against the tool's own unrolled table, and in Icarus and GHDL; counters of T
flip-flops against the textbook counter equations; invariants that read ``done``; spec
errors that name the timer or counter and the line."""

from __future__ import annotations

import itertools
import random
import re
from dataclasses import replace
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_rtl import run_icarus
from test_vhdl import run_ghdl

from fsmsynth import synthesize
from fsmsynth.base.errors import InvariantError, SpecFileError
from fsmsynth.checks.simulate import simulate
from fsmsynth.checks.timed_proof import verify_timed
from fsmsynth.checks.verify import verify
from fsmsynth.cli import main
from fsmsynth.formats.spec_toml import parse_spec
from fsmsynth.model.timers import TimedMachine
from fsmsynth.stages.counters import block_logic
from fsmsynth.stages.unroll import unroll
from fsmsynth.writers.testbench import write_testbench
from fsmsynth.writers.vhdl import write_vhdl_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
KINDS = ["d", "t", "jk", "sr", "de"]


# --- A reference simulation of the semantics, independent of the library's own model -----
# (the semantics are those of docs/guide/timers.md: a start loads N-1 and a timer counts
# down to 0, done at 0; a counter counts up to its limit and holds, done at the limit).

def holds(guard: tuple[tuple[str, bool], ...], env: dict[str, int]) -> bool:
    return all(env[atom] == (1 if positive else 0) for atom, positive in guard)


def reference_run(spec: dict, words: list[str]) -> list[str]:
    """Outputs per cycle of the machine ``spec`` (as :func:`machines` draws it)."""
    state = spec["reset"]
    timer = {n: 0 for n in spec["timers"]}
    count = {n: 0 for n in spec["counters"]}
    out = []
    for word in words:
        env = dict(zip(spec["inputs"], map(int, word)))
        for n in spec["timers"]:
            env[f"{n}.done"] = int(timer[n] == 0)
        for n, limit in spec["counters"].items():
            env[f"{n}.done"] = int(count[n] == limit)
            env[f"{n} >= 1"] = int(count[n] >= 1)
        _frm, _guard, to, sets, acts = next(
            row for row in spec["rows"]
            if row[0] == state and (row[1] is None or holds(row[1], env)))
        out.append("".join(str(sets.get(o, 0)) for o in spec["outputs"]))
        for n, cycles in spec["timers"].items():
            timer[n] = cycles - 1 if n in acts.get("start", []) else max(timer[n] - 1, 0)
        for n, limit in spec["counters"].items():
            if n in acts.get("clear", []):
                count[n] = 0
            elif n in acts.get("count", []):
                count[n] = min(count[n] + 1, limit)
        state = to
    return out


@st.composite
def machines(draw: st.DrawFn) -> dict:
    """Small Mealy controllers with a timer of 1-8 cycles and maybe a counter of 1-4."""
    n = draw(st.integers(2, 4))
    states = [f"s{i}" for i in range(n)]
    inputs = ["a", "b"][:draw(st.integers(1, 2))]
    timers = {"t": draw(st.integers(1, 8))}
    counters = {"c": draw(st.integers(1, 4))} if draw(st.booleans()) else {}
    atoms = [*inputs, "t.done", *(["c.done", "c >= 1"] if counters else [])]
    rows = []
    for s in states:
        picked = draw(st.lists(st.sampled_from(atoms), min_size=1, max_size=2, unique=True))
        guard = tuple((a, draw(st.booleans())) for a in picked)
        for g in (guard, None):
            acts = {"start": ["t"]} if draw(st.booleans()) else {}
            if counters:
                which = draw(st.sampled_from(["", "count", "clear"]))
                if which:
                    acts[which] = ["c"]
            sets = {"y": draw(st.integers(0, 1)), "z": draw(st.integers(0, 1))}
            rows.append((s, g, draw(st.sampled_from(states)), sets, acts))
    return {"states": states, "inputs": inputs, "outputs": ["y", "z"], "reset": "s0",
            "timers": timers, "counters": counters, "rows": rows}


def timed(spec: dict) -> TimedMachine:
    def text(guard: tuple[tuple[str, bool], ...] | None) -> str:
        if guard is None:
            return "else"
        return " & ".join(a if p else f"~({a})" for a, p in guard)

    return TimedMachine.from_transitions(
        name="m", reset=spec["reset"], inputs=spec["inputs"], outputs=spec["outputs"],
        timers=spec["timers"], counters=spec["counters"], states=spec["states"],
        transitions=[(f, text(g), t, s, a) for f, g, t, s, a in spec["rows"]])


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(machines(), st.sampled_from(KINDS), st.randoms(use_true_random=False))
def test_the_composed_netlist_is_the_machine(spec: dict, kind: str, rnd: random.Random) -> None:
    """For every storage kind: the proof passes, the netlist equals the tool's unrolled
    table (exact product walk), and random runs agree with the simulation above."""
    machine = timed(spec)
    design = synthesize(machine, kind)
    assert design.verification and design.timed is not None
    assert all(b.storage.name == kind for b in design.timed.blocks)
    assert verify(design.netlist, unroll(machine))
    for _run in range(3):
        words = ["".join(rnd.choice("01") for _ in spec["inputs"]) for _ in range(40)]
        got = [out for _code, out in simulate(design.netlist, words)]
        assert got == reference_run(spec, words)


@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(machines())
def test_unrolled_and_cheaper_builds_are_the_same_machine(spec: dict) -> None:
    machine = timed(spec)
    flat = synthesize(machine, "jk", timers="unrolled")
    both = synthesize(machine, "jk", timers="cheaper")
    assert flat.timed is not None and flat.timed.choice == "unrolled"
    assert both.timed is not None and set(both.timed.alternatives) == {"counters", "unrolled"}
    assert both.cost.total == min(both.timed.alternatives.values())
    words = ["".join(random.Random(1).choice("01") for _ in spec["inputs"]) for _ in range(30)]
    assert ([o for _c, o in simulate(flat.netlist, words)]
            == [o for _c, o in simulate(both.netlist, words)] == reference_run(spec, words))


def test_a_wrong_counter_is_caught_with_a_trace_from_reset() -> None:
    machine = timed({"states": ["s0", "s1"], "inputs": ["a"], "outputs": ["y", "z"],
                     "reset": "s0", "timers": {"t": 5}, "counters": {},
                     "rows": [("s0", (("a", True),), "s1", {"y": 1, "z": 0}, {"start": ["t"]}),
                              ("s0", None, "s0", {"y": 0, "z": 0}, {}),
                              ("s1", (("t.done", True),), "s0", {"y": 0, "z": 1}, {}),
                              ("s1", None, "s1", {"y": 0, "z": 0}, {})]})
    design = synthesize(machine, "d")
    # A mutant: the load value's top bit stuck at 0 (the wait is 1 cycle, not 5).
    mutant = replace(design.netlist, flip_flops=tuple(
        replace(f, pins=(("D", "fs_t_q0"),)) if f.name == "fs_t_ff2" else f
        for f in design.netlist.flip_flops))
    proof = verify_timed(mutant, machine)
    assert not proof and proof.note == "by the unrolled table"
    assert proof.counterexample is not None and proof.counterexample.inputs[0] == "1"
    words = list(proof.counterexample.inputs)
    assert [o for _c, o in simulate(mutant, words)][-1] != [
        o for _c, o in simulate(design.netlist, words)][-1]


@pytest.mark.parametrize("bits", [2, 3, 4])
def test_t_flip_flop_counters_are_the_textbook_counters(bits: int) -> None:
    """Synchronous binary counters of T flip-flops (Mano & Ciletti, *Digital Design*, 5th
    ed., section 6.4, from memory): an up-counter toggles bit i when every lower bit is 1,
    T_i = Q_0 ... Q_{i-1}; a down-counter when every lower bit is 0, T_i = Q_0' ... Q_{i-1}'.
    Checked point by point where the blocks count freely (not at the limit, no load or
    clear)."""
    top = (1 << bits) - 1
    machine = TimedMachine.from_transitions(
        name="m", reset="s", inputs=["go"], outputs=["y"], timers={"t": top + 1},
        counters={"c": top}, transitions=[("s", "go & ~t.done & ~c.done", "s", {"y": 1},
                                           {"start": ["t"], "count": ["c"]}),
                                          ("s", "else", "s", {})])
    acts = {"t": ["start"], "c": ["count"]}
    for block in machine.blocks:
        logic = block_logic(block, [], acts[block.name], "t")
        names = logic.cover.variables
        for value in range(top + 1):
            if (block.name == "t" and value == 0) or (block.name == "c" and value == top):
                continue  # a timer holds at 0, a counter at its limit
            point = {f"{block.name}.Q{i}": value >> i & 1 for i in range(bits)}
            point[f"{block.name}_{acts[block.name][0]}"] = 1 if block.name == "c" else 0
            for i in range(bits):
                lower = [value >> j & 1 for j in range(i)]
                want = all(lower) if block.name == "c" else not any(lower)
                terms = logic.cover.of(f"T{i}")
                got = any(all(point[names[v]] == int(p) for v, p in t.literals())
                          for t in terms)
                assert got == want, (block.name, value, i)


BURNER = (EXAMPLES / "burner_sequencer.toml").read_text()


def short_burner() -> str:
    """The bundled example with short waits, so that a bench of its unrolled table is small."""
    return BURNER.replace("purge = 300, trial = 50, post = 150", "purge = 4, trial = 3, post = 2")


def test_a_state_entered_by_a_start_is_held_exactly_n_cycles() -> None:
    machine = parse_spec(short_burner())
    assert isinstance(machine, TimedMachine)
    design = synthesize(machine, "jk")
    outputs = machine.outputs
    # call for heat, no flame: one cycle in idle, then purge for exactly 4 cycles.
    words = ["10"] * 12
    fans = [dict(zip(outputs, o))["fan"] for _c, o in simulate(design.netlist, words)]
    sparks = [dict(zip(outputs, o))["spark"] for _c, o in simulate(design.netlist, words)]
    first_spark = sparks.index("1")
    # Cycle 0 in idle (its transition starts the timer), cycles 1-4 in purge: exactly 4;
    # the spark comes on in cycle 5, the first in ignite.
    assert first_spark == 1 + 4
    assert fans[:first_spark] == ["1"] * 5


def test_invariants_reading_done_are_proven_and_broken_with_a_trace() -> None:
    good = """
name = "door"
inputs = ["go"]
outputs = ["lock"]
reset = "idle"
otherwise = "stay"
timers = { hold = 3 }
invariants = ["~(state == idle & ~hold.done)"]
[[transition]]
from = "idle"
when = "go"
to = "wait"
start = ["hold"]
[[transition]]
from = "wait"
when = "hold.done"
to = "idle"
set = { lock = 1 }
"""
    design = synthesize(parse_spec(good), "t")
    assert design.invariants and "hold in every one" in design.invariants.summary()
    # Starting the timer on the way back to idle breaks it, two cycles from reset at least.
    bad = good.replace('set = { lock = 1 }', 'set = { lock = 1 }\nstart = ["hold"]')
    with pytest.raises(InvariantError) as caught:
        synthesize(parse_spec(bad), "t")
    broken = caught.value.result.violation
    assert broken is not None and broken.invariant == "~(state == idle & ~hold.done)"
    assert len(broken.inputs) == 1 + 3 + 1  # go, three cycles of waiting, back in idle


@pytest.mark.parametrize(("change", "message"), [
    (("timers = { purge = 4", "timers = { purge = 0"),
     r"burner_sequencer.toml:16: timer 'purge': give cycles as a whole number of 1 or more"),
    (('when = "purge.done"', 'when = "purg.done"'),
     r"burner_sequencer.toml:\d+: transition 2: purg.done: no timer or counter is called "
     r"'purg'; did you mean 'purge'\?"),
    (('count = ["tries"]', 'count = ["trial"]'),
     r"burner_sequencer.toml:\d+: transition 2: count 'trial': no counter is called 'trial' "
     r"\('trial' is a timer"),
    (('when = "trial.done & tries.done"', 'when = "trial.done & tries >= 9"'),
     r"burner_sequencer.toml:\d+: transition 5: tries >= 9: counter 'tries' counts 0 \.\. 3"),
])
def test_spec_errors_name_the_timer_or_counter_and_the_line(change: tuple[str, str],
                                                           message: str) -> None:
    text = short_burner().replace(*change)
    with pytest.raises(SpecFileError) as caught:
        parse_spec(text, "burner_sequencer.toml")
    assert re.match(message, str(caught.value)), str(caught.value)
    line = int(str(caught.value).split(":")[1])
    assert change[1].split("=")[0].strip().split()[0] in text.split("\n")[line - 1] or (
        "transition" in str(caught.value))


@pytest.mark.parametrize("kind", ["d", "jk", "t", "sr"])
def test_icarus_runs_the_bench_and_a_mutant_fails(kind: str, tmp_path: Path) -> None:
    design = synthesize(parse_spec(short_burner()), kind)
    bench = write_testbench(design.reference, clocking=design.clocking)
    run = run_icarus(design.verilog, bench, tmp_path)
    assert "PASS" in run.stdout and run.returncode == 0, run.stdout[-400:]
    # The trial timer's done decoder inverted: the bench must fail.
    mutant = design.verilog.replace("(trial_done,", "(fs_mutant,", 1)
    mutant = mutant.replace("    wire trial_done;", "    wire trial_done;\n    wire fs_mutant;\n"
                            "    assign trial_done = ~fs_mutant;", 1)
    assert mutant != design.verilog
    run = run_icarus(mutant, bench, tmp_path)
    assert "PASS" not in run.stdout


def test_ghdl_runs_the_bench(tmp_path: Path) -> None:
    design = synthesize(parse_spec(short_burner()), "jk")
    run = run_ghdl(design.vhdl, write_vhdl_testbench(design.reference), design.table.name,
                   tmp_path)
    assert run.returncode == 0, run.stdout[-400:] + run.stderr[-400:]


def test_the_cli_builds_compares_and_draws_a_timed_spec(tmp_path: Path,
                                                       capsys: pytest.CaptureFixture[str]
                                                       ) -> None:
    spec = tmp_path / "burner.toml"
    spec.write_text(short_burner())
    assert main(["build", str(spec), "--storage", "t", "-o", str(tmp_path / "out")]) == 0
    shown = capsys.readouterr().out
    assert "purge: 4 cycles; 2 T flip-flops" in shown and "verified" in shown
    assert main(["compare", str(spec), "--storages", "d,t", "--encodings", "binary"]) == 0
    table = capsys.readouterr().out
    assert "counters" in table.splitlines()[1] and "unrolled" in table.splitlines()[1]
    assert main(["diagram", str(spec)]) == 0
    assert "purge: 4 cycles" in capsys.readouterr().out
    assert main(["reduce", str(spec)]) == 2
    assert "reduce does not take timers and counters" in capsys.readouterr().err


def test_a_long_timer_is_proven_without_walking_it() -> None:
    text = BURNER.replace("purge = 300", "purge = 100000")
    design = synthesize(parse_spec(text), "jk")
    assert design.verification and "proven on their arithmetic" in design.verification.note
    assert next(b.block.width for b in design.timed.blocks) == 17  # type: ignore[union-attr]


def test_same_spec_same_bytes() -> None:
    one = synthesize(parse_spec(short_burner()), "best")
    two = synthesize(parse_spec(short_burner()), "best")
    assert one.verilog == two.verilog and one.json == two.json
    assert list(itertools.islice(one.equations, 5)) == list(itertools.islice(two.equations, 5))


@pytest.mark.parametrize("kind", ["t", "sr"])
def test_the_rtl_with_its_counters_passes_the_benches_and_a_mutant_fails(
        kind: str, tmp_path: Path) -> None:
    """The RTL (value registers beside the machine) against the bench of the unrolled
    table, in Icarus and GHDL; a timer that loads one cycle short fails it."""
    design = synthesize(parse_spec(short_burner()), kind)
    bench = write_testbench(design.reference, clocking=design.clocking)
    assert "reg [1:0] purge_value;" in design.rtl_verilog
    run = run_icarus(design.rtl_verilog, bench, tmp_path)
    assert "PASS" in run.stdout and run.returncode == 0, run.stdout[-400:]
    short = design.rtl_verilog.replace("purge_value <= 2'd3;", "purge_value <= 2'd2;")
    assert short != design.rtl_verilog
    assert "PASS" not in run_icarus(short, bench, tmp_path).stdout
    vhdl = run_ghdl(design.rtl_vhdl, write_vhdl_testbench(design.reference),
                    design.table.name, tmp_path)
    assert vhdl.returncode == 0, vhdl.stdout[-400:] + vhdl.stderr[-400:]


def test_the_bench_of_long_timers_walks_the_waits_and_catches_one_cycle(tmp_path: Path) -> None:
    """A 300-cycle wait: the bench tests one unrolled state per control state and readings
    (the proof covers the other counter values), walks the waits in loops, stays small,
    passes, and fails a design whose purge is one cycle short."""
    design = synthesize(parse_spec(BURNER), "jk")
    bench = write_testbench(design.reference, clocking=design.clocking,
                            tested=design.bench_states)
    assert len(bench) < 500_000 and "repeat (299) begin" in bench
    run = run_icarus(design.verilog, bench, tmp_path)
    assert "PASS" in run.stdout and run.returncode == 0, run.stdout[-400:]
    short = design.rtl_verilog.replace("purge_value <= 9'd299;", "purge_value <= 9'd298;")
    assert short != design.rtl_verilog
    assert "PASS" not in run_icarus(short, bench, tmp_path).stdout
