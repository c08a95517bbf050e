"""The state table: the specification every stage starts from.

A :class:`StateTable` is immutable and valid by construction: :meth:`StateTable.from_rows`
checks every name, cube and row and raises :class:`~fsmsynth.base.errors.TableError` naming the
state, row or input at fault.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Literal

from fsmsynth.base.errors import TableError
from fsmsynth.base.frozen import FrozenMap
from fsmsynth.base.names import did_you_mean, name_problem, ports_of, vector_problem
from fsmsynth.language.signals import condition_problem
from fsmsynth.language.transitions import compile_transitions
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.engine_lock import exclusive
from fsmsynth.model.clocking import Clocking
from fsmsynth.model.intent import TABLE_OF_ROWS, Intent

Kind = Literal["mealy", "moore"]
Row = tuple[str, str, "str | None", "str | None"]
"""``(present state, input cube, next state or None, output cube or None)``."""


@dataclass(frozen=True, slots=True, eq=True)
class StateTable:
    """A Mealy or Moore machine over named 1-bit inputs and outputs.

    Build one with :meth:`from_rows`; the fields are those of the specification:

    * ``rows``: ``(state, input_cube, next_state, output_cube)`` tuples.  ``input_cube`` has one
      character (``0``, ``1`` or ``-``) per input in declared order; ``next_state`` is ``None``
      where it is a don't care; ``output_cube`` has one character per output (``-`` for a
      don't care), and is ``None`` in a Moore machine.
    * ``state_outputs``: for a Moore machine, the output cube of each state.
    """

    name: str
    kind: Kind
    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    states: tuple[str, ...]
    reset: str
    rows: tuple[Row, ...]
    state_outputs: Mapping[str, str] = field(default_factory=lambda: FrozenMap({}))
    invariants: tuple[str, ...] = ()
    intent: Intent = field(default=TABLE_OF_ROWS, compare=False)
    """How the table is meant (not part of the machine, so not of equality)."""
    clocking: Clocking | None = field(default=None, compare=False)
    """The clock, reset and enable conventions the spec asks for (``[clocking]``), if any."""
    _by_state: Mapping[str, tuple[int, ...]] = field(
        default_factory=lambda: FrozenMap({}), compare=False, repr=False)

    @classmethod
    def from_rows(
        cls,
        *,
        name: str,
        inputs: Sequence[str],
        outputs: Sequence[str],
        rows: Iterable[Sequence[object]],
        reset: str | None,
        kind: str = "mealy",
        states: Sequence[str] | None = None,
        state_outputs: Mapping[str, str] | None = None,
        invariants: Sequence[str] | None = None,
        intent: Intent | None = None,
    ) -> StateTable:
        """Build and validate a table.

        Parameters
        ----------
        name:
            Machine name; becomes the Verilog module name.
        inputs, outputs:
            Names of the 1-bit inputs and outputs, in the order cubes list them.
        rows:
            ``(state, input_cube, next_state_or_None, output_cube)`` for a Mealy machine;
            ``output_cube`` is ``None`` for a Moore machine.
        reset:
            The state the machine enters on reset.
        kind:
            ``"mealy"`` or ``"moore"``.
        states:
            Declaration order of the states; by default the order in which states first
            appear as present state in ``rows``.
        state_outputs:
            Moore only: the output cube of each state (a state left out has all outputs
            don't care).
        invariants:
            Conditions that must hold in every reachable state under every input, over
            inputs, outputs and the present state (:mod:`fsmsynth.checks.invariants`); checked by
            :func:`fsmsynth.checks.invariants.check_invariants` and kept by synthesis.
        intent:
            How the table is meant (:class:`~fsmsynth.model.intent.Intent`: final states,
            accepted warnings); by default that of a table of rows, whose unlisted input
            combinations are don't cares.

        Raises
        ------
        TableError
            Naming the row, state or name at fault and what to use instead.

        Examples
        --------
        >>> t = StateTable.from_rows(name="blink", inputs=["go"], outputs=["lamp"],
        ...     rows=[("off", "1", "on", "0"), ("off", "0", "off", "0"),
        ...           ("on", "-", "off", "1")], reset="off")
        >>> t.states
        ('off', 'on')
        """
        if kind not in ("mealy", "moore"):
            raise TableError(f"kind {kind!r}: use 'mealy' or 'moore'")
        for what, names in (("inputs", inputs), ("outputs", outputs)):
            if isinstance(names, (str, bytes)) or not isinstance(names, Sequence):
                raise TableError(f"{what} must be a list of names, not {names!r}")
        if isinstance(rows, (str, bytes)) or not isinstance(rows, Iterable):
            raise TableError(f"rows must be a list of rows, not {rows!r}")
        _check_names(name, inputs, outputs)
        inputs_t, outputs_t = tuple(inputs), tuple(outputs)
        rows_t = tuple(_check_row_shape(i, r, kind, len(inputs_t), len(outputs_t))
                       for i, r in enumerate(rows))
        states_t = _declared_states(states, rows_t)
        known = set(states_t)
        for i, (state, _cube, nxt, _out) in enumerate(rows_t):
            if state not in known:
                raise TableError(f"row {i + 1}: unknown state {state!r}; declare it in states",
                                 state=state, row=i)
            if nxt is not None and nxt not in known:
                raise TableError(
                    f"row {i + 1} (state {state!r}): next state {nxt!r} is unknown; "
                    "give it rows of its own or declare it in states",
                    state=nxt, row=i,
                )
        if reset is None or reset == "":
            raise TableError("missing reset state: name the state the machine starts in")
        if reset not in known:
            raise TableError(
                f"reset state {reset!r} is unknown; use one of {', '.join(states_t)}", state=reset
            )
        outs = _check_state_outputs(kind, state_outputs, known, len(outputs_t))
        by_state: dict[str, list[int]] = {s: [] for s in states_t}
        for i, row in enumerate(rows_t):
            by_state[row[0]].append(i)
        _check_conflicts(rows_t, outputs_t, by_state)
        if isinstance(invariants, (str, bytes)) or not isinstance(invariants, Sequence | None):
            raise TableError(f"invariants must be a list of conditions, not {invariants!r}")
        table = cls(
            name=name,
            kind=kind,  # type: ignore[arg-type]
            inputs=inputs_t,
            outputs=outputs_t,
            states=states_t,
            reset=reset,
            rows=rows_t,
            state_outputs=FrozenMap(outs),
            invariants=tuple(invariants or ()),
            intent=_checked_intent(intent, states_t),
            _by_state=FrozenMap({s: tuple(ix) for s, ix in by_state.items()}),
        )
        for pos, text in enumerate(table.invariants, start=1):
            problem = condition_problem(text, inputs_t, outputs_t, states_t, reset)
            if problem:
                raise TableError(f"invariant {pos} ({text!r}): {problem}")
        return table

    @classmethod
    @exclusive
    def from_transitions(
        cls,
        *,
        name: str,
        reset: str,
        inputs: Sequence[str] | Mapping[str, int],
        outputs: Sequence[str] | Mapping[str, int],
        transitions: Sequence[Sequence[object]],
        kind: str = "mealy",
        default_outputs: Mapping[str, object] | None = None,
        otherwise: str | None = None,
        state_outputs: Mapping[str, Mapping[str, object]] | None = None,
        invariants: Sequence[str] | None = None,
        every_state: Sequence[Sequence[object]] = (),
        states: Sequence[str] | None = None,
        final: Sequence[str] = (),
        accept_warnings: Sequence[str] = (),
    ) -> StateTable:
        """Build a table from guarded transitions, the way designers write a controller.

        ``transitions`` are ``(from, guard, to, outputs)``: ``guard`` is an expression over
        the inputs (see :mod:`fsmsynth.language.guards`), ``"else"``, or an
        :class:`~fsmsynth.language.transitions.ExactCube` (that row as it stands, outside
        the if/elif chain); ``to`` is ``None`` for a don't-care next state; ``outputs`` a
        dict of output -> value (an int, or a bit string of ``0``, ``1`` and ``-``), merged
        over ``default_outputs`` (an output given nowhere is don't care); Moore machines
        give ``None`` there and their outputs in ``state_outputs={state: {output: value}}``.
        ``every_state`` are ``(guard, to, outputs)`` transitions every state takes: a
        state's transitions are tried after them, in the order written, and the first
        whose guard holds fires.  Input combinations nothing covers are unspecified
        (``otherwise="dont-care"``, also when ``otherwise`` is not given, which the
        ``uncovered-inputs`` warning reports) or stay in the state with the default outputs
        (``otherwise="stay"``).  ``final`` names states meant never to be left and
        ``accept_warnings`` the warnings accepted (:mod:`fsmsynth.checks.spec_warnings`).
        States are declared by ``states`` (every state a transition names must be in it;
        a state may have no transitions), else in the order they first appear as ``from``,
        then those that appear only as ``to``.

        The rows of the result are the compiled cubes (disjoint, from BDDs); everything else
        is as :meth:`from_rows` builds it.  ``inputs`` and ``outputs`` are lists of 1-bit
        names or dicts of name -> width; a vector ``mode`` of width 2 becomes the bits
        ``mode[1]``, ``mode[0]`` (most significant first in cubes, bit 0 least significant),
        which are also their Verilog bit-selects of one port ``[1:0] mode``.
        ``invariants`` are as for :meth:`from_rows`.

        Raises
        ------
        TableError
            Naming the transition (1-based position), its state and the text at fault: an
            unknown name, a syntax error with its column, a constant or output value that
            does not fit, or a transition that can never fire (naming the earlier ones that
            cover it).

        Examples
        --------
        >>> t = StateTable.from_transitions(name="gate", reset="shut",
        ...     inputs=["call", "clear"], outputs={"motor": 1}, default_outputs={"motor": 0},
        ...     transitions=[("shut", "call & clear", "open", {"motor": 1}),
        ...                  ("shut", "else", "shut", {}),
        ...                  ("open", "~clear", "shut", {}),
        ...                  ("open", "else", "open", {})])
        >>> [r for r in t.rows if r[0] == "shut"]
        [('shut', '11', 'open', '1'), ('shut', '0-', 'shut', '0'), ('shut', '10', 'shut', '0')]
        """
        compiled = compile_transitions(kind=kind, inputs=inputs, outputs=outputs,
                                       transitions=transitions,
                                       default_outputs=default_outputs,
                                       otherwise=otherwise or "dont-care",
                                       state_outputs=state_outputs, every_state=every_state,
                                       states=states)
        return cls.from_rows(name=name, kind=kind, inputs=compiled.inputs,
                             outputs=compiled.outputs, rows=compiled.rows, reset=reset,
                             states=compiled.states, state_outputs=compiled.state_outputs,
                             invariants=invariants,
                             intent=Intent(gaps_said=otherwise is not None,
                                           final=_names(final, "final"),
                                           accept=_names(accept_warnings, "accept_warnings")))

    @classmethod
    def _derived(cls, base: StateTable, *, rows: Iterable[Row], states: Sequence[str],
                 reset: str, state_outputs: Mapping[str, str] | None = None,
                 invariants: tuple[str, ...] = ()) -> StateTable:
        """A table a stage built from a valid ``base`` (same names and kind), not re-checked.

        Used for results such as a reduced machine, whose rows are copies of validated rows
        with states renamed; the stage's own tests check that it keeps them valid.
        """
        rows_t = tuple(rows)
        by_state: dict[str, list[int]] = {s: [] for s in states}
        for i, row in enumerate(rows_t):
            by_state[row[0]].append(i)
        assert reset in by_state
        return cls(name=base.name, kind=base.kind, inputs=base.inputs, outputs=base.outputs,
                   states=tuple(states), reset=reset, rows=rows_t,
                   state_outputs=FrozenMap(dict(state_outputs or {})),
                   invariants=invariants,
                   intent=replace(base.intent, final=tuple(
                       s for s in base.intent.final if s in by_state)),
                   _by_state=FrozenMap({s: tuple(ix) for s, ix in by_state.items()}))

    def rows_of(self, state: str) -> tuple[Row, ...]:
        """The rows whose present state is ``state``, in table order."""
        return tuple(self.rows[i] for i in self._by_state.get(state, ()))

    def output_cube_of(self, state: str) -> str:
        """Moore: the output cube of ``state`` (all don't care when none was given)."""
        return self.state_outputs.get(state, "-" * len(self.outputs))

    def lookup(self, state: str, input_bits: str) -> tuple[str | None, str]:
        """What the table says for ``state`` under one full input assignment.

        ``input_bits`` has one ``0``/``1`` per input.  Returns the next state (``None`` where
        no row specifies it) and the output cube, merged over every row that covers the
        assignment.  For a Moore machine the outputs are those of ``state``.
        """
        point = Cube.from_string(input_bits).value
        nxt: str | None = None
        outs = ["-"] * len(self.outputs)
        for _s, cube, row_next, row_out in self.rows_of(state):
            if not Cube.from_string(cube).contains_point(point):
                continue
            nxt = row_next if row_next is not None else nxt
            for i, ch in enumerate(row_out or ""):
                if ch != "-":
                    outs[i] = ch
        if self.kind == "moore":
            return nxt, self.output_cube_of(state)
        return nxt, "".join(outs)


def _names(given: object, what: str) -> tuple[str, ...]:
    if isinstance(given, (str, bytes)) or not isinstance(given, Sequence) or not all(
            isinstance(n, str) for n in given):
        raise TableError(f"{what} must be a list of names, not {given!r}")
    return tuple(given)


def _checked_intent(intent: Intent | None, states: tuple[str, ...]) -> Intent:
    if intent is None:
        return TABLE_OF_ROWS
    for state in intent.final:
        if state not in states:
            raise TableError(f"final state {state!r} is not a state"
                             f"{did_you_mean(state, states)}", state=state)
    return intent


def _check_names(name: str, inputs: Sequence[str], outputs: Sequence[str]) -> None:
    problem = name_problem(name)
    if problem:
        raise TableError(f"machine name {name!r} {problem}", name=str(name))
    seen: dict[str, str] = {}
    for role, names in (("input", inputs), ("output", outputs)):
        for n in names:
            problem = name_problem(n)
            if problem:
                raise TableError(f"{role} name {n!r} {problem}", name=str(n))
            if n in seen:
                raise TableError(
                    f"{role} name {n!r} is already used as an {seen[n]}: names must be unique",
                    name=n,
                )
            if n == name:
                raise TableError(
                    f"{role} name {n!r} is the machine name too: rename one of them", name=n
                )
            seen[n] = role
        problem = vector_problem(names)
        if problem:
            raise TableError(f"{role}s: {problem}")
    port_names = [p for p, _w in ports_of(list(inputs) + list(outputs))]
    for port in port_names:
        if port_names.count(port) > 1 or port == name:
            raise TableError(f"port {port!r} is named twice (as a vector and as another "
                             "input, output or the machine): rename one", name=port)


def _check_cube(text: object, width: int, what: str, where: str, row: int | None,
                state: str | None) -> str:
    if not isinstance(text, str) or len(text) != width or set(text) - {"0", "1", "-"}:
        raise TableError(
            f"{what} {text!r} {where}: use only 0, 1 or - and exactly {width} "
            f"character{'s' if width != 1 else ''}, one per {what.split()[0]}",
            state=state, row=row,
        )
    return text


def _check_row_shape(i: int, row: Sequence[object], kind: str, n_in: int, n_out: int) -> Row:
    if isinstance(row, (str, bytes)) or not isinstance(row, Sequence) or len(row) != 4:
        raise TableError(
            f"row {i + 1}: expected (state, input_cube, next_state, output_cube), got {row!r}",
            row=i,
        )
    state, cube, nxt, out = row
    if not isinstance(state, str) or not state or state == "-":
        raise TableError(f"row {i + 1}: state {state!r} must be a non-empty name other than '-'",
                         row=i)
    for name in (state, nxt):
        if isinstance(name, str) and not name.isprintable():
            raise TableError(f"row {i + 1}: state {name!r} contains a control character "
                             "(a line break, tab, ...): state names are printable text",
                             state=name, row=i)
    where = f"in row {i + 1} (state {state!r})"
    _check_cube(cube, n_in, "input cube", where, i, state)
    if nxt is not None and (not isinstance(nxt, str) or not nxt or nxt == "-"):
        raise TableError(
            f"row {i + 1} (state {state!r}): next state {nxt!r} must be a state name, "
            "or None for a don't care", state=state, row=i,
        )
    if kind == "moore":
        if out is not None and not (out == "" and n_out == 0):
            raise TableError(
                f"row {i + 1} (state {state!r}): a Moore machine's outputs belong to states, "
                "not rows: give them in state_outputs and leave the row's output None",
                state=state, row=i,
            )
        out = None
    elif out is None:
        out = "-" * n_out
    else:
        _check_cube(out, n_out, "output cube", where, i, state)
    return (state, str(cube), nxt, out)  # type: ignore[return-value]


def _declared_states(states: Sequence[str] | None, rows: tuple[Row, ...]) -> tuple[str, ...]:
    if states is None:
        return tuple(dict.fromkeys(r[0] for r in rows))
    result = tuple(states)
    for s in result:
        if not isinstance(s, str) or not s or s == "-" or not s.isprintable():
            raise TableError(f"state {s!r} must be a non-empty name of printable text other "
                             "than '-'")
    seen: set[str] = set()
    for s in result:
        if s in seen:
            raise TableError(f"state {s!r} is declared twice in states", state=s)
        seen.add(s)
    return result


def _check_state_outputs(kind: str, given: Mapping[str, str] | None, known: set[str],
                         n_out: int) -> dict[str, str]:
    if kind == "mealy":
        if given:
            raise TableError(
                "state_outputs given for a Mealy machine: put outputs on the rows, "
                "or use kind='moore'"
            )
        return {}
    result: dict[str, str] = {}
    for state, cube in (given or {}).items():
        if state not in known:
            raise TableError(f"state_outputs: unknown state {state!r}", state=state)
        result[state] = _check_cube(cube, n_out, "output cube", f"of state {state!r}", None,
                                    state)
    return result


def _check_conflicts(rows: tuple[Row, ...], outputs: tuple[str, ...],
                     by_state: Mapping[str, list[int]]) -> None:
    """Reject two overlapping rows of one state that disagree where both are specified."""
    for state, indices in by_state.items():
        cubes = [Cube.from_string(rows[i][1]) for i in indices]
        for a in range(len(indices)):
            for b in range(a + 1, len(indices)):
                if not cubes[a].intersects(cubes[b]):
                    continue
                ra, rb = rows[indices[a]], rows[indices[b]]
                both = (f"rows {indices[a] + 1} and {indices[b] + 1} of state {state!r} "
                        f"overlap (inputs {ra[1]!r} and {rb[1]!r})")
                if ra[2] is not None and rb[2] is not None and ra[2] != rb[2]:
                    raise TableError(
                        f"{both} but go to different next states {ra[2]!r} and {rb[2]!r}: "
                        "make the input cubes disjoint or the next states equal",
                        state=state, row=indices[b],
                    )
                for k, (x, y) in enumerate(zip(ra[3] or "", rb[3] or "")):
                    if "-" not in (x, y) and x != y:
                        raise TableError(
                            f"{both} but give output {outputs[k]!r} the values {x} and {y}: "
                            "make the input cubes disjoint or the outputs agree",
                            state=state, row=indices[b],
                        )
