"""Values and quantities in, engineering notation and RKM codes out (the edge of the program).

Inside pulsepick every number is in SI units (ohm, farad, second, hertz, ampere,
volt, lux, candela, coulomb); temperatures are the exception and stay in degrees
Celsius. This module reads what people type and writes what people read:

* :func:`parse_value` reads component values: IEC 60062 RKM codes (``4k7``, ``R47``,
  ``2n2``, ``p68``, ``4u7``) and numbers with SI prefixes (``100n``, ``2.2uF``,
  ``47 kΩ``, ``10M``) (ref:iec-60062-rkm, ref:cap-tolerance-letters);
* :func:`parse_quantity` and :func:`parse_range` read request quantities with
  their unit (``250 ms``, ``20/min``, ``5 mA``, ``2.7V..1.8V``, ``-20..50 C``);
* :func:`format_eng` writes engineering notation (``4.7 kΩ``, ``100 nF``);
* :func:`format_rkm` writes RKM codes (``4k7``, ``100n``);
* :func:`parse_tolerance` and :func:`tolerance_letter` handle tolerance letters
  (IEC 60062; ref:cap-tolerance-letters).

Numbers are converted through :class:`decimal.Decimal`, so ``4k7`` is exactly the
double ``4700.0`` and ``R47`` is the same double as ``float("0.47")``.

Prefix letters in values: ``p`` 1e-12, ``n`` 1e-9, ``u``/``µ``/``μ`` 1e-6, ``m`` 1e-3,
``k``/``K`` 1e3, ``M`` 1e6, ``G`` 1e9, ``T`` 1e12; ``R`` (or ``r``) marks the decimal
point of a resistance and ``F`` that of a capacitance in farads. ``m`` is always milli
and ``M`` always mega, whatever the unit (``10M`` is 10 MΩ, ``1m`` is 1 mF).

Examples
--------
>>> parse_value("4k7")
4700.0
>>> parse_value("2.2uF", unit="F")
2.2e-06
>>> parse_quantity("20/min", "rate")
0.3333333333333333
>>> format_eng(4700, "Ω")
'4.7 kΩ'
>>> format_rkm(4750, "R")
'4k75'
"""

from __future__ import annotations

import math
import re
from decimal import Decimal, localcontext
from typing import Literal, get_args

from pulsepick.errors import UnitError, ValueCodeError

ValueUnit = Literal["ohm", "F"]
QuantityKind = Literal[
    "time", "rate", "current", "voltage", "illuminance", "intensity",
    "resistance", "capacitance", "charge", "temperature",
]
QUANTITY_KINDS: tuple[QuantityKind, ...] = get_args(QuantityKind)
RkmKind = Literal["R", "C"]

#: SI prefixes read in values and quantities, as powers of ten.
PREFIX_EXP: dict[str, int] = {
    "p": -12, "n": -9, "u": -6, "m": -3, "k": 3, "K": 3, "M": 6, "G": 9, "T": 12,
}
#: Prefixes written by :func:`format_eng` (µ is U+00B5 MICRO SIGN).
_ENG_PREFIX: dict[int, str] = {
    -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T",
}

#: Tolerance letters, percent (IEC 60062; ref:cap-tolerance-letters). Z is +80/-20 %, see TOLERANCE_Z.
TOLERANCE_LETTERS: dict[str, float] = {
    "B": 0.1, "C": 0.25, "D": 0.5, "F": 1, "G": 2, "J": 5, "K": 10, "M": 20,
}
#: Letter Z: (minus_pct, plus_pct) = (20, 80) (IEC 60062; ref:cap-tolerance-letters).
TOLERANCE_Z: tuple[float, float] = (20.0, 80.0)

VALUE_FORMS = "4k7, 4K7, R47, 470R, 47 kΩ, 100n, 2n2, p68, 4u7, 2.2uF, 10M, 1e3"
_VALUE_LETTERS = "R p n u µ m k K M G T (and F for farads)"

