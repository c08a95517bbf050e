"""Guard expressions of guarded transitions, parsed and compiled to BDDs.

A guard is a Boolean condition over the machine's inputs, written as a designer says it:

* a 1-bit input by name (``start``), a bit of a vector input (``mode[1]``, bit 0 least
  significant);
* a vector compared with a non-negative integer constant: ``==``, ``!=``, ``<``, ``<=``,
  ``>``, ``>=`` (unsigned);
* ``~`` or ``!`` (not), ``&`` (and), ``^`` (exclusive or), ``|`` (or), parentheses, and the
  constants ``1`` and ``0``.

Conditions (invariants, :func:`compile_condition`) may also name outputs and the present
state: ``state == NAME``, ``state != NAME``, ``in(state, A, B)``.

Precedence, tightest first: comparisons, ``~``/``!``, ``&``, ``^``, ``|``; so
``start & mode == 2`` means ``start & (mode == 2)``.  The word ``else`` is not a guard: it is
handled by :meth:`fsmsynth.model.table.StateTable.from_transitions` (none of the state's earlier
guards holds).

Guards compile to reduced ordered BDDs (pyeda), never by enumerating ``2**inputs`` points.

References
----------
Bryant, R. E., "Graph-based algorithms for Boolean function manipulation", *IEEE Trans.
Computers* C-35(8), 1986 (reduced ordered BDDs).
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fsmsynth.base.names import did_you_mean, port_bits, ports_of
from fsmsynth.logic import bdd
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.espresso import espresso_cover

_TOKEN = re.compile(r"\s*(?:(?P<name>[A-Za-z_][A-Za-z0-9_$]*)|(?P<number>[0-9]+)"
                    r"|(?P<op>==|!=|<=|>=|[<>&|^~!()\[\],]))")
_COMPARISONS = ("==", "!=", "<=", ">=", "<", ">")


class GuardError(ValueError):
    """A guard that cannot be compiled; ``column`` is 1-based, ``text`` the offending part."""

    def __init__(self, message: str, column: int, text: str) -> None:
        super().__init__(message)
        self.message = message
        self.column = column
        self.text = text


@dataclass(frozen=True, slots=True)
class _Token:
    kind: str  # "name", "number", "op" or "end"
    text: str
    column: int  # 1-based


def _tokens(text: str) -> list[_Token]:
    found: list[_Token] = []
    at = 0
    while True:
        while at < len(text) and text[at].isspace():
            at += 1
        if at == len(text):
            found.append(_Token("end", "", at + 1))
            return found
        match = _TOKEN.match(text, at)
        if match is None or match.end() == at:
            raise GuardError(f"unexpected character {text[at]!r} at column {at + 1}", at + 1,
                             text[at])
        kind = match.lastgroup or "op"
        found.append(_Token(kind, match.group(kind), match.start(kind) + 1))
        at = match.end()


class _Parser:
    """Recursive descent over the grammar in the module docstring."""

    def __init__(self, text: str, widths: Mapping[str, int], bits: Mapping[str, Sequence[Any]],
                 states: Sequence[str] | None = None, current: str | None = None,
                 role: str = "input"):
        self.tokens = _tokens(text)
        self.at = 0
        self.widths = widths
        self.bits = bits
        self.states = states
        self.current = current
        self.role = role

    def peek(self) -> _Token:
        return self.tokens[self.at]

    def take(self) -> _Token:
        token = self.tokens[self.at]
        self.at += 1
        return token

    def expect(self, op: str) -> _Token:
        token = self.take()
        if token.text != op or token.kind != "op":
            raise GuardError(f"expected {op!r} at column {token.column}, found "
                             f"{_shown(token)}", token.column, token.text)
        return token

    def parse(self) -> Any:
        result = self.either()
        token = self.peek()
        if token.kind != "end":
            raise GuardError(f"unexpected {_shown(token)} at column {token.column}",
                             token.column, token.text)
        return result

    def either(self) -> Any:
        result = self.exclusive()
        while self.peek().kind == "op" and self.peek().text == "|":
            self.take()
            result = result | self.exclusive()
        return result

    def exclusive(self) -> Any:
        result = self.both()
        while self.peek().kind == "op" and self.peek().text == "^":
            self.take()
            result = result ^ self.both()
        return result

    def both(self) -> Any:
        result = self.unary()
        while self.peek().kind == "op" and self.peek().text == "&":
            self.take()
            result = result & self.unary()
        return result

    def unary(self) -> Any:
        token = self.peek()
        if token.kind == "op" and token.text in ("~", "!"):
            self.take()
            return ~self.unary()
        return self.atom()

    def atom(self) -> Any:
        token = self.take()
        if token.kind == "op" and token.text == "(":
            inner = self.either()
            self.expect(")")
            return inner
        if token.kind == "number":
            if token.text in ("0", "1"):
                return bdd.ONE if token.text == "1" else bdd.ZERO
            raise GuardError(f"constant {token.text} at column {token.column} is not a "
                             "condition: compare a vector with it (mode == 2)", token.column,
                             token.text)
        if token.kind != "name":
            raise GuardError(f"unexpected {_shown(token)} at column {token.column}",
                             token.column, token.text)
        if self.states is not None and token.text not in self.widths:
            if token.text == "state":
                return self.state_is()
            if token.text == "in" and self.peek().text == "(":
                return self.state_in()
        if token.text not in self.widths:
            known = ", ".join(self.widths) or "none"
            extra = "; or state == NAME, in(state, A, B)" if self.states is not None else ""
            hint = did_you_mean(token.text, list(self.widths))
            raise GuardError(f"unknown {self.role} {token.text!r} at column {token.column}"
                             f"{hint} ({self.role}s: {known}{extra})", token.column, token.text)
        width = self.widths[token.text]
        bits = self.bits[token.text]
        after = self.peek()
        if after.kind == "op" and after.text == "[":
            self.take()
            index = self.take()
            if index.kind != "number":
                raise GuardError(f"expected a bit index at column {index.column}, found "
                                 f"{_shown(index)}", index.column, index.text)
            self.expect("]")
            if int(index.text) >= width:
                raise GuardError(
                    f"bit {index.text} of {token.text!r} at column {index.column} is out of "
                    f"range: {token.text} has bits {width - 1} down to 0", index.column,
                    f"{token.text}[{index.text}]")
            return bits[int(index.text)]
        if after.kind == "op" and after.text in _COMPARISONS:
            self.take()
            constant = self.take()
            if constant.kind != "number":
                raise GuardError(f"expected a constant after {after.text!r} at column "
                                 f"{constant.column}, found {_shown(constant)}",
                                 constant.column, constant.text)
            value = int(constant.text)
            if value >= 1 << width:
                raise GuardError(
                    f"constant {value} at column {constant.column} does not fit "
                    f"{token.text!r} ({width} bit{'s' if width > 1 else ''}: 0 to "
                    f"{(1 << width) - 1})", constant.column, constant.text)
            return compare(bits, after.text, value)
        if width > 1:
            raise GuardError(
                f"{token.text!r} at column {token.column} is a {width}-bit vector, not a "
                f"condition: compare it ({token.text} == 1) or take a bit ({token.text}[0])",
                token.column, token.text)
        return bits[0]


    def state_name(self) -> str:
        token = self.take()
        if token.kind != "name":
            raise GuardError(f"expected a state name at column {token.column}, found "
                             f"{_shown(token)}", token.column, token.text)
        assert self.states is not None
        if token.text not in self.states:
            raise GuardError(f"unknown state {token.text!r} at column {token.column}"
                             f"{did_you_mean(token.text, self.states)} (states: "
                             f"{', '.join(self.states)})", token.column, token.text)
        return token.text

    def state_is(self) -> Any:
        """``state == NAME`` or ``state != NAME``: a constant, given the present state."""
        op = self.take()
        if op.kind != "op" or op.text not in ("==", "!="):
            raise GuardError(f"expected '==' or '!=' after 'state' at column {op.column}, "
                             f"found {_shown(op)}", op.column, op.text)
        holds = (self.state_name() == self.current) == (op.text == "==")
        return bdd.ONE if holds else bdd.ZERO

    def state_in(self) -> Any:
        """``in(state, A, B, ...)``: whether the present state is one of those named."""
        self.expect("(")
        first = self.take()
        if first.text != "state" or first.kind != "name":
            raise GuardError(f"expected 'state' at column {first.column}, found "
                             f"{_shown(first)}", first.column, first.text)
        names = []
        while self.peek().text != ")":
            self.expect(",")
            names.append(self.state_name())
        self.expect(")")
        if not names:
            raise GuardError(f"in(state) at column {first.column} names no state: "
                             "write in(state, A, B)", first.column, "in(state)")
        return bdd.ONE if self.current in names else bdd.ZERO


def _shown(token: _Token) -> str:
    return "end of guard" if token.kind == "end" else repr(token.text)


def compare(bits: Sequence[Any], op: str, value: int) -> Any:
    """The BDD of ``vector op value`` (unsigned; ``bits[0]`` least significant)."""
    if op in ("==", "!="):
        equal = bdd.ONE
        for i, bit in enumerate(bits):
            equal &= bit if value >> i & 1 else ~bit
        return equal if op == "==" else ~equal
    if op in (">", "<="):
        greater = _greater_than(bits, value)
        return greater if op == ">" else ~greater
    # a < v  is  not (a > v - 1);  a >= v  is  a > v - 1 (a >= 0 always holds).
    if value == 0:
        return bdd.ZERO if op == "<" else bdd.ONE
    greater = _greater_than(bits, value - 1)
    return ~greater if op == "<" else greater


def _greater_than(bits: Sequence[Any], value: int) -> Any:
    """``vector > value``, built from the least significant bit up."""
    result = bdd.ZERO  # the empty vector is never greater
    for i, bit in enumerate(bits):
        if value >> i & 1:
            result = bit & result  # this bit must be 1 and the lower part greater
        else:
            result = bit | result  # a 1 here beats the constant, else the lower part decides
    return result


def compile_guard(text: str, widths: Mapping[str, int],
                  bits: Mapping[str, Sequence[Any]], *, role: str = "input") -> Any:
    """The BDD of guard ``text``.

    Parameters
    ----------
    widths:
        Each input's width in bits.
    bits:
        Each input's BDD variables, bit 0 (least significant) first.

    Raises
    ------
    GuardError
        Naming the column and the text at fault (an unknown name is called an unknown
        ``role``: ``"input"``, or ``"pin"`` for a cell's function).
    """
    return _Parser(text, widths, bits, role=role).parse()


def compile_condition(text: str, widths: Mapping[str, int], bits: Mapping[str, Sequence[Any]],
                      states: Sequence[str], current: str) -> Any:
    """The BDD of a condition over signals (inputs and outputs) and the present state: the
    guard grammar plus ``state == NAME``, ``state != NAME`` and ``in(state, A, B, ...)``,
    which are constants once the present state is ``current``.  Used for invariants."""
    return _Parser(text, widths, bits, states, current, role="signal").parse()


def guard_text(cube: Cube, inputs: Sequence[str]) -> str:
    """A cube over a table's 1-bit ``inputs`` written as a guard: a vector whose bits the
    cube fixes all together becomes a comparison (``mode == 3``), others their bits
    (``mode[1]``, ``~start``); the whole space is ``1``."""
    parts: list[str] = []
    at = 0
    for port, width in ports_of(inputs):
        n = width or 1
        chars = [cube.literal_char(at + k) for k in range(n)]  # most significant first
        at += n
        if width is not None and "-" not in chars:
            parts.append(f"{port} == {int(''.join(chars), 2)}")
            continue
        for name, char in zip(port_bits(port, width), chars):
            if char != "-":
                parts.append(name if char == "1" else f"~{name}")
    return " & ".join(parts) or "1"


def short_cover(points: Any, free: Any, var: Sequence[Any], n: int) -> list[Cube]:
    """A short sum of products for ``points`` (a BDD over the ``n`` variables ``var``) by the
    Espresso heuristic (Brayton et al., *Logic Minimization Algorithms for VLSI Synthesis*,
    1984), free to include the points of ``free`` and never any other point: ``[]`` when
    ``points`` is empty, one empty cube when the cover is everything."""
    if points.is_zero():
        return []
    off = ~(points | free)
    if off.is_zero():
        return [Cube.universe()]
    on_cubes, off_cubes = bdd.cubes_of(points, var), bdd.cubes_of(off, var)
    (terms,) = espresso_cover(n, [on_cubes], [off_cubes])
    return list(terms)


def short_guard(points: Any, free: Any, var: Sequence[Any], inputs: Sequence[str]) -> str:
    """:func:`short_cover` of ``points`` over a table's 1-bit ``inputs``, written as a guard
    (each product by :func:`guard_text`; ``0`` for no point)."""
    terms = short_cover(points, free, var, len(inputs))
    if not terms:
        return "0"
    texts = [guard_text(c, inputs) for c in terms]
    return " | ".join(f"({t})" if "&" in t and len(texts) > 1 else t for t in texts)
