"""Time the plain solve and the README's demo solve side by side, cold, and print figures.

Both commands run in a fresh interpreter each time (interpreter start, imports, search,
reference checks, 2,000-build spreads, report), alternating so that a busy machine
slows both alike. Printed: median, min and max wall time of each against the 1.2 s
target, the CPU time the process tree used (less sensitive to other load on the
machine), and the time per assessment step in-process.

``--baseline PYTHON`` runs the same commands with another interpreter (a virtual
environment holding an earlier pulsepick) in the same alternation, for a side-by-side
comparison on the same machine at the same load.

    python bench/bench_demo.py [--runs N] [--baseline /path/to/venv/bin/python]
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import time

TARGET_S = 1.2  # s, median cold wall time of each (the project's speed requirement)
PLAIN = ["solve", "one flash every 3 s"]
DEMO = ["solve", "one flash every 3 s, 40 ms long", "--led", "red", "--supply", "2.7V..1.8V",
        "--family", "lvc,timer555"]


def wall(args: list[str], python: str = sys.executable) -> tuple[float, float]:
    """Wall time and CPU time (user + system of the process tree) of one command, s."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    proc = subprocess.run([python, "-m", "pulsepick", *args], capture_output=True,
                          cwd=os.path.expanduser("~"))
    took = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(args)} failed: {proc.stderr.decode().strip()}")
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return took, cpu


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7, help="runs of each (default 7)")
    parser.add_argument("--baseline", metavar="PYTHON",
                        help="also time an earlier pulsepick installed for this interpreter")
    opts = parser.parse_args()
    import compileall

    import pulsepick

    compileall.compile_dir(os.path.dirname(pulsepick.__file__), quiet=1)
    pythons = {"this": sys.executable}
    if opts.baseline:
        pythons["baseline"] = opts.baseline
    for py in pythons.values():  # warm the file cache
        wall(PLAIN, py)
        wall(DEMO, py)
    times: dict[tuple[str, str], list[tuple[float, float]]] = {}
    for _ in range(opts.runs):
        for who, py in pythons.items():
            for name, args in (("plain", PLAIN), ("demo", DEMO)):
                times.setdefault((who, name), []).append(wall(args, py))
    load = os.getloadavg()[0]
    print(f"cold solve, {opts.runs} runs each, alternating (load average {load:.1f} on "
          f"{os.cpu_count()} cores at the end)")
    print("  pulsepick " + " ".join(PLAIN[:1] + [repr(PLAIN[1])]) + "   (plain)")
    print("  pulsepick " + " ".join(DEMO[:1] + [repr(DEMO[1])] + DEMO[2:]) + "   (demo)")
    for (who, name), runs in times.items():
        t = [w for w, _ in runs]
        cpu = statistics.median(c for _, c in runs)
        med = statistics.median(t)
        verdict = "" if who != "this" else (f"; target {TARGET_S} s: "
                                            f"{'met' if med <= TARGET_S else 'NOT met'}")
        print(f"  {who:8s} {name:5s} wall median {med:.2f} s (min {min(t):.2f}, max "
              f"{max(t):.2f}), CPU {cpu:.2f} s{verdict}")
    if opts.baseline:
        # the ratio holds where the host's own speed drifts between runs of the bench
        ratios = []
        for name in ("plain", "demo"):
            ours, theirs = (statistics.median(w for w, _ in times[(who, name)])
                            for who in ("this", "baseline"))
            ratios.append(f"{name} {ours / theirs:.2f}")
        print("  this / baseline, median wall time: " + ", ".join(ratios))

    from pulsepick.request import make_request
    from pulsepick.solve import assess, solve
    from pulsepick.workers import pool_runner

    for name, phrase, kw in (("plain", PLAIN[1], {}),
                             ("demo", DEMO[1], dict(led="red", supply="2.7V..1.8V",
                                                    family="lvc,timer555"))):
        req = make_request(phrase, **kw)
        with pool_runner() as runner:
            t0 = time.perf_counter()
            res = solve(req, runner=runner)
            t_search = time.perf_counter() - t0
            t0 = time.perf_counter()
            done = assess(res, runner=runner, detail=(1,))  # as the summary asks
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
