"""Time the tolerance spread, the linearised check, the drift table and the band table.

Target: 2,000 Monte Carlo builds of one design well under 0.1 s, in one vectorised
fast-engine call. The designs are demo path markers of a community garden (made-up
values). Prints median wall times; not a timed unit test.

    python bench/bench_spread.py
"""

from __future__ import annotations

import statistics
import time

from pulsepick.analysis.drift import drift
from pulsepick.analysis.spread import (
    SOURCES,
    _Batch,
    _draw,
    _evaluate,
    _run_batch,
    linearised,
    part_tolerances,
    spread,
    tolerance_bands,
)
from pulsepick.circuits.base import Topology
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led

TARGET_S = 0.1  # s for 2,000 builds, from the project's speed requirement
BUILDS = 2000
REPEATS = 15


def designs() -> dict[str, Design]:
    red = PartChoice(get_led("red"))
    return {
        "schmitt + direct": Design(Topology("schmitt", "direct"),
                                   {"r1": 2.2e6, "c1": 1e-6, "rs": 1e3}, ChipSpec("hc"), red,
                                   3.0),
        "schmitt + pulse": Design(Topology("schmitt", "pulse"),
                                  {"r1": 2.2e6, "c1": 1e-6, "cp": 10e-6}, ChipSpec("hc"), red,
                                  3.0),
        "steered + direct": Design(Topology("schmitt-steered", "direct"),
                                   {"r1": 4.7e6, "r2": 47e3, "c1": 1e-6, "rs": 100},
                                   ChipSpec("hc"), red, 3.0),
        "timer555 + pulse": Design(Topology("timer555", "pulse"),
                                   {"ra": 1e4, "rb": 1e6, "c1": 1e-6, "cp": 100e-6},
                                   ChipSpec("timer555"), red, 3.0),
    }


def median_time(func, repeats: int = REPEATS) -> float:
    func()  # warm-up
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def one_call(design: Design):
    """The engine call alone on 2,000 drawn builds (draws prepared outside the timing)."""
    tols = part_tolerances(design)
    names = [t.name for t in tols]
    draws = _draw(design, tols, BUILDS, 0, (-20.0, 50.0), None, frozenset(SOURCES))
    batch = _run_batch(design, draws, names, BUILDS, None)
    return lambda: _evaluate(design, _Batch.concat([batch]))


def main() -> None:
    print(f"tolerance spread, {BUILDS:,} builds, median of {REPEATS} runs "
          f"(target: Monte Carlo < {TARGET_S * 1e3:.0f} ms)")
    head = (f"{'design':<18} {'engine call':>11} {'Monte Carlo':>11} {'+shares+corners':>15} "
            f"{'linearised':>10} {'drift':>7} {'bands':>8}")
    print(head)
    print("-" * len(head))
    for name, d in designs().items():
        t_call = median_time(one_call(d))
        t_mc = median_time(lambda d=d: spread(d, builds=BUILDS, shares=False, corners=False))
        t_full = median_time(lambda d=d: spread(d, builds=BUILDS))
        t_lin = median_time(lambda d=d: linearised(d))
        t_drift = median_time(lambda d=d: drift(d, 3.0, 1.8))
        t_bands = median_time(lambda d=d: tolerance_bands(d, builds=BUILDS), repeats=3)
        verdict = "ok" if t_mc < TARGET_S else "SLOW"
        print(f"{name:<18} {t_call * 1e3:>8.1f} ms {t_mc * 1e3:>8.1f} ms {t_full * 1e3:>12.1f} ms "
              f"{t_lin * 1e3:>7.1f} ms {t_drift * 1e3:>4.1f} ms {t_bands * 1e3:>5.0f} ms  "
              f"{verdict}")
    print("engine call: the fast engine on 2,000 prepared builds\n"
          "Monte Carlo: draws + the call + statistics\n"
          "+shares+corners: the full spread (one call for every run and every corner)\n"
          "bands: 12 cells + the design as specified + exact parts")


if __name__ == "__main__":
    main()
