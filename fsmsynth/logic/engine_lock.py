"""One lock for the work that uses pyeda's engines, so that designs made on several threads
at once come out as they do one after another.

pyeda's BDDs keep a process-wide table of nodes and variables, filled without locking, and
its Espresso keeps state between calls (see :mod:`fsmsynth.logic.espresso`); two threads
interleaving them can create one node twice (the diagrams are then no longer canonical) or
create variables in a different order, and so change a result.  The public entry points
that build or check a design hold this lock (it is re-entrant: they call each other).
Threads gain nothing by running that pure-Python work side by side anyway; processes (a
process pool, Dask workers) each have their own engines and run in parallel.
"""

from __future__ import annotations

import functools
import threading
from collections.abc import Callable
from typing import ParamSpec, TypeVar

LOCK = threading.RLock()

_P = ParamSpec("_P")
_R = TypeVar("_R")


def exclusive(function: Callable[_P, _R]) -> Callable[_P, _R]:
    """``function``, holding :data:`LOCK` while it runs."""
    @functools.wraps(function)
    def locked(*args: _P.args, **kwargs: _P.kwargs) -> _R:
        with LOCK:
            return function(*args, **kwargs)
    return locked
