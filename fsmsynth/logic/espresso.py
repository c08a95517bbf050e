"""Heuristic two-level minimization through the Espresso engine that pyeda bundles.

References
----------
Brayton, R. K., Hachtel, G. D., McMullen, C. T. and Sangiovanni-Vincentelli, A. L.,
*Logic Minimization Algorithms for VLSI Synthesis*, Kluwer, 1984 (the Espresso heuristic).
"""

from __future__ import annotations

from collections.abc import Sequence

from pyeda.boolalg.espresso import FTYPE, RTYPE, espresso, set_config

from fsmsynth.logic.cube import CUBE_ORDER, Cube
from fsmsynth.logic.engine_lock import LOCK

# pyeda's positional cube notation: 1 = complemented literal, 2 = positive, 3 = absent.
_ZERO, _ONE, _FREE = 1, 2, 3
# Output part with an on-set and off-set given (type fr): 1 on, 0 off, 2 neither.
_OUT_OFF, _OUT_ON, _OUT_FREE = 0, 1, 2

_CONFIG = dict(remove_essential=True, force_irredundant=True,
               unwrap_onset=True, recompute_onset=False, use_super_gasp=False)

# pyeda's Espresso keeps one piece of state between calls: its reduce step alternates
# between two cube orderings through a static flag (``toggle`` in reduce.c) that is never
# reset, so a result depends on how many reduce steps ran earlier in the process.  Before
# every call we put the flag back to its first-call value.  It cannot be read directly, so
# we run a probe: a 4-input, 2-output function whose Espresso result differs between the
# two orderings and whose run calls reduce an odd number of times (found by search in fresh
# processes).  Its result tells the flag's value before the probe; the probe leaves it
# inverted, and where that is the second ordering, a 1-variable function (one reduce step,
# every cube essential) flips it once more.  Cost: about 70 us per call.
_PROBE_ROWS = tuple(
    (tuple(_ONE if p >> i & 1 else _ZERO for i in range(4)), out)
    for p, out in enumerate(((1, 2), (0, 0), (0, 1), (1, 2), (0, 2), (1, 2), (1, 1), (1, 2),
                             (2, 2), (0, 1), (1, 1), (2, 0), (2, 1), (1, 0), (0, 0), (1, 1))))
_FLIP_ROWS = (((_ONE,), (_OUT_ON,)), ((_ZERO,), (_OUT_OFF,)))


def _result(rows: str) -> frozenset[tuple[tuple[int, ...], tuple[int, ...]]]:
    """A probe result written as ``'1113:10 ...'`` (input part, colon, output part)."""
    return frozenset((tuple(map(int, ins)), tuple(map(int, outs)))
                     for ins, outs in (term.split(":") for term in rows.split()))


# What the probe returns when the flag has its first-call value, and when it has the other.
_PROBE_FIRST = _result("1113:10 1133:01 1312:10 1313:01 2223:01 2233:10 2323:10 3112:01 3221:11")
_PROBE_OTHER = _result("1113:10 1133:01 1312:11 1331:01 2223:01 2233:10 2323:10 3112:01 3221:10")


FULL_EXPAND_UP_TO = 600
"""Problems of at most this many functions x variables get Espresso's full expand step; larger
ones (one-hot designs of many states: dozens of functions over dozens of variables) get its
single expand, which is ten times faster there and, measured on such designs, no worse."""


def _run(n_vars: int, n_out: int, rows: object) -> frozenset[
        tuple[tuple[int, ...], tuple[int, ...]]]:
    # Espresso may switch unwrap_onset off during a run, so the whole configuration is set
    # before each one.
    set_config(**_CONFIG, single_expand=n_vars * n_out > FULL_EXPAND_UP_TO)
    return frozenset(espresso(n_vars, n_out, rows, intype=FTYPE | RTYPE))


def _restore_first_call_state() -> None:
    """Make the next Espresso run behave as the first one in a fresh process would."""
    seen = _run(4, 2, _PROBE_ROWS)
    if seen == _PROBE_FIRST:
        _run(1, 1, _FLIP_ROWS)
    elif seen != _PROBE_OTHER:
        raise RuntimeError("pyeda's Espresso gave an unexpected probe result: fsmsynth cannot "
                           "make its results independent of earlier calls with this build")


# Conversions are remembered: the encoding searches convert the same few cubes millions of
# times.  Each map is emptied when it passes _REMEMBERED entries.
_REMEMBERED = 100_000
_positional: dict[tuple[int, int, int], tuple[int, ...]] = {}
_cubes: dict[tuple[int, ...], Cube] = {}


def _to_positional(cube: Cube, n: int) -> tuple[int, ...]:
    key = (cube.care, cube.value, n)
    vec = _positional.get(key)
    if vec is None:
        if len(_positional) > _REMEMBERED:
            _positional.clear()
        vec = _positional[key] = tuple(
            _FREE if not cube.care >> i & 1 else (_ONE if cube.value >> i & 1 else _ZERO)
            for i in range(n))
    return vec


def _from_positional(vec: tuple[int, ...]) -> Cube:
    cube = _cubes.get(vec)
    if cube is None:
        if len(_cubes) > _REMEMBERED:
            _cubes.clear()
        cube = _cubes[vec] = _parse_positional(vec)
    return cube


def _parse_positional(vec: Sequence[int]) -> Cube:
    care = value = 0
    for i, v in enumerate(vec):
        if v != _FREE:
            care |= 1 << i
            value |= (1 << i) if v == _ONE else 0
    return Cube(care=care, value=value)


def espresso_cover(n_vars: int, on_sets: Sequence[Sequence[Cube]],
                   off_sets: Sequence[Sequence[Cube]]) -> list[tuple[Cube, ...]]:
    """Minimize several functions together, sharing product terms between them.

    Parameters
    ----------
    n_vars:
        Number of variables (at least 1).
    on_sets, off_sets:
        For each function, the cubes where it must be 1 and where it must be 0; every other
        point is a don't care.  On- and off-set of one function must not intersect.

    Returns
    -------
    list of tuple of Cube
        For each function, the product terms of its sum of products, sorted.  A term may
        appear in several functions: that is a shared product.
    """
    assert n_vars >= 1 and len(on_sets) == len(off_sets)
    m = len(on_sets)
    if not any(on_sets):
        return [() for _ in range(m)]
    rows: dict[tuple[int, ...], list[int]] = {}
    for f, (on, off) in enumerate(zip(on_sets, off_sets)):
        for cubes, mark in ((on, _OUT_ON), (off, _OUT_OFF)):
            for cube in cubes:
                vec = rows.setdefault(_to_positional(cube, n_vars), [_OUT_FREE] * m)
                assert vec[f] in (_OUT_FREE, mark), "on-set and off-set intersect"
                vec[f] = mark
    cover = sorted((key, tuple(out)) for key, out in rows.items())
    with LOCK:  # the probe, the reset and the run, with no other run between them
        _restore_first_call_state()
        result = _run(n_vars, m, cover)
    terms: list[list[Cube]] = [[] for _ in range(m)]
    for invec, outvec in sorted(result):
        cube = _from_positional(invec)
        for f in range(m):
            if outvec[f] == _OUT_ON:
                terms[f].append(cube)
    return [tuple(sorted(t, key=CUBE_ORDER)) for t in terms]
