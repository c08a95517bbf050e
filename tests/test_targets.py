"""Targets: factoring, the NAND2/inverter subject graph, mapping onto cells, LUTs and
product-term arrays, each mapped design verified again and simulated in Icarus.

References are named beside each check.  Truth tables are the reference for every
function: the netlist evaluator is checked against Python's own Boolean operators.
"""

from __future__ import annotations

import itertools
import subprocess
from dataclasses import replace
from pathlib import Path

import pytest
import sympy
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from strategies import state_tables
from test_verilog_tools import need

from fsmsynth import StateTable, synthesize, verify
from fsmsynth.base.errors import OptionError, SpecFileError
from fsmsynth.checks.simulate import evaluate
from fsmsynth.cli import main
from fsmsynth.formats.cells_toml import parse_cells
from fsmsynth.logic.cost import normal_terms
from fsmsynth.logic.cube import Cube
from fsmsynth.map.cells import cover
from fsmsynth.map.factor import factor
from fsmsynth.map.luts import map_luts
from fsmsynth.map.subject import SubjectGraph, subject_graph
from fsmsynth.map.targets import target_named
from fsmsynth.stages.netlist import Gate, Netlist
from fsmsynth.writers.testbench import write_testbench

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def truth(netlist: Netlist, net: str) -> list[int]:
    """The net's value on every input point (input 0 least significant)."""
    n = len(netlist.inputs)
    result = []
    for m in range(1 << n):
        env = evaluate(netlist, {x: m >> i & 1 for i, x in enumerate(netlist.inputs)}, 1)
        result.append(env[net])
    return result


def nands(inputs: list[str], gates: list[tuple[str, tuple[str, ...]]],
          outputs: list[str]) -> Netlist:
    return Netlist(name="n", inputs=tuple(inputs), outputs=tuple((o, o) for o in outputs),
                   gates=tuple(Gate(f"g{i}", "nand", ins, out)
                               for i, (out, ins) in enumerate(gates)), flip_flops=())


# --- facts of the trade --------------------------------------------------------------------

def test_xor_in_four_nand2() -> None:
    """XOR of two inputs from four 2-input NANDs (a standard construction; from memory)."""
    net = nands(["a", "b"], [("n", ("a", "b")), ("p", ("a", "n")), ("q", ("b", "n")),
                             ("y", ("p", "q"))], ["y"])
    assert len(net.gates) == 4
    assert truth(net, "y") == [a ^ b for b, a in itertools.product((0, 1), repeat=2)]


def test_half_adder_in_five_and_full_adder_in_nine_nand2() -> None:
    """A half adder in five 2-input NANDs and a full adder in nine (standard constructions;
    from memory)."""
    half = nands(["a", "b"], [("n", ("a", "b")), ("p", ("a", "n")), ("q", ("b", "n")),
                              ("s", ("p", "q")), ("c", ("n", "n"))], ["s", "c"])
    assert len(half.gates) == 5
    points = [(m & 1, m >> 1 & 1) for m in range(4)]
    assert truth(half, "s") == [a ^ b for a, b in points]
    assert truth(half, "c") == [a & b for a, b in points]
    full = nands(["a", "b", "cin"], [
        ("n1", ("a", "b")), ("n2", ("a", "n1")), ("n3", ("b", "n1")), ("x", ("n2", "n3")),
        ("n4", ("x", "cin")), ("n5", ("x", "n4")), ("n6", ("cin", "n4")), ("s", ("n5", "n6")),
        ("co", ("n4", "n1"))], ["s", "co"])
    assert len(full.gates) == 9
    points3 = [(m & 1, m >> 1 & 1, m >> 2 & 1) for m in range(8)]
    assert truth(full, "s") == [a ^ b ^ c for a, b, c in points3]
    assert truth(full, "co") == [int(a + b + c >= 2) for a, b, c in points3]


def mapped_count(terms: list[str], names: list[str], target: str) -> int:
    expr = factor([Cube.from_string(t) for t in terms])
    graph = subject_graph(names, {"y": expr})
    choice = cover(graph, target_named(target).cells)
    used: set[int] = set()

    def walk(n: int) -> None:
        if graph.nodes[n][0] in ("in", "const") or n in used:
            return
        used.add(n)
        for leaf in choice[n].leaves:
            walk(leaf)

    walk(graph.roots["y"])
    return len(used)


