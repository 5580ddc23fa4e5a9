"""RKM codes out: ``4k7``, ``R47``, ``100n`` (IEC 60062; ref:iec-60062-rkm)."""

from __future__ import annotations

import math

from pulsepick.errors import ValueCodeError
from pulsepick.units.common import RkmKind
from pulsepick.units.format import _place_point, _sig_digits

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
