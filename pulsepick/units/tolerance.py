"""Tolerances in and out: letters (``J``, ``Z``) and percentages (``5%``, ``+80/-20%``).

IEC 60062 tolerance letters, ref:cap-tolerance-letters.
"""

from __future__ import annotations

import math
import re

from pulsepick.errors import ValueCodeError
from pulsepick.units.common import _NUMBER, TOLERANCE_LETTERS, TOLERANCE_Z

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