def test_mux_in_four_cells_on_nand2() -> None:
    """A 2:1 multiplexer in four 2-input NANDs, the select's inverter being one of them
    (a standard construction; from memory): the mapper finds three NAND2 and an inverter."""
    assert mapped_count(["1-0", "-11"], ["a", "b", "s"], "nand2") == 4


def test_xor_maps_to_one_cell_where_the_library_has_it() -> None:
    assert mapped_count(["10", "01"], ["a", "b"], "gates2") == 1
    assert mapped_count(["10", "01"], ["a", "b"], "nand2") == 5  # no sharing inside a tree


def test_de_morgan_in_the_subject_graph() -> None:
    """a b = ((a b)')' and a + b = (a' b')' (De Morgan's laws; common practice, no source),
    checked by sympy on the NAND/inverter structure the subject graph builds."""
    graph = SubjectGraph()
    a, b = graph.input("a"), graph.input("b")
    sa, sb = sympy.symbols("a b")

    def as_sympy(n: int) -> object:
        node = graph.nodes[n]
        if node[0] == "in":
            return sympy.Symbol(node[1])
        if node[0] == "inv":
            return sympy.Not(as_sympy(node[1]))
        return sympy.Not(sympy.And(as_sympy(node[1]), as_sympy(node[2])))

    assert sympy.simplify_logic(sympy.Equivalent(as_sympy(graph.and2(a, b)), sa & sb)) is \
        sympy.true
    assert sympy.simplify_logic(sympy.Equivalent(as_sympy(graph.or2(a, b)), sa | sb)) is \
        sympy.true
    assert graph.inv(graph.inv(a)) == a


@st.composite
def covers(draw: st.DrawFn, max_vars: int = 6) -> tuple[int, list[Cube]]:
    n = draw(st.integers(1, max_vars))
    cubes = draw(st.lists(st.text("01-", min_size=n, max_size=n), min_size=1, max_size=9))
    return n, sorted({Cube.from_string(c) for c in cubes})


@settings(max_examples=200, deadline=None)
@given(covers())
def test_factoring_keeps_the_function_and_never_adds_literals(case: tuple[int, list[Cube]]
                                                             ) -> None:
    n, terms = case
    expr = factor(terms)
    assert expr.literals <= sum(c.literal_count for c in normal_terms(terms))
    for m in range(1 << n):
        values = [m >> i & 1 for i in range(n)]
        assert bool(expr.evaluate(values, 1)) == any(c.contains_point(m) for c in terms)


@settings(max_examples=150, deadline=None)
@given(covers(max_vars=4), st.sampled_from([4, 6]))
def test_any_function_of_at_most_k_inputs_is_one_k_lut(case: tuple[int, list[Cube]],
                                                       k: int) -> None:
    """Any function of at most k inputs is one k-LUT (the definition of a LUT; common
    practice, no source)."""
    n, terms = case
    names = [f"x{i}" for i in range(n)]
    graph = subject_graph(names, {"y": factor(terms)})
    luts = map_luts(graph, k)
    trivial = graph.nodes[graph.roots["y"]][0] in ("in", "const")
    assert len(luts) == (0 if trivial else 1)
    if luts:
        lut = luts[0]
        for m in range(1 << n):
            at = sum((m >> names.index(str(graph.nodes[leaf][1])) & 1) << i
                     for i, leaf in enumerate(lut.leaves))
            assert (lut.table >> at & 1) == any(c.contains_point(m) for c in terms)


# --- whole designs on targets ----------------------------------------------------------------

TARGETS = ["nand2", "cmos", "lut4", "pterms:8"]


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(max_states=6, max_inputs=4), st.sampled_from(["d", "t", "jk", "sr"]),
       st.sampled_from(TARGETS))
