"""Timers and counters (run: python benchmarks/timers.py).

A dosing sequencer of 12 states with three timers of 1,000 to 100,000 cycles and one
counter (our own scenario: a water-treatment dosing skid).  Printed, per storage kind:
the time to synthesize and prove it, its cost, and the cost of the counters alone.  The
reference, in this same run, is the same controller with the three waits taken as
external ``*_done`` inputs (the way it had to be written before timers existed): the
ratio says what building and proving the counters adds.  Goal (issue 29): synthesize and
verify under 5 s.  Then the same controller with waits short enough to unroll (10 to 40
cycles): counters against the unrolled machine, per storage kind.
"""

from __future__ import annotations

import time

from fsmsynth import synthesize
from fsmsynth.base.errors import TableError
from fsmsynth.model.table import StateTable
from fsmsynth.model.timers import TimedMachine
from fsmsynth.stages.unroll import unroll

KINDS = ("d", "t", "jk", "sr", "best")


def transitions(done: dict[str, str]) -> list[tuple[object, ...]]:
    """The sequencer's transitions; ``done`` says how each wait is read (``fill.done`` for a
    timer, ``fill_done`` for an external input)."""
    def start(name: str) -> dict[str, list[str]]:
        return {"start": [name]} if "." in done[name] else {}

    off: dict[str, int] = {}
    return [
        ("idle", "run & ~fault", "prime", {"pump": 1}, {**start("fill"), "clear": ["tries"]}),
        ("prime", "fault", "alarm", {"horn": 1}),
        ("prime", done["fill"], "dose", {"pump": 1, "valve": 1}, start("dose")),
        ("prime", "else", "prime", {"pump": 1}),
        ("dose", "fault", "alarm", {"horn": 1}),
        ("dose", done["dose"], "mix", {"mixer": 1}, start("mix")),
        ("dose", "else", "dose", {"pump": 1, "valve": 1}),
        ("mix", done["mix"], "settle", off, start("fill")),
        ("mix", "else", "mix", {"mixer": 1}),
        ("settle", done["fill"], "sample", {"sampler": 1}),
        ("settle", "else", "settle", off),
        ("sample", "level_ok", "check", off),
        ("sample", "else", "sample", {"sampler": 1}),
        ("check", "ph_ok", "done", {"lamp": 1}),
        ("check", "~ph_ok & tries.done", "alarm", {"horn": 1}),
        ("check", "else", "redose", {"pump": 1}, {"count": ["tries"], **start("dose")}),
        ("redose", done["dose"], "mix", {"mixer": 1}, start("mix")),
        ("redose", "else", "redose", {"pump": 1, "valve": 1}),
        ("done", "~run", "flush", {"drain": 1}, start("mix")),
        ("done", "else", "done", {"lamp": 1}),
        ("flush", done["mix"], "drain", {"drain": 1}),
        ("flush", "else", "flush", {"drain": 1}),
        ("drain", "~run", "idle", off),
        ("drain", "else", "drain", {"drain": 1}),
        ("alarm", "ack", "hold", off),
        ("alarm", "else", "alarm", {"horn": 1}),
        ("hold", "~fault & ack", "idle", off),
        ("hold", "else", "hold", off),
    ]


INPUTS = ["run", "fault", "level_ok", "ph_ok", "ack"]
OUTPUTS = ["pump", "valve", "mixer", "sampler", "drain", "horn", "lamp"]


def timed(fill: int, dose: int, mix: int) -> TimedMachine:
    return TimedMachine.from_transitions(
        name="dosing", reset="idle", inputs=INPUTS, outputs=OUTPUTS,
        transitions=transitions({n: f"{n}.done" for n in ("fill", "dose", "mix")}),
        timers={"fill": fill, "dose": dose, "mix": mix}, counters={"tries": 3},
        otherwise="stay", default_outputs=dict.fromkeys(OUTPUTS, 0))


def external() -> StateTable:
    """The reference: the waits as inputs (and the counter as one more input)."""
    rows = transitions({n: f"{n}_done" for n in ("fill", "dose", "mix")})
    rows = [(f, g.replace("tries.done", "tries_done") if isinstance(g, str) else g, t, o)
            for f, g, t, o, *_a in rows]
    return StateTable.from_transitions(
        name="dosing", reset="idle", inputs=[*INPUTS, "fill_done", "dose_done", "mix_done",
                                             "tries_done"],
        outputs=OUTPUTS, transitions=rows, otherwise="stay",
        default_outputs=dict.fromkeys(OUTPUTS, 0))


def timed_build(machine: object, kind: str, **options: object) -> tuple[float, object]:
    started = time.perf_counter()
    design = synthesize(machine, kind, **options)  # type: ignore[arg-type]
    assert design.verification, design.verification
    return time.perf_counter() - started, design


def main() -> None:
    long = timed(fill=100_000, dose=1_000, mix=20_000)
    print(f"dosing sequencer: {len(long.states)} states, timers fill 100,000, dose 1,000, "
          "mix 20,000 cycles, counter tries 3")
    print(f"{'kind':6} {'seconds':>8} {'reference':>9} {'ratio':>6} {'cost':>6} "
          f"{'counters':>8}  blocks")
    for kind in KINDS:
        reference, _plain = timed_build(external(), kind)
        seconds, design = timed_build(long, kind)
        blocks = design.timed.blocks  # type: ignore[attr-defined]
        counters = sum(b.cost.total for b in blocks)
        kinds = " ".join(f"{b.block.name}:{b.storage.name}" for b in blocks)
        print(f"{kind:6} {seconds:8.2f} {reference:9.2f} {seconds / reference:6.1f} "
              f"{design.cost.total:6g} {counters:8g}  {kinds}")  # type: ignore[attr-defined]
    short = timed(fill=40, dose=10, mix=20)
    states = len(unroll(short).states)
    print(f"\nshort waits (fill 40, dose 10, mix 20): unrolled into {states} states")
    print(f"{'kind':6} {'counters':>8} {'unrolled':>8} {'seconds':>8}")
    for kind in ("d", "t", "jk", "sr"):
        seconds, design = timed_build(short, kind, timers="cheaper")
        ways = design.timed.alternatives  # type: ignore[attr-defined]
        print(f"{kind:6} {ways['counters']:8g} {ways.get('unrolled', float('nan')):8g} "
              f"{seconds:8.2f}")
    try:
        unroll(long)
    except TableError as exc:  # the message is the figure
        print(f"\nthe long-wait machine unrolled: {exc}")


if __name__ == "__main__":
    main()
