"""Option readers shared by ``night``, ``day`` and ``dusk``: quantities, the storage,
clock times, dates and the site's latitude, longitude and clock offset.

Each reader turns one option's text into SI values or refuses it with one line that
names the option, what was wrong and what is accepted.
"""

from __future__ import annotations

import math
import re
from dataclasses import replace
from datetime import date

import numpy as np

from pulsepick.errors import PulsepickError, RequestError
from pulsepick.parts.storage import STORAGE_KEYS, Storage, custom_storage, get_storage

_CLOCK_RE = re.compile(r"(\d{1,2}):(\d{2})")
DEFAULT_RATED_V = 2.7
_PART_GIVEN_NOTE = "capacitance and rating given by the user"  # the storage model's own note
SUPPLY_STEP_V = 0.01  # grid step of the load curve, V (the light's stop voltage resolution)
SUPPLY_GRID_LOW_V = 0.8  # lowest grid supply, V: below any LED or logic chip in the tables


def quantity(text: str, kind: str, option: str, example: str, allow_zero: bool = False) -> float:
    from pulsepick.units import parse_quantity

    try:
        return parse_quantity(text, kind, allow_zero=allow_zero)  # type: ignore[arg-type]
    except PulsepickError as err:
        raise RequestError(f"{option} {text!r}: {err} (such as {example})") from err


def read_storage(text: str | None, rated: str | None) -> Storage:
    from pulsepick.units import parse_value

    accepted = f"a storage key ({', '.join(STORAGE_KEYS)}) or a capacitance such as 0.22F"
    if text is None:
        raise RequestError(f"no storage given; use --storage with {accepted}")
    key = text.strip().lower()
    if key in STORAGE_KEYS:
        if rated is not None:
            raise RequestError(
                f"--rated applies to a storage given as a capacitance, not to the part {key!r}"
            )
        return get_storage(key)
    if text.strip().startswith("-"):
        raise RequestError(
            f"--storage {text!r}: the capacitance must be above 0; accepted: {accepted}"
        )
    try:
        capacitance = parse_value(text, unit="F", allow_zero=True)
    except PulsepickError as err:
        raise RequestError(f"--storage {text!r} is not a storage; accepted: {accepted}") from err
    if not capacitance > 0:
        raise RequestError(
            f"--storage {text!r}: the capacitance must be above 0; accepted: {accepted}"
        )
    v_rated = (DEFAULT_RATED_V if rated is None
               else quantity(rated, "voltage", "--rated", "2.7V or 5.5V"))
    storage = custom_storage(capacitance, v_rated_v=v_rated)
    return replace(storage, source_notes=(
        given_note(storage, rated_given=rated is not None),
        *(n for n in storage.source_notes if not n.startswith(_PART_GIVEN_NOTE)),
    ))


def given_note(storage: Storage, rated_given: bool) -> str:
    """Which of a bare capacitance's values were given and which were defaults."""
    from pulsepick.units import format_eng

    rating = (f"rating {storage.v_rated_v:g} V given by the user" if rated_given
              else f"rating {storage.v_rated_v:g} V by default (the common single-cell rating, "
                   "ref:maxwell-bcap0005/ref:capxx-hy-10f; --rated sets it)")
    return (f"capacitance {format_eng(storage.capacitance_f, 'F')} given by the user; {rating}; "
            "tolerance taken as 0 (by default)")


def clock_time(text: str, option: str) -> tuple[int, int]:
    match = _CLOCK_RE.fullmatch(text.strip())
    if match:
        hour, minute = int(match.group(1)), int(match.group(2))
        if hour < 24 and minute < 60:
            return hour, minute
    raise RequestError(f"{option} {text!r} is not a clock time; use 24-hour HH:MM such as 18:30")


def read_date(text: str) -> date:
    try:
        return date.fromisoformat(text.strip())
    except ValueError as err:
        raise RequestError(
            f"--date {text!r} is not a date; use YYYY-MM-DD such as 2026-12-21"
        ) from err


def degrees(text: str, option: str, limit: float) -> float:
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and -limit <= value <= limit):
        raise RequestError(
            f"{option} {text!r} is not an angle; give degrees from {-limit:g} to {limit:g}, "
            "such as 52.1"
        )
    return value


def utc_offset(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and -14 <= value <= 14):
        raise RequestError(
            f"--utc-offset {text!r} is not an offset; give hours from -14 to 14, such as 1 or -5.5"
        )
    return value


def supply_grid(v_top_v: float, v_low_v: float | None = None) -> np.ndarray:
    """Ascending supply voltages (V) for the circuit's load curve, ending at ``v_top_v``."""
    low = min(SUPPLY_GRID_LOW_V, 0.5 * v_top_v) if v_low_v is None else v_low_v
    count = max(2, math.ceil((v_top_v - low) / SUPPLY_STEP_V) + 1)
    return np.linspace(low, v_top_v, count)