_KIND_PHRASE: dict[str, str] = {
    "time": "a time", "rate": "a rate", "current": "a current", "voltage": "a voltage",
    "illuminance": "an illuminance", "intensity": "a luminous intensity",
    "resistance": "a resistance", "capacitance": "a capacitance", "charge": "a charge",
    "temperature": "a temperature",
}
_KIND_EXAMPLES: dict[str, str] = {
    "time": "3 s, 250 ms, 0.5 min",
    "rate": "20/min, 20 per minute, 0.33 Hz, 3 per hour",
    "current": "5 mA, 10 uA, 0.2 A",
    "voltage": "2.7 V, 1800 mV",
    "illuminance": "3 lux, 10 lx",
    "intensity": "120 mcd, 1.2 cd",
    "resistance": "4k7, 470R, 47 kΩ",
    "capacitance": "100n, 4u7, 2.2 uF",
    "charge": "2 mC, 5 uC",
    "temperature": "-20 C, 25 °C, 50 degC",
}
_VALUE_UNIT_KIND: dict[str, str] = {"ohm": "resistance", "F": "capacitance"}

# --- unit table for quantities ------------------------------------------------------------
# Each written unit maps to the kinds it can mean, with a factor to SI (a Decimal).
_SI_BASES: dict[str, str] = {
    "s": "time", "Hz": "rate", "A": "current", "V": "voltage", "lx": "illuminance",
    "lux": "illuminance", "cd": "intensity", "Ω": "resistance", "ohm": "resistance",
    "F": "capacitance", "C": "charge",
}
_UNITS: dict[str, list[tuple[str, Decimal]]] = {}
for _base, _kind in _SI_BASES.items():
    for _p, _e in (("", 0), *PREFIX_EXP.items()):
        if _p == "K":
            continue
        _UNITS.setdefault(_p + _base, []).append((_kind, Decimal(1).scaleb(_e)))
_TIME_WORDS: dict[str, Decimal] = {
    "s": Decimal(1), "sec": Decimal(1), "secs": Decimal(1), "second": Decimal(1),
    "seconds": Decimal(1), "min": Decimal(60), "mins": Decimal(60), "minute": Decimal(60),
    "minutes": Decimal(60), "h": Decimal(3600), "hr": Decimal(3600), "hrs": Decimal(3600),
    "hour": Decimal(3600), "hours": Decimal(3600),
}
for _word, _factor in _TIME_WORDS.items():
    _UNITS.setdefault(_word, []).append(("time", _factor))
for _word in ("C", "°C", "ºC", "℃", "degC"):
    _UNITS.setdefault(_word, []).append(("temperature", Decimal(1)))
# Words that may be typed in any letter case (prefixed symbols may not: mA is not MA).
_UNITS_ANY_CASE: dict[str, list[tuple[str, Decimal]]] = {
    w.lower(): _UNITS[w]
    for w in (*(t for t in _TIME_WORDS if len(t) > 1), "Hz", "lux", "ohm", "degC")
}
_UNITS_ANY_CASE["ohms"] = _UNITS["ohm"]

ABSOLUTE_ZERO_C = -273.15  # degrees Celsius, definition of the kelvin scale

_NUMBER = r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]{1,4})?"
_QUANTITY_RE = re.compile(rf"(?P<num>[+-]?{_NUMBER})\s*(?P<unit>.*)", re.DOTALL)
_PER_RE = re.compile(r"(?:/|per\s+)\s*(?P<time>\S+)", re.IGNORECASE)
_VALUE_UNIT_RE = re.compile(r"\s*(?P<unit>Ω|(?i:ohms?)|F)$")
_PLAIN_RE = re.compile(rf"(?P<num>{_NUMBER})\s*(?P<letter>[A-Za-z]?)")
_RKM_RE = re.compile(r"(?P<a>[0-9]*)(?P<letter>[A-Za-z])(?P<b>[0-9]+)")


def _normalise(text: str) -> str:
    """Micro signs to ``u``, ohm signs to Ω, surrounding blanks removed."""
    return (text.replace("\u00b5", "u").replace("\u03bc", "u").replace("\u2126", "\u03a9")
            .strip())


def _decimal_value(number: str, exp: int) -> float:
    with localcontext() as ctx:
        ctx.prec = 40
        return float(Decimal(number).scaleb(exp))


