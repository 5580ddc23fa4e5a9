"""IEC 60062 resistor colour code."""

from __future__ import annotations

import math

import pytest

from pulsepick.colour import (
    DIGIT_COLOURS,
    MULTIPLIER_EXP,
    TOLERANCE_COLOURS,
    bands_for,
    value_from_bands,
)
from pulsepick.errors import ValueCodeError
from pulsepick.series import get_series

# Worked examples, ref:iec-60062-colour (check value 8)
WORKED = [
    (("yellow", "violet", "red", "gold"), 4700.0, 5.0),
    (("brown", "black", "black", "gold", "brown"), 10.0, 1.0),
    (("brown", "black", "red", "gold"), 1000.0, 5.0),
    (("red", "red", "orange", "gold"), 22000.0, 5.0),
]


@pytest.mark.parametrize(("bands", "ohm", "tol"), WORKED)
def test_worked_examples_decode(bands, ohm, tol):
    assert value_from_bands(bands) == (ohm, tol)


@pytest.mark.parametrize(("bands", "ohm", "tol"), WORKED)
def test_worked_examples_encode(bands, ohm, tol):
    assert bands_for(ohm, tol) == bands


def test_colour_tables():
    # digits black 0 .. white 9; multipliers gold x0.1, silver x0.01, pink x0.001 (ref:iec-60062-colour)
    assert DIGIT_COLOURS == ("black", "brown", "red", "orange", "yellow", "green", "blue",
                             "violet", "grey", "white")
    assert (MULTIPLIER_EXP["white"], MULTIPLIER_EXP["gold"], MULTIPLIER_EXP["silver"],
            MULTIPLIER_EXP["pink"]) == (9, -1, -2, -3)
    # only the uncontested tolerance colours (ref:iec-60062-colour notes)
    assert TOLERANCE_COLOURS == {
        "brown": 1.0, "red": 2.0, "green": 0.5, "blue": 0.25, "violet": 0.1,
        "gold": 5.0, "silver": 10.0, "none": 20.0,
    }


def test_three_band_code_is_twenty_percent():
    # 3-band code: no tolerance band means ±20 % (ref:iec-60062-colour)
    assert value_from_bands(["yellow", "violet", "red"]) == (4700.0, 20.0)
    assert bands_for(4700.0, 20) == ("yellow", "violet", "red")


def test_spellings_and_case():
    assert value_from_bands(["Gray", "RED", "brown", "Gold"]) == (820.0, 5.0)
    assert value_from_bands("yellow-violet-red-gold") == (4700.0, 5.0)
    assert bands_for(8200.0, 5)[0] == "grey"


def test_six_bands_ignore_the_tempco_band():
    assert value_from_bands(["brown", "black", "black", "gold", "brown", "red"]) == (10.0, 1.0)


def test_three_digit_values_use_five_bands_even_at_five_percent():
    assert bands_for(4750.0, 5) == ("yellow", "violet", "green", "brown", "gold")
    with pytest.raises(ValueCodeError, match="3 significant digits"):
        bands_for(4750.0, 5, digits=2)


def test_small_and_large_multipliers():
    assert bands_for(1.0, 5) == ("brown", "black", "gold", "gold")
    assert bands_for(0.1, 1) == ("brown", "black", "black", "pink", "brown")
    assert bands_for(1e9, 5) == ("brown", "black", "grey", "gold")
    assert bands_for(91e9, 5) == ("white", "brown", "white", "gold")


@pytest.mark.parametrize(
    ("value", "tol", "fragment"),
    [
        (4700.0, 3, "no colour band for a tolerance"),
        (4700.0, 0.05, "no colour band for a tolerance"),  # contested colours refused (ref:iec-60062-colour)
        (4751.0, 1, "4 significant digits"),
        (1e12, 5, "outside the colour code"),
        (0.0, 5, "positive finite"),
        (-10.0, 5, "positive finite"),
        (math.nan, 5, "positive finite"),
    ],
)
def test_bands_for_refuses(value, tol, fragment):
    with pytest.raises(ValueCodeError) as info:
        bands_for(value, tol)
    assert fragment in str(info.value)


@pytest.mark.parametrize(
    ("bands", "fragment"),
    [
        (["gold", "red", "red", "gold"], "not a digit colour"),
        (["red", "red", "purple", "gold"], "not a multiplier colour"),
        (["red", "red", "orange", "orange"], "not a tolerance colour"),  # contested (ref:iec-60062-colour)
        (["red"], "3, 4, 5 or 6 bands"),
        (["red"] * 7, "3, 4, 5 or 6 bands"),
        ([3, "red", "red"], "must be a name"),
    ],
)
def test_value_from_bands_refuses(bands, fragment):
    with pytest.raises(ValueCodeError) as info:
        value_from_bands(bands)
    assert fragment in str(info.value)


@pytest.mark.parametrize(("name", "tol"), [("E24", 5.0), ("E96", 1.0)])
def test_round_trip_over_series(name, tol):
    # every E24 value at 5 % and every E96 value at 1 % from 1 Ω to 10 MΩ (IEC 60063, ref:iec-60063/ref:g4usp-preferred-values)
    values = get_series(name).values(1.0, 10e6).tolist()
    assert len(values) == 7 * int(name[1:]) + 1
    for value in values:
        bands = bands_for(value, tol)
        assert len(bands) == (4 if tol == 5.0 else 5)
        assert value_from_bands(bands) == (value, tol)
