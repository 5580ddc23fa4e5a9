"""Bounded work: the largest --builds in bounded memory, and a tiny storage's day.

Targets (from the project's robustness requirements, not timed unit tests):

- ``pulsepick solve ... --builds 1000000`` (the documented maximum) peaks under 1 GB
  over the whole process tree;
- ``pulsepick day --storage 1uF ...`` (a storage far too small for its load) finishes
  its simulation in under 2 s.

Runs the commands as the user would and prints wall time and peak memory (the
largest resident set of the program and of its worker processes). The scenario is a
community garden's path marker (demo values).

    python bench/bench_limits.py
"""

from __future__ import annotations

import os
import subprocess
import sys
import time

from pulsepick.workers import process_table, tree

SOLVE = ["solve", "one flash every 3 s", "--builds", "1000000"]
DAY = ["day", "--storage", "1uF", "--panel", "5v60ma", "--weather", "clear",
       "--night-load", "30uA"]
MEMORY_TARGET_MB = 1024.0
DAY_TARGET_S = 2.0


def _tree_rss_mb(pid: int) -> float:
    """Resident memory (MB) of ``pid`` and every descendant, from /proc (Linux)."""
    table = process_table()
    return sum(table[p][2] for p in tree(pid, table) if p in table) * \
        os.sysconf("SC_PAGE_SIZE") / 1e6


def run(argv: list[str]) -> tuple[float, float, int]:
    """Wall time (s), peak resident memory of the whole process tree (MB, sampled every
    0.1 s; pages shared by the forked workers count once per process, so this is an
    upper bound) and exit status of ``pulsepick argv``."""
    t = time.perf_counter()
    proc = subprocess.Popen([sys.executable, "-m", "pulsepick", *argv],
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    peak = 0.0
    while proc.poll() is None:
        peak = max(peak, _tree_rss_mb(proc.pid))
        time.sleep(0.1)
    return time.perf_counter() - t, peak, proc.returncode


def day_simulation_s(capacitance_f: float = 1e-6) -> float:
    """The simulation of one day and night alone, without start-up (s)."""
    from pulsepick.analysis.day import NightWindow, simulate_days
    from pulsepick.parts.diode import get_diode
    from pulsepick.parts.panel import get_panel
    from pulsepick.parts.storage import custom_storage

    storage = custom_storage(capacitance_f)
    t = time.perf_counter()
    simulate_days(storage, get_panel("5v60ma"), get_diode("schottky"), ["clear"], 30e-6,
                  NightWindow.centred(12 * 3600.0), 0.0)
    return time.perf_counter() - t


def main() -> None:
    for label, argv, jobs in (("solve, 1,000,000 builds, --jobs 1", [*SOLVE, "--jobs", "1"], 1),
                              ("solve, 1,000,000 builds, --jobs 2", [*SOLVE, "--jobs", "2"], 2)):
        wall, peak, code = run(argv)
        print(f"{label:40s} {wall:7.1f} s  peak {peak:7.0f} MB, whole process tree "
              f"({jobs} worker(s); target under {MEMORY_TARGET_MB:.0f} MB)  exit {code}")
    wall, _, code = run(DAY)
    print(f"{'day, 1 uF storage, whole command':40s} {wall:7.1f} s  exit {code}")
    for c, label in ((1e-6, "1 uF"), (1e-4, "100 uF"), (1e-3, "1 mF"), (1.0, "1 F")):
        sim = day_simulation_s(c)
        print(f"{'day, ' + label + ' storage, simulation only':40s} {sim:7.2f} s  "
              f"(target under {DAY_TARGET_S:.0f} s, and no growth as the storage shrinks)")


if __name__ == "__main__":
    main()