def _nonfinite_word(text: str) -> bool:
    low = text.lower()
    return "nan" in low or "inf" in low


# --- component values ------------------------------------------------------------------------


def parse_value_unit(text: str, *, allow_zero: bool = False) -> tuple[float, ValueUnit | None]:
    """Read a component value and the unit it was written with (``"ohm"``, ``"F"`` or None).

    See :func:`parse_value` for the accepted forms. The unit comes from a written unit
    (``Ω``, ``ohm``, ``F``) or from the RKM letters ``R`` (ohm) and ``F`` (farad).
    """
    return _read_value(text, allow_zero, None)


def _read_value(
    text: str, allow_zero: bool, expected: str | None
) -> tuple[float, ValueUnit | None]:
    """parse_value_unit; ``expected`` (a quantity kind) only sharpens error messages."""
    if not isinstance(text, str):
        raise ValueCodeError(f"a value must be text such as {VALUE_FORMS}; got {text!r}")
    s = _normalise(text)
    if not s:
        raise ValueCodeError(f"empty value; accepted forms: {VALUE_FORMS}")
    if _nonfinite_word(s):
        raise ValueCodeError(f"{text!r} is not a finite number; accepted forms: {VALUE_FORMS}")
    written: ValueUnit | None = None
    m = _VALUE_UNIT_RE.search(s)
    if m:
        written = "F" if m["unit"] == "F" else "ohm"
        s = s[: m.start()]
        if _VALUE_UNIT_RE.search(s):
            raise ValueCodeError(
                f"two units in {text!r}; write at most one unit (Ω, ohm or F), e.g. 47 kΩ, 2.2uF"
            )
    s = s.strip()
    if s.startswith("-"):
        raise ValueCodeError(
            f"negative value {text!r}; component values are positive, e.g. {VALUE_FORMS}"
        )
    if s.startswith("+"):
        s = s[1:]
    number, letter = _split_value(s, text, expected)
    marker: ValueUnit | None = {"R": "ohm", "r": "ohm", "F": "F"}.get(letter)
    if marker and written and marker != written:
        raise ValueCodeError(
            f"two units in {text!r}: the letter {letter!r} and the unit "
            f"{'Ω' if written == 'ohm' else 'F'} disagree; write one, e.g. 4R7 or 47 kΩ"
        )
    value = _decimal_value(number, PREFIX_EXP.get(letter, 0))
    if not math.isfinite(value):
        raise ValueCodeError(f"{text!r} is too large to be a value; accepted forms: {VALUE_FORMS}")
    if value == 0 and not allow_zero:
        raise ValueCodeError(
            f"zero value {text!r}; a component value must be above zero, e.g. {VALUE_FORMS}"
        )
    return value, (written or marker)


def _split_value(s: str, text: str, expected: str | None) -> tuple[str, str]:
    """Split the core of a value into a decimal number text and its letter ('' if none)."""
    m = _PLAIN_RE.fullmatch(s)
    if m:
        letter = m["letter"]
        _check_letter(letter, text, expected)
        return m["num"], letter
    m = _RKM_RE.fullmatch(s)
    if m:
        _check_letter(m["letter"], text, expected)
        return f"{m['a'] or '0'}.{m['b']}", m["letter"]
    # Nothing fits: say why as precisely as we can.
    _raise_other_quantity(text, expected)
    letters = re.findall(r"[A-Za-z]", s)
    if not re.search(r"[0-9]", s):
        raise ValueCodeError(f"cannot read {text!r} as a value; accepted forms: {VALUE_FORMS}")
    if "," in s:
        raise ValueCodeError(
            f"decimal comma in {text!r}; write a point or an RKM letter, e.g. 4.7k or 4k7"
        )
    run = re.search(r"[A-Za-z]{2,}", s)
    if run:
        raise ValueCodeError(
            f"unknown unit {run[0]!r} in {text!r}; a value takes one prefix letter "
            f"({_VALUE_LETTERS}) and the unit Ω, ohm or F, e.g. 47 kΩ, 2.2uF"
        )
    if re.fullmatch(r"[0-9A-Za-z.\s]+", s):
        for letter in letters:
            _check_letter(letter, text, expected)
        if len(letters) >= 2 or (letters and "." in s):
            raise ValueCodeError(
                f"two decimal markers in {text!r}; a value holds one letter or one point in "
                f"place of the decimal point, e.g. 4k7 or 4.7k"
            )
    raise ValueCodeError(f"cannot read {text!r} as a value; accepted forms: {VALUE_FORMS}")


