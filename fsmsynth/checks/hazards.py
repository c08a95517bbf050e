"""Glitches of the output logic: static hazards, function hazards, and hazard-free covers.

Two ways an output decoded by a sum of products can glitch:

* **static-1 hazard under a single-input change**: two care points, adjacent in one input,
  where the output is 1 and no single product covers both; while that input changes, the
  product holding the output drops before the other rises (Huffman 1957; Unger 1969).  A sum
  of products has no static-0 or dynamic hazard under a single-input change, so these are
  all of its single-input-change hazards.  Found with BDDs over state bits and inputs: for
  input ``v``, the pairs both 1 are ``F|v=0 & F|v=1``, those covered are the products without
  a ``v`` literal.
* **function hazard on a state change**: a transition whose codes differ in two or more
  bits, with the output equal before and after, passes through codes (each order the bits
  may change in) where the logic may give the other value.

:func:`hazard_free` adds, to a sum of products, implicants covering every adjacent pair of
on-points (the consensus terms of Eichelberger 1965), each grown as large as the off-set
allows; that removes every static hazard under single-input changes.  It does nothing for
changes of several inputs at once, nor for function hazards: registered outputs or state
codes one bit apart do.

References
----------
Huffman, D. A., "The design and use of hazard-free switching networks", *J. ACM* 4(1), 1957.
Eichelberger, E. B., "Hazard detection in combinational and sequential switching circuits",
*IBM J. Research and Development* 9(2), 1965.
Unger, S. H., *Asynchronous Sequential Switching Circuits*, Wiley, 1969.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.language.guards import guard_text
from fsmsynth.logic import bdd
from fsmsynth.logic.cover import Cover
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.functions import LogicFunctions
from fsmsynth.model.table import StateTable
from fsmsynth.stages.encode import Encoding

MAX_CHANGING_BITS = 8
"""State changes of more bits than this are not searched for function hazards (2**bits
intermediate codes each); the report says so."""


@dataclass(frozen=True, slots=True)
class Glitch:
    """One way an output can glitch.

    Attributes
    ----------
    output:
        The output.
    kind:
        ``"static"`` (a single-input change, the output 1 throughout) or ``"function"``
        (several state bits changing on a clock edge, the output the same before and after).
    state:
        The present state.
    inputs:
        The input points where it can happen, as a guard.
    changing:
        The input that changes, or the state bits that do (``"Q0 Q1"``).
    next_state:
        The next state of the transition (for a static hazard: where the machine goes
        from the first of the two points).
    """

    output: str
    kind: str
    state: str
    inputs: str
    changing: str
    next_state: str | None

    def describe(self) -> str:
        if self.kind == "static":
            return (f"{self.output}: static hazard in state {self.state!r} when "
                    f"{self.changing} changes with {self.inputs} (no product holds it)")
        return (f"{self.output}: function hazard on {self.state} -> {self.next_state} with "
                f"{self.inputs}: state bits {self.changing} change together and the logic "
                "between the two codes gives the other value")


@dataclass(frozen=True, slots=True)
class GlitchReport:
    """Which outputs can glitch, how, and which cannot."""

    outputs: tuple[str, ...]
    glitches: tuple[Glitch, ...]
    by_construction: tuple[str, ...]
    """Outputs that are a flip-flop's output or a constant: glitch-free by construction."""
    unchecked: tuple[str, ...] = ()
    """Transitions not searched for function hazards (too many bits change)."""

    def of(self, output: str) -> tuple[Glitch, ...]:
        return tuple(g for g in self.glitches if g.output == output)

    @property
    def glitch_free(self) -> tuple[str, ...]:
        """Outputs with no glitch found."""
        return tuple(o for o in self.outputs if not self.of(o))

    def lines(self, *, cases: int = 6) -> list[str]:
        """One verdict per output, each followed by up to ``cases`` of its glitches."""
        out = []
        for o in self.outputs:
            found = self.of(o)
            if o in self.by_construction:
                out.append(f"{o}: glitch-free by construction (a flip-flop output or a "
                           "constant)")
            elif not found:
                out.append(f"{o}: no static hazard under single-input changes, no function "
                           "hazard on state changes")
            else:
                kinds = sorted({g.kind for g in found})
                out.append(f"{o}: can glitch ({', '.join(kinds)}; {len(found)} "
                           f"case{'s' if len(found) > 1 else ''})")
                out += [f"  {g.describe()}" for g in found[:cases]]
                if len(found) > cases and cases:
                    out.append(f"  ... and {len(found) - cases} more (see --json)")
        out += [f"not searched for function hazards: {u}" for u in self.unchecked]
        return out


def _sop_bdd(terms: Sequence[Cube], var: Sequence[Any]) -> Any:
    result = bdd.ZERO
    for t in terms:
        result |= bdd.cube_bdd(t, var)
    return result


def _adjacent_on(on: Sequence[Cube], variables: Sequence[int], var: Sequence[Any]
                 ) -> dict[int, Any]:
    """Per variable, the points where flipping it keeps the function in ``on``."""
    f = _sop_bdd(on, var)
    return {v: f.restrict({var[v]: 0}) & f.restrict({var[v]: 1}) for v in variables}


