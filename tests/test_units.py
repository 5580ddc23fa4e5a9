"""Reading values and quantities, writing engineering notation and RKM codes."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pulsepick.errors import PulsepickError, UnitError, ValueCodeError
from pulsepick.series import SERIES_NAMES, get_series
from pulsepick.units import (
    QUANTITY_KINDS,
    TOLERANCE_LETTERS,
    TOLERANCE_Z,
    format_eng,
    format_rkm,
    parse_quantity,
    parse_range,
    parse_tolerance,
    parse_value,
    parse_value_unit,
    tolerance_letter,
)

# --- parse_value -------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # RKM check values, ref:iec-60062-rkm (resistors) and ref:cap-tolerance-letters (2n2), check value 6
        ("4K7", 4700.0),
        ("R47", 0.47),
        ("47K3", 47300.0),
        ("4M7", 4.7e6),
        ("2n2", 2.2e-9),
        # more RKM examples from ref:iec-60062-rkm: 4R7, 470R, 47K, 470K
        ("4R7", 4.7),
        ("470R", 470.0),
        ("47K", 47e3),
        ("470K", 470e3),
        # capacitance examples that follow the RKM rule (ref:iec-60062-rkm): 4n7, 4u7, 100n, p68
        ("4n7", 4.7e-9),
        ("4u7", 4.7e-6),
        ("100n", 100e-9),
        ("p68", 0.68e-12),
    ],
)
def test_rkm_reference_values(text, expected):
    assert parse_value(text) == expected


@pytest.mark.parametrize(
    ("text", "expected"),
    # SI prefixes (SI brochure: p 1e-12, n 1e-9, u 1e-6, m 1e-3, k 1e3, M 1e6, G 1e9, T 1e12)
    [
        ("4k7", 4700.0), ("2R2", 2.2), ("4µ7", 4.7e-6), ("4\u03bc7", 4.7e-6),
        ("2.2uF", 2.2e-6), ("1.5 F", 1.5), ("10M", 10e6), ("47 kΩ", 47e3),
        ("47 k\u2126", 47e3), ("47kohm", 47e3), ("47 k", 47e3), ("47 ohms", 47.0),
        ("1e3", 1000.0), ("0.1", 0.1), (".5k", 500.0), ("1m", 1e-3), ("2.2 µF", 2.2e-6),
        ("3G3", 3.3e9), ("1T", 1e12), ("2F2", 2.2), ("F22", 0.22), ("1F", 1.0),
        ("  4k7  ", 4700.0), ("+4k7", 4700.0), ("4r7", 4.7),
    ],
)
def test_parse_value_forms(text, expected):
    assert parse_value(text) == expected


def test_parse_value_is_exact_decimal():
    # 4k7 is exactly 4700 and R47 the same double as the literal 0.47
    assert parse_value("4k7") == 4700.0
    assert parse_value("R47") == float("0.47")
    assert parse_value("2n2") == float("2.2e-9")


def test_written_unit_is_reported():
    assert parse_value_unit("2.2uF") == (2.2e-6, "F")
    assert parse_value_unit("470R") == (470.0, "ohm")
    assert parse_value_unit("47 kΩ") == (47e3, "ohm")
    assert parse_value_unit("4k7") == (4700.0, None)


def test_unit_checked_against_expected():
    assert parse_value("2.2uF", unit="F") == 2.2e-6
    assert parse_value("47 kΩ", unit="ohm") == 47e3
    assert parse_value("4k7", unit="ohm") == 4700.0
    with pytest.raises(UnitError) as info:
        parse_value("2.2uF", unit="ohm")
    assert "capacitance" in str(info.value) and "resistance is expected" in str(info.value)
    with pytest.raises(UnitError):
        parse_value("470R", unit="F")


def test_zero_only_when_allowed():
    with pytest.raises(ValueCodeError, match="zero"):
        parse_value("0")
    assert parse_value("0R", allow_zero=True) == 0.0
    assert parse_value("0", allow_zero=True) == 0.0


@pytest.mark.parametrize(
    ("text", "error", "fragment"),
    [
        ("", ValueCodeError, "empty value"),
        ("   ", ValueCodeError, "empty value"),
        ("-4k7", ValueCodeError, "negative value"),
        ("0", ValueCodeError, "zero value"),
        ("nan", ValueCodeError, "not a finite number"),
        ("inf", ValueCodeError, "not a finite number"),
        ("-inf", ValueCodeError, "not a finite number"),
        ("1e999", ValueCodeError, "too large"),
        ("4x7", ValueCodeError, "unknown prefix 'x'"),
        ("4k7 ohm F", ValueCodeError, "two units"),
        ("47kohmF", ValueCodeError, "two units"),
        ("F22 ohm", ValueCodeError, "two units"),
        ("4k7k", ValueCodeError, "two decimal markers"),
        ("4.7k7", ValueCodeError, "two decimal markers"),
        ("4,7k", ValueCodeError, "decimal comma"),
        ("10 mm", ValueCodeError, "unknown unit 'mm'"),
        ("abc", ValueCodeError, "cannot read"),
        ("R", ValueCodeError, "cannot read"),
        ("3 mA", UnitError, "is a current"),
    ],
)
def test_parse_value_refuses(text, error, fragment):
    with pytest.raises(error) as info:
        parse_value(text)
    message = str(info.value)
    assert fragment in message
    assert "\n" not in message
    # every message says what is accepted
    assert "e.g." in message or "accepted" in message


def test_parse_value_refuses_non_text():
    with pytest.raises(ValueCodeError):
        parse_value(4700)  # type: ignore[arg-type]


# --- parse_quantity ------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "kind", "expected"),
    [
        ("3 s", "time", 3.0), ("3s", "time", 3.0), ("250 ms", "time", 0.25),
        ("0.5 min", "time", 30.0), ("12.5h", "time", 45000.0), ("2 h", "time", 7200.0),
        ("2 hours", "time", 7200.0), ("40 us", "time", 40e-6),
        ("20/min", "rate", 20 / 60), ("20 per minute", "rate", 20 / 60),
        ("20 per min", "rate", 20 / 60), ("0.33 Hz", "rate", 0.33), ("1/s", "rate", 1.0),
        ("3 per hour", "rate", 3 / 3600), ("2 kHz", "rate", 2000.0),
        ("5 mA", "current", 5e-3), ("10uA", "current", 10e-6), ("10 µA", "current", 10e-6),
        ("0.2 A", "current", 0.2),
        ("2.7 V", "voltage", 2.7), ("2.7V", "voltage", 2.7), ("1800 mV", "voltage", 1.8),
        ("3 lux", "illuminance", 3.0), ("3 lx", "illuminance", 3.0),
        ("120 mcd", "intensity", 0.12), ("1.2 cd", "intensity", 1.2),
        ("4k7", "resistance", 4700.0), ("47 kΩ", "resistance", 47e3),
        ("100n", "capacitance", 100e-9), ("2.2 uF", "capacitance", 2.2e-6),
        ("2 mC", "charge", 2e-3), ("5 uC", "charge", 5e-6),
        ("-20 C", "temperature", -20.0), ("-20°C", "temperature", -20.0),
        ("50 degC", "temperature", 50.0), ("0 C", "temperature", 0.0),
    ],
)
def test_parse_quantity_forms(text, kind, expected):
    # unit factors: SI definitions (1 min = 60 s, 1 h = 3600 s, prefixes per the SI brochure)
    assert parse_quantity(text, kind) == pytest.approx(expected, rel=1e-12)


def test_quantity_of_the_wrong_kind():
    with pytest.raises(UnitError) as info:
        parse_quantity("3 mA", "time")
    assert str(info.value) == (
        "'3 mA' is a current; a time is expected here, e.g. 3 s, 250 ms, 0.5 min"
    )
    with pytest.raises(UnitError, match="is a rate; a time is expected"):
        parse_quantity("20/min", "time")
    with pytest.raises(UnitError, match="is a current; a resistance is expected"):
        parse_quantity("3 mA", "resistance")
    with pytest.raises(UnitError, match="is a charge or a temperature; a voltage"):
        parse_quantity("5 C", "voltage")


def test_bare_number_needs_a_unit():
    with pytest.raises(UnitError) as info:
        parse_quantity("3", "time")
    assert "has no unit" in str(info.value) and "3 s" in str(info.value)
    # one rule for every command: a bare voltage is volts (check --supply 3, night --start 4)
    assert parse_quantity("2.7", "voltage") == 2.7
    assert parse_quantity("2.7", "voltage", bare_ok=True) == 2.7
    # component values are complete without a unit
    assert parse_quantity("4k7", "resistance") == 4700.0


@pytest.mark.parametrize(
    ("text", "kind", "fragment"),
    [
        ("", "time", "empty time"),
        ("-3 s", "time", "negative time"),
        ("0 s", "time", "zero time"),
        ("nan s", "time", "not a finite number"),
        ("1e999 s", "time", "too large"),
        ("3 xyz", "time", "unknown unit 'xyz'"),
        ("3 per fortnight", "rate", "unknown time unit 'fortnight'"),
        ("-300 C", "temperature", "below absolute zero"),
        ("s", "time", "cannot read"),
    ],
)
def test_parse_quantity_refuses(text, kind, fragment):
    with pytest.raises(PulsepickError) as info:
        parse_quantity(text, kind)
    assert fragment in str(info.value)
    assert "\n" not in str(info.value)


def test_parse_quantity_zero_when_allowed():
    assert parse_quantity("0 lux", "illuminance", allow_zero=True) == 0.0


def test_unknown_kind():
    with pytest.raises(UnitError, match="unknown quantity kind"):
        parse_quantity("3 s", "duration")  # type: ignore[arg-type]


# --- parse_range ---------------------------------------------------------------------------------


def test_parse_range_keeps_order_and_borrows_units():
    assert parse_range("2.7V..1.8V", "voltage") == (2.7, 1.8)
    assert parse_range("-20..50 C", "temperature") == (-20.0, 50.0)
    assert parse_range("1s..6s", "time") == (1.0, 6.0)
    assert parse_range("250 ms..2", "time") == (0.25, 2e-3)
    # resistances never borrow: a bare value is complete
    assert parse_range("1..10k", "resistance") == (1.0, 10e3)


@pytest.mark.parametrize("text", ["1s", "1s..", "..2s", "1s..2s..3s", ""])
def test_parse_range_refuses(text):
    with pytest.raises(ValueCodeError, match=r"FROM\.\.TO"):
        parse_range(text, "time")


def test_parse_range_checks_units():
    with pytest.raises(UnitError, match="is a current"):
        parse_range("1 s..2 mA", "time")


# --- format_eng ----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "unit", "expected"),
    [
        (4700.0, "Ω", "4.7 kΩ"), (100e-9, "F", "100 nF"), (2.5e-3, "s", "2.5 ms"),
        (5e-3, "A", "5 mA"), (1.21e6, "Ω", "1.21 MΩ"), (0.0, "V", "0 V"), (-0.0, "V", "0 V"),
        (-2.5e-3, "V", "-2.5 mV"), (4.7e-6, "F", "4.7 µF"), (999.95, "Ω", "1 kΩ"),
        (10.0, "V", "10 V"), (1.0, "Hz", "1 Hz"), (0.12, "cd", "120 mcd"), (3.0, "lx", "3 lx"),
        (47.5e3, "Ω", "47.5 kΩ"), (6.8e-15, "F", "6.8e-15 F"), (1e15, "Ω", "1e+15 Ω"),
        (-20.0, "°C", "-20 °C"), (1.23456, "J", "1.23 J"), (2e-3, "W", "2 mW"),
    ],
)
def test_format_eng(value, unit, expected):
    assert format_eng(value, unit) == expected


def test_format_eng_digits_and_micro_sign():
    assert format_eng(4712.345, "Ω", digits=5) == "4.7123 kΩ"
    assert "\u00b5" in format_eng(1e-6, "A")
    assert format_eng(math.nan, "V") == "nan V"
    with pytest.raises(ValueCodeError):
        format_eng(1.0, "V", digits=0)


# --- format_rkm ----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "kind", "expected"),
    [
        # resistor codes (ref:iec-60062-rkm; kilo written k)
        (0.47, "R", "R47"), (4.7, "R", "4R7"), (47.0, "R", "47R"), (470.0, "R", "470R"),
        (4700.0, "R", "4k7"), (47e3, "R", "47k"), (1e6, "R", "1M"), (2.2e6, "R", "2M2"),
        (10e6, "R", "10M"), (4750.0, "R", "4k75"), (47.3e3, "R", "47k3"), (1e9, "R", "1G"),
        (0.0, "R", "0R"),
        # capacitor codes (ref:iec-60062-rkm, ref:cap-tolerance-letters)
        (0.68e-12, "C", "p68"), (2.2e-12, "C", "2p2"), (100e-12, "C", "100p"),
        (2.2e-9, "C", "2n2"), (100e-9, "C", "100n"), (4.7e-6, "C", "4u7"), (22e-6, "C", "22u"),
        (1e-3, "C", "1m"), (0.22, "C", "220m"), (1.0, "C", "1F"), (4.7, "C", "4F7"),
    ],
)
def test_format_rkm(value, kind, expected):
    assert format_rkm(value, kind) == expected
    assert parse_value(expected, allow_zero=True) == value


def test_format_rkm_drops_float_noise():
    assert format_rkm(4.7 * 1000 * (1 + 1e-15), "R") == "4k7"


@pytest.mark.parametrize(("value", "kind"), [(-1.0, "R"), (math.inf, "R"), (0.0, "C"),
                                             (math.nan, "C"), (1.0, "L")])
def test_format_rkm_refuses(value, kind):
    with pytest.raises(ValueCodeError):
        format_rkm(value, kind)


# --- tolerances ----------------------------------------------------------------------------------


def test_tolerance_letters():
    # ref:cap-tolerance-letters (check value 7): F 1 %, G 2 %, J 5 %, K 10 %, M 20 %; B/C/D 0.1/0.25/0.5 %
    assert {k: TOLERANCE_LETTERS[k] for k in "FGJKM"} == {"F": 1, "G": 2, "J": 5, "K": 10, "M": 20}
    assert {k: TOLERANCE_LETTERS[k] for k in "BCD"} == {"B": 0.1, "C": 0.25, "D": 0.5}
    # Z = +80/-20 % (ref:cap-tolerance-letters)
    assert TOLERANCE_Z == (20.0, 80.0)
    assert tolerance_letter(5) == "J"
    assert tolerance_letter(1.0) == "F"
    assert tolerance_letter(3) is None


@pytest.mark.parametrize(
    ("text", "expected"),
    [("J", (5.0, 5.0)), ("k", (10.0, 10.0)), ("5%", (5.0, 5.0)), ("±5 %", (5.0, 5.0)),
     ("+/-1%", (1.0, 1.0)), ("+80/-20%", (20.0, 80.0)), ("-20/+80%", (20.0, 80.0)),
     ("Z", (20.0, 80.0)), ("0.5 %", (0.5, 0.5))],
)
def test_parse_tolerance(text, expected):
    assert parse_tolerance(text) == expected


@pytest.mark.parametrize("text", ["", "5", "x", "-5%", "+80/+20%", "0%", "nan%"])
def test_parse_tolerance_refuses(text):
    with pytest.raises(ValueCodeError, match="accepted"):
        parse_tolerance(text)


# --- properties ----------------------------------------------------------------------------------


@pytest.mark.parametrize("name", SERIES_NAMES)
def test_rkm_round_trip_over_series_values(name):
    series = get_series(name)
    for kind, lo, hi in (("R", 0.01, 1e11), ("C", 1e-13, 100.0)):
        for value in series.values(lo, hi).tolist():
            code = format_rkm(value, kind)
            assert parse_value(code) == value, code


_THREE_DIGITS = st.builds(
    lambda digits, exp: float(f"{digits}e{exp}"),
    st.integers(min_value=100, max_value=999),
    st.integers(min_value=-16, max_value=12),
)


@settings(max_examples=400, derandomize=True, deadline=None)
@given(value=_THREE_DIGITS, kind=st.sampled_from(["R", "C"]))
def test_rkm_round_trip_three_digits(value, kind):
    assert parse_value(format_rkm(value, kind)) == value


@settings(max_examples=400, derandomize=True, deadline=None)
@given(
    value=st.floats(min_value=1e-11, max_value=1e11, allow_nan=False, allow_infinity=False),
    pair=st.sampled_from([("V", "voltage"), ("s", "time"), ("A", "current"), ("Hz", "rate"),
                          ("cd", "intensity"), ("Ω", "resistance"), ("F", "capacitance")]),
)
def test_format_eng_round_trip(value, pair):
    unit, kind = pair
    back = parse_quantity(format_eng(value, unit), kind)
    # 3 significant digits: the rounding error is at most half a unit in the 3rd digit
    assert back == pytest.approx(value, rel=5e-3)


_VALUE_ALPHABET = "0123456789.,+-eE kKMmunpµμRrFfΩΩohmsVAHzlxcd°C/%…"


@settings(max_examples=500, derandomize=True, deadline=None)
@given(text=st.one_of(st.text(), st.text(alphabet=_VALUE_ALPHABET, max_size=12)))
def test_parsers_never_crash(text):
    calls = [lambda: parse_value(text), lambda: parse_value(text, "F"),
             lambda: parse_value_unit(text, allow_zero=True), lambda: parse_tolerance(text)]
    calls += [lambda k=k: parse_quantity(text, k) for k in QUANTITY_KINDS]
    calls += [lambda: parse_range(text, "time"), lambda: parse_range(text, "resistance")]
    for call in calls:
        try:
            result = call()
        except PulsepickError as err:
            assert str(err) and "\n" not in str(err)
        else:
            values = result if isinstance(result, tuple) else (result,)
            assert all(isinstance(v, float | str | type(None)) for v in values)
