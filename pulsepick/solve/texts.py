"""Figures as words for messages and reports: time and figure texts."""

from __future__ import annotations

import math


FIGURE_WORDS = {"period_s": "period", "flash_s": "flash length", "led_peak_a": "peak current",
                "effective_a": "effective current", "effective_mcd": "effective intensity"}



def time_text(seconds: float) -> str:
    """A time as a designer reads it: engineering notation below 100 s, then minutes,
    hours and days ("29 min", "12.4 h", "41.7 days")."""
    from pulsepick.units import format_eng

    if seconds is None or not math.isfinite(seconds):
        return "-"
    if abs(seconds) < 100.0:
        return format_eng(seconds, "s")
    if abs(seconds) < 2 * 3600.0:
        return f"{seconds / 60.0:.3g} min"
    if abs(seconds) < 72 * 3600.0:
        return f"{seconds / 3600.0:.3g} h"
    return f"{seconds / 86400.0:.3g} days"


def figure_text(key: str, value: float) -> str:
    """A figure in the unit a designer reads: times by :func:`time_text`, intensities
    in mcd (``effective_mcd`` is already in mcd), currents and charges in engineering
    notation."""
    from pulsepick.units import format_eng

    if value is None or not math.isfinite(value):
        return "-"
    if key.endswith("_mcd"):
        return f"{value:.3g} mcd"
    if key.endswith("_s"):
        return time_text(value)
    unit = {"_a": "A", "_c": "C"}.get(key[-2:], "")
    return format_eng(value, unit)
