"""Time ``pulsepick solve "one flash every 3 s"`` end to end and print the solver's figures.

Printed (not a timed unit test):

* the whole command in a fresh interpreter (start, search, reference verification of
  the top 5, 2,000-build spreads, report): median wall time of several runs against
  the 1.5 s target, and peak memory against 300 MB (largest single process from
  ``getrusage``, and the sum over the process tree, sampled, as an upper bound since
  forked workers share pages);
* a breakdown: interpreter start with every command loaded, search, assessment;
* the search's rate (circuits evaluated per second) and its speed-up over evaluating
  the same circuits with the reference engine (a timed sample of reference runs,
  extrapolated).

    python bench/bench_solve.py [--runs N]
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import time

from pulsepick.workers import process_table, tree

PHRASE = "one flash every 3 s"
TARGET_S = 1.5  # s, end to end (the project's speed requirement)
TARGET_MB = 300.0  # MB, peak memory (the project's speed requirement)
SAMPLE_REFERENCE = 8  # reference runs timed for the speed-up estimate


def _tree_rss_kb(root: int) -> int:
    """Resident memory of ``root`` and its descendants, kB (shared pages counted per process)."""
    table = process_table()
    return sum(table[p][2] for p in tree(root, table) if p in table) * \
        os.sysconf("SC_PAGE_SIZE") // 1024


def run_command(args: list[str], sample: bool = False) -> tuple[float, float]:
    """Wall time (s) and, when ``sample``, the sampled peak tree memory (MB) of one command.

    Sampling reads /proc and takes CPU from the command, so timed runs do not sample.
    """
    start = time.perf_counter()
    proc = subprocess.Popen([sys.executable, "-m", "pulsepick", *args],
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    peak = 0
    while sample and proc.poll() is None:
        peak = max(peak, _tree_rss_kb(proc.pid))
        time.sleep(0.05)
    proc.wait()
    wall = time.perf_counter() - start
    err = proc.stderr.read().decode() if proc.stderr else ""
    if proc.returncode != 0:
        raise SystemExit(f"command failed ({proc.returncode}): {err.strip()}")
    return wall, peak / 1024.0


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="end-to-end runs (default 5)")
    opts = parser.parse_args()

    # An installed package is byte-compiled by pip; an editable checkout run with
    # PYTHONDONTWRITEBYTECODE set would recompile every module on every run. Compile
    # once, as an installation would, so the timing is that of the installed tool.
    import compileall

    import pulsepick

    compileall.compile_dir(os.path.dirname(pulsepick.__file__), quiet=1)
    print(f"pulsepick solve \"{PHRASE}\": end to end in a fresh interpreter, {opts.runs} runs")
    run_command(["solve", PHRASE])  # warm the file cache
    walls = [run_command(["solve", PHRASE])[0] for _ in range(opts.runs)]
    trees = [run_command(["solve", PHRASE], sample=True)[1]]
    single_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024.0
    median = statistics.median(walls)
    print(f"  wall time: median {median:.2f} s (min {min(walls):.2f}, max {max(walls):.2f}); "
          f"target {TARGET_S} s: {'met' if median <= TARGET_S else 'NOT met'}")
    print(f"  peak memory: largest process {single_mb:.0f} MB; process tree (sampled, shared "
          f"pages counted per process) {max(trees):.0f} MB; target {TARGET_MB:.0f} MB: "
          f"{'met' if single_mb <= TARGET_MB else 'NOT met'}")
    starts = [run_command(["--help"])[0] for _ in range(3)]
    print(f"  of which interpreter start with every command loaded: "
          f"{statistics.median(starts):.2f} s")

    # in-process: search, assessment, rate and speed-up
    from pulsepick.engine import reference
    from pulsepick.request import make_request
    from pulsepick.solve import assess, solve
    from pulsepick.workers import PoolRunner, default_jobs

    req = make_request(PHRASE)
    solve(req)  # warm caches
    for jobs in sorted({1, default_jobs()}):
        with PoolRunner(jobs) as runner:  # one set of workers, as the command has
            t0 = time.perf_counter()
            result = solve(req, runner=runner)
            t1 = time.perf_counter()
            assessed = assess(result, runner=runner)
            t_search, t_assess = t1 - t0, time.perf_counter() - t1
        rate = result.evaluated / t_search
        print(f"  jobs={jobs}: search {t_search:.2f} s ({result.evaluated:,} circuits, "
              f"{rate:,.0f} per second), verification and analyses of the top "
              f"{len(result.candidates)} {t_assess:.2f} s")
    steps = {}
    for c in assessed.candidates:
        for k, v in c.timings_s.items():
            steps.setdefault(k, []).append(v)
    print("  per candidate: " + ", ".join(f"{k} {statistics.mean(v):.3f} s" for k, v in
                                          steps.items()))

    # speed-up: the same circuits with the reference engine, from a timed sample
    designs = [c.design for c in result.candidates]
    sample = (designs * ((SAMPLE_REFERENCE // max(len(designs), 1)) + 1))[:SAMPLE_REFERENCE]
    t0 = time.perf_counter()
    for d in sample:
        env, powered = d.env()
        reference.simulate(d.topo, d.values, env, powered=bool(powered))
    t_ref = (time.perf_counter() - t0) / len(sample)
    one = solve(req)
    t_search1 = one.search_s
    speedup = one.evaluated * t_ref / t_search1
    print(f"  reference engine: {t_ref:.3f} s per circuit (mean of {len(sample)}); the same "
          f"{one.evaluated:,} circuits would take {one.evaluated * t_ref / 3600:.1f} h: the "
          f"search is {speedup:,.0f} times faster (one process)")


if __name__ == "__main__":
    main()
