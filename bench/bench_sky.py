"""Benchmark: the clear-sky light and the sizing runs (goals: a year of daily totals under
2 s, a week of sky days under 3 s, each sizing answer under 5 s).

Prints wall-clock figures; never a timed unit test. Run: python bench/bench_sky.py
"""

from __future__ import annotations

import time
from datetime import date, timedelta

from pulsepick.analysis.autonomy import size_for_autonomy
from pulsepick.analysis.day import NightWindow, simulate_days
from pulsepick.analysis.sizing import size_for_night
from pulsepick.analysis.sky import Site, daily_irradiation_wh_m2, day_profile
from pulsepick.analysis.sun import night_span
from pulsepick.parts.diode import get_diode
from pulsepick.parts.panel import get_panel
from pulsepick.parts.storage import get_storage


def _time(fn) -> tuple[float, object]:
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def main() -> None:
    site = Site(52.1, 5.1, 1.0)
    first = date(2026, 12, 21)

    def year():
        return [daily_irradiation_wh_m2(site, date(2026, 1, 1) + timedelta(days=i))
                for i in range(365)]

    t, totals = _time(year)
    print(f"365 daily plane totals (1-minute steps):    {t:.3f} s (goal 2 s); "
          f"{min(totals) / 1e3:.2f} to {max(totals) / 1e3:.2f} kWh/m²")

    span = night_span(52.1, first, 5.1, 1.0)
    spans = [night_span(52.1, first + timedelta(days=i), 5.1, 1.0) for i in range(7)]
    windows = [NightWindow.from_times(s.dusk, s.dawn) for s in spans]  # each date's own
    profiles = [day_profile(site, first + timedelta(days=i)) for i in range(7)]
    storage, panel, diode = get_storage("5f-2v7"), get_panel("5v60ma"), get_diode("schottky")
    t, r = _time(lambda: simulate_days(storage, panel, diode, profiles, 30e-6, windows, 0.0,
                                       days=7, clamp_v=2.4))
    print(f"7 sky days at 52 N in December:              {t:.3f} s (goal 3 s); "
          f"{r.nights_lasted} of 7 nights lasted")

    t, s = _time(lambda: size_for_night(storage, 2.6, span.night_s, None, stop_at_v=1.8,
                                        extra_load_a=30e-6))
    print(f"night --size (bare budget):                  {t:.3f} s (goal 5 s); "
          f"{s.min_capacitance_f:.2f} F")
    t, a = _time(lambda: size_for_autonomy(3, site, 2026, storage, panel, diode, 30e-6,
                                           v_stop_v=1.8, clamp_v=2.4))
    print(f"day --size --autonomy 3:                     {t:.3f} s (goal 5 s); "
          f"{a.suggested_storage}, {a.suggested_panel}")


if __name__ == "__main__":
    main()
