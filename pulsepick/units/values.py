"""Component values in: RKM codes and numbers with SI prefixes (``4k7``, ``100n``, ``2.2uF``).

IEC 60062 letter and digit code (RKM), ref:iec-60062-rkm, ref:cap-tolerance-letters.
"""

from __future__ import annotations

import math
import re

from pulsepick.errors import UnitError, ValueCodeError
from pulsepick.units.common import (
    _KIND_EXAMPLES,
    _KIND_PHRASE,
    _PLAIN_RE,
    _RKM_RE,
    _VALUE_LETTERS,
    _VALUE_UNIT_KIND,
    _VALUE_UNIT_RE,
    PREFIX_EXP,
    VALUE_FORMS,
    ValueUnit,
    _decimal_value,
    _nonfinite_word,
    _normalise,
    _raise_other_quantity,
)
from pulsepick.units.format import format_eng


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