def _check_letter(letter: str, text: str, expected: str | None) -> None:
    if letter and letter not in PREFIX_EXP and letter not in "RrF":
        _raise_other_quantity(text, expected)
        raise ValueCodeError(
            f"unknown prefix {letter!r} in {text!r}; accepted letters: {_VALUE_LETTERS}"
        )


def _raise_other_quantity(text: str, expected: str | None = None) -> None:
    """Raise UnitError if ``text`` reads as a quantity of a kind other than ``expected``."""
    kinds = _quantity_kinds(text)
    if not kinds or (expected in kinds):
        return
    _raise_mismatch(text, kinds, expected)


def _quantity_kinds(text: str) -> list[str]:
    """The kinds a written quantity can be (empty when it has no known unit)."""
    m = _QUANTITY_RE.fullmatch(_normalise(text))
    if not m or not m["unit"]:
        return []
    unit = m["unit"].strip()
    if _PER_RE.fullmatch(unit):
        return ["rate"]
    return _kinds(_lookup_unit(unit))


def _kinds(entries: list[tuple[str, Decimal]]) -> list[str]:
    """The distinct kinds of unit-table entries, in table order."""
    return list(dict.fromkeys(kind for kind, _ in entries))


#: Component values the engines handle, per unit: (smallest, largest). A resistor from
#: 1 mΩ to 1 TΩ and a capacitor from 1 pF to 100 F (estimate: beyond these a part is a
#: wire, an open circuit or a storage, and the engines' time scales run out of range).
COMPONENT_RANGE: dict[str, tuple[float, float]] = {"ohm": (1e-3, 1e12), "F": (1e-12, 100.0)}


def check_component(value: float, unit: ValueUnit, option: str, *,
                    allow_zero: bool = False) -> float:
    """``value`` when it lies in :data:`COMPONENT_RANGE` (zero too with ``allow_zero``);
    otherwise a :class:`ValueCodeError` naming ``option`` and the accepted range.

    One check for every component value a user gives: options, stock and design files.
    """
    lo, hi = COMPONENT_RANGE[unit]
    if allow_zero and value == 0:
        return value
    if not (math.isfinite(value) and lo <= value <= hi):
        symbol = "Ω" if unit == "ohm" else "F"
        shown = format_eng(value, symbol) if math.isfinite(value) and value > 0 else f"{value:g}"
        raise ValueCodeError(f"{option} {shown} is out of range; accepted: "
                             f"{format_eng(lo, symbol)} to {format_eng(hi, symbol)}")
    return value


def parse_value(text: str, unit: ValueUnit | None = None, *, allow_zero: bool = False) -> float:
    """Read a component value such as ``4k7``, ``100n`` or ``2.2 uF`` (SI units).

    Parameters
    ----------
    text : str
        RKM codes (``4k7``, ``4K7``, ``R47``, ``2R2``, ``47K3``, ``4M7``, ``2n2``, ``p68``,
        ``4u7``, ``4µ7``, ``470R``, ``2F2``), numbers with an SI prefix (``100n``, ``10M``,
        ``47 k``), optionally followed by a unit (``Ω``, ``ohm``, ``F``: ``47 kΩ``,
        ``47kohm``, ``2.2uF``, ``1.5 F``), or plain numbers (``1e3``, ``0.1``).
    unit : {"ohm", "F", None}
        The unit expected here. A written unit that does not match raises
        :class:`~pulsepick.errors.UnitError`.
    allow_zero : bool
        Accept zero (``0``, ``0R``); refused by default.

    Returns
    -------
    float
        The value in ohms or farads.

    References
    ----------
    IEC 60062 letter and digit code (RKM), ref:iec-60062-rkm, ref:cap-tolerance-letters.
    """
    if unit is not None and unit not in _VALUE_UNIT_KIND:
        raise UnitError(f"unknown value unit {unit!r}; accepted: ohm, F")
    value, written = _read_value(text, allow_zero, _VALUE_UNIT_KIND[unit] if unit else None)
    if unit is not None and written is not None and written != unit:
        expected = _VALUE_UNIT_KIND[unit]
        raise UnitError(
            f"{text!r} is {_KIND_PHRASE[_VALUE_UNIT_KIND[written]]} in "
            f"{'ohms' if written == 'ohm' else 'farads'}; {_KIND_PHRASE[expected]} is expected "
            f"here, e.g. {_KIND_EXAMPLES[expected]}"
        )
    return value