def test_every_mapped_design_verifies_and_a_mutant_does_not(table: StateTable, storage: str,
                                                           target: str) -> None:
    design = synthesize(table, storage, target=target)
    assert design.verification and design.mapping is not None
    assert design.cost.total == pytest.approx(design.mapping.area)
    net = design.netlist
    assert all(ff.storage.name in target_named(target).flip_flops for ff in net.flip_flops)
    # Invert the gate that drives an output the table specifies in the reset state: the
    # mutant must fail verification.
    drivers = {g.output: k for k, g in enumerate(net.gates)}
    points = ["".join(bits) for bits in itertools.product("01", repeat=len(table.inputs))]
    for o, (port, out_net) in enumerate(net.outputs):
        k = drivers.get(out_net)
        if k is None or net.gates[k].kind.startswith("const"):
            continue
        if all(table.lookup(table.reset, x)[1][o] == "-" for x in points):
            continue
        g = net.gates[k]
        flip = {"and": "nand", "nand": "and", "or": "nor", "nor": "or", "xor": "xnor",
                "xnor": "xor", "not": "buf", "buf": "not"}
        bad = (replace(g, table=~g.table & ((1 << (1 << len(g.inputs))) - 1))
               if g.table is not None else replace(g, kind=flip[g.kind]))
        mutant = replace(net, gates=net.gates[:k] + (bad,) + net.gates[k + 1:])
        assert not verify(mutant, table), port
        break


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(state_tables(max_states=8, max_inputs=4, kind="mealy"),
       st.sampled_from(["nand2", "cmos", "lut4"]))
def test_mapping_is_never_worse_than_the_naive_mapping(table: StateTable, target: str) -> None:
    design = synthesize(table, "d", target=target)
    assert design.mapping is not None
    cost = design.two_level_cost
    assert cost is not None
    gates = cost.gates
    # Two-input gates the naive mapping needs: fan-in n costs n - 1 of them.
    two_input = cost.gate_inputs - gates["not"] - gates["and"] - gates["or"]
    if target == "lut4":
        naive = float(two_input + gates["not"])
    else:
        lib = target_named(target).cells
        prices = {}
        for kind, terms in (("and", ["11"]), ("or", ["1-", "-1"]), ("not", ["0"])):
            names = ["a", "b"][:len(terms[0])]
            graph = subject_graph(names, {"y": factor([Cube.from_string(t) for t in terms])})
            prices[kind] = cover(graph, lib)[graph.roots["y"]].area
        and_inputs = sum(max(0, c.literal_count - 1) for c in _products(design))
        or_inputs = two_input - and_inputs
        naive = (gates["not"] * prices["not"] + and_inputs * prices["and"]
                 + or_inputs * prices["or"])
    assert design.mapping.logic_area <= naive + 1e-9


def _products(design: object) -> list[Cube]:
    seen: dict[Cube, None] = {}
    for terms in design.cover.terms:  # type: ignore[attr-defined]
        for t in normal_terms(terms):
            if t.literal_count >= 2:
                seen[t] = None
    return list(seen)


@pytest.mark.parametrize("target", ["nand2", "gates2", "cmos", "lut4", "lut6", "pterms:4"])
@pytest.mark.parametrize("storage", ["d", "jk", "t", "sr"])
def test_mapped_verilog_lints_and_simulates(target: str, storage: str, tmp_path: Path) -> None:
    verilator, iverilog, vvp = need("verilator"), need("iverilog"), need("vvp")
    from fsmsynth.formats import read_table
    table = read_table(EXAMPLES / "grain_dryer.toml")
    design = synthesize(table, storage, target=target)
    source = tmp_path / "grain_dryer.v"
    source.write_text(design.verilog)
    (tmp_path / "tb.v").write_text(write_testbench(table))
    lint = subprocess.run([verilator, "--lint-only", "-Wall", str(source)],
                          capture_output=True, text=True)
    assert lint.returncode == 0, lint.stderr
    subprocess.run([iverilog, "-g2005", "-o", str(tmp_path / "sim"), str(source),
                    str(tmp_path / "tb.v")], check=True)
    run = subprocess.run([vvp, "-N", str(tmp_path / "sim")], capture_output=True, text=True)
    assert run.stdout.strip().splitlines()[-1].startswith("PASS"), run.stdout[-500:]


