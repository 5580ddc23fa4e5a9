"""Reading bench measurements: timed figures such as ``5.8s`` or ``10 periods in 58 s``.

Shared by ``calibrate`` and ``retune``. A count of events timed together divides both
the time and the stopwatch's uncertainty.
"""

from __future__ import annotations

import re

from pulsepick.errors import PulsepickError, RequestError

_COUNTED = re.compile(
    r"^\s*(?P<n>\d+)\s*(?P<word>periods?|flashes|flash|blinks?|cycles?)\s+(?:in|over)\s+"
    r"(?P<t>.+?)\s*$", re.IGNORECASE)

EXAMPLE_PERIOD = "5.8s, or \"10 periods in 58 s\""
EXAMPLE_FLASHES = "3.9s, or \"10 flashes in 39 s\""


def timed(text: str, option: str, example: str = EXAMPLE_PERIOD) -> tuple[float, int]:
    """``(seconds for one, events counted)`` from ``5.8s`` or ``10 periods in 58 s``.

    Raises :class:`RequestError` in one line for anything else.
    """
    from pulsepick.units import parse_quantity

    m = _COUNTED.match(text or "")
    count, body = (int(m["n"]), m["t"]) if m else (1, text)
    if count < 1:
        raise RequestError(f"{option} {text!r}: count at least 1 period, e.g. {example}")
    try:
        seconds = parse_quantity(body, "time")
    except PulsepickError as err:
        raise RequestError(f"{option} {text!r}: {err}; accepted: a time such as {example}"
                           ) from err
    if not seconds > 0:
        raise RequestError(f"{option} {text!r}: a time above 0 s, e.g. {example}")
    return seconds / count, count


def resolution(text: str | None, default: float) -> float:
    """The stopwatch's uncertainty in seconds (``--resolution``)."""
    from pulsepick.units import parse_quantity

    if text is None:
        return default
    try:
        value = parse_quantity(text, "time", allow_zero=True)
    except PulsepickError as err:
        raise RequestError(f"--resolution {text!r}: {err}; accepted: a time such as 0.2s "
                           "or 50ms") from err
    return value


def percent(text: str, option: str) -> float:
    """A percentage strictly between 0 and 100, as a fraction."""
    body = str(text).strip().rstrip("%").strip()
    try:
        value = float(body)
    except ValueError as err:
        raise RequestError(f"{option} {text!r}: accepted: a percentage between 0 and 100, "
                           "e.g. 43%") from err
    if not 0 < value < 100:
        raise RequestError(f"{option} {text!r}: accepted: a percentage between 0 and 100, "
                           "e.g. 43%")
    return value / 100.0
