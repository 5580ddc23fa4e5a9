"""IEC 60062 resistor colour code: value and tolerance to bands, and back.

Colours are written in lower case with one spelling each (``grey``, ``violet``);
``gray`` is read as ``grey``. Bands are listed from the first digit band to the
tolerance band.

* 3 bands: two digits and a multiplier, tolerance ±20 % (no tolerance band);
* 4 bands: two digits, multiplier, tolerance;
* 5 bands: three digits, multiplier, tolerance;
* 6 bands: as 5 bands plus a temperature-coefficient band, which is read and ignored.

Only the tolerance colours on which the sources agree are used: brown 1 %, red 2 %,
green 0.5 %, blue 0.25 %, violet 0.1 %, gold 5 %, silver 10 %, none 20 %
(ref:iec-60062-colour; orange, yellow and grey are listed with different tolerances by
different charts and are refused).

Examples
--------
>>> bands_for(4700, 5)
('yellow', 'violet', 'red', 'gold')
>>> value_from_bands(["brown", "black", "black", "gold", "brown"])
(10.0, 1.0)

References
----------
IEC 60062 colour code as charted in ref:iec-60062-colour.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from decimal import Decimal

from pulsepick.errors import ValueCodeError

#: Digit colours, 0..9 (IEC 60062; ref:iec-60062-colour).
DIGIT_COLOURS: tuple[str, ...] = (
    "black", "brown", "red", "orange", "yellow", "green", "blue", "violet", "grey", "white",
)
#: Multiplier colours as powers of ten: black x1 .. white x1e9, gold x0.1, silver x0.01,
#: pink x0.001 (IEC 60062; ref:iec-60062-colour).
MULTIPLIER_EXP: dict[str, int] = {
    **{c: i for i, c in enumerate(DIGIT_COLOURS)}, "gold": -1, "silver": -2, "pink": -3,
}
#: Tolerance colours, percent; only those the sources agree on (ref:iec-60062-colour).
TOLERANCE_COLOURS: dict[str, float] = {
    "brown": 1.0, "red": 2.0, "green": 0.5, "blue": 0.25, "violet": 0.1,
    "gold": 5.0, "silver": 10.0, "none": 20.0,
}
#: Tolerances (percent) coded with two digit bands; tighter ones use three (ref:iec-60062-colour).
FOUR_BAND_TOLERANCES: tuple[float, ...] = (5.0, 10.0, 20.0)

_EXP_MIN = min(MULTIPLIER_EXP.values())
_EXP_MAX = max(MULTIPLIER_EXP.values())
_TOL_TEXT = ", ".join(f"{c} {p:g} %" for c, p in TOLERANCE_COLOURS.items())


def _tolerance_colour(tolerance_pct: float) -> str:
    for colour, pct in TOLERANCE_COLOURS.items():
        if math.isclose(float(tolerance_pct), pct, rel_tol=1e-9):
            return colour
    raise ValueCodeError(
        f"no colour band for a tolerance of {tolerance_pct!r} %; accepted: {_TOL_TEXT}"
    )


def bands_for(value_ohm: float, tolerance_pct: float, digits: int | None = None) -> tuple[str, ...]:
    """Colour bands of a resistor of ``value_ohm`` ohms and ``tolerance_pct`` percent.

    Parameters
    ----------
    value_ohm : float
        Resistance, ohms.
    tolerance_pct : float
        Tolerance, percent; one of 1, 2, 0.5, 0.25, 0.1, 5, 10, 20.
    digits : {2, 3, None}
        Digit bands. By default 2 for 5/10/20 % parts (E6..E24) and 3 for tighter
        ones (E48..E192), or 3 when the value has three significant digits.

    Returns
    -------
    tuple of str
        4 bands (2 digits, multiplier, tolerance), 5 bands (3 digits, multiplier,
        tolerance), or 3 bands for ±20 %, which has no tolerance band.

    Raises
    ------
    ValueCodeError
        When the value needs more digits than the bands hold, its multiplier is
        outside pink (x0.001) .. white (x1e9), or the tolerance has no colour.
    """
    tol_colour = _tolerance_colour(tolerance_pct)
    v = float(value_ohm)
    if not (math.isfinite(v) and v > 0):
        raise ValueCodeError(
            f"no colour code for {value_ohm!r} Ω; accepted: a positive finite resistance"
        )
    mant, exp = f"{v:.5e}".split("e")
    sig = mant.replace(".", "").rstrip("0") or "0"
    if digits is None:
        four = any(math.isclose(float(tolerance_pct), t) for t in FOUR_BAND_TOLERANCES)
        digits = 2 if four and len(sig) <= 2 else 3
    if digits not in (2, 3):
        raise ValueCodeError(f"colour codes have 2 or 3 digit bands; got {digits!r}")
    if len(sig) > digits:
        raise ValueCodeError(
            f"{_plain(v)} Ω has {len(sig)} significant digits; {digits} digit bands hold "
            f"values such as {'4.7 kΩ' if digits == 2 else '4.75 kΩ'}"
        )
    multiplier = int(exp) - (digits - 1)
    if not _EXP_MIN <= multiplier <= _EXP_MAX:
        raise ValueCodeError(
            f"{_plain(v)} Ω is outside the colour code; accepted: {digits} digits times "
            f"10^{_EXP_MIN} (pink) .. 10^{_EXP_MAX} (white)"
        )
    colours = [DIGIT_COLOURS[int(d)] for d in sig.ljust(digits, "0")]
    colours.append(next(c for c, e in MULTIPLIER_EXP.items() if e == multiplier))
    if tol_colour != "none":
        colours.append(tol_colour)
    return tuple(colours)


def _plain(v: float) -> str:
    return f"{v:.6g}"


def _colour(name: object) -> str:
    if not isinstance(name, str):
        raise ValueCodeError(f"a band colour must be a name such as 'red'; got {name!r}")
    c = name.strip().lower()
    return "grey" if c == "gray" else c


def value_from_bands(bands: Sequence[str]) -> tuple[float, float]:
    """Resistance (ohms) and tolerance (percent) from colour bands, first digit first.

    Colour names are case-insensitive; ``gray`` is read as ``grey``. 3 bands mean
    ±20 %; a 6th (temperature-coefficient) band is accepted and ignored.
    """
    if isinstance(bands, str):
        bands = bands.replace(",", " ").replace("-", " ").split()
    names = [_colour(b) for b in bands]
    if len(names) not in (3, 4, 5, 6):
        raise ValueCodeError(
            f"a colour code has 3, 4, 5 or 6 bands; got {len(names)} "
            "(e.g. yellow violet red gold)"
        )
    n_digits = 2 if len(names) <= 4 else 3
    digit_names = names[:n_digits]
    for i, c in enumerate(digit_names, start=1):
        if c not in DIGIT_COLOURS:
            raise ValueCodeError(
                f"band {i} '{c}' is not a digit colour; accepted: {', '.join(DIGIT_COLOURS)}"
            )
    mult = names[n_digits]
    if mult not in MULTIPLIER_EXP:
        raise ValueCodeError(
            f"band {n_digits + 1} '{mult}' is not a multiplier colour; accepted: "
            f"{', '.join(MULTIPLIER_EXP)}"
        )
    if len(names) == 3:
        tol = TOLERANCE_COLOURS["none"]
    else:
        tcol = names[n_digits + 1]
        if tcol not in TOLERANCE_COLOURS:
            raise ValueCodeError(
                f"band {n_digits + 2} '{tcol}' is not a tolerance colour; accepted: {_TOL_TEXT}"
            )
        tol = TOLERANCE_COLOURS[tcol]
    number = "".join(str(DIGIT_COLOURS.index(c)) for c in digit_names)
    value = float(Decimal(number).scaleb(MULTIPLIER_EXP[mult]))
    return value, tol
