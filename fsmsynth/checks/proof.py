"""What a proof of a netlist against its table returns: a :class:`Verification`, and the
shortest :class:`Counterexample` when it fails.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class Counterexample:
    """An input sequence after which the netlist and the table disagree.

    Attributes
    ----------
    inputs:
        One string per clock cycle, one ``0``/``1`` per input in declared order.  The
        difference shows in the last cycle, before its clock edge.
    states:
        The table's present state in each cycle (empty when ``start_code`` is set).
    signal:
        The output (or the pair of exclusive pins, ``"S0/R0"``) that differs.
    expected, actual:
        The table's value and the netlist's value of ``signal`` (for an exclusive pair,
        ``"not both 1"`` and ``"both 1"``).
    start_code:
        ``None`` for a sequence from reset; otherwise the state code the netlist starts in
        (an unused code, for a check that does not depend on reachability).
    """

    inputs: tuple[str, ...]
    states: tuple[str, ...]
    signal: str
    expected: str
    actual: str
    start_code: int | None = None

    def describe(self) -> str:
        """One sentence a person can act on."""
        steps = ", ".join(self.inputs) if self.inputs else "(no inputs)"
        start = ("from reset" if self.start_code is None
                 else f"from state code {self.start_code:b}")
        where = f" in state {self.states[-1]!r}" if self.states else ""
        return (f"{self.signal} is {self.actual} but should be {self.expected}{where} "
                f"after inputs {steps} {start}")


@dataclass(frozen=True, slots=True)
class Verification:
    """Outcome of :func:`verify`.  True when the netlist matches the table."""

    equivalent: bool
    product_states: int
    input_classes: int
    counterexample: Counterexample | None = None
    safe_unused: bool | None = None
    symbolic: bool = False
    """Whether the walk compared each node on BDDs (many input classes) rather than over
    input classes of the whole table; ``input_classes`` is then 0."""
    note: str = ""
    """How a timed machine's proof went (:mod:`fsmsynth.checks.timed_proof`), else empty."""

    def __bool__(self) -> bool:
        return self.equivalent

    def summary(self) -> str:
        """A line for reports."""
        if self.equivalent:
            inputs = ("inputs compared symbolically" if self.symbolic
                      else f"{self.input_classes} input classes")
            text = (f"verified: netlist matches the table from reset "
                    f"({self.product_states} product states, {inputs})")
            if self.safe_unused:
                text += "; every unused code goes to reset in one clock"
            return text + (f"; {self.note}" if self.note else "")
        assert self.counterexample is not None
        if self.counterexample.signal == "(part)":
            return f"NOT verified: {self.counterexample.actual} ({self.note})"
        return "NOT verified: " + self.counterexample.describe()
