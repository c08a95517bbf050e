"""Glitches: static hazards, function hazards and the remedies, against brute force.

The reference is enumeration of every point and every adjacent pair (common practice, no
source), and the classic worked example of a static-1 hazard removed by its consensus
term.
"""

from __future__ import annotations

import itertools
import json
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from strategies import state_tables

from fsmsynth import StateTable, synthesize
from fsmsynth.checks.hazards import hazard_free, static_hazards
from fsmsynth.cli import main
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def brute_static(terms: list[Cube], on: list[Cube], n: int, variables: list[int]
                 ) -> set[tuple[int, int]]:
    """(variable, point with that variable 0) of every pair of on-points adjacent in it
    that no single product covers."""
    found = set()
    for v in variables:
        for p in range(1 << n):
            if p >> v & 1:
                continue
            q = p | 1 << v
            if not (any(c.contains_point(p) for c in on) and any(c.contains_point(q)
                                                                  for c in on)):
                continue
            if not any(t.contains_point(p) and t.contains_point(q) for t in terms):
                found.add((v, p))
    return found


def found_pairs(hazards: dict[int, object], n: int) -> set[tuple[int, int]]:
    var = bdd.variables(n)
    pairs = set()
    for v, region in hazards.items():
        for p in range(1 << n):
            if p >> v & 1:
                continue
            point = {var[i]: p >> i & 1 for i in range(n)}
            if region.restrict(point).is_one():  # type: ignore[attr-defined]
                pairs.add((v, p))
    return pairs


@st.composite
def functions(draw: st.DrawFn) -> tuple[int, list[Cube], list[Cube]]:
    """A cover and an on-set inside it (the rest of the cover's points are don't cares)."""
    n = draw(st.integers(2, 5))
    terms = sorted({Cube.from_string(t) for t in draw(st.lists(
        st.text("01-", min_size=n, max_size=n), min_size=1, max_size=6))})
    points = [p for p in range(1 << n) if any(t.contains_point(p) for t in terms)]
    on_points = draw(st.lists(st.sampled_from(points), unique=True)) if points else []
    on = [Cube.minterm(p, n) for p in on_points]
    return n, terms, on


@settings(max_examples=300, deadline=None)
@given(functions())
def test_static_hazards_are_exactly_the_uncovered_adjacent_pairs(
        case: tuple[int, list[Cube], list[Cube]]) -> None:
    n, terms, on = case
    variables = list(range(n))
    var = bdd.variables(n)
    assert found_pairs(static_hazards(terms, on, variables, var), n) == brute_static(
        terms, on, n, variables)


@settings(max_examples=200, deadline=None)
@given(functions())
def test_hazard_free_covers_have_no_static_hazard_and_the_same_function(
        case: tuple[int, list[Cube], list[Cube]]) -> None:
    n, terms, on = case
    on_set = {p for p in range(1 << n) if any(c.contains_point(p) for c in on)}
    cover = {p for p in range(1 << n) if any(t.contains_point(p) for t in terms)}
    off = [Cube.minterm(p, n) for p in range(1 << n) if p not in cover]
    fixed = list(hazard_free(terms, on, off, list(range(n)), n))
    assert brute_static(fixed, on, n, list(range(n))) == set()
    now = {p for p in range(1 << n) if any(t.contains_point(p) for t in fixed)}
    assert on_set <= now and not now & {p for p in range(1 << n) if p not in cover}


def test_the_classic_hazard_and_its_consensus_term() -> None:
    """f = a'b + ac has a static-1 hazard when b = c = 1 and a changes; the consensus term
    bc removes it (the standard example of static hazards, e.g. Roth, *Fundamentals of
    Logic Design*, chapter on hazards; from memory)."""
    terms = [Cube.from_string("01-"), Cube.from_string("1-1")]  # a'b, ac (a is variable 0)
    var = bdd.variables(3)
    hazards = static_hazards(terms, terms, [0, 1, 2], var)
    assert set(hazards) == {0}
    assert found_pairs(hazards, 3) == {(0, 0b110)}  # a = 0 -> 1 with b = c = 1
    off = [Cube.minterm(p, 3) for p in range(8)
           if not any(t.contains_point(p) for t in terms)]
    assert set(hazard_free(terms, terms, off, [0, 1, 2], 3)) == {*terms, Cube.from_string("-11")}


