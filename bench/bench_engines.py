"""Engine throughput: bare Schmitt periods and Schmitt + pulse evaluations per second.

Targets (one core of the 2-core machine): at least 1,000,000 bare ``schmitt`` evaluations
per second and at least 100,000 ``schmitt`` + ``pulse`` evaluations per second. Also
prints the reference engine's time per circuit and the fast engine's speed-up over it.
Run: ``python bench/bench_engines.py``.
"""

from __future__ import annotations

import os
import statistics
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")  # one core, as the target says
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np

from pulsepick.circuits.base import Topology
from pulsepick.design import Design
from pulsepick.engine import fast
from pulsepick.engine.environment import ChipSpec, PartChoice, make_env
from pulsepick.parts.led import get_led


def rate(fn, n, repeats=5):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return n / statistics.median(times)


def main() -> None:
    rng = np.random.default_rng(1)
    parts = PartChoice(led=get_led("red"))
    n_bare = 1_000_000
    r = 10 ** rng.uniform(3, 7, n_bare)
    c = 10 ** rng.uniform(-9, -5, n_bare)
    env, _ = make_env(ChipSpec("hc"), parts, 3.0, c_timing=c)
    topo = Topology("schmitt", "direct")
    bare = rate(lambda: fast.periods(topo, {"r1": r, "c1": c}, env), n_bare)
    print(f"bare schmitt periods:        {bare:12,.0f} per second  (target >= 1,000,000)")

    n = 100_000
    vals = {"r1": r[:n], "c1": c[:n], "cp": 10 ** rng.uniform(-6, -4, n),
            "rs": rng.uniform(0, 100, n)}
    env_n, powered = make_env(ChipSpec("hc"), parts, 3.0, c_timing=vals["c1"])
    for buffered in (False, True):
        t = Topology("schmitt", "pulse", buffered=buffered)
        pr = rate(lambda t=t: fast.evaluate(t, vals, env_n, powered), n, repeats=3)
        label = "buffered" if buffered else "on the timing gate"
        print(f"schmitt + pulse ({label:18s}) {pr:10,.0f} per second  (target >= 100,000)")

    design = Design(Topology("schmitt", "pulse"), {"r1": 2.2e6, "c1": 1e-6, "cp": 22e-6,
                                                   "rs": 47.0},
                    ChipSpec("hc"), parts, 3.0)
    t0 = time.perf_counter()
    runs = 5
    for _ in range(runs):
        design.reference()
    ref_s = (time.perf_counter() - t0) / runs
    print(f"reference engine:            {ref_s * 1e3:12.1f} ms per circuit "
          f"(speed-up of the fast engine: {pr * ref_s:,.0f} x)")


if __name__ == "__main__":
    main()