def _uncovered(terms: Sequence[Cube], adjacent: dict[int, Any], var: Sequence[Any]
               ) -> dict[int, Any]:
    """The adjacent on-pairs no single product of ``terms`` holds, per variable."""
    found = {}
    for v, both in adjacent.items():
        hazard = both & ~_sop_bdd([t for t in terms if not t.care >> v & 1], var)
        if not hazard.is_zero():
            found[v] = hazard
    return found


def static_hazards(terms: Sequence[Cube], on: Sequence[Cube], variables: Sequence[int],
                   var: Sequence[Any]) -> dict[int, Any]:
    """For each variable index in ``variables``, the BDD (over the other variables) of the
    points where flipping it keeps the function on (both points in ``on``) and no product
    of ``terms`` holds it across the change."""
    return _uncovered(terms, _adjacent_on(on, variables, var), var)


def hazard_free(terms: Sequence[Cube], on: Sequence[Cube], off: Sequence[Cube],
                variables: Sequence[int], n: int) -> tuple[Cube, ...]:
    """``terms`` plus implicants covering every pair of on-points adjacent in one of
    ``variables``: each pair region's cubes, grown literal by literal while they stay off
    ``off``."""
    var = bdd.variables(n)
    off_bdd = _sop_bdd(off, var)
    adjacent = _adjacent_on(on, variables, var)  # fixed by the function: computed once
    result = list(dict.fromkeys(terms))
    while True:
        hazards = _uncovered(result, adjacent, var)
        if not hazards:
            return tuple(sorted(result))
        v, region = min(hazards.items())
        cube = bdd.cubes_of(region, var)[0]
        cube = Cube(care=cube.care & ~(1 << v), value=cube.value & ~(1 << v))
        for i, _positive in list(cube.literals()):
            wider = Cube(care=cube.care & ~(1 << i), value=cube.value & ~(1 << i))
            if (bdd.cube_bdd(wider, var) & off_bdd).is_zero():
                cube = wider
        assert (bdd.cube_bdd(cube, var) & off_bdd).is_zero()
        result.append(cube)


def _inputs_guard(points: Any, var: Sequence[Any], k: int, inputs: Sequence[str]) -> str:
    cubes = [Cube(care=c.care >> k, value=c.value >> k) for c in bdd.cubes_of(points, var)]
    texts = [guard_text(c, inputs) for c in cubes[:4]]
    text = " | ".join(f"({t})" if "&" in t and len(cubes) > 1 else t for t in texts)
    return text + (" | ..." if len(cubes) > 4 else "")


def glitch_report(table: StateTable, encoding: Encoding, functions: LogicFunctions,
                  cover: Cover) -> GlitchReport:
    """Every static hazard (single-input changes, in used states) and function hazard (on
    the table's transitions) of the outputs' sums of products in ``cover``."""
    k = encoding.width
    n = len(cover.variables)
    var = bdd.variables(n)
    inputs = list(range(k, n))
    glitches: list[Glitch] = []
    by_construction = []
    unchecked: list[str] = []
    codes = {s: encoding.codes[s] for s in table.states}

    def fix(code: int) -> dict[Any, int]:
        return {var[b]: code >> b & 1 for b in range(k)}

    for o in table.outputs:
        terms = cover.of(o)
        if not terms or terms == (Cube.universe(),) or (
                len(terms) == 1 and terms[0].literal_count == 1 and terms[0].care < 1 << k):
            by_construction.append(o)
            continue
        f = functions.function(o)
        for v, region in sorted(static_hazards(terms, f.on, inputs, var).items()):
            for s in table.states:
                here = region.restrict(fix(codes[s]))
                if here.is_zero():
                    continue
                point = bdd.point_of(here, var)
                word = "".join(str(point >> i & 1) for i in range(k, n))
                goes, _out = table.lookup(s, word)
                glitches.append(Glitch(o, "static", s, _inputs_guard(here, var, k,
                                                                     table.inputs),
                                       table.inputs[v - k], goes))
        g = _sop_bdd(terms, var)
        seen: set[tuple[str, str]] = set()
        for s in table.states:
            for _s, cube, to, _row_out in table.rows_of(s):
                if to is None or (s, to) in seen:
                    continue
                a, b = codes[s], codes[to]
                changed = [bit for bit in range(k) if (a ^ b) >> bit & 1]
                if len(changed) < 2:
                    continue
                if len(changed) > MAX_CHANGING_BITS:
                    unchecked.append(f"{s} -> {to} ({len(changed)} bits change)")
                    seen.add((s, to))
                    continue
                x = bdd.cube_bdd(Cube.from_string(cube).shifted(k), var)
                start, end = g.restrict(fix(a)), g.restrict(fix(b))
                steady = x & ~(start ^ end)
                bad = bdd.ZERO
                for mask in range(1, (1 << len(changed)) - 1):
                    mid = a
                    for j, bit in enumerate(changed):
                        if mask >> j & 1:
                            mid ^= 1 << bit
                    bad |= steady & (g.restrict(fix(mid)) ^ start)
                if not bad.is_zero():
                    seen.add((s, to))
                    glitches.append(Glitch(o, "function", s, _inputs_guard(bad, var, k,
                                                                           table.inputs),
                                           " ".join(f"Q{bit}" for bit in changed), to))
    return GlitchReport(tuple(table.outputs), tuple(glitches), tuple(by_construction),
                        tuple(dict.fromkeys(unchecked)))
