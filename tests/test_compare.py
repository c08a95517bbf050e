"""Comparing storage kinds: mixed storage, compare(), conversions, cost weights."""

from __future__ import annotations

import json
from concurrent.futures import ProcessPoolExecutor, ThreadPoolExecutor
from pathlib import Path

import pytest
import sympy
from hypothesis import given, settings
from strategies import state_tables

from fsmsynth import STORAGES, SpecFileError, StateTable, synthesize
from fsmsynth.cli import main
from fsmsynth.flows.compare import compare
from fsmsynth.flows.convert import convert_storage
from fsmsynth.formats import read_table
from fsmsynth.formats.weights_toml import read_weights
from fsmsynth.logic.cost import CostWeights

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@settings(max_examples=25)
@given(table=state_tables(max_states=8, max_inputs=3))
def test_best_storage_costs_no_more_than_any_single_kind(table: StateTable) -> None:
    best = synthesize(table, "best")
    assert best.verification
    for kind in STORAGES:
        assert best.cost.total <= synthesize(table, kind, check=False).cost.total


def test_mixed_storage_per_bit_is_carried_into_netlist_and_verilog() -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    design = synthesize(table, {0: "jk", 1: "de"})
    assert design.storage == "mixed" and design.verification
    assert [ff.storage.name for ff in design.netlist.flip_flops] == ["jk", "de"]
    assert "module fs_jk_ff" in design.verilog and "module fs_de_ff" in design.verilog
    assert {"J0", "K0", "D1", "E1"} <= set(design.equations)


@pytest.mark.parametrize(("target", "using", "expected"), [
    # Mano and Ciletti, Digital Design, 5th ed., section 5.4 (flip-flops built from other
    # flip-flops: T from JK with J and K tied, JK from D with D = JQ' + K'Q, T from D with
    # D = T xor Q); D from JK (J = D, K = D') and D from SR (S = D, R = D') are the usual
    # conversions of the same section's exercises (from memory).
    ("t", "jk", {"J": "T", "K": "T"}),
    ("d", "jk", {"J": "D", "K": "~D"}),
    ("jk", "d", {"D": "J & ~Q | ~K & Q"}),
    ("t", "d", {"D": "Xor(T, Q)"}),
    ("d", "sr", {"S": "D", "R": "~D"}),
])
def test_storage_conversions_match_textbook(target: str, using: str,
                                            expected: dict[str, str]) -> None:
    result = convert_storage(target, using=using)
    assert result.design.verification
    assert set(result.equations) == set(expected)
    for pin, text in expected.items():
        want = sympy.sympify(text, locals={n: sympy.Symbol(n) for n in "DJKQRST"})
        got = result.equations[pin].to_sympy()
        assert sympy.simplify_logic(sympy.Equivalent(got, want)) == sympy.true, (pin, got)


def test_compare_ranks_designs_and_runs_on_executors() -> None:
    table = read_table(EXAMPLES / "greenhouse_vent.toml")
    here = compare(table, storages=["d", "jk", "best"], encodings=["binary", "one-hot"])
    totals = [r.total for r in here.rows]
    assert totals == sorted(totals) and all(r.verified for r in here.rows)
    assert len(here.rows) == 6 and here.best == here.rows[0]
    with ThreadPoolExecutor(2) as pool:
        threaded = compare(table, storages=["d", "jk", "best"], encodings=["binary", "one-hot"],
                           executor=pool)
    with ProcessPoolExecutor(2) as pool:
        processed = compare(table, storages=["d", "jk", "best"],
                            encodings=["binary", "one-hot"], executor=pool)
    assert threaded == here == processed


def test_weights_change_the_ranking(tmp_path: Path) -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    heavy_jk = tmp_path / "w.toml"
    heavy_jk.write_text("gate_input = 1\n[flip_flop]\njk = 100\nsr = 100\n")
    weights = read_weights(heavy_jk)
    assert weights.flip_flop_weight("jk") == 100 and weights.flip_flop_weight("d") == 6
    result = compare(table, storages=["d", "jk"], encodings=["binary"], weights=weights)
    assert result.best.storage == "d"
    assert synthesize(table, "jk", weights=CostWeights(gate_input=2.0)).cost.total == (
        2 * synthesize(table, "jk").cost.gate_inputs + 12)


def test_bad_weights_file(tmp_path: Path) -> None:
    bad = tmp_path / "w.toml"
    bad.write_text("[flip_flop]\nxy = 3\n")
    with pytest.raises(SpecFileError, match=r"w\.toml: \[flip_flop\] 'xy': use one of d, de, "
                                            r"jk, sr, t$"):
        read_weights(bad)


def test_compare_cli_formats(capsys: pytest.CaptureFixture[str]) -> None:
    spec = str(EXAMPLES / "rail_crossing.csv")
    assert main(["compare", spec, "--storages", "d,t", "--encodings", "binary,gray"]) == 0
    text = capsys.readouterr().out
    assert text.startswith("rail_crossing: 4 designs, cheapest first\nrank  storage")
    assert main(["compare", spec, "--storages", "d,t", "--encodings", "binary", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert [d["rank"] for d in data["designs"]] == [1, 2]
    assert main(["compare", spec, "--storages", "d", "--encodings", "binary", "--csv"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith("rank,storage,encoding") and len(lines) == 2


def test_convert_cli(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["convert", "t", "--using", "jk"]) == 0
    out = capsys.readouterr().out
    assert "  J = T\n  K = T\n" in out and "verified" in out


def test_exact_logic_in_synthesis_reports_proof(capsys: pytest.CaptureFixture[str],
                                                tmp_path: Path) -> None:
    table = read_table(EXAMPLES / "parcel_locker.toml")
    design = synthesize(table, "jk", logic="exact")
    assert design.cover.method == "exact" and design.cover.proven and design.verification
    auto = synthesize(table, "jk", "one-hot", logic="auto")  # 4 + 3 = 7 variables: exact
    assert auto.cover.method == "exact"
    main(["build", str(EXAMPLES / "parcel_locker.toml"), "--logic", "exact", "-o", str(tmp_path)])
    assert "two-level minimization: exact, proven minimal" in capsys.readouterr().out


@settings(max_examples=10)
@given(table=state_tables(max_states=6, max_inputs=3))
def test_comparison_best_rows_are_what_synthesize_best_gives(table: StateTable) -> None:
    # compare() derives "best" from the single-kind rows and one per-bit design instead of
    # synthesizing every kind again: the rows must still be synthesize(storage="best").
    result = compare(table, storages=["jk", "best"], encodings=["binary", "one-hot"])
    for row in result.rows:
        if row.storage == "best":
            design = synthesize(table, "best", row.encoding)
            assert row.total == design.cost.total
            assert row.kinds == tuple(s.name for s in design.storages)