# --- quantities --------------------------------------------------------------------------------


def _lookup_unit(unit: str) -> list[tuple[str, Decimal]]:
    squeezed = re.sub(r"\s+", "", unit)
    return _UNITS.get(squeezed) or _UNITS_ANY_CASE.get(squeezed.lower()) or []


def _check_kind(kind: str) -> None:
    if kind not in QUANTITY_KINDS:
        raise UnitError(f"unknown quantity kind {kind!r}; accepted: {', '.join(QUANTITY_KINDS)}")


def parse_quantity(text: str, kind: QuantityKind, *, bare_ok: bool = False,
                   allow_zero: bool = False) -> float:
    """Read a request quantity with its unit and return it in SI units (°C for temperature).

    Parameters
    ----------
    text : str
        A number and a unit: times ``3 s``, ``250 ms``, ``0.5 min``, ``2 h``; rates
        ``20/min``, ``20 per minute``, ``0.33 Hz``, ``3 per hour``; currents ``5 mA``,
        ``10 µA``; voltages ``2.7 V``, ``1800 mV``; illuminance ``3 lux``, ``3 lx``;
        luminous intensity ``120 mcd``, ``1.2 cd``; charge ``2 mC``; temperature
        ``-20 C``, ``-20°C``, ``50 degC``; resistances and capacitances as in
        :func:`parse_value`.
    kind : QuantityKind
        What is expected here. A quantity of another kind raises
        :class:`~pulsepick.errors.UnitError` naming both.
    bare_ok : bool
        Kept for callers; a bare voltage is always read as volts (the one rule:
        a voltage has only one base unit). Resistances and capacitances are always
        accepted bare (``4k7``); other kinds always need a unit.
    allow_zero : bool
        Accept zero. Temperatures accept zero and negative values always; other
        kinds never accept negative values.

    Returns
    -------
    float
        Seconds, hertz, amperes, volts, lux, candela, ohms, farads, coulombs, or
        degrees Celsius (temperatures are kept in °C, not converted to kelvin).
    """
    _check_kind(kind)
    if not isinstance(text, str):
        raise ValueCodeError(
            f"{_KIND_PHRASE[kind]} must be text such as {_KIND_EXAMPLES[kind]}; got {text!r}"
        )
    if kind in ("resistance", "capacitance"):
        return parse_value(text, "ohm" if kind == "resistance" else "F", allow_zero=allow_zero)
    s = _normalise(text)
    examples = _KIND_EXAMPLES[kind]
    if not s:
        raise ValueCodeError(f"empty {kind}; give {_KIND_PHRASE[kind]} such as {examples}")
    if _nonfinite_word(s):
        raise ValueCodeError(f"{text!r} is not a finite number; give e.g. {examples}")
    m = _QUANTITY_RE.fullmatch(s)
    if not m:
        raise ValueCodeError(
            f"cannot read {text!r} as {_KIND_PHRASE[kind]}; give a number and a unit, "
            f"e.g. {examples}"
        )
    number, unit = m["num"], m["unit"].strip()
    if not unit:
        if kind == "voltage":
            # one rule everywhere: a bare number is unambiguous only for a voltage (volts)
            factor = Decimal(1)
        else:
            raise UnitError(
                f"{text!r} has no unit; {_KIND_PHRASE[kind]} needs one, e.g. {examples}"
            )
    else:
        factor = _unit_factor(text, unit, kind)
    with localcontext() as ctx:
        ctx.prec = 40
        value = float(Decimal(number) * factor)
    if not math.isfinite(value):
        raise ValueCodeError(f"{text!r} is too large; give e.g. {examples}")
    if kind == "temperature":
        if value < ABSOLUTE_ZERO_C:
            raise ValueCodeError(
                f"{text!r} is below absolute zero ({ABSOLUTE_ZERO_C} °C); give e.g. {examples}"
            )
        return value
    if value < 0:
        raise ValueCodeError(f"negative {kind} {text!r}; give a positive value, e.g. {examples}")
    if value == 0 and not allow_zero:
        raise ValueCodeError(f"zero {kind} {text!r}; give a value above zero, e.g. {examples}")
    return value


