"""Karnaugh maps as text, with don't cares, for functions of up to 6 variables.

Rows and columns follow the reflected Gray code so that adjacent cells differ in one
variable (Karnaugh 1953).  Up to 4 variables make one map; 5 and 6 variables make 2 or 4
maps side by side, one per value of the extra variables ("map pairs").  Cells show ``1``
(on-set), ``0`` (off-set) or ``-`` (don't care).
"""

from __future__ import annotations

from collections.abc import Sequence

from fsmsynth.logic.cube import Cube, bits_of
from fsmsynth.logic.functions import Function

MAX_VARIABLES = 6
"""The widest function drawn: 4 variables make one map, 5 and 6 make 2 or 4 side by side."""

def _gray(bits: int) -> list[int]:
    return [i ^ (i >> 1) for i in range(1 << bits)]


def _value(function: Function, point: int) -> str:
    if any(c.contains_point(point) for c in function.on):
        return "1"
    if any(c.contains_point(point) for c in function.off):
        return "0"
    return "-"


def support(function: Function) -> list[int]:
    """The variables the specification of ``function`` mentions, lowest first.

    A variable that no on- or off-cube fixes cannot change the function's value anywhere
    it is specified (a Moore output does not depend on the inputs), so it needs no axis.
    """
    care = 0
    for cube in (*function.on, *function.off):
        care |= cube.care
    return list(bits_of(care))


def _project(function: Function, keep: Sequence[int]) -> Function:
    def cube(c: Cube) -> Cube:
        care = value = 0
        for new, old in enumerate(keep):
            care |= (c.care >> old & 1) << new
            value |= (c.value >> old & 1) << new
        return Cube(care=care, value=value)

    return Function(name=function.name, on=tuple(map(cube, function.on)),
                    off=tuple(map(cube, function.off)))


def write_karnaugh(function: Function, variables: Sequence[str]) -> str:
    """The map of ``function`` over the ``variables`` it depends on (variable 0 first, as in
    its cubes; see :func:`support`).

    Raises
    ------
    ValueError
        When the function depends on more than 6 variables.
    """
    keep = support(function)
    if len(keep) > MAX_VARIABLES:
        raise ValueError(f"{function.name} depends on {len(keep)} variables: Karnaugh maps "
                         f"go up to {MAX_VARIABLES}")
    if len(keep) < len(variables):
        function = _project(function, keep)
        variables = [variables[i] for i in keep]
    n = len(variables)
    extra = max(0, n - 4)
    core = n - extra
    row_bits = core // 2
    col_bits = core - row_bits
    # variable order in the map: the last `extra` variables select the map
    row_vars = list(range(row_bits))
    col_vars = list(range(row_bits, core))
    map_vars = list(range(core, n))

    def name_of(idx: list[int]) -> str:
        return ",".join(variables[i] for i in idx) or "-"

    blocks = []
    for sel in _gray(extra) if extra else [0]:
        title = (" ".join(f"{variables[v]}={sel >> k & 1}" for k, v in enumerate(map_vars))
                 if extra else "")
        cols = _gray(col_bits)
        header = f"{name_of(row_vars)} \\ {name_of(col_vars)}"
        width = max(len(header), row_bits or 1)
        lines = [title] if title else []
        lines.append(header.ljust(width) + " " + " ".join(
            format(c, f"0{col_bits}b")[::-1] if col_bits else "-" for c in cols))
        for r in _gray(row_bits):
            cells = []
            for c in cols:
                point = 0
                for k, v in enumerate(row_vars):
                    point |= (r >> k & 1) << v
                for k, v in enumerate(col_vars):
                    point |= (c >> k & 1) << v
                for k, v in enumerate(map_vars):
                    point |= (sel >> k & 1) << v
                cells.append(_value(function, point).center(max(col_bits, 1)))
            label = format(r, f"0{row_bits}b")[::-1] if row_bits else "-"
            lines.append(label.ljust(width) + " " + " ".join(cells))
        blocks.append(lines)
    height = max(len(b) for b in blocks)
    widths = [max(len(line) for line in b) for b in blocks]
    out = [f"{function.name}:"]
    for i in range(height):
        out.append("   ".join((b[i] if i < len(b) else "").ljust(w)
                              for b, w in zip(blocks, widths)).rstrip())
    return "\n".join(out) + "\n"
