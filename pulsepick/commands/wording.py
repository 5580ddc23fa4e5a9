"""Words and tables shared by several command reports (check, bands, night, pictures).

Kept apart so that the commands that print a report and ``pictures``, which draws the
same figures, import them from one place instead of from each other.
"""

from __future__ import annotations

import math
from typing import Any

FIGURE_ROWS = (
    ("period_s", "period", "s"),
    ("high_s", "output high", "s"),
    ("low_s", "output low", "s"),
    ("led_peak_a", "LED peak current", "A"),
    ("flash_s", "flash (>= 50 % of peak)", "s"),
    ("flash_10pct_s", "flash (>= 10 % of peak)", "s"),
    ("led_charge_c", "LED charge per period", "C"),
    ("effective_a", "effective (steady-equivalent) current", "A"),
    ("effective_mcd", "effective intensity", "mcd"),
    ("supply_avg_a", "average supply current", "A"),
)

#: Capacitor class labels of the bands grid.
CLASS_LABELS = {"electrolytic": "electrolytic", "x7r": "X7R", "film": "film", "c0g": "C0G"}


def duration_text(seconds: float) -> str:
    """``8 h 10 min``, ``45 min``, ``3 d 4 h`` (rounded to the minute)."""
    minutes = round(seconds / 60.0)
    hours, minutes = divmod(minutes, 60)
    if hours >= 48:
        days, hours = divmod(hours, 24)
        return f"{days} d {hours} h"
    return f"{hours} h {minutes} min" if hours else f"{minutes} min"


def verdict(result: Any, open_ended: bool = False) -> str:
    """One line: does it last the night, or when does the light stop.

    ``result`` is a ``NightResult``; ``open_ended`` is a run with no night (until the
    stop voltage, however long).
    """
    stop = f"{result.v_stop_v:.2f} V"
    if result.lasts_the_night:
        if open_ended:
            return (f"storage stays above {stop} for {duration_text(result.duration_s)}, "
                    f"{result.v_end_v:.2f} V left")
        dim = any(w.startswith("the light dims steeply") for w in result.warnings)
        return (f"lasts the night, {result.v_end_v:.2f} V left at dawn"
                + (", but dim by dawn (see the warnings)" if dim else ""))
    if result.runtime_s == 0.0:
        if not math.isfinite(result.v_stop_v):
            band = result.load.lit_band_v() if result.load is not None else None
            if band is not None and result.v_start_v > band[1]:
                return (f"light never starts: {result.v_start_v:.2f} V is over the circuit's "
                        f"supply range (it runs from {band[0]:.2f} V to {band[1]:.2f} V)")
            return f"light never starts: the circuit is not lit at {result.v_start_v:.2f} V"
        return (f"light never starts: {result.v_start_v:.2f} V is not above the stop voltage "
                f"{stop}")
    what = "light stops" if result.load is not None else f"storage reaches {stop}"
    after = duration_text(result.runtime_s)
    if open_ended:
        return f"{what} after {after}"
    left = duration_text(result.duration_s - result.runtime_s)
    if result.stops_at is not None:
        return f"{what} at {result.stops_at} after {after}, {left} before dawn"
    return f"{what} after {after}, {left} before dawn"