def test_a_faulted_mapped_netlist_fails_the_icarus_bench(tmp_path: Path) -> None:
    iverilog, vvp = need("iverilog"), need("vvp")
    from fsmsynth.formats import read_table
    from fsmsynth.writers.verilog import write_verilog
    table = read_table(EXAMPLES / "parcel_locker.toml")
    design = synthesize(table, "jk", target="lut4")
    gates = list(design.netlist.gates)
    k = next(i for i, g in enumerate(gates) if g.table is not None)
    g = gates[k]
    gates[k] = replace(g, table=~g.table & ((1 << (1 << len(g.inputs))) - 1))  # type: ignore[operator]
    faulty = replace(design.netlist, gates=tuple(gates))
    assert not verify(faulty, table)
    (tmp_path / "d.v").write_text(write_verilog(faulty))
    (tmp_path / "tb.v").write_text(write_testbench(table))
    subprocess.run([iverilog, "-g2005", "-o", str(tmp_path / "sim"), str(tmp_path / "d.v"),
                    str(tmp_path / "tb.v")], check=True)
    run = subprocess.run([vvp, "-N", str(tmp_path / "sim")], capture_output=True, text=True)
    assert "PASS" not in run.stdout


def test_storage_on_a_d_only_target_is_built_from_d_and_counted() -> None:
    from fsmsynth.formats import read_table
    table = read_table(EXAMPLES / "parcel_locker.toml")
    jk = synthesize(table, "jk", target="nand2")
    entry = jk.cost.storage["jk"]
    assert entry["built_from"] == "d" and float(entry["conversion_area"]) > 0  # type: ignore[arg-type]
    assert {ff.storage.name for ff in jk.netlist.flip_flops} == {"d"}
    on_cmos = synthesize(table, "jk", target="cmos")  # cmos has JK cells
    assert on_cmos.cost.storage["jk"]["built_from"] == "jk"
    assert {ff.storage.name for ff in on_cmos.netlist.flip_flops} == {"jk"}


def test_factored_equations_print_and_convert() -> None:
    from fsmsynth.formats import read_table
    small = synthesize(read_table(EXAMPLES / "parcel_locker.toml"), "jk")
    names = small.cover.variables
    for name, expr in small.factored.items():
        # sympy says the factored form and the sum of products are one function.
        same = sympy.Equivalent(expr.to_sympy(names), small.equations[name].to_sympy())
        assert sympy.simplify_logic(same) is sympy.true
    design = synthesize(read_table(EXAMPLES / "glass_kiln.toml"), "d")
    n = len(design.cover.variables)
    points = 1 << n
    ones = (1 << points) - 1
    columns = [sum(1 << m for m in range(points) if m >> i & 1) for i in range(n)]
    for name, expr in design.factored.items():
        plain = 0
        for cube in design.cover.of(name):
            term = ones
            for v, positive in cube.literals():
                term &= columns[v] if positive else ones & ~columns[v]
            plain |= term
        assert expr.evaluate(columns, ones) == plain  # every one of the 2**11 points
        assert expr.literals <= sum(c.literal_count for c in design.cover.of(name))
    separate = sum(c.literal_count for name in design.cover.names
                   for c in design.cover.of(name))
    assert sum(e.literals for e in design.factored.values()) < separate


# --- cell library files -----------------------------------------------------------------------

LIB = """name = "tiny"

[flip_flops]
d = 5.0

[[cell]]
name = "INV"
pins = ["a"]
function = "~a"
area = 0.5

[[cell]]
name = "NAND2"
pins = ["a", "b"]
function = "~(a & b)"
area = 1
delay = 0.8
"""


def test_a_library_file_is_a_target() -> None:
    lib = parse_cells(LIB, "tiny.toml")
    assert [c.name for c in lib.cells] == ["INV", "NAND2"] and not lib.illustrative
    from fsmsynth.formats import read_table
    design = synthesize(read_table(EXAMPLES / "parcel_locker.toml"), "d", target=lib)
    assert design.verification and set(design.cost.cells) <= {"INV", "NAND2"}


