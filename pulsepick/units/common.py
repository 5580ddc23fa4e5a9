"""What the unit readers and writers share: the unit tables, prefixes, words and patterns.

Also the kind lookups both parsers use to say that a text is a quantity of another kind.
"""

from __future__ import annotations

import re
from decimal import Decimal, localcontext
from typing import Literal, get_args

from pulsepick.errors import UnitError

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

#: Tolerance letters, percent (IEC 60062; ref:cap-tolerance-letters). Z is +80/-20 %, see
#: TOLERANCE_Z.
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

def _lookup_unit(unit: str) -> list[tuple[str, Decimal]]:
    squeezed = re.sub(r"\s+", "", unit)
    return _UNITS.get(squeezed) or _UNITS_ANY_CASE.get(squeezed.lower()) or []

def _raise_mismatch(text: str, kinds: list[str], expected: str | None) -> None:
    """UnitError: ``text`` is of ``kinds`` where ``expected`` (None: a component value) is due."""
    named = " or ".join(_KIND_PHRASE[k] for k in kinds)
    if expected is None:
        wanted, examples = "a component value", VALUE_FORMS
    else:
        wanted, examples = _KIND_PHRASE[expected], _KIND_EXAMPLES[expected]
    raise UnitError(f"{text!r} is {named}; {wanted} is expected here, e.g. {examples}")

