"""Running many independent designs on an executor, the one way project builds and sweeps do."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import Executor, Future, as_completed
from typing import Any, TypeVar

_R = TypeVar("_R")


def each_as_done(executor: Executor, function: Callable[..., _R],
                 calls: Iterable[tuple[Any, ...]]) -> Iterator[tuple[int, Future[_R]]]:
    """Submit ``function(*args)`` for every ``args`` of ``calls`` and yield ``(index of the
    call, its future)`` as each ends, in whatever order they end.  When the caller stops
    early (Ctrl-C included), whatever has not started is cancelled."""
    futures = {executor.submit(function, *args): i for i, args in enumerate(calls)}
    try:
        for future in as_completed(futures):
            yield futures[future], future
    finally:
        for future in futures:
            future.cancel()
