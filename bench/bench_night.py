"""Time a 12-hour night for one circuit (target: under 0.5 s) and print the figures.

The load curve is a made-up demo blinker (a community garden's path marker on a
1 F cell), evaluated on the same 0.01 V grid the ``night`` command asks the
circuit engines for. Only the night simulation is timed here, not the engines.

    python bench/bench_night.py
"""

from __future__ import annotations

import time
from datetime import datetime

import numpy as np

from pulsepick.analysis.night import simulate_night, simulate_until_stop
from pulsepick.commands.night_options import supply_grid
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.parts.storage import custom_storage, get_storage

TARGET_S = 0.5  # s per 12-hour night, from the project's speed requirement
REPEATS = 20


def demo_path_marker(v_top: float) -> LoadCurve:
    """Demo numbers only: a blinker that slows and dims as the storage droops, dark below 1.9 V."""
    v = supply_grid(v_top)
    lit = v >= 1.9
    period = np.where(lit, 1.5 + 2.0 * (v_top - v), np.nan)
    return LoadCurve(
        label="demo path marker",
        supply_v=v,
        supply_avg_a=3e-6 + 9e-6 * np.clip(v - 1.0, 0.0, None),
        period_s=period,
        flash_s=np.where(lit, 0.03, np.nan),
        led_peak_a=np.where(lit, 8e-3 * (v - 1.6), np.nan),
        effective_a=np.where(lit, 1.2e-3 * (v - 1.6), np.nan),
        effective_cd=np.where(lit, 0.03 * (v - 1.6), np.nan),
        lit=lit,
    )


def time_it(func, repeats: int = REPEATS) -> tuple[float, object]:
    result = func()  # warm-up (imports, caches)
    start = time.perf_counter()
    for _ in range(repeats):
        result = func()
    return (time.perf_counter() - start) / repeats, result


def main() -> None:
    night_s = 12 * 3600.0
    dusk = datetime(2026, 12, 21, 18, 0)
    cases = [
        ("1 F cell, demo blinker", get_storage("1f-2v7"), 2.7),
        ("5 F cell, demo blinker", get_storage("5f-2v7"), 2.7),
        ("0.22 F coin stack, demo blinker", get_storage("0f22-5v5"), 5.0),
    ]
    print(f"night simulation, 12-hour night, mean of {REPEATS} runs (target < {TARGET_S} s)")
    worst = 0.0
    for label, storage, v_start in cases:
        load = demo_path_marker(max(v_start, storage.v_rated_v))
        seconds, result = time_it(
            lambda s=storage, v=v_start, ld=load: simulate_night(s, v, night_s, ld, dusk=dusk))
        worst = max(worst, seconds)
        outcome = (f"lasts, {result.v_end_v:.2f} V at dawn" if result.lasts_the_night
                   else f"stops at {result.stops_at}")
        print(f"  {label:34s} {seconds * 1e3:8.2f} ms   grid {load.supply_v.size} points, "
              f"{outcome}, {result.flashes:,.0f} flashes")
    seconds, result = time_it(lambda: simulate_until_stop(
        custom_storage(0.2), 2.5, None, stop_at_v=1.8, extra_load_a=10e-6, storage_leak_a=0.2e-6))
    print(f"  {'bare budget until 1.8 V':34s} {seconds * 1e3:8.2f} ms   "
          f"runtime {result.runtime_s:,.0f} s")
    print(f"worst night: {worst * 1e3:.2f} ms ({worst / TARGET_S:.1%} of the 0.5 s budget)")


if __name__ == "__main__":
    main()
