"""Time the plain solve and the README's demo solve side by side, cold, and print figures.

Both commands run in a fresh interpreter each time (interpreter start, imports, search,
reference checks, 2,000-build spreads, report), alternating so that a busy machine
slows both alike. Printed: median, min and max wall time of each against the 1.2 s
target, and the share of time per assessment step in-process.

    python bench/bench_demo.py [--runs N]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time

TARGET_S = 1.2  # s, median cold wall time of each (the project's speed requirement)
PLAIN = ["solve", "one flash every 3 s"]
DEMO = ["solve", "one flash every 3 s, 40 ms long", "--led", "red", "--supply", "2.7V..1.8V",
        "--family", "lvc,timer555"]


def wall(args: list[str]) -> float:
    start = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "pulsepick", *args], capture_output=True)
    took = time.perf_counter() - start
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(args)} failed: {proc.stderr.decode().strip()}")
    return took


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7, help="runs of each (default 7)")
    opts = parser.parse_args()
    import compileall

    import pulsepick

    compileall.compile_dir(os.path.dirname(pulsepick.__file__), quiet=1)
    wall(PLAIN)
    wall(DEMO)  # warm the file cache
    times: dict[str, list[float]] = {"plain": [], "demo": []}
    for _ in range(opts.runs):
        times["plain"].append(wall(PLAIN))
        times["demo"].append(wall(DEMO))
    load = os.getloadavg()[0]
    print(f"cold solve, {opts.runs} runs each, alternating (load average {load:.1f} on "
          f"{os.cpu_count()} cores)")
    for name, args in (("plain", PLAIN), ("demo", DEMO)):
        t = times[name]
        med = statistics.median(t)
        print(f"  {name:5s} median {med:.2f} s (min {min(t):.2f}, max {max(t):.2f}); target "
              f"{TARGET_S} s: {'met' if med <= TARGET_S else 'NOT met'}   pulsepick "
              + " ".join(a if " " not in a else repr(a) for a in args))

    from pulsepick.request import make_request
    from pulsepick.solve import assess, default_jobs, solve

    for name, phrase, kw in (("plain", PLAIN[1], {}),
                             ("demo", DEMO[1], dict(led="red", supply="2.7V..1.8V",
                                                    family="lvc,timer555"))):
        req = make_request(phrase, **kw)
        t0 = time.perf_counter()
        res = solve(req, jobs=default_jobs())
        t_search = time.perf_counter() - t0
        t0 = time.perf_counter()
        done = assess(res, jobs=default_jobs())
        t_assess = time.perf_counter() - t0
        steps: dict[str, float] = {}
        for c in done.candidates:
            for k, v in c.timings_s.items():
                steps[k] = steps.get(k, 0.0) + v
        print(f"  {name:5s} in-process: search {t_search:.2f} s, assessment {t_assess:.2f} s "
              "(summed over candidates: " + ", ".join(f"{k} {v:.2f} s" for k, v in
                                                     steps.items()) + ")")


if __name__ == "__main__":
    main()
