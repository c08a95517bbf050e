"""A netlist evaluated: on bit-parallel values, on BDDs over the inputs, and cycle by cycle.

:func:`evaluate` takes any values with ``&``, ``|``, ``^`` and ``~`` (ints whose bits are
many input points at once, or BDDs); :func:`simulate` runs the netlist from its reset code on
a sequence of input vectors, the way a testbench would.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from functools import reduce
from typing import Any

from pyeda.boolalg.bdd import BDDONE

from fsmsynth.base.errors import OptionError
from fsmsynth.stages.netlist import Netlist, checked_netlist


def evaluate(netlist: Netlist, values: Mapping[str, Any], ones: Any) -> dict[str, Any]:
    """Values of every net, given the primary inputs' and flip-flop outputs' values.

    Works on anything with ``&``, ``|``, ``^`` and ``~``: Python ints used as bit vectors
    (``ones`` has every evaluation point's bit set) or BDDs (``ones`` is the constant 1).
    """
    env = dict(values)
    for g in netlist.gates:
        args = [env[i] for i in g.inputs]
        if g.table is not None:
            env[g.output] = _table_eval(g.table, args, ones)
        else:
            env[g.output] = _GATE_EVAL[g.kind](args, ones)
    return env


def _table_eval(table: int, args: Sequence[Any], ones: Any) -> Any:
    """A truth table applied to ``args`` (Shannon expansion on the last input first)."""
    if not args:
        return ones if table & 1 else ones & ~ones
    half = 1 << (len(args) - 1)
    low = _table_eval(table & ((1 << half) - 1), args[:-1], ones)
    high = _table_eval(table >> half, args[:-1], ones)
    last = args[-1]
    return (last & high) | (ones & ~last & low)


def _and(a: Sequence[Any], ones: Any) -> Any:
    return reduce(lambda x, y: x & y, a, ones)


def _or(a: Sequence[Any], ones: Any) -> Any:
    return reduce(lambda x, y: x | y, a, ones & ~ones)


def _xor(a: Sequence[Any], ones: Any) -> Any:
    return reduce(lambda x, y: x ^ y, a, ones & ~ones)


_GATE_EVAL: dict[str, Callable[[Sequence[Any], Any], Any]] = {
    "not": lambda a, ones: ones & ~a[0],
    "buf": lambda a, ones: a[0],
    "and": _and,
    "or": _or,
    "nand": lambda a, ones: ones & ~_and(a, ones),
    "nor": lambda a, ones: ones & ~_or(a, ones),
    "xor": _xor,
    "xnor": lambda a, ones: ones & ~_xor(a, ones),
    "const0": lambda a, ones: ones & ~ones,
    "const1": lambda a, ones: ones,
}


def _step(netlist: Netlist, code: int, inputs: Mapping[str, Any], ones: Any) -> tuple[
        dict[str, Any], list[Any], Any]:
    """Nets, next state bits and exclusive-pin violations for one present code."""
    values = dict(inputs)
    for ff in netlist.flip_flops:
        values[ff.q] = ones if code >> ff.bit & 1 else ones & ~ones
    env = evaluate(netlist, values, ones)
    next_bits, clash = [], ones & ~ones
    for ff in netlist.flip_flops:
        pins = {pin: env[net] for pin, net in ff.pins}
        next_bits.append(ff.storage.next_state(env[ff.q], pins, ones))
        clash = clash | ff.storage.forbidden(pins)
    return env, next_bits, clash


def _low_index(mask: int) -> int:
    return (mask & -mask).bit_length() - 1


def step_symbolic(netlist: Netlist, code: int, inputs: Mapping[str, Any]
                  ) -> tuple[dict[str, Any], list[Any]]:
    """Every net and each next-state bit as BDDs over the inputs, in state ``code``."""
    env, nexts, _clash = _step(netlist, code, inputs, BDDONE)
    return env, nexts


def split_by_code(points: Any, next_bits: Sequence[Any]) -> list[tuple[Any, int]]:
    """``points`` (a BDD over the inputs) split by the next code the bits ``next_bits``
    compute there: ``(part, code)`` for each non-empty part, by code."""
    groups = [(points, 0)]
    for b, vec in enumerate(next_bits):
        split = []
        for group, next_code in groups:
            high, low = group & vec, group & ~vec
            if not high.is_zero():
                split.append((high, next_code | 1 << b))
            if not low.is_zero():
                split.append((low, next_code))
        groups = split
    return sorted(groups, key=lambda g: g[1])


def _split_by_code(mask: int, next_bits: Sequence[int]) -> list[tuple[int, int]]:
    """Group the classes in ``mask`` by the next code the netlist computes for them."""
    groups = [(mask, 0)]
    for b, vec in enumerate(next_bits):
        split = []
        for group, code in groups:
            if group & vec:
                split.append((group & vec, code | 1 << b))
            if group & ~vec:
                split.append((group & ~vec, code))
        groups = split
    return sorted(groups, key=lambda g: _low_index(g[0]))


def simulate(netlist: Netlist, inputs: Sequence[str], start_code: int | None = None) -> list[
        tuple[int, str]]:
    """Run the netlist cycle by cycle.

    Parameters
    ----------
    inputs:
        One string per clock cycle with one ``0``/``1`` per input in declared order.
    start_code:
        The code to start in; by default the reset code.

    Returns
    -------
    list of (code, outputs)
        For each cycle, the present state code and the outputs (one ``0``/``1`` per output)
        seen before that cycle's clock edge.  Flip-flops behave as their Verilog cells do,
        also on pin combinations the storage kind forbids (an SR cell with S = R = 1 sets).

    Raises
    ------
    NetlistError
        As for :func:`verify`.
    """
    netlist = checked_netlist(netlist)
    code = netlist.reset_code if start_code is None else start_code
    trace = []
    for word in inputs:
        if len(word) != len(netlist.inputs) or set(word) - {"0", "1"}:
            raise OptionError(f"input word {word!r}: give one 0 or 1 per input")
        values = {name: int(ch) for name, ch in zip(netlist.inputs, word)}
        env, next_bits, _clash = _step(netlist, code, values, 1)
        trace.append((code, "".join(str(env[net]) for _p, net in netlist.outputs)))
        code = sum(bit << b for b, bit in enumerate(next_bits))
    return trace
