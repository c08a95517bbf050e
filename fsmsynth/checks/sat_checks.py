"""Checks over every state code and input of a netlist, by a SAT solver on its clauses.

The netlist's gates become clauses by Tseitin's transformation; PicoSAT then looks for a code
and an input that assert both pins of an exclusive pair (S and R of one flip-flop), or an
unused code whose next code is not the reset code.

References
----------
Tseitin, G. S., "On the complexity of derivation in propositional calculus", *Studies in
Constructive Mathematics and Mathematical Logic* 2, 1968 (clauses of a circuit).
"""

from __future__ import annotations

from collections.abc import Sequence

from fsmsynth.checks.proof import Counterexample
from fsmsynth.logic.cube import Cube
from fsmsynth.logic.sat import Solver
from fsmsynth.stages.netlist import FlipFlop, Netlist


def _exclusive_name(netlist: Netlist) -> str:
    names = [f"{a}{ff.bit}/{b}{ff.bit}" for ff in netlist.flip_flops
             for a, b in ff.storage.exclusive]
    return ", ".join(names)


class _Clauses:
    """A netlist as clauses for a SAT solver (Tseitin 1968): one variable per net.

    Questions about every code and input at once ("can S and R both be 1 anywhere?") are
    answered by PicoSAT (bundled with pyeda; :mod:`fsmsynth.logic.sat`) on this encoding,
    whose size is the netlist's; a BDD over every state bit and every input can instead
    grow exponentially (one-hot logic, for one).  Variables ``1 .. width`` are the state
    bits, then the inputs.
    """

    def __init__(self, netlist: Netlist) -> None:
        self.netlist = netlist
        self.count = netlist.width + len(netlist.inputs)
        self.var = {ff.q: ff.bit + 1 for ff in netlist.flip_flops}
        self.var.update({name: netlist.width + j + 1 for j, name in enumerate(netlist.inputs)})
        self.clauses: list[tuple[int, ...]] = []
        for g in netlist.gates:
            ins = [self.var[i] for i in g.inputs]
            self.var[g.output] = (self._table(g.table, ins) if g.table is not None
                                  else self._gate(g.kind, ins))
        self._solver = Solver()
        self._sent = 0

    def __enter__(self) -> _Clauses:
        return self

    def __exit__(self, *exc: object) -> None:
        self._solver.close()

    def fresh(self) -> int:
        self.count += 1
        return self.count

    def conj(self, lits: Sequence[int]) -> int:
        """A variable equal to the AND of ``lits`` (an empty AND is true)."""
        out = self.fresh()
        self.clauses += [(-out, lit) for lit in lits]
        self.clauses.append((out, *(-lit for lit in lits)))
        return out

    def disj(self, lits: Sequence[int]) -> int:
        """A variable equal to the OR of ``lits`` (an empty OR is false)."""
        return -self.conj([-lit for lit in lits])

    def _xor(self, a: int, b: int) -> int:
        out = self.fresh()
        self.clauses += [(-out, a, b), (-out, -a, -b), (out, -a, b), (out, a, -b)]
        return out

    def _table(self, table: int, ins: list[int]) -> int:
        """A truth table as the OR of its minterms."""
        minterms = [self.conj([lit if m >> i & 1 else -lit for i, lit in enumerate(ins)])
                    for m in range(1 << len(ins)) if table >> m & 1]
        return self.disj(minterms)

    def _gate(self, kind: str, ins: list[int]) -> int:
        if kind in ("not", "buf"):
            return -ins[0] if kind == "not" else ins[0]
        if kind in ("const0", "const1"):
            return self.conj([]) if kind == "const1" else -self.conj([])
        if kind in ("and", "nand"):
            out = self.conj(ins)
        elif kind in ("or", "nor"):
            out = self.disj(ins)
        else:
            out = ins[0]
            for lit in ins[1:]:
                out = self._xor(out, lit)
        return -out if kind in ("nand", "nor", "xnor") else out

    def next_state(self, ff: FlipFlop) -> int:
        """A variable equal to the flip-flop's next state (its cell model, as simulated)."""
        pins = {pin: self.var[net] for pin, net in ff.pins}
        q = self.var[ff.q]
        terms = []
        for values, present, nxt in ff.storage.characteristic:
            if ff.storage.forbidden_next if nxt is None else nxt:
                lits = [q if present else -q]
                lits += [pins[p] if v == "1" else -pins[p] for p, v in zip(ff.storage.pins, values)]
                terms.append(self.conj(lits))
        return self.disj(terms)

    def solve(self, *units: int) -> tuple[int, str] | None:
        """(code, input word) of a point where every literal of ``units`` holds, or None."""
        self._solver.add(self.clauses[self._sent:])
        self._sent = len(self.clauses)
        netlist = self.netlist
        found = self._solver.solve(units, netlist.width + len(netlist.inputs))
        if found is None:
            return None
        true = {lit for lit in found if lit > 0}
        code = sum(1 << b for b in range(netlist.width) if b + 1 in true)
        word = "".join("1" if netlist.width + j + 1 in true else "0"
                       for j in range(len(netlist.inputs)))
        return code, word


def _exclusive_anywhere(netlist: Netlist) -> Counterexample | None:
    """Exclusive pins both 1 at any code and input at all (unused codes included)."""
    if not any(ff.storage.exclusive for ff in netlist.flip_flops):
        return None
    with _Clauses(netlist) as cnf:
        for ff in netlist.flip_flops:
            for a, b in ff.storage.exclusive:
                found = cnf.solve(cnf.var[ff.pin_net(a)], cnf.var[ff.pin_net(b)])
                if found is not None:
                    return Counterexample((found[1],), (), f"{a}{ff.bit}/{b}{ff.bit}",
                                          "not both 1", "both 1", start_code=found[0])
    return None


def _unsafe_unused(netlist: Netlist, codes: Sequence[int] | Sequence[Cube]
                   ) -> Counterexample | None:
    """An unused code and input from which the next code is not the reset code."""
    with _Clauses(netlist) as cnf:
        terms = []
        for code in codes:
            cube = code if isinstance(code, Cube) else Cube.minterm(code, netlist.width)
            terms.append(cnf.conj([v + 1 if positive else -(v + 1)
                                   for v, positive in cube.literals()]))
        unused = cnf.disj(terms)
        for ff in netlist.flip_flops:
            nxt = cnf.next_state(ff)
            found = cnf.solve(unused, -nxt if ff.reset_value else nxt)
            if found is not None:
                return Counterexample((found[1],), (), f"Q{ff.bit} after one clock",
                                      str(ff.reset_value), str(1 - ff.reset_value),
                                      start_code=found[0])
    return None
