"""Synthesized equations against published results."""

from __future__ import annotations

import sympy

from fsmsynth import StateTable, synthesize


def counter(bits: int) -> StateTable:
    """A binary up-counter whose outputs are its count (a Moore machine, no inputs)."""
    n = 1 << bits
    return StateTable.from_rows(
        name=f"up{bits}", kind="moore", inputs=[], outputs=[f"c{b}" for b in range(bits)],
        reset="n0", rows=[(f"n{i}", "", f"n{(i + 1) % n}", None) for i in range(n)],
        state_outputs={f"n{i}": format(i, f"0{bits}b")[::-1] for i in range(n)})


Q0, Q1, Q2 = sympy.symbols("Q0 Q1 Q2")


def same(eq: object, expected: sympy.Basic) -> bool:
    return bool(sympy.simplify_logic(sympy.Equivalent(sympy.sympify(eq), expected)) == sympy.true)


def test_three_bit_up_counter_with_t_flip_flops() -> None:
    # Mano and Ciletti, Digital Design, 5th ed., section 6.4 (binary counter with T
    # flip-flops): T0 = 1, T1 = Q0, T2 = Q0 Q1 (from memory).
    eqs = synthesize(counter(3), "t").equations
    assert str(eqs["T0"]) == "T0 = 1"
    assert str(eqs["T1"]) == "T1 = Q0"
    assert str(eqs["T2"]) == "T2 = Q0 Q1"
    assert same(eqs["T2"], Q0 & Q1)


def test_three_bit_up_counter_with_jk_flip_flops() -> None:
    # Same section: a JK counter has J = K = the T inputs above (from memory).
    eqs = synthesize(counter(3), "jk").equations
    for bit, expected in ((0, "1"), (1, "Q0"), (2, "Q0 Q1")):
        assert eqs[f"J{bit}"].expression == expected
        assert eqs[f"K{bit}"].expression == expected


def test_three_bit_up_counter_with_d_flip_flops() -> None:
    # Roth and Kinney, Fundamentals of Logic Design, 7th ed., section 12.3 (counter design
    # with D flip-flops): D0 = Q0', D1 = Q1 xor Q0, D2 = Q2 xor Q1 Q0 (from memory).
    eqs = synthesize(counter(3), "d").equations
    assert str(eqs["D0"]) == "D0 = Q0'"
    assert same(eqs["D1"], Q1 ^ Q0)
    assert same(eqs["D2"], Q2 ^ (Q1 & Q0))


def test_three_bit_up_counter_with_sr_flip_flops() -> None:
    # Roth and Kinney, 7th ed., section 12.4 (counter with S-R flip-flops, using the S-R
    # input table): S0 = Q0', R0 = Q0 (from memory).  S and R never 1 together.
    design = synthesize(counter(3), "sr")
    assert str(design.equations["S0"]) == "S0 = Q0'"
    assert str(design.equations["R0"]) == "R0 = Q0"
    assert design.verification


def test_gray_encoded_counter_changes_one_bit_per_step() -> None:
    # Gray code: consecutive codes differ in exactly one bit (common practice, no source),
    # so a 2-bit Gray counter with T flip-flops toggles one flip-flop per clock.
    design = synthesize(counter(2), "t", "gray")
    codes = [design.encoding.codes[f"n{i}"] for i in range(4)]
    assert codes == [0b00, 0b01, 0b11, 0b10]
    assert [bin(a ^ b).count("1") for a, b in zip(codes, codes[1:] + codes[:1])] == [1] * 4
