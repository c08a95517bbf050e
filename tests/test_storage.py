"""Storage kinds against textbook characteristic and excitation tables."""

from __future__ import annotations

import itertools

import pytest

from fsmsynth.base.errors import OptionError
from fsmsynth.model.storage import STORAGES, storage_named

# Characteristic tables: Mano, M. M. and Ciletti, M. D., Digital Design, 5th ed., Pearson,
# 2013, section 5.4, Table 5.1 (JK, D and T); SR: Roth, C. H. and Kinney, L. L.,
# Fundamentals of Logic Design, 7th ed., Cengage, 2014, section 11.5 (S-R flip-flop),
# from memory.  Each entry: (pin values, Q) -> Q+; None = not allowed.
TEXTBOOK_CHARACTERISTIC = {
    "d": {("0", 0): 0, ("0", 1): 0, ("1", 0): 1, ("1", 1): 1},
    "t": {("0", 0): 0, ("0", 1): 1, ("1", 0): 1, ("1", 1): 0},
    "jk": {("00", 0): 0, ("00", 1): 1, ("01", 0): 0, ("01", 1): 0,
           ("10", 0): 1, ("10", 1): 1, ("11", 0): 1, ("11", 1): 0},
    "sr": {("00", 0): 0, ("00", 1): 1, ("01", 0): 0, ("01", 1): 0,
           ("10", 0): 1, ("10", 1): 1, ("11", 0): None, ("11", 1): None},
    # D with clock enable (pins D, E): E = 0 holds, E = 1 loads D (common practice, no source).
    "de": {("00", 0): 0, ("00", 1): 1, ("10", 0): 0, ("10", 1): 1,
           ("01", 0): 0, ("01", 1): 0, ("11", 0): 1, ("11", 1): 1},
}

# Excitation tables: Mano and Ciletti, Digital Design, 5th ed., section 5.8, Table 5.5
# (JK and T); D is Q+ = D; SR: Roth and Kinney, 7th ed., section 12.4 (S-R flip-flop input
# table used for counter design), from memory.  (Q, Q+) -> pin values, - = don't care.
TEXTBOOK_EXCITATION = {
    "d": {(0, 0): "0", (0, 1): "1", (1, 0): "0", (1, 1): "1"},
    "t": {(0, 0): "0", (0, 1): "1", (1, 0): "1", (1, 1): "0"},
    "jk": {(0, 0): "0-", (0, 1): "1-", (1, 0): "-1", (1, 1): "-0"},
    "sr": {(0, 0): "0-", (0, 1): "10", (1, 0): "01", (1, 1): "-0"},
    # D with enable: a hold disables the clock, a change loads D (common practice, no source).
    "de": {(0, 0): "-0", (0, 1): "11", (1, 0): "01", (1, 1): "-0"},
}

# Characteristic equations as printed in the same sections (from memory):
# D: Q+ = D; T: Q+ = T xor Q; JK: Q+ = J Q' + K' Q; SR: Q+ = S + R' Q with S R = 0.
TEXTBOOK_EQUATION = {
    "d": lambda p, q: p["D"],
    "t": lambda p, q: p["T"] ^ q,
    "jk": lambda p, q: (p["J"] & (1 - q)) | ((1 - p["K"]) & q),
    "sr": lambda p, q: p["S"] | ((1 - p["R"]) & q),
    "de": lambda p, q: (p["E"] & p["D"]) | ((1 - p["E"]) & q),
}


@pytest.mark.parametrize("name", sorted(STORAGES))
def test_characteristic_table_matches_textbook(name: str) -> None:
    storage = STORAGES[name]
    table = {(values, q): nxt for values, q, nxt in storage.characteristic}
    assert table == TEXTBOOK_CHARACTERISTIC[name]


@pytest.mark.parametrize("name", sorted(STORAGES))
def test_excitation_table_matches_textbook(name: str) -> None:
    storage = STORAGES[name]
    assert {(q, nq): pins for q, nq, pins in storage.excitation} == TEXTBOOK_EXCITATION[name]


@pytest.mark.parametrize("name", sorted(STORAGES))
def test_bit_parallel_next_state_matches_characteristic_equation(name: str) -> None:
    storage = STORAGES[name]
    for bits in itertools.product((0, 1), repeat=len(storage.pins)):
        pins = dict(zip(storage.pins, bits))
        for q in (0, 1):
            if storage.forbidden(pins):
                continue
            assert storage.next_state(q, pins, 1) == TEXTBOOK_EQUATION[name](pins, q)


@pytest.mark.parametrize("name", sorted(STORAGES))
def test_excitation_follows_from_characteristic(name: str) -> None:
    """Every pin assignment the excitation entry allows really makes the transition, and
    (except for the enable flip-flop, whose entries choose "hold = disabled") every
    assignment that makes it is within the entry."""
    storage = STORAGES[name]
    for q, nq, cube in storage.excitation:
        for values, present, nxt in storage.characteristic:
            if present != q:
                continue
            inside = all(c in ("-", v) for c, v in zip(cube, values))
            if inside:
                assert nxt == nq, (name, q, nq, values)
            elif name != "de":
                assert nxt != nq, (name, q, nq, values)


def test_sr_forbids_both_pins_high() -> None:
    sr = STORAGES["sr"]
    assert sr.forbidden({"S": 1, "R": 1}) == 1
    assert sr.forbidden({"S": 1, "R": 0}) == 0


def test_unknown_storage_name() -> None:
    with pytest.raises(OptionError,
                       match=r"^unknown storage kind 'xy': use one of d, de, jk, sr, t$"):
        storage_named("xy")