# --- whole designs -----------------------------------------------------------------------

@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(max_states=6, max_inputs=4, kind="mealy"),
       st.sampled_from(["d", "t", "jk", "sr"]))
def test_hazard_free_outputs_verify_and_have_no_static_hazard(table: StateTable,
                                                               storage: str) -> None:
    design = synthesize(table, storage, outputs="hazard-free")
    assert design.verification and design.hazard_free == table.outputs
    assert not [g for g in design.glitches.glitches if g.kind == "static"]
    # Brute force on the care points of the used codes.
    k, n = design.encoding.width, len(design.cover.variables)
    used = set(design.encoding.codes.values())
    for o in table.outputs:
        f = design.functions.function(o)
        pairs = brute_static(list(design.cover.of(o)), list(f.on), n, list(range(k, n)))
        assert not [p for p in pairs if p[1] & ((1 << k) - 1) in used]


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(max_states=5, max_inputs=3, kind="mealy"))
def test_function_hazards_against_enumeration(table: StateTable) -> None:
    design = synthesize(table, "d", "binary")
    k, n_in = design.encoding.width, len(table.inputs)
    codes = design.encoding.codes
    work = design.encoded_table
    expected = set()
    for o in table.outputs:
        terms = design.cover.of(o)

        def value(code: int, x: int, terms: tuple[Cube, ...] = terms) -> bool:
            return any(t.contains_point(code | x << k) for t in terms)

        for s, cube, nxt, _out in work.rows:
            if nxt is None:
                continue
            a, b = codes[s], codes[nxt]
            changed = [bit for bit in range(k) if (a ^ b) >> bit & 1]
            if len(changed) < 2:
                continue
            c = Cube.from_string(cube)
            for x in range(1 << n_in):
                if not c.contains_point(x) or value(a, x) != value(b, x):
                    continue
                for mask in range(1, (1 << len(changed)) - 1):
                    mid = a
                    for j, bit in enumerate(changed):
                        if mask >> j & 1:
                            mid ^= 1 << bit
                    if value(mid, x) != value(a, x):
                        expected.add((o, s, nxt))
    found = {(g.output, g.state, g.next_state) for g in design.glitches.glitches
             if g.kind == "function"}
    assert found == expected


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(max_states=6, max_inputs=3, kind="moore"))
def test_output_encoded_moore_outputs_are_flip_flop_outputs(table: StateTable) -> None:
    design = synthesize(table, "d", "outputs")
    assert design.verification
    q_nets = {ff.q for ff in design.netlist.flip_flops}
    assert all(net in q_nets for _port, net in design.netlist.outputs)
    assert set(design.glitches.by_construction) == set(table.outputs)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(min_states=3, max_states=4, max_inputs=2, kind="mealy",
                    dont_cares=False))
def test_unit_distance_search_finds_the_fewest_multi_bit_steps(table: StateTable) -> None:
    design = synthesize(table, "d", "exhaustive", unit_distance=True, minimize=False)
    assert design.verification
    pairs = {(s, n) for s, _c, n, _o in table.rows if n is not None and n != s}
    k = design.encoding.width
    best = min(sum(1 for a, b in pairs if bin(code[a] ^ code[b]).count("1") > 1)
               for perm in itertools.permutations(range(1 << k), len(table.states))
               for code in [dict(zip(table.states, perm))])
    assert len(design.multi_bit_steps) == best


