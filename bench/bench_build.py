"""Time ``pulsepick solve`` of whole builds end to end and print the figures.

Printed (not a timed unit test), for each command below, each run in a fresh
interpreter: the median wall time, and the median CPU time of the process and its
workers (user + system, from ``getrusage`` of the children). On a shared machine the
wall time follows the load; the CPU time is the steadier figure. The target is about
10 s for the footbridge example.

* ``solve examples/footbridge-fireflies.toml`` (three lights, a photoresistor light, a
  capacitor-coupled flash, spread-out search, lock share and its remedies, dusk gating);
* the three-lights phrase on one LVC package with the supply falling 2.7 V to 1.8 V.

``--tree PATH`` times another checkout of the project in the same way (``PATH`` holds
its ``pulsepick`` package, put first on the import path), for a before/after comparison.

    python bench/bench_build.py [--runs N] [--tree PATH]
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
COMMANDS = (
    ("footbridge example", ["solve", os.path.join(ROOT, "examples", "footbridge-fireflies.toml")]),
    ("three-lights phrase", ["solve", "three lights: every 2.7 s, every 4.1 s, every 6.3 s, "
                             "60 ms each", "--led", "amber", "--supply", "2.7V..1.8V"]),
)
TARGET_S = 10.0  # s, the footbridge example end to end (the goal)
_RUNNER = ("import sys; tree = sys.argv.pop(1); "
           "sys.meta_path[:] = [f for f in sys.meta_path "
           "if 'editable' not in getattr(f, '__module__', '')]; "
           "sys.path.insert(0, tree); from pulsepick.cli import main; "
           "raise SystemExit(main(sys.argv[1:]))")


def run_once(argv: list[str], tree: str | None) -> tuple[float, float]:
    """Wall time and CPU time (s, the command and its workers) of one fresh run."""
    cmd = [sys.executable, "-m", "pulsepick", *argv]
    if tree is not None:
        # the checkout first, ahead of an editable install's import hook
        cmd = [sys.executable, "-c", _RUNNER, os.path.abspath(tree), *argv]
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    proc = subprocess.run(cmd,
                          stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
                          check=False)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if proc.returncode not in (0, 3):
        raise SystemExit(f"pulsepick {' '.join(argv)} failed ({proc.returncode}): "
                         f"{proc.stderr.strip()[-300:]}")
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=3, help="runs per command (default 3)")
    parser.add_argument("--tree", metavar="PATH",
                        help="time the checkout at PATH instead of the installed one")
    args = parser.parse_args()
    if args.runs < 1:
        parser.error("--runs: give a whole number of at least 1")
    where = args.tree or "installed pulsepick"
    print(f"whole-build solve, {args.runs} fresh run(s) each, {where}; "
          f"load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} CPU(s)")
    for label, argv in COMMANDS:
        runs = [run_once(argv, args.tree) for _ in range(args.runs)]
        wall = statistics.median(w for w, _ in runs)
        cpu = statistics.median(c for _, c in runs)
        goal = f" (goal about {TARGET_S:g} s)" if label == "footbridge example" else ""
        print(f"  {label:22s} wall {wall:6.1f} s  cpu {cpu:6.1f} s{goal}")
    print(f"  load average after: {os.getloadavg()[0]:.1f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
