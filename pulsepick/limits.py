"""Bounds on every size a user can ask for, checked before any work starts.

Each bound keeps one run of the program within seconds to a minute and within a
gigabyte of memory on a small machine (estimates, measured in ``bench/``). Options
state the bound in their help; a value outside is refused with exit status 2.
"""

from __future__ import annotations

import argparse
import os

from pulsepick.errors import RequestError

MIN_BUILDS = 2  # a spread needs at least two builds
MAX_BUILDS = 1_000_000  # Monte Carlo builds per circuit (bench/bench_spread.py: under 1 GB)
MAX_SEED = 2**32 - 1  # seeds of the random builds
MAX_TOP = 20  # circuits offered by one solve (each is verified and analysed)
MAX_LIGHTS = 12  # lights in one build (two hex Schmitt packages' worth of gates)
MAX_STOCK_ROWS = 10_000  # rows of a stock file (a large drawer has a few hundred)
MAX_PROFILE_ROWS = 10_000  # rows of an irradiance profile (a day by the 10 s)
MAX_INPUT_BYTES = 10 * 1024 * 1024  # size of any input file (design, stock, profile)
MAX_NESTING = 16  # nesting depth of a design file (the format itself needs 3)
JOBS_PER_CPU = 4  # worker processes per CPU core at most


# Memory of a run of the documented maximum stays under a gigabyte: the spread of one
# circuit needs about this many bytes per build at its peak (bench/bench_limits.py:
# 1,000,000 builds peak near 360 MB), and every process some fixed amount besides
# (numpy, scipy and the tables loaded; measured about 150 MB).
MEMORY_BUDGET_B = 1.0e9
SPREAD_BYTES_PER_BUILD = 400.0
PROCESS_BASE_B = 150e6


def workers_for_builds(jobs: int, builds: int) -> int:
    """Worker processes for checking circuits with ``builds`` Monte Carlo builds each:
    at most ``jobs``, and no more than :data:`MEMORY_BUDGET_B` holds next to this
    process (one worker at the very least)."""
    per_worker = PROCESS_BASE_B + SPREAD_BYTES_PER_BUILD * builds
    room = MEMORY_BUDGET_B - PROCESS_BASE_B
    return max(1, min(jobs, int(room // per_worker)))


def max_jobs() -> int:
    """The largest ``--jobs``: four workers per CPU core."""
    return JOBS_PER_CPU * max(1, os.cpu_count() or 1)


def check_count(option: str, value: object, low: int, high: int) -> int:
    """``value`` as a whole number within ``low..high``, or a :class:`RequestError`.

    The message names the option and the accepted range and echoes no Python repr.
    """
    if isinstance(value, bool) or not isinstance(value, int):
        shown = str(value)[:40]
        raise RequestError(f"{option} {shown}: give a whole number from {low:,} to {high:,}")
    if not low <= value <= high:
        shown = f"{value:,}" if abs(value) < 10**30 else "a number that large"
        raise RequestError(f"{option} {shown} is out of range; give a whole number from "
                           f"{low:,} to {high:,}")
    return value


def count_type(option: str, low: int, high: int | None = None):
    """An argparse ``type=`` that reads a whole number and checks ``low..high``.

    ``high`` None means :func:`max_jobs` (read when the option is parsed).
    """

    def read(text: str) -> int:
        top = max_jobs() if high is None else high
        try:
            value = int(text, 10)
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"{text[:40]!s} is not a whole number; give one from {low:,} to {top:,}"
            ) from None
        try:
            return check_count(option, value, low, top)
        except RequestError as err:
            raise argparse.ArgumentTypeError(str(err).removeprefix(f"{option} ")) from None

    read.__name__ = "whole number"
    return read