def test_cli_reports_glitches_and_removes_static_ones(tmp_path: Path,
                                                      capsys: pytest.CaptureFixture[str]
                                                      ) -> None:
    spec = str(EXAMPLES / "parcel_locker.toml")
    assert main(["build", spec, "-o", str(tmp_path), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "unlock: static hazard in state 'unlocked' when door_closed changes" in out
    assert main(["build", spec, "-o", str(tmp_path), "--json", "--outputs",
                 "hazard-free"]) == 0
    report = json.loads(capsys.readouterr().out)
    assert report["hazard_free_outputs"] == ["unlock", "buzzer"]
    assert not [g for g in report["glitches"] if g["kind"] == "static"]
    assert report["verified"] is True


def test_bad_outputs_option() -> None:
    from fsmsynth import OptionError
    from fsmsynth.formats import read_table
    table = read_table(EXAMPLES / "parcel_locker.toml")
    with pytest.raises(OptionError, match=r"^outputs: unknown output 'siren'"):
        synthesize(table, outputs={"siren": "hazard-free"})
    with pytest.raises(OptionError, match=r"^outputs of 'unlock': 'smooth'; use one of"):
        synthesize(table, outputs={"unlock": "smooth"})


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(max_states=5, max_inputs=3), st.sampled_from(["d", "t", "jk", "sr"]),
       st.lists(st.integers(0, 7), min_size=1, max_size=12))
def test_registered_outputs_come_from_flip_flops_at_the_right_cycle(
        table: StateTable, storage: str, stimulus: list[int]) -> None:
    from fsmsynth import simulate
    design = synthesize(table, storage, outputs="registered")
    assert design.verification
    q_nets = {ff.q for ff in design.netlist.flip_flops}
    assert all(net in q_nets for _port, net in design.netlist.outputs)
    # Replay against the table itself: Moore outputs at the same cycle, Mealy one later.
    n = len(table.inputs)
    words = [format(x % (1 << n), f"0{n}b")[::-1] if n else "" for x in stimulus]
    trace = simulate(design.netlist, words)
    state: str | None = table.reset
    for t, word in enumerate(words):
        if state is None:
            break
        nxt, out = table.lookup(state, word)
        if table.kind == "moore":
            seen = trace[t][1]
        elif t + 1 < len(trace):
            seen = trace[t + 1][1]  # one clock later, also where the next state is open
        else:
            break
        assert all(w in ("-", s) for w, s in zip(out, seen)), (t, state, word)
        state = nxt


def test_a_registered_output_is_kept_where_the_next_state_is_open() -> None:
    """The audit's reproduction: the row ("s0", "1", None, "1") specifies y = 1 with an open
    next state; registered, y = 1 must appear one clock later (it was dropped)."""
    from fsmsynth import simulate
    table = StateTable.from_rows(name="alarm", inputs=["x"], outputs=["y"], reset="s0",
                                 rows=[("s0", "0", "s0", "0"), ("s0", "1", None, "1")])
    design = synthesize(table, "d", outputs="registered")
    assert [o for _code, o in simulate(design.netlist, ["1", "0", "0"])] == ["0", "1", "0"]
    assert synthesize(table, "d").verification  # and combinationally, at once: y = 1


def test_registered_mealy_bench_passes_in_icarus(tmp_path: Path) -> None:
    import subprocess

    from test_verilog_tools import need

    from fsmsynth.formats import read_table
    from fsmsynth.writers.testbench import write_testbench
    iverilog, vvp = need("iverilog"), need("vvp")
    table = read_table(EXAMPLES / "parcel_locker.toml")
    design = synthesize(table, "jk", outputs="registered")
    assert "outputs registered: each one clock after" in design.verilog
    (tmp_path / "d.v").write_text(design.verilog)
    (tmp_path / "tb.v").write_text(write_testbench(design.reference))
    subprocess.run([iverilog, "-g2005", "-o", str(tmp_path / "sim"), str(tmp_path / "d.v"),
                    str(tmp_path / "tb.v")], check=True)
    run = subprocess.run([vvp, "-N", str(tmp_path / "sim")], capture_output=True, text=True)
    assert run.stdout.strip().splitlines()[-1].startswith("PASS"), run.stdout[-300:]
    # The same design checked at the table's own (unregistered) timing must fail.
    (tmp_path / "tb0.v").write_text(write_testbench(table))
    subprocess.run([iverilog, "-g2005", "-o", str(tmp_path / "sim0"), str(tmp_path / "d.v"),
                    str(tmp_path / "tb0.v")], check=True)
    run0 = subprocess.run([vvp, "-N", str(tmp_path / "sim0")], capture_output=True, text=True)
    assert "PASS" not in run0.stdout
