"""State encodings: which flip-flop code each state gets.

Bit ``b`` of a code is state variable ``Q<b>``; bit 0 is the least significant bit, so the
code written ``"10"`` has ``Q1 = 1`` and ``Q0 = 0``.  Codes no state uses are don't cares
for the logic.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from fsmsynth.base.errors import EncodingError, OptionError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.logic.cube import Cube, complement_cubes
from fsmsynth.model.table import StateTable

METHODS = ("binary", "gray", "one-hot", "outputs")


@dataclass(frozen=True, slots=True)
class Encoding:
    """Codes of the states of one table.

    Attributes
    ----------
    method:
        How the codes were chosen (``"binary"``, ``"gray"``, ``"one-hot"``, ``"given"``).
    width:
        Number of state bits (flip-flops).
    codes:
        State name -> code (an int, bit ``b`` = ``Q<b>``).
    """

    method: str
    width: int
    codes: Mapping[str, int]

    def code_string(self, state: str) -> str:
        """The code of ``state`` written most significant bit first (``"10"``)."""
        return format(self.codes[state], f"0{self.width}b")

    def unused_codes(self) -> list[int]:
        """Codes no state has, in increasing order (``2**width`` work: see :meth:`unused_cubes`)."""
        used = set(self.codes.values())
        return [c for c in range(1 << self.width) if c not in used]

    def unused_cubes(self) -> list[Cube]:
        """The codes no state has, as disjoint cubes over the state bits (bit 0 is variable
        0); costs O(states x width), so wide one-hot and given codes stay cheap."""
        return complement_cubes(self.codes.values(), self.width)



def encode(table: StateTable, method: str | Mapping[str, int | str] = "binary") -> Encoding:
    """Assign a code to every state of ``table``.

    Parameters
    ----------
    table:
        The machine to encode.
    method:
        ``"binary"`` or ``"gray"``: the reset state gets all zeros and the other states the
        following binary (or reflected Gray) numbers in declaration order, in
        ``ceil(log2 n)`` bits (none for one state).  ``"one-hot"``: one flip-flop per
        state, state ``i`` in declaration order sets bit ``i``.  ``"outputs"`` (Moore
        machines): bit ``j`` is output ``j``, then the fewest extra bits that tell apart
        states sharing outputs, so the outputs are flip-flop outputs.  A mapping gives each
        state its code, as an int or as a string of 0/1 written most significant bit first.

    Raises
    ------
    OptionError
        For an unknown method name.
    EncodingError
        For a mapping that misses a state, names an unknown one, repeats a code or mixes
        widths.

    Examples
    --------
    >>> from fsmsynth.model.table import StateTable
    >>> t = StateTable.from_rows(name="m", inputs=[], outputs=["y"], reset="b",
    ...     rows=[("a", "", "b", "0"), ("b", "", "c", "0"), ("c", "", "a", "1")])
    >>> dict(encode(t, "gray").codes)
    {'b': 0, 'a': 1, 'c': 3}
    """
    if isinstance(method, Mapping):
        return _given(table, method)
    if method == "one-hot":
        return Encoding(method="one-hot", width=len(table.states),
                        codes=FrozenMap({s: 1 << i for i, s in enumerate(table.states)}))
    if method == "outputs":
        return _output_encoded(table)
    if method not in ("binary", "gray"):
        raise OptionError(
            f"unknown encoding {method!r}: use one of {', '.join(METHODS)}, "
            "or a mapping from state to code"
        )
    order = [table.reset] + [s for s in table.states if s != table.reset]
    width = (len(order) - 1).bit_length()  # 0 for one state: it needs no flip-flop
    gray = method == "gray"
    return Encoding(method=method, width=width, codes=FrozenMap(
        {s: (i ^ (i >> 1)) if gray else i for i, s in enumerate(order)}))


def _output_encoded(table: StateTable) -> Encoding:
    """Moore outputs as state bits: bit ``j`` is output ``j`` (a don't care taken as 0),
    then as few extra bits as tell apart the states that share an output word (their
    order within the group, in declaration order)."""
    if table.kind != "moore":
        raise OptionError("encoding 'outputs' makes a Moore machine's outputs state bits; "
                          "a Mealy machine's outputs depend on its inputs too")
    m = len(table.outputs)
    groups: dict[int, list[str]] = {}
    for state in table.states:
        word = table.output_cube_of(state)
        value = sum(1 << j for j, ch in enumerate(word) if ch == "1")
        groups.setdefault(value, []).append(state)
    extra = max(len(g) for g in groups.values()) - 1
    extra_bits = extra.bit_length()
    codes = {state: value | i << m for value, group in groups.items()
             for i, state in enumerate(group)}
    return Encoding(method="outputs", width=max(1, m + extra_bits),
                    codes=FrozenMap({s: codes[s] for s in table.states}))


def _given(table: StateTable, mapping: Mapping[str, int | str]) -> Encoding:
    unknown = sorted(set(mapping) - set(table.states))
    if unknown:
        raise EncodingError(f"encoding names unknown state {unknown[0]!r}")
    missing = [s for s in table.states if s not in mapping]
    if missing:
        raise EncodingError(f"encoding gives no code to state {missing[0]!r}")
    codes: dict[str, int] = {}
    widths: set[int] = set()
    for state in table.states:
        raw = mapping[state]
        if isinstance(raw, str):
            if not raw or set(raw) - {"0", "1"}:
                raise EncodingError(
                    f"code {raw!r} of state {state!r}: write it with 0 and 1 only, "
                    "most significant bit first"
                )
            widths.add(len(raw))
            codes[state] = int(raw, 2)
        elif isinstance(raw, int) and not isinstance(raw, bool) and raw >= 0:
            codes[state] = raw
        else:
            raise EncodingError(
                f"code {raw!r} of state {state!r}: give an int >= 0 or a 0/1 string")
    if len(widths) > 1:
        raise EncodingError(f"codes are written with different widths {sorted(widths)}: "
                            "write all of them with the same number of bits")
    width = max([max(1, max(codes.values()).bit_length()), *widths])
    seen: dict[int, str] = {}
    for state, code in codes.items():
        if code in seen:
            raise EncodingError(
                f"states {seen[code]!r} and {state!r} both have code {format(code, f'0{width}b')}"
            )
        seen[code] = state
    return Encoding(method="given", width=width, codes=FrozenMap(codes))
