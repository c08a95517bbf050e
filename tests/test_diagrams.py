"""State diagrams in the designer's words, checked against the table and through Graphviz.

References: the labels are checked against the table by brute force over every input point
(each edge's guard compiled back with the guard language, every-state edges first); the
pictures through Graphviz's own ``dot`` (its JSON output names every node and edge it
laid out).  Drawing an emergency transition once, from an "every state" box, is common
practice, no source.
"""

from __future__ import annotations

import itertools
import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from hypothesis import given, settings
from strategies import state_tables

from fsmsynth import OptionError, StateTable, read_table
from fsmsynth.checks.spec_warnings import spec_warnings
from fsmsynth.cli import main
from fsmsynth.language.guards import compile_guard
from fsmsynth.logic import bdd
from fsmsynth.writers.dot import write_state_diagram

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
EDGE = re.compile(r'^  ("[^"]+"|every) -> ("[^"]+"|unknown) \[label="([^"]*)"')


def edges(text: str) -> list[tuple[str, str, str, str]]:
    """``(from, to, guard, outputs)`` of every labelled line of every edge."""
    found = []
    for line in text.splitlines():
        m = EDGE.match(line)
        if m:
            for label in m.group(3).split("\\n"):
                guard, _sep, said = label.partition(" / ")
                found.append((m.group(1).strip('"'), m.group(2).strip('"'), guard, said))
    return found


def _holds(guard: str, table: StateTable, point: str) -> bool:
    var = bdd.variables(len(table.inputs))
    widths = {n: 1 for n in table.inputs}
    bits = {n: [v] for n, v in zip(table.inputs, var)}
    f = compile_guard(guard, widths, bits)
    return f.restrict({v: int(c) for v, c in zip(var, point)}).is_one()


@settings(max_examples=40, deadline=None)
@given(state_tables(max_states=6, max_inputs=3, kind="mealy"))
def test_the_labels_say_what_the_table_says(table: StateTable) -> None:
    """For every state and input point where the table names a next state, exactly one
    edge's guard holds (every-state edges first) and it goes there, setting by name the
    outputs the table sets to 1."""
    drawn = edges(write_state_diagram(table))
    for state in table.states:
        for point in ("".join(p) for p in itertools.product("01", repeat=len(table.inputs))):
            nxt, outs = table.lookup(state, point)
            if nxt is None:
                continue
            every = [e for e in drawn if e[0] == "every" and _holds(e[2], table, point)]
            own = [e for e in drawn if e[0] == state and _holds(e[2], table, point)]
            chosen = every or own
            assert len(chosen) == 1, (state, point, chosen)
            assert chosen[0][1] == nxt
            said = {name for name, ch in zip(table.outputs, outs) if ch == "1"}
            assert {p.split("=")[0] for p in chosen[0][3].split()} == said


def test_every_state_transitions_are_drawn_once() -> None:
    table = read_table(EXAMPLES / "dock_leveler.toml")
    text = write_state_diagram(table)
    assert [e for e in edges(text) if e[0] == "every"] == [
        ("every", "hold", "stop_btn | curtain", "beacon=1")]
    assert not any("stop_btn" in e[2] for e in edges(text) if e[0] != "every")
    assert write_state_diagram(read_table(EXAMPLES / "parcel_locker.toml")).count("every") == 0


def test_moore_outputs_sit_in_the_nodes_and_marks_say_reset_unreachable_and_warned() -> None:
    table = StateTable.from_transitions(
        name="vent", kind="moore", reset="shut", inputs=["hot"], outputs={"motor": 1, "speed": 2},
        states=["shut", "open", "spare"], otherwise="stay",
        transitions=[("shut", "hot", "open", None), ("open", "~hot", "shut", None)],
        state_outputs={"shut": {"motor": 0, "speed": 0}, "open": {"motor": 1, "speed": 2},
                       "spare": {"motor": 0, "speed": 0}})
    text = write_state_diagram(table, warnings=spec_warnings(table))
    assert '"open" [label="open\\nmotor=1 speed=2"];' in text
    assert '"shut" [label="shut", peripheries=2];' in text
    assert ('"spare" [label="spare", style=dashed, color=grey50, fontcolor=grey50, '
            'color=darkorange, penwidth=2, tooltip="[unreachable-state] state \'spare\' is '
            'unreachable from reset \'shut\'"];') in text


def test_focus_draws_a_state_and_its_neighbours() -> None:
    table = read_table(EXAMPLES / "dock_leveler.toml")
    text = write_state_diagram(table, focus=["lowering"])
    nodes = set(re.findall(r'^  "(\w+)" \[label', text, re.M))
    assert nodes == {"lowering", "extended", "stowed", "hold"}
    assert all("lowering" in (a, b) for a, b, _g, _o in edges(text) if a != "every")
    with pytest.raises(OptionError, match="focus: no state 'lowerin'; did you mean 'lowering'"):
        write_state_diagram(table, focus=["lowerin"])


@pytest.mark.parametrize("spec", ["dock_leveler.toml", "glass_kiln.toml", "grain_dryer.toml"])
def test_graphviz_lays_out_every_node_and_edge(spec: str, tmp_path: Path) -> None:
    dot = shutil.which("dot")
    if dot is None:
        pytest.skip("Graphviz is not installed")
    table = read_table(EXAMPLES / spec)
    text = write_state_diagram(table)
    laid = json.loads(subprocess.run([dot, "-Tjson"], input=text, capture_output=True,
                                     text=True, check=True).stdout)
    names = {o["name"] for o in laid["objects"]}
    assert set(table.states) <= names
    assert len(laid["edges"]) == text.count(" -> ")
    assert main(["diagram", str(EXAMPLES / spec), "-o", str(tmp_path / "d.svg")]) == 0
    svg = (tmp_path / "d.svg").read_text()
    assert "<svg" in svg and all(f">{s}<" in svg for s in table.states)


@pytest.mark.parametrize("target", ["two-level", "lut4", "libraries/cells.toml"])
def test_netlist_pictures_of_mapped_designs_name_their_cells(target: str, tmp_path: Path,
                                                             capsys: pytest.CaptureFixture[str]
                                                             ) -> None:
    dot = shutil.which("dot")
    if dot is None:
        pytest.skip("Graphviz is not installed")
    spec = EXAMPLES / "dock_leveler.toml"
    given = str(EXAMPLES / target) if target.endswith(".toml") else target
    assert main(["diagram", str(spec), "--netlist", "--target", given]) == 0
    text = capsys.readouterr().out
    from fsmsynth import synthesize
    from fsmsynth.cli.arguments import target_arg
    design = synthesize(read_table(spec), "d", target=target_arg(given))
    laid = json.loads(subprocess.run([dot, "-Tjson"], input=text, capture_output=True,
                                     text=True, check=True).stdout)
    names = {o["name"] for o in laid["objects"]}
    assert {g.name for g in design.netlist.gates} <= names
    assert {ff.name for ff in design.netlist.flip_flops} <= names
    for g in design.netlist.gates:
        if not g.kind.startswith("const"):
            what = g.cell or g.kind.upper()
            assert f'label="{what}\\n{g.output.removeprefix("fs_")}"' in text
