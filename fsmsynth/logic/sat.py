"""Satisfiability of clause sets, by the PicoSAT solver that pyeda bundles.

pyeda's own wrapper (``pyeda.boolalg.picosat.satisfy_one``) gives PicoSAT Python's memory
allocator and then releases the interpreter lock while the solver runs, so the solver
allocates through ``PyMem_Malloc`` while another thread may be doing the same: the process
can crash when a design is verified on a thread (a ``ThreadPoolExecutor``, a Dask worker)
while any other thread runs Python.  This module calls PicoSAT's C interface (picosat.h,
exported by that same extension) through :mod:`ctypes` instead, with the solver's default
allocator and with the interpreter lock held throughout, so it is safe from any thread.
Where the extension does not export that interface, it falls back to pyeda's wrapper under
a lock (safe only where no other thread runs Python meanwhile).

References
----------
Biere, A., "PicoSAT Essentials", *Journal on Satisfiability, Boolean Modeling and
Computation* 4 (2008), 75-97.
"""

from __future__ import annotations

import ctypes
import threading
from collections.abc import Sequence
from typing import Any

from pyeda.boolalg import picosat

_SATISFIABLE, _UNSATISFIABLE = 10, 20
_DEFAULT_PHASE = 2  # what pyeda's wrapper asks for (Jeroslow-Wang)
_FALLBACK_LOCK = threading.Lock()


def _load() -> Any | None:
    try:
        lib = ctypes.PyDLL(picosat.__file__)  # PyDLL: the lock stays held during each call
        handle = ctypes.c_void_p
        lib.picosat_init.restype = handle
        lib.picosat_init.argtypes = []
        for name, args, result in (("picosat_reset", [handle], None),
                                   ("picosat_adjust", [handle, ctypes.c_int], None),
                                   ("picosat_set_global_default_phase",
                                    [handle, ctypes.c_int], None),
                                   ("picosat_add", [handle, ctypes.c_int], ctypes.c_int),
                                   ("picosat_assume", [handle, ctypes.c_int], None),
                                   ("picosat_sat", [handle, ctypes.c_int], ctypes.c_int),
                                   ("picosat_deref", [handle, ctypes.c_int], ctypes.c_int)):
            function = getattr(lib, name)
            function.argtypes = args
            function.restype = result
    except (OSError, AttributeError):
        return None
    return lib


_LIB = _load()


class Solver:
    """An incremental PicoSAT instance: clauses are added as they come, and each question is
    asked under assumptions (literals that hold for that question only), so clauses shared
    by many questions are given to the solver once.  Use it in a ``with`` block, which frees
    the solver.  The same sequence of clauses and questions gives the same answers on every
    run, from any thread.
    """

    def __init__(self) -> None:
        self._clauses: list[tuple[int, ...]] = []
        self._handle: int | None = None
        if _LIB is not None:
            self._handle = _LIB.picosat_init()
            if not self._handle:
                raise MemoryError("PicoSAT could not start")
            _LIB.picosat_set_global_default_phase(self._handle, _DEFAULT_PHASE)

    def __enter__(self) -> Solver:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        if self._handle is not None and _LIB is not None:
            _LIB.picosat_reset(self._handle)
        self._handle = None

    def add(self, clauses: Sequence[Sequence[int]]) -> None:
        """Add clauses (DIMACS literals: ``v`` or ``-v`` for variable ``v`` >= 1)."""
        if _LIB is None:
            self._clauses.extend(tuple(c) for c in clauses)
            return
        assert self._handle is not None, "solver closed"
        add, handle = _LIB.picosat_add, self._handle
        for clause in clauses:
            for lit in clause:
                add(handle, lit)
            add(handle, 0)

    def solve(self, assumptions: Sequence[int], n_vars: int) -> tuple[int, ...] | None:
        """A point where every clause and every assumption holds, as the literal of each of
        variables ``1 .. n_vars``; None if there is none."""
        if _LIB is None:
            with _FALLBACK_LOCK:
                found = picosat.satisfy_one(
                    max([n_vars, *(abs(lit) for c in self._clauses for lit in c)]),
                    [*self._clauses, *((lit,) for lit in assumptions)])
            return None if found is None else tuple(found[:n_vars])
        assert self._handle is not None, "solver closed"
        handle = self._handle
        _LIB.picosat_adjust(handle, n_vars)
        for lit in assumptions:
            _LIB.picosat_assume(handle, lit)
        result = _LIB.picosat_sat(handle, -1)
        if result == _UNSATISFIABLE:
            return None
        if result != _SATISFIABLE:
            raise RuntimeError(f"PicoSAT gave no answer (code {result})")
        deref = _LIB.picosat_deref
        return tuple(v if deref(handle, v) > 0 else -v for v in range(1, n_vars + 1))
