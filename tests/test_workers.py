"""Runners: the core's tasks in this process, or on worker processes the caller owns."""

from __future__ import annotations

import os
import sys

import pytest

from pulsepick.runner import SERIAL, runner_or_serial
from pulsepick.workers import PoolRunner, alive, children, default_jobs, on_workers

linux_only = pytest.mark.skipif(sys.platform != "linux", reason="fork start method")


def _square(x: int) -> int:
    return x * x


def _pid(_: int) -> int:
    return os.getpid()


def _fail(x: int) -> int:
    if x == 2:
        raise ValueError("task 2 fails")
    return x


def test_serial_runs_meanwhile_first_and_keeps_the_order():
    seen = []
    out = SERIAL.map(_square, [(3,), (4,)], meanwhile=lambda: seen.append("meanwhile"))
    assert out == [9, 16] and seen == ["meanwhile"]
    assert runner_or_serial(None) is SERIAL


@linux_only
def test_pool_results_come_back_in_task_order_whatever_the_handing_out():
    tasks = [(i,) for i in range(7)]
    with PoolRunner(2) as runner:
        assert runner.map(_square, tasks, order=[6, 5, 4, 3, 2, 1, 0]) == [
            0, 1, 4, 9, 16, 25, 36]


@linux_only
def test_one_set_of_workers_serves_every_batch_and_ends_with_the_runner():
    with PoolRunner(2) as runner:
        first = set(runner.map(_pid, [(i,) for i in range(8)]))
        second = set(runner.map(_pid, [(i,) for i in range(8)]))
        assert os.getpid() not in first
        assert len(first | second) <= 2  # the same two workers, not new ones
    assert not any(alive(p) for p in first | second)


@linux_only
def test_a_memory_bound_or_a_single_task_runs_here():
    with PoolRunner(2) as runner:
        assert runner.map(_pid, [(0,), (1,)], limit=1) == [os.getpid()] * 2
        assert runner.map(_pid, [(0,)]) == [os.getpid()]
    assert on_workers(lambda x, runner: runner.jobs * x, 5, jobs=3) == 15
    assert 1 <= default_jobs() <= 2


@linux_only
def test_an_error_in_a_task_kills_the_workers_and_the_next_batch_gets_new_ones():
    with PoolRunner(2) as runner:
        before = set(runner.map(_pid, [(0,), (1,), (2,)]))
        with pytest.raises(ValueError, match="task 2 fails"):
            runner.map(_fail, [(0,), (1,), (2,), (3,)])
        assert not any(alive(p) for p in before)
        assert runner.map(_square, [(5,), (6,)]) == [25, 36]


def _slow_pid(_: int) -> int:
    import time

    time.sleep(0.05)
    return os.getpid()


@linux_only
def test_a_batch_of_another_size_from_meanwhile_gets_its_own_workers_beside_the_busy_ones():
    inner: list[list[int]] = []
    with PoolRunner(3) as runner:
        outer = runner.map(_slow_pid, [(i,) for i in range(6)], meanwhile=lambda: inner.append(
            runner.map(_pid, [(i,) for i in range(4)], limit=2)))
        assert len(outer) == 6 and len(inner[0]) == 4
        assert not set(outer) & set(inner[0])  # new workers for the smaller batch
        assert os.getpid() not in set(outer) | set(inner[0])
        assert not any(alive(p) for p in outer)  # the busy pool ended with its batch
        again = runner.map(_pid, [(i,) for i in range(4)], limit=2)  # the new ones serve on
        assert not set(again) & set(outer) and os.getpid() not in again
    assert not any(alive(p) for p in set(inner[0]) | set(again))


@linux_only
def test_an_error_in_a_batch_of_another_size_from_meanwhile_kills_both_sets_of_workers():
    seen: list[set[int]] = []

    def meanwhile() -> None:
        seen.append(set(runner.map(_pid, [(0,), (1,)], limit=2)))
        runner.map(_fail, [(0,), (1,), (2,)], limit=2)

    with PoolRunner(3) as runner:
        with pytest.raises(ValueError, match="task 2 fails"):
            runner.map(_slow_pid, [(i,) for i in range(4)], meanwhile=meanwhile)
        assert seen and not any(alive(p) for p in seen[0])
        assert not [p for p in children(os.getpid()) if alive(p)]  # the outer ones too
        assert runner.map(_square, [(5,), (6,)]) == [25, 36]


@linux_only
def test_a_failing_batch_from_meanwhile_on_the_same_workers_reports_its_own_error():
    with PoolRunner(2) as runner:
        with pytest.raises(ValueError, match="task 2 fails"):
            runner.map(_slow_pid, [(i,) for i in range(4)],
                       meanwhile=lambda: runner.map(_fail, [(0,), (1,), (2,)]))
        assert not [p for p in children(os.getpid()) if alive(p)]
        assert runner.map(_square, [(3,), (4,)]) == [9, 16]