def _unit_factor(text: str, unit: str, kind: str) -> Decimal:
    """Factor from the written unit to SI for ``kind``; UnitError when it means another kind."""
    per = _PER_RE.fullmatch(unit)
    if per:
        seconds = [f for k, f in _lookup_unit(per["time"]) if k == "time"]
        if not seconds:
            raise UnitError(
                f"unknown time unit {per['time']!r} in {text!r}; accepted: s, min, h "
                f"(e.g. {_KIND_EXAMPLES['rate']})"
            )
        if kind != "rate":
            _raise_mismatch(text, ["rate"], kind)
        with localcontext() as ctx:
            ctx.prec = 40
            return Decimal(1) / seconds[0]
    entries = _lookup_unit(unit)
    if not entries:
        raise UnitError(
            f"unknown unit {unit!r} in {text!r}; {_KIND_PHRASE[kind]} is expected, "
            f"e.g. {_KIND_EXAMPLES[kind]}"
        )
    for k, factor in entries:
        if k == kind:
            return factor
    _raise_mismatch(text, _kinds(entries), kind)
    raise AssertionError("unreachable")  # pragma: no cover


def _raise_mismatch(text: str, kinds: list[str], expected: str | None) -> None:
    """UnitError: ``text`` is of ``kinds`` where ``expected`` (None: a component value) is due."""
    named = " or ".join(_KIND_PHRASE[k] for k in kinds)
    if expected is None:
        wanted, examples = "a component value", VALUE_FORMS
    else:
        wanted, examples = _KIND_PHRASE[expected], _KIND_EXAMPLES[expected]
    raise UnitError(f"{text!r} is {named}; {wanted} is expected here, e.g. {examples}")


def parse_range(text: str, kind: QuantityKind) -> tuple[float, float]:
    """Read ``FROM..TO`` (``2.7V..1.8V``, ``-20..50 C``, ``1s..6s``) as two quantities.

    The order is kept as written (``2.7V..1.8V`` gives ``(2.7, 1.8)``: a falling
    voltage stays falling). When only one end carries a unit, the other end
    borrows it (``-20..50 C``); resistances and capacitances never borrow, since
    a bare value is already complete for them (``1..10k`` is 1 Ω to 10 kΩ).
    """
    _check_kind(kind)
    if not isinstance(text, str):
        raise ValueCodeError(f"a range must be text such as 1s..6s; got {text!r}")
    parts = _normalise(text).replace("\u2026", "..").split("..")
    example = f"FROM..TO, e.g. {_range_example(kind)}"
    if len(parts) != 2 or not all(p.strip() for p in parts):
        raise ValueCodeError(f"cannot read {text!r} as a range; write {example}")
    a, b = (p.strip() for p in parts)
    if kind not in ("resistance", "capacitance"):
        ua, ub = _unit_text(a), _unit_text(b)
        if ua == "" and ub:
            a = f"{a} {ub}"
        elif ub == "" and ua:
            b = f"{b} {ua}"
    return parse_quantity(a, kind), parse_quantity(b, kind)


def _unit_text(part: str) -> str | None:
    m = _QUANTITY_RE.fullmatch(part)
    return m["unit"].strip() if m else None


