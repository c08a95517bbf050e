"""A self-checking Verilog testbench built from the state table alone.

For every row of every state reachable from reset, the bench resets the design, drives the
shortest sequence of specified transitions that leads to the state, then the row's inputs
(its don't-care inputs filled once with 0 and once with 1), and checks every output the
table specifies on the way; after the transition it checks the next state's outputs
(Moore) or the outputs of the next state's first row (Mealy).  It ends with
``PASS: n checks`` and ``$finish``, or ``$fatal(1, ...)`` so the simulator exits non-zero.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Collection
from dataclasses import dataclass

from fsmsynth.base.names import ports_of
from fsmsynth.model.clocking import DEFAULT_CLOCKING, Clocking
from fsmsynth.model.table import StateTable


def _fills(cube: str) -> list[str]:
    words = [cube.replace("-", "0"), cube.replace("-", "1")]
    return list(dict.fromkeys(words))


def _paths(table: StateTable) -> dict[str, list[str]]:
    """Shortest input words from reset to every reachable state (specified transitions only)."""
    paths: dict[str, list[str]] = {table.reset: []}
    queue = deque([table.reset])
    while queue:
        state = queue.popleft()
        for _s, cube, _n, _o in table.rows_of(state):
            word = cube.replace("-", "0")
            nxt, _out = table.lookup(state, word)
            if nxt is not None and nxt not in paths:
                paths[nxt] = paths[state] + [word]
                queue.append(nxt)
    return paths


Step = tuple[object, ...]
"""``("comment", text)``, ``("reset",)``, ``("drive", word)``, ``("check", test, cycle,
output cube)`` or ``("clock",)``."""


def bench_steps(table: StateTable, *, hold: bool = False,
                tested: Collection[str] | None = None) -> list[Step]:
    """What a bench does, in order, independent of the HDL it is written in.  With ``hold``
    (a design with a clock enable) each test's last transition is first clocked with the
    enable at 0 (``("hold",)``), and the outputs checked again: the state must not move.
    ``tested`` limits the tests to the rows of those states (a timed design's unrolled
    table: one state per control state and readings); the way to each is then walked
    without checks, runs of one input word as one ``("walk", word, cycles)`` step, since
    the tests of the states on the way check them.  By default every reachable state's
    rows are tested, with checks on every cycle."""
    steps: list[Step] = []
    n_in = len(table.inputs)
    paths = _paths(table)
    test = 0
    for state in table.states:
        if state not in paths or (tested is not None and state not in tested):
            continue
        for _s, cube, _n, _o in table.rows_of(state):
            for word in _fills(cube):
                test += 1
                steps.append(("comment", f"test {test}: state {state}, inputs {word}"))
                steps.append(("reset",))
                current: str | None = table.reset
                if tested is not None:  # walk to the state; its own tests checked the way
                    for step in paths[state]:
                        current = table.lookup(current, step)[0]  # type: ignore[arg-type]
                        if steps[-1][:2] == ("walk", step):
                            steps[-1] = ("walk", step, int(steps[-1][2]) + 1)  # type: ignore[call-overload]
                        else:
                            steps.append(("walk", step, 1))
                for cycle, step in enumerate(paths[state] + [word], start=1):
                    if tested is not None and cycle <= len(paths[state]):
                        continue
                    assert current is not None
                    nxt, outs = table.lookup(current, step)
                    steps += [("drive", step), ("check", test, cycle, outs)]
                    if hold and cycle == len(paths[state]) + 1:
                        steps += [("hold",), ("check", test, cycle, outs)]
                    steps.append(("clock",))
                    current = nxt
                if current is None:
                    continue
                follow = table.rows_of(current)
                probe = follow[0][1].replace("-", "0") if follow else "0" * n_in
                steps += [("drive", probe),
                          ("check", test, len(paths[state]) + 2,
                           table.lookup(current, probe)[1])]
    return steps


@dataclass(frozen=True, slots=True)
class BenchSyntax:
    """How one HDL writes each kind of bench step; each returns lines."""

    comment: Callable[[str], list[str]]
    reset: Callable[[], list[str]]
    drive: Callable[[str], list[str]]
    check: Callable[[int, int, str, str], list[str]]
    """``(test, cycle, output bit name, expected value)``: one specified output."""
    clock: Callable[[], list[str]]
    hold: Callable[[], list[str]] = lambda: []
    """A clock edge with the enable at 0."""
    repeat: Callable[[int, list[str]], list[str]] = lambda n, body: body * n
    """``body`` (statements) ``n`` times: a loop."""


def bench_body(table: StateTable, syntax: BenchSyntax, *, hold: bool = False,
               tested: Collection[str] | None = None) -> list[str]:
    """The lines of every step of :func:`bench_steps`, written in ``syntax``."""
    lines: list[str] = []
    for step in bench_steps(table, hold=hold, tested=tested):
        what = step[0]
        if what == "comment":
            lines += syntax.comment(str(step[1]))
        elif what == "reset":
            lines += syntax.reset()
        elif what == "drive":
            lines += syntax.drive(str(step[1]))
        elif what == "hold":
            lines += syntax.hold()
        elif what == "walk":
            body = syntax.drive(str(step[1])) + syntax.clock()
            lines += body if step[2] == 1 else syntax.repeat(int(step[2]), body)  # type: ignore[call-overload]
        elif what == "check":
            _k, test, cycle, cube = step
            for name, want in zip(table.outputs, str(cube)):
                if want != "-":
                    lines += syntax.check(int(test), int(cycle), name, want)  # type: ignore[call-overload]
        else:
            lines += syntax.clock()
    return lines


def write_testbench(table: StateTable, *, period: int = 10,
                    clocking: Clocking = DEFAULT_CLOCKING, vcd: str | None = None,
                    tested: Collection[str] | None = None) -> str:
    """Verilog testbench text for a module with the table's name and ports.

    Parameters
    ----------
    table:
        The specification the design must follow.
    period:
        Clock period in time units (``1ns``); inputs change half a period before the edge.
    clocking:
        The design's clock, reset and enable ports and conventions: the bench resets it
        the way they say (a synchronous reset with a clock edge) and, with an enable,
        checks that a clock edge with the enable at 0 holds the state.
    vcd:
        A file name: the bench dumps every signal of the bench and the design into it as a
        value change dump (IEEE 1364-2005, section 18), the design's ``state_name`` (its
        present state's name, as text) among them.
    tested:
        The states whose rows are tested (:func:`bench_steps`); by default all.
    """
    half = max(2, period // 2)
    n_in = len(table.inputs)
    in_ports, out_ports = ports_of(table.inputs), ports_of(table.outputs)
    c = clocking
    clk, rst, en = c.clock, c.reset, c.enable
    ports = (*c.ports, *(p for p, _w in in_ports + out_ports))
    edge = f"{clk} = 1'b1; #{half}; {clk} = 1'b0; #1;"
    reset = (f"{rst} = 1'b{c.asserted}; #1; {rst} = 1'b{c.released}; #1;"
             if c.reset_style == "async" else
             f"{rst} = 1'b{c.asserted}; #1; {edge} {rst} = 1'b{c.released}; #1;")
    lines = [
        f"// Self-checking testbench for {table.name}: generated by fsmsynth from the state table.",
        f"// Ports: {c.describe()}.",
        "`timescale 1ns/1ps",
        f"module {table.name}_tb;",
        f"    reg {clk} = 1'b0;",
        f"    reg {rst} = 1'b{c.released};",
        *([f"    reg {en} = 1'b1;"] if en else []),
        *(f"    reg {i} = 1'b0;" if w is None else f"    reg [{w - 1}:0] {i} = {w}'b0;"
          for i, w in in_ports),
        *(f"    wire {o};" if w is None else f"    wire [{w - 1}:0] {o};" for o, w in out_ports),
        "    integer errors = 0;",
        "    integer checks = 0;",
        "",
        f"    {table.name} dut ({', '.join(f'.{p}({p})' for p in ports)});",
        "",
        "    initial begin",
        *([f"        $dumpfile(\"{vcd}\");", f"        $dumpvars(0, {table.name}_tb);"]
          if vcd else []),
    ]

    def check(test: int, cycle: int, name: str, want: str) -> list[str]:
        return ["        checks = checks + 1;",
                f"        if ({name} !== 1'b{want}) begin errors = errors + 1; "
                f"$display(\"MISMATCH test {test} cycle {cycle}: {name} = %b, expected "
                f"{want}\", {name}); end"]

    lines += bench_body(table, BenchSyntax(
        comment=lambda text: [f"        // {text}"],
        reset=lambda: [f"        {reset}"],
        drive=lambda word: ([f"        {{{', '.join(table.inputs)}}} = {n_in}'b{word};"]
                            if n_in else []) + [f"        #{half - 1};"],
        check=check,
        clock=lambda: [f"        {edge}"],
        hold=lambda: [f"        {en} = 1'b0; {edge} {en} = 1'b1;"],
        repeat=lambda n, body: [f"        repeat ({n}) begin", *(f"    {x}" for x in body),
                                "        end"]), hold=en is not None,
        tested=tested)
    lines += [
        "        if (errors != 0) $fatal(1, \"FAIL: %0d of %0d checks failed\", errors, checks);",
        "        $display(\"PASS: %0d checks\", checks);",
        "        $finish;",
        "    end",
        "endmodule",
        "",
    ]
    return "\n".join(lines)
