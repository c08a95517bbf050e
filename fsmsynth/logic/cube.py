"""Cubes: products of literals over numbered Boolean variables, held as two bit masks.

A cube over variables ``0 .. n-1`` is a pair of ints: ``care`` has bit ``i`` set when variable
``i`` appears in the product, ``value`` gives its polarity there (bits outside ``care`` are 0).
The text form writes variable 0 first: ``"1-0"`` is ``x0 & ~x2``.  All operations are O(1) on
the masks except :func:`sharp` and :func:`partition`, whose costs are given below.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from functools import lru_cache
from operator import attrgetter


@dataclass(frozen=True, slots=True, order=True)
class Cube:
    """A product term; see the module docstring for the representation."""

    care: int
    value: int

    def __post_init__(self) -> None:
        assert self.value & ~self.care == 0, "value bits outside the care mask"

    @classmethod
    def from_string(cls, text: str) -> Cube:
        """Parse ``'01-'`` (variable 0 first). Characters other than 0, 1, - are an error."""
        return _parse(text)

    @classmethod
    def universe(cls) -> Cube:
        """The cube with no literals (the constant 1)."""
        return cls(care=0, value=0)

    @classmethod
    def minterm(cls, bits: int, n: int) -> Cube:
        """The cube fixing all ``n`` variables to the bits of ``bits`` (bit i = variable i)."""
        full = (1 << n) - 1
        return cls(care=full, value=bits & full)

    def to_string(self, n: int) -> str:
        """Text form over ``n`` variables, variable 0 first."""
        return "".join(self.literal_char(i) for i in range(n))

    def literal_char(self, i: int) -> str:
        """``'0'``, ``'1'`` or ``'-'`` for variable ``i``."""
        if not self.care >> i & 1:
            return "-"
        return "1" if self.value >> i & 1 else "0"

    @property
    def literal_count(self) -> int:
        """Number of literals in the product."""
        return self.care.bit_count()

    def literals(self) -> Iterator[tuple[int, bool]]:
        """``(variable, positive)`` for each literal, lowest variable first."""
        care = self.care
        while care:
            low = care & -care
            yield low.bit_length() - 1, bool(self.value & low)
            care ^= low

    def intersects(self, other: Cube) -> bool:
        """Whether the two products are both true somewhere."""
        return (self.value ^ other.value) & self.care & other.care == 0

    def intersection(self, other: Cube) -> Cube | None:
        """The common part, or ``None`` when the cubes are disjoint."""
        if not self.intersects(other):
            return None
        return Cube(care=self.care | other.care, value=self.value | other.value)

    def contains(self, other: Cube) -> bool:
        """Whether every point of ``other`` lies in ``self``."""
        return self.care & ~other.care == 0 and (self.value ^ other.value) & self.care == 0

    def contains_point(self, bits: int) -> bool:
        """Whether the minterm ``bits`` (bit i = variable i) lies in the cube."""
        return (bits ^ self.value) & self.care == 0

    def shifted(self, offset: int) -> Cube:
        """The same product over variables renumbered ``i -> i + offset``."""
        return Cube(care=self.care << offset, value=self.value << offset)

    def representative(self) -> int:
        """One point of the cube: free variables set to 0."""
        return self.value


CUBE_ORDER = attrgetter("care", "value")
"""Sort key giving cubes their own order (care mask, then value) without calling
``Cube.__lt__``: sorting with it is several times faster in the minimizers' inner loops."""


@lru_cache(maxsize=65536)
def _parse(text: str) -> Cube:
    # Tables repeat the same few cube strings on many rows: parse each once.
    care = value = 0
    for i, ch in enumerate(text):
        if ch == "1":
            care |= 1 << i
            value |= 1 << i
        elif ch == "0":
            care |= 1 << i
        elif ch != "-":
            raise ValueError(f"cube {text!r}: use only 0, 1 or -")
    return Cube(care=care, value=value)


def sharp(a: Cube, b: Cube) -> list[Cube]:
    """The points of ``a`` outside ``b``, as disjoint cubes (disjoint sharp product).

    One cube is produced per literal of ``b`` that ``a`` leaves free, so the cost is
    O(number of literals of ``b``).

    References
    ----------
    Hachtel, G. D. and Somenzi, F., *Logic Synthesis and Verification Algorithms*,
    Kluwer, 1996, section 4.2 (sharp and disjoint sharp).
    """
    if not a.intersects(b):
        return [a]
    pieces: list[Cube] = []
    care, value = a.care, a.value
    for var, positive in b.literals():
        bit = 1 << var
        if care & bit:
            continue
        # The part of what remains that disagrees with b on this variable.
        pieces.append(Cube(care=care | bit, value=value | (0 if positive else bit)))
        care |= bit
        value |= bit if positive else 0
    return pieces


def partition(cubes: Iterable[Cube]) -> list[Cube]:
    """Split the Boolean space into disjoint cubes, each inside or outside every given cube.

    The result is the coarsest partition into cubes that this refinement finds: each given
    cube is the union of some of the returned ones.  Cost grows with the number of classes
    produced, never with the size of the space.
    """
    classes = partition_within(cubes, None)
    assert classes is not None
    return classes


def partition_within(cubes: Iterable[Cube], limit: int | None) -> list[Cube] | None:
    """:func:`partition`, or ``None`` as soon as it would make more than ``limit`` classes.

    Lets a stage choose between whole-table input classes (few of them) and each state's
    own rows (when the common refinement grows towards ``2**inputs``) at a bounded cost.
    """
    classes = [Cube.universe()]
    if limit is not None and limit < 1:
        return None
    for cube in dict.fromkeys(cubes):
        refined: list[Cube] = []
        for cls in classes:
            if cube.contains(cls) or not cube.intersects(cls):
                refined.append(cls)
                continue
            inside = cls.intersection(cube)
            assert inside is not None
            refined.append(inside)
            refined.extend(sharp(cls, cube))
            if limit is not None and len(refined) > limit:
                return None
        classes = refined
    return sorted(classes, key=lambda c: (c.representative(), c.care))


def complement_cubes(points: Iterable[int], n: int) -> list[Cube]:
    """Disjoint cubes covering exactly the points of ``n`` variables not in ``points``.

    Splits on one variable at a time (highest first), so the cost is O(len(points) * n) and
    never ``2**n``: "every code no state has" costs as much as the codes the states have.
    """
    result: list[Cube] = []

    def split(group: list[int], var: int, care: int, value: int) -> None:
        if not group:
            result.append(Cube(care=care, value=value))
            return
        if var < 0:
            return  # the single point left is one of ``points``
        bit = 1 << var
        split([p for p in group if not p & bit], var - 1, care | bit, value)
        split([p for p in group if p & bit], var - 1, care | bit, value | bit)

    split(sorted(set(points)), n - 1, 0, 0)
    return sorted(result, key=CUBE_ORDER)


def bits_of(mask: int) -> Iterator[int]:
    """The positions of the 1 bits of ``mask``, lowest first (sets kept as bit masks)."""
    while mask:
        low = mask & -mask
        yield low.bit_length() - 1
        mask ^= low
