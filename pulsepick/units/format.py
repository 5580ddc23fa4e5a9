"""Engineering notation out: ``4.7 kΩ``, ``100 nF``, ``2.5 ms``."""

from __future__ import annotations

import math

from pulsepick.errors import ValueCodeError
from pulsepick.units.common import _ENG_PREFIX


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


#: What a report prints for a figure that is missing or not a finite number.
MISSING = "-"


def format_figure(value, unit: str, digits: int = 3) -> str:
    """A figure as every report prints it: :func:`format_eng`, or ``"-"`` when missing.

    ``None``, a non-number, NaN and infinity are "missing". Luminous intensity in
    millicandela keeps its unit as the LED tables give it (``"mcd"``, no second prefix).

    >>> format_figure(0.0047, "A"), format_figure(None, "V"), format_figure(12.5, "mcd")
    ('4.7 mA', '-', '12.5 mcd')
    """
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return MISSING
    if unit == "mcd":
        return f"{value:.{digits}g} mcd"
    return format_eng(value, unit, digits)


def format_pct(fraction, digits: int = 0, *, signed: bool = False) -> str:
    """A fraction as a percentage with a space: ``0.934 -> "93 %"``; ``"-"`` when missing.

    >>> format_pct(0.934), format_pct(0.0132, 1, signed=True), format_pct(float("nan"))
    ('93 %', '+1.3 %', '-')
    """
    if isinstance(fraction, bool) or not isinstance(fraction, (int, float)) \
            or not math.isfinite(fraction):
        return MISSING
    sign = "+" if signed else ""
    return f"{fraction * 100:{sign}.{digits}f} %"
