"""Benchmark: a 7-day day/night simulation (the goal is under 2 s), and its parts.

Prints wall-clock figures; never a timed unit test. Run: python bench/bench_day.py
"""

from __future__ import annotations

import time

from pulsepick.analysis.day import ChargePath, NightWindow, simulate_day, simulate_days
from pulsepick.analysis.dusk import bleed_for_dusk
from pulsepick.analysis.irradiance import get_profile
from pulsepick.parts.diode import get_diode
from pulsepick.parts.logic import get_family
from pulsepick.parts.panel import get_panel
from pulsepick.parts.storage import get_storage

GOAL_7_DAYS_S = 2.0
REPEATS = 5


def _best(fn, repeats: int = REPEATS) -> tuple[float, object]:
    best = float("inf")
    out = None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def main() -> None:
    storage = get_storage("5f-2v7")
    panel = get_panel("5v60ma")
    diode = get_diode("schottky")
    window = NightWindow.centred(12.5 * 3600)

    def seven_days(autonomy: bool, recovery: bool):
        return simulate_days(storage, panel, diode, ["clear", "overcast", "dim"], 30e-6, window,
                             0.0, days=7, clamp_v=2.5, bleed_ohm=240e3, day_load=2e-6,
                             stop_at_v=1.8, autonomy=autonomy, recovery=recovery)

    t_run, _ = _best(lambda: seven_days(False, False))
    t_full, res = _best(lambda: seven_days(True, True))
    path = ChargePath(panel, diode, bleed_ohm=240e3, clamp_v=2.5)
    t_day, day = _best(lambda: simulate_day(storage, path, get_profile("clear"), v_start_v=0.0,
                                            day_load=2e-6))
    t_dusk, _ = _best(lambda: bleed_for_dusk(panel, 10.0, get_family("hc"), 2.5, diode))
    verdict = "meets" if t_full < GOAL_7_DAYS_S else "MISSES"
    print(f"7 days and nights (days only + nights):      {t_run:7.3f} s")
    print(f"7 days with autonomy and recovery checks:    {t_full:7.3f} s "
          f"({verdict} the {GOAL_7_DAYS_S:g} s goal; autonomy {res.autonomy_nights} nights)")
    print(f"one clear day from empty:                    {t_day * 1e3:7.1f} ms ({day.steps} steps)")
    print(f"dusk detector solve (E24 bleed for 10 lx):   {t_dusk * 1e3:7.1f} ms")


if __name__ == "__main__":
    main()