@pytest.mark.parametrize(("edit", "message"), [
    (('"~(a & b)"', '"~(a & q)"'),
     "tiny.toml:12: cell 'NAND2': function '~(a & q)': unknown pin 'q' at column 7 (pins: a, "
     "b)"),
    (('"~(a & b)"', '"~(a &"'),
     "tiny.toml:12: cell 'NAND2': function '~(a &': unexpected end of guard at column 6"),
    (("area = 1\n", "area = -1\n"),
     "tiny.toml:12: cell 'NAND2': area must be a number >= 0, not -1"),
    (('pins = ["a", "b"]', 'pins = ["a", "module"]'),
     "tiny.toml:12: cell 'NAND2': pin name 'module' is a Verilog keyword: choose another "
     "name"),
    (("d = 5.0", "q = 5.0"),
     "tiny.toml:4: flip_flops: unknown storage kind 'q' (kinds: d, de, jk, sr, t)"),
    (('function = "~a"', 'function = "a"'),
     "tiny.toml: cell library 'tiny' needs an inverter and a 2-input NAND (any names): every "
     "circuit is built from them"),
])
def test_bad_library_files_are_located(edit: tuple[str, str], message: str) -> None:
    with pytest.raises(SpecFileError) as info:
        parse_cells(LIB.replace(*edit), "tiny.toml")
    assert str(info.value) == message


def test_unknown_target_name() -> None:
    with pytest.raises(OptionError, match=r"^unknown target 'fpga'"):
        target_named("fpga")