def _range_example(kind: str) -> str:
    return {
        "time": "1s..6s", "voltage": "2.7V..1.8V", "temperature": "-20..50 C",
        "resistance": "1k..10k", "capacitance": "1n..100n", "current": "1mA..5mA",
        "rate": "10/min..30/min", "illuminance": "1..10 lux", "intensity": "50..200 mcd",
        "charge": "1..5 mC",
    }[kind]


# --- formatting --------------------------------------------------------------------------------


def _sig_digits(value: float, digits: int) -> tuple[str, int]:
    """``abs(value)`` rounded to ``digits`` significant digits: (digit string, decimal exponent).

    ``4700`` with 3 digits gives ``("470", 3)``: 4.70 * 10**3.
    """
    mant, exp = f"{abs(value):.{digits - 1}e}".split("e")
    return mant.replace(".", ""), int(exp)


def _place_point(dstr: str, int_len: int) -> tuple[str, str]:
    """Split digits after ``int_len`` of them (padding with zeros), dropping trailing zeros."""
    if int_len <= 0:
        return "0", ("0" * -int_len + dstr).rstrip("0")
    dstr = dstr.ljust(int_len, "0")
    return dstr[:int_len], dstr[int_len:].rstrip("0")


def format_eng(value: float, unit: str, digits: int = 3) -> str:
    """Engineering notation with an SI prefix and a space: ``4.7 kΩ``, ``100 nF``, ``2.5 ms``.

    Parameters
    ----------
    value : float
        The value in SI units.
    unit : str
        The unit symbol, e.g. ``"Ω"``, ``"F"``, ``"s"``, ``"A"``, ``"V"``, ``"Hz"``,
        ``"cd"``, ``"lx"``, ``"C"``, ``"J"``, ``"W"``. ``"°C"`` is written without prefix.
    digits : int
        Significant digits kept (trailing zeros are dropped: ``4.7 kΩ``, not ``4.70 kΩ``).

    Notes
    -----
    Prefixes run from p to T (µ is U+00B5); values outside that range are written as
    ``6.8e-15 F``. Non-finite values are written as ``nan``/``inf`` with the unit.
    """
    if not isinstance(digits, int) or digits < 1:
        raise ValueCodeError(f"digits must be a whole number of at least 1; got {digits!r}")
    value = float(value)
    space = f" {unit}" if unit else ""
    if not math.isfinite(value):
        return f"{value}{space}"
    if value == 0:
        return f"0{space}"
    sign = "-" if value < 0 else ""
    dstr, exp = _sig_digits(value, digits)
    if unit == "°C":
        int_part, frac = _place_point(dstr, exp + 1)
        return f"{sign}{int_part}{'.' + frac if frac else ''}{space}"
    eng = 3 * (exp // 3)
    if eng not in _ENG_PREFIX:
        mant = dstr[0] + ("." + dstr[1:].rstrip("0") if dstr[1:].rstrip("0") else "")
        return f"{sign}{mant}e{exp:+03d}{space}"
    int_part, frac = _place_point(dstr, exp - eng + 1)
    number = int_part + ("." + frac if frac else "")
    return f"{sign}{number} {_ENG_PREFIX[eng]}{unit}".rstrip()


# RKM letters written by format_rkm, by power of ten (ref:iec-60062-rkm: upper-case letters for
# resistors, lower-case for capacitors; kilo is written k, the SI prefix, and parse_value
# reads K as well).
_RKM_LETTERS: dict[str, tuple[tuple[int, str], ...]] = {
    "R": ((0, "R"), (3, "k"), (6, "M"), (9, "G"), (12, "T")),
    "C": ((-12, "p"), (-9, "n"), (-6, "u"), (-3, "m"), (0, "F")),
}


def format_rkm(value: float, kind: RkmKind, digits: int = 6) -> str:
    """The RKM code of a value (IEC 60062; ref:iec-60062-rkm, ref:cap-tolerance-letters).

    Parameters
    ----------
    value : float
        Ohms for ``kind="R"``, farads for ``kind="C"``.
    kind : {"R", "C"}
        ``"R"`` writes resistor codes ``R47 4R7 47R 470R 4k7 47k 1M 2M2 10M 1G``;
        ``"C"`` writes capacitor codes ``p68 2p2 100p 2n2 100n 4u7 22u 1m 220m 1F 4F7``
        (``u`` stands for micro so the code is plain ASCII; a capacitance from 1 mF up to
        1 F is written with ``m``, 1 F and up with ``F``).
    digits : int
        Significant digits kept (6 by default; a code never needs more, and float
        noise such as ``4700.000000000001`` is dropped). Codes hold as many digits
        as the value needs (``4k75``), so :func:`parse_value` reads the value back.

    A zero resistance is ``0R`` (a zero-ohm link); a zero capacitance has no code.
    """
    if kind not in _RKM_LETTERS:
        raise ValueCodeError(f"unknown RKM kind {kind!r}; accepted: R (resistor), C (capacitor)")
    value = float(value)
    if not math.isfinite(value) or value < 0 or (value == 0 and kind == "C"):
        raise ValueCodeError(
            f"{value!r} has no RKM code; accepted: positive finite values"
            + (" (0 for a zero-ohm link)" if kind == "R" else "")
        )
    if value == 0:
        return "0R"
    dstr, exp = _sig_digits(value, digits)
    letters = _RKM_LETTERS[kind]
    scale, letter = letters[0]
    for s, ltr in letters:
        if exp >= s:
            scale, letter = s, ltr
    int_part, frac = _place_point(dstr, exp - scale + 1)
    if int_part == "0":
        return f"{letter}{frac}"
    return f"{int_part}{letter}{frac}"


# --- tolerances --------------------------------------------------------------------------------

_TOL_SYM_RE = re.compile(rf"(?:±|\+/-|\+-)?\s*(?P<p>{_NUMBER})\s*%")
_TOL_ASYM_RE = re.compile(
    rf"(?P<s1>[+-])\s*(?P<a>{_NUMBER})\s*%?\s*/\s*(?P<s2>[+-])\s*(?P<b>{_NUMBER})\s*%"
)
_TOL_FORMS = "J, 5%, ±5 %, +80/-20%, or a letter B C D F G J K M Z"


def parse_tolerance(text: str) -> tuple[float, float]:
    """Read a tolerance as ``(minus_pct, plus_pct)``, both positive percentages.

    Accepts a letter (``J`` = ±5 %, ``Z`` = +80/-20 %; IEC 60062, ref:cap-tolerance-letters), a
    symmetric percentage (``5%``, ``±5 %``, ``+/-5%``) or an asymmetric one
    (``+80/-20%``, ``-20/+80%``). Letters B, C, D are read as percentages; for small
    capacitors they can mean ±0.1/0.25/0.5 pF instead (ref:cap-tolerance-letters).
    """
    if not isinstance(text, str):
        raise ValueCodeError(f"a tolerance must be text such as {_TOL_FORMS}; got {text!r}")
    s = text.strip()
    if not s:
        raise ValueCodeError(f"empty tolerance; accepted: {_TOL_FORMS}")
    if s.upper() == "Z":
        return TOLERANCE_Z
    if len(s) == 1 and s.upper() in TOLERANCE_LETTERS:
        pct = float(TOLERANCE_LETTERS[s.upper()])
        return pct, pct
    m = _TOL_SYM_RE.fullmatch(s)
    if m:
        pct = float(m["p"])
        if math.isfinite(pct) and pct > 0:
            return pct, pct
    m = _TOL_ASYM_RE.fullmatch(s)
    if m and m["s1"] != m["s2"]:
        a, b = float(m["a"]), float(m["b"])
        minus, plus = (b, a) if m["s1"] == "+" else (a, b)
        if all(math.isfinite(v) and v > 0 for v in (minus, plus)):
            return minus, plus
    raise ValueCodeError(f"cannot read {text!r} as a tolerance; accepted: {_TOL_FORMS}")


def tolerance_letter(pct: float) -> str | None:
    """The IEC 60062 letter of a symmetric tolerance in percent (``5`` -> ``"J"``), else None."""
    for letter, value in TOLERANCE_LETTERS.items():
        if math.isclose(float(pct), value, rel_tol=1e-9):
            return letter
    return None
