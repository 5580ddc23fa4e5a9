"""Warm speed of the Python API: repeated ``pp.solve("one flash every 3 s")`` in one process.

Printed (not a timed unit test):

* the first call (imports, tables, worker start-up, the whole solve);
* later identical calls, median against the 0.4 s target: an identical request is
  answered from the process's cache of solved requests (answers are seeded, so the
  same request gives the same answer);
* later calls with ``cache=False``: the solve itself with everything warm (tables
  loaded, modules imported), for comparison.

    python bench/bench_api.py [--runs N]
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import pulsepick as pp

PHRASE = "one flash every 3 s"
TARGET_S = 0.4  # s, median of a repeated call in the same process (the project's target)


def _time(fn) -> float:
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args()
    first = _time(lambda: pp.solve(PHRASE))
    again = [_time(lambda: pp.solve(PHRASE)) for _ in range(args.runs)]
    fresh = [_time(lambda: pp.solve(PHRASE, cache=False)) for _ in range(args.runs)]
    median = statistics.median(again)
    print(f"pp.solve({PHRASE!r}) in one process, {args.runs} runs each")
    print(f"  first call                       {first:8.3f} s")
    print(f"  repeated call, median            {median:8.3f} s   target {TARGET_S} s: "
          f"{'met' if median <= TARGET_S else 'NOT met'}")
    print(f"  repeated call, cache=False, med. {statistics.median(fresh):8.3f} s   "
          f"(min {min(fresh):.3f} s, max {max(fresh):.3f} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