def test_cli_compare_and_build_on_targets(tmp_path: Path,
                                          capsys: pytest.CaptureFixture[str]) -> None:
    spec = str(EXAMPLES / "parcel_locker.toml")
    assert main(["compare", spec, "--target", "nand2", "--storages", "d,jk",
                 "--encodings", "binary"]) == 0
    out = capsys.readouterr().out
    assert "designs on nand2, cheapest first" in out and "conversion_area" in out
    assert main(["compare", spec, "--target", "lut4", "--encodings", "binary,one-hot",
                 "--storages", "d", "--json"]) == 0
    assert '"cells": "LUT4:' in capsys.readouterr().out
    lib = tmp_path / "tiny.toml"
    lib.write_text(LIB)
    assert main(["build", spec, "--storage", "jk", "--target", str(lib), "-o",
                 str(tmp_path / "out"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "On target tiny" in out and "JK flip-flops: " in out and "built from D" in out
    assert '"cell": "NAND2"' in (tmp_path / "out" / "parcel_locker.json").read_text()


def test_searches_score_candidates_by_the_targets_cost() -> None:
    from fsmsynth.formats import read_table
    table = read_table(EXAMPLES / "parcel_locker.toml")
    searched = synthesize(table, "jk", "exhaustive", target="nand2")
    a = searched.assignment
    assert a is not None and a.scored_on == "nand2" and a.proven and a.seconds > 0
    assert a.cost == pytest.approx(searched.cost.total)
    # Exhaustive over every assignment: no fixed encoding does better on the target.
    for encoding in ("binary", "gray", "one-hot"):
        assert searched.cost.total <= synthesize(table, "jk", encoding,
                                                 target="nand2").cost.total + 1e-9


def test_timing_of_a_mapped_design_uses_its_cells() -> None:
    from fsmsynth import Delays, GateDelay, timing
    from fsmsynth.formats import read_table
    table = read_table(EXAMPLES / "parcel_locker.toml")
    design = synthesize(table, "d", target="nand2")
    delays = Delays(gates={"nand": GateDelay(10.0, 0.0, 10.0, 0.0),
                           "not": GateDelay(99.0, 0.0, 99.0, 0.0)})
    report = timing(design, delays)
    cells = [s for s in report.critical_path if s.kind in ("INV", "NAND2")]
    assert cells, report.lines()
    # INV 0.6 and NAND2 1.0 of the NAND's 10 ps, not the model's 99 ps inverter.
    assert {round(s.delay, 6) for s in cells} <= {6.0, 10.0}


@settings(max_examples=150, deadline=None)
@given(st.integers(2, 6).flatmap(lambda n: st.tuples(st.just(n), st.lists(
    st.lists(st.text("01-", min_size=n, max_size=n), min_size=1, max_size=8),
    min_size=1, max_size=4))))
def test_cube_extraction_and_resubstitution_keep_every_function(
        case: tuple[int, list[list[str]]]) -> None:
    """The restructured network computes the functions it was given, on every point."""
    from fsmsynth.map.network import restructured
    n, raw = case
    covers = [sorted({Cube.from_string(c) for c in f}) for f in raw]
    names = [f"f{i}" for i in range(len(covers))]
    network = restructured(names, covers, n)
    for m in range(1 << n):
        values = [m >> i & 1 for i in range(n)]
        for _name, terms in network.nodes:
            point = sum(v << i for i, v in enumerate(values))
            values.append(int(any(c.contains_point(point) for c in terms)))
        for (name, node), terms in zip(network.signals, covers):
            assert values[n + node] == int(any(c.contains_point(m) for c in terms)), name


@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                  HealthCheck.function_scoped_fixture])
@given(table=state_tables(max_states=6, max_inputs=3),
       storage=st.sampled_from(["d", "t", "jk", "sr"]), target=st.sampled_from(TARGETS))
def test_random_mapped_designs_simulate_in_icarus(table: StateTable, storage: str,
                                                  target: str, tmp_path: Path) -> None:
    iverilog, vvp = need("iverilog"), need("vvp")
    design = synthesize(table, storage, target=target)
    folder = tmp_path / f"{storage}_{target.replace(':', '_')}_{abs(hash(table)) % 10**8}"
    folder.mkdir()
    (folder / "d.v").write_text(design.verilog)
    (folder / "tb.v").write_text(write_testbench(table))
    subprocess.run([iverilog, "-g2005", "-o", str(folder / "sim"), str(folder / "d.v"),
                    str(folder / "tb.v")], check=True)
    run = subprocess.run([vvp, "-N", str(folder / "sim")], capture_output=True, text=True)
    assert run.stdout.strip().splitlines()[-1].startswith("PASS"), run.stdout[-400:]


MUX_LIB = LIB.replace('name = "tiny"', 'name = "{name}"') + """
[[cell]]
name = "MUX2"
pins = {pins}
function = "s & b | ~s & a"
area = 0.3
"""


def test_two_designs_on_libraries_with_a_same_named_cell_compile_together(
        tmp_path: Path) -> None:
    """Two libraries with a cell of one name but another pin order (so another truth table):
    each design's bench passes with both designs compiled in either order.  Before cell
    modules were named by their content, the first file's cell was taken by both."""
    iverilog, vvp = need("iverilog"), need("vvp")
    from fsmsynth.formats import read_table
    from fsmsynth.writers.verilog import write_verilog
    lib_a = parse_cells(MUX_LIB.format(name="lib_a", pins='["a", "b", "s"]'), "a.toml")
    lib_b = parse_cells(MUX_LIB.format(name="lib_b", pins='["s", "a", "b"]'), "b.toml")
    designs = {}
    for spec, lib in (("greenhouse_vent.toml", lib_a), ("glass_kiln.toml", lib_b)):
        table = read_table(EXAMPLES / spec)
        design = synthesize(table, "d", target=lib)
        assert any(g.cell == "MUX2" for g in design.netlist.gates), spec
        (tmp_path / f"{table.name}.v").write_text(write_verilog(design.netlist))
        (tmp_path / f"tb_{table.name}.v").write_text(write_testbench(table))
        designs[table.name] = table
    for name in designs:
        for order in (list(designs), list(reversed(designs))):
            sources = [str(tmp_path / f"tb_{name}.v")] + [str(tmp_path / f"{n}.v") for n in order]
            subprocess.run([iverilog, "-g2005", "-o", str(tmp_path / "sim"), *sources],
                           check=True)
            run = subprocess.run([vvp, "-N", str(tmp_path / "sim")], capture_output=True,
                                 text=True)
            assert run.stdout.strip().splitlines()[-1].startswith("PASS"), (
                name, order, run.stdout[-400:])


def test_lut_modules_take_their_truth_table_under_a_name_of_our_own() -> None:
    """Look-up tables are written as fs_lut<k> modules whose truth table is the parameter
    TRUTH (not a vendor primitive's parameter name); the function is checked by the Icarus
    tests above."""
    from fsmsynth.formats import read_table
    verilog = synthesize(read_table(EXAMPLES / "parcel_locker.toml"), "d",
                         target="lut4").verilog
    assert "parameter [15:0] TRUTH = 16'h0" in verilog and " #(.TRUTH(" in verilog
    assert "INIT" not in verilog
