"""Exceptions raised by fsmsynth.

Every user mistake raises a subclass of :class:`FsmSynthError`; the command line prints its
message and exits non-zero without a traceback.  Broken internal invariants are ``assert``
statements, never these classes.
"""

from __future__ import annotations


class FsmSynthError(Exception):
    """Base class of every error fsmsynth raises on purpose."""


class TableError(FsmSynthError, ValueError):
    """A state table that cannot be built: unknown state, bad cube, conflicting rows, ...

    Attributes
    ----------
    state:
        The state at fault, when there is one.
    row:
        Index (0-based) of the row at fault in the rows given, when there is one.
    name:
        The input, output or machine name at fault, when there is one.
    entry:
        For guarded transitions, the list ``row`` indexes: ``"transition"`` or
        ``"every_state"``.
    """

    def __init__(
        self,
        message: str,
        *,
        state: str | None = None,
        row: int | None = None,
        name: str | None = None,
        entry: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.state = state
        self.row = row
        self.name = name
        self.entry = entry


class SpecFileError(TableError):
    """A specification file that cannot be read; the message starts with ``file:line:``."""

    def __init__(
        self,
        message: str,
        *,
        path: str,
        line: int | None = None,
        state: str | None = None,
        row: int | None = None,
        name: str | None = None,
    ) -> None:
        where = f"{path}:{line}" if line is not None else path
        super().__init__(f"{where}: {message}", state=state, row=row, name=name)
        self.path = path
        self.line = line


class WarningsAsErrors(FsmSynthError):
    """Spec warnings that a strict build refuses (:mod:`fsmsynth.checks.spec_warnings`);
    ``warnings`` holds them and the message lists them, one per line."""

    def __init__(self, message: str, warnings: tuple[object, ...]) -> None:
        super().__init__(message)
        self.warnings = warnings


class OptionError(FsmSynthError, ValueError):
    """An option value that fsmsynth does not know (storage kind, encoding, ...)."""


class EncodingError(FsmSynthError, ValueError):
    """A state encoding that cannot be used for the table (missing state, duplicate code, ...)."""


class NetlistError(FsmSynthError, ValueError):
    """A netlist that is not a well-formed synchronous circuit (two drivers on a net, a net
    nothing drives, a combinational loop, flip-flops on different clock edges, ...).

    Attributes
    ----------
    net:
        The net at fault, when there is one.
    cell:
        The gate or flip-flop at fault, when there is one.
    """

    def __init__(self, message: str, *, net: str | None = None, cell: str | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.net = net
        self.cell = cell


class OutputError(FsmSynthError, OSError):
    """An output file that cannot be written; the message is ``cannot write PATH: reason``.

    ``path`` is the file at fault.  When it is raised, no output file was replaced.
    """

    def __init__(self, message: str, *, path: str) -> None:
        super().__init__(message)
        self.message = message
        self.path = path

    def __str__(self) -> str:
        return self.message


class VerificationError(FsmSynthError, RuntimeError):
    """A synthesized netlist that does not match its state table.

    This means a defect in fsmsynth; the counterexample is kept on ``.result``, and as a
    cycle by cycle run of the table on ``.trace`` (a :class:`~fsmsynth.checks.trace.Trace`,
    or ``None``).
    """

    def __init__(self, message: str, result: object, trace: object = None) -> None:
        super().__init__(message)
        self.result = result
        self.trace = trace


class InvariantError(FsmSynthError, ValueError):
    """An invariant of the table that the table or the netlist breaks.

    The outcome, with the shortest input sequence from reset that breaks it, is on
    ``.result`` (an :class:`~fsmsynth.checks.invariants.InvariantCheck`), and as a cycle by
    cycle run of the table on ``.trace`` (a :class:`~fsmsynth.checks.trace.Trace`).
    """

    def __init__(self, message: str, result: object, trace: object = None) -> None:
        super().__init__(message)
        self.result = result
        self.trace = trace
