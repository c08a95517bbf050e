"""An immutable mapping for the fields of frozen records: hashable, picklable, dict-like."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from typing import Any, Generic, TypeVar

K = TypeVar("K")
V = TypeVar("V")


class FrozenMap(Mapping[K, V], Generic[K, V]):
    """A read-only dict: equal to any mapping with the same items, usable as a dict key.

    Unlike ``types.MappingProxyType`` it pickles, so model values can be sent to worker
    processes (``compare(..., executor=ProcessPoolExecutor())``).
    """

    __slots__ = ("_data", "_hash")

    def __init__(self, items: Mapping[K, V] | None = None) -> None:
        self._data: dict[K, V] = dict(items or {})
        self._hash: int | None = None

    def __getitem__(self, key: K) -> V:
        return self._data[key]

    def __iter__(self) -> Iterator[K]:
        return iter(self._data)

    def __len__(self) -> int:
        return len(self._data)

    def __hash__(self) -> int:
        if self._hash is None:
            self._hash = hash(frozenset(self._data.items()))
        return self._hash

    def __eq__(self, other: object) -> bool:
        if isinstance(other, Mapping):
            return self._data == dict(other.items())
        return NotImplemented

    def __repr__(self) -> str:
        return f"FrozenMap({self._data!r})"

    def __reduce__(self) -> tuple[Any, ...]:
        return (FrozenMap, (self._data,))
