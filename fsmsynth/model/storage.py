"""Flip-flop kinds as data: characteristic table, excitation table, pins.

Each :class:`Storage` is described twice, as the trade describes it: by its characteristic
table (pin values and present state -> next state) and by its excitation table (present and
next state -> the pin values that cause that change, with don't cares).  The tests check
each against a textbook and against each other.  Adding a kind is adding one value to
:data:`STORAGES`.

References
----------
Mano, M. M. and Ciletti, M. D., *Digital Design*, 5th ed., Pearson, 2013: section 5.4
(characteristic tables and equations of D, JK and T flip-flops) and section 5.8 (excitation
tables).  The D flip-flop with clock enable is common practice in FPGA and standard-cell
libraries (no source): it loads D on an edge where E = 1 and holds otherwise.
"""

from __future__ import annotations

from dataclasses import dataclass

from fsmsynth.base.choices import DEFAULT_STORAGES
from fsmsynth.base.errors import OptionError


@dataclass(frozen=True, slots=True)
class Storage:
    """One kind of edge-triggered storage element.

    Attributes
    ----------
    name:
        Short lower-case name used in the API and on the command line (``"jk"``).
    title:
        Name for people (``"JK flip-flop"``).
    pins:
        Data pin names in order; equation signals are the pin name followed by the state
        bit number (``J0``, ``K0``).
    characteristic:
        ``(pin_values, q, q_next)`` for every pin combination and present state, where
        ``pin_values`` has one ``0``/``1`` per pin and ``q_next`` is ``None`` for a
        combination the element must never see (``S = R = 1``).
    excitation:
        ``(q, q_next, pin_cube)``: the pin values that take the element from ``q`` to
        ``q_next``, one ``0``/``1``/``-`` per pin.
    equation:
        The characteristic equation as textbooks print it.
    verilog_next:
        The next-state expression used in the cell's Verilog model, over the lower-case pin
        names and ``q``.
    exclusive:
        Pairs of pins that must never be 1 together.
    forbidden_next:
        What the cell model (``verilog_next``) does on a combination the characteristic
        table forbids, so that simulation agrees with the written cell; verification
        reports the combination as a failure in any case.
    """

    name: str
    title: str
    pins: tuple[str, ...]
    characteristic: tuple[tuple[str, int, int | None], ...]
    excitation: tuple[tuple[int, int, str], ...]
    equation: str
    verilog_next: str
    exclusive: tuple[tuple[str, str], ...] = ()
    forbidden_next: int = 0

    def pin_values(self, q: int, q_next: int) -> str:
        """The excitation entry for ``q -> q_next``: one ``0``/``1``/``-`` per pin."""
        for a, b, cube in self.excitation:
            if (a, b) == (q, q_next):
                return cube
        raise AssertionError(f"{self.name}: no excitation entry for {q} -> {q_next}")

    def next_state(self, q: int, pins: dict[str, int], ones: int) -> int:
        """Bit-parallel characteristic function.

        Every argument is a bit vector (one bit per evaluation point, ``ones`` has all of
        them set); returns the next-state vector.  Forbidden combinations give what the
        cell model gives (:attr:`forbidden_next`); use :meth:`forbidden` to find them.
        """
        result = 0
        for values, present, nxt in self.characteristic:
            if not (self.forbidden_next if nxt is None else nxt):
                continue
            term = q if present else ones & ~q
            for pin, v in zip(self.pins, values):
                term &= pins[pin] if v == "1" else ones & ~pins[pin]
            result |= term
        return result

    def forbidden(self, pins: dict[str, int]) -> int:
        """Bit vector of the points where an exclusive pin pair is 1 together."""
        bad = 0
        for a, b in self.exclusive:
            bad |= pins[a] & pins[b]
        return bad


def _table(rule: dict[str, tuple[int | None, int | None]]) -> tuple[
        tuple[str, int, int | None], ...]:
    """Expand ``{pin_values: (next when q=0, next when q=1)}`` to characteristic rows."""
    return tuple((v, q, rule[v][q]) for v in sorted(rule) for q in (0, 1))


D = Storage(
    name="d",
    title="D flip-flop",
    pins=("D",),
    characteristic=_table({"0": (0, 0), "1": (1, 1)}),
    excitation=((0, 0, "0"), (0, 1, "1"), (1, 0, "0"), (1, 1, "1")),
    equation="Q+ = D",
    verilog_next="d",
)

T = Storage(
    name="t",
    title="T flip-flop",
    pins=("T",),
    characteristic=_table({"0": (0, 1), "1": (1, 0)}),
    excitation=((0, 0, "0"), (0, 1, "1"), (1, 0, "1"), (1, 1, "0")),
    equation="Q+ = T Q' + T' Q",
    verilog_next="t ^ q",
)

JK = Storage(
    name="jk",
    title="JK flip-flop",
    pins=("J", "K"),
    characteristic=_table({"00": (0, 1), "01": (0, 0), "10": (1, 1), "11": (1, 0)}),
    excitation=((0, 0, "0-"), (0, 1, "1-"), (1, 0, "-1"), (1, 1, "-0")),
    equation="Q+ = J Q' + K' Q",
    verilog_next="(j & ~q) | (~k & q)",
)

SR = Storage(
    name="sr",
    title="SR flip-flop",
    pins=("S", "R"),
    characteristic=_table({"00": (0, 1), "01": (0, 0), "10": (1, 1), "11": (None, None)}),
    excitation=((0, 0, "0-"), (0, 1, "10"), (1, 0, "01"), (1, 1, "-0")),
    equation="Q+ = S + R' Q  (S R = 0)",
    verilog_next="s | (~r & q)",
    exclusive=(("S", "R"),),
    forbidden_next=1,  # the cell model above is set-dominant
)

DE = Storage(
    name="de",
    title="D flip-flop with clock enable",
    pins=("D", "E"),
    characteristic=_table({"00": (0, 1), "10": (0, 1), "01": (0, 0), "11": (1, 1)}),
    # Holding is done by disabling the clock enable; every change loads D.
    excitation=((0, 0, "-0"), (0, 1, "11"), (1, 0, "01"), (1, 1, "-0")),
    equation="Q+ = E D + E' Q",
    verilog_next="(e & d) | (~e & q)",
)

STORAGES: dict[str, Storage] = {s.name: s for s in (D, T, JK, SR, DE)}
"""Every storage kind by name."""
assert (*sorted(STORAGES), "best") == DEFAULT_STORAGES  # the command line's list agrees


def storage_named(name: str | Storage) -> Storage:
    """The storage kind called ``name`` (``"d"``, ``"t"``, ``"jk"``, ``"sr"``, ``"de"``)."""
    if isinstance(name, Storage):
        return name
    key = str(name).lower()
    if key not in STORAGES:
        raise OptionError(
            f"unknown storage kind {name!r}: use one of {', '.join(sorted(STORAGES))}"
        )
    return STORAGES[key]
