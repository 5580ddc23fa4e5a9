"""Worker processes that never outlive the program that started them.

:class:`PoolRunner` runs the core's tasks in forked worker processes; the shell owns
it (how many workers, and how long they live). Each worker

- asks the kernel to end it when its parent dies (Linux ``PR_SET_PDEATHSIG``), and
  also watches its parent's process id from a thread, so a parent killed outright
  (SIGKILL included) leaves no worker behind;
- ignores Ctrl-C (SIGINT goes to the whole process group; only the parent decides);
- gets SIGTERM, SIGHUP and SIGINT back to their default actions, so the signal
  handlers of the parent (see :mod:`pulsepick.cli`) never run in a worker.

When the parent leaves a batch or the runner with an exception (Ctrl-C, a termination
signal, an error) the workers are killed at once instead of being waited for.
"""

from __future__ import annotations

import contextlib
import gc
import os
import signal
import threading
import time
from collections.abc import Callable, Sequence
from typing import Any

# How often (s) a worker checks that its parent is still alive (estimate: short enough
# that an orphan dies well inside the 2 s the signal test allows).
PARENT_POLL_S = 0.2
_PR_SET_PDEATHSIG = 1  # prctl option number from <linux/prctl.h>


#: Signals held back in the parent while it forks its workers (see :func:`_held`).
_HELD = tuple(getattr(signal, name) for name in ("SIGINT", "SIGTERM", "SIGHUP")
              if hasattr(signal, name))


@contextlib.contextmanager
def _held():
    """Hold the stopping signals back while the workers are forked, and deliver them
    after: one arriving in the parent's after-fork handlers would be lost (Python
    reports an exception there and carries on)."""
    if not hasattr(signal, "pthread_sigmask"):
        yield
        return
    old = signal.pthread_sigmask(signal.SIG_BLOCK, _HELD)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


@contextlib.contextmanager
def _frozen():
    """Workers forked inside the block leave the parent's objects to the parent: they
    are moved out of the garbage collector's view (``gc.freeze``) while the workers are
    forked, so a worker's collections do not touch, and so copy, the memory pages it
    shares with its parent (numpy's and scipy's modules among them)."""
    gc.freeze()
    try:
        yield
    finally:
        gc.unfreeze()


def _die_with_parent(parent_pid: int) -> None:
    """Initialiser of every worker (runs in the worker)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    if hasattr(signal, "SIGHUP"):
        signal.signal(signal.SIGHUP, signal.SIG_DFL)
    if hasattr(signal, "pthread_sigmask"):
        signal.pthread_sigmask(signal.SIG_UNBLOCK, _HELD)  # held by the parent's fork
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
    except (OSError, AttributeError):
        pass  # not Linux: the watcher thread below still ends the worker

    def watch() -> None:
        while True:
            if os.getppid() != parent_pid:
                os._exit(1)
            time.sleep(PARENT_POLL_S)

    # the parent may already have gone between fork and this point
    if os.getppid() != parent_pid:
        os._exit(1)
    threading.Thread(target=watch, daemon=True, name="pulsepick-parent-watch").start()


def _kill(pool) -> None:
    procs = list((getattr(pool, "_processes", None) or {}).values())  # None: shut down
    for p in procs:
        try:
            p.kill()
        except (OSError, ValueError, AttributeError):
            pass
    pool.shutdown(wait=False, cancel_futures=True)
    for p in procs:
        try:
            p.join(1.0)
        except (OSError, ValueError, AttributeError, AssertionError):
            pass


def default_jobs() -> int:
    """Worker processes when none are asked for: up to two, as the machine allows."""
    return max(1, min(2, os.cpu_count() or 1))


class PoolRunner:
    """A :class:`pulsepick.runner.Runner` on up to ``jobs`` forked worker processes.

    The shell opens one for a command (``with PoolRunner(jobs) as runner:``) and hands it
    to the core. The workers start with the first batch that needs them and serve every
    later batch while the runner is open; a batch bounded to fewer tasks at once
    (``limit``) gets a pool of that size instead. A batch of one task, or a runner of one
    job, runs in this process. A batch of another size while another batch still runs
    (from its ``meanwhile``) gets a pool of its own, and the busy pool ends when its
    batch does. Leaving the ``with`` block shuts the workers down; leaving it,
    or a batch, with an exception (Ctrl-C, a termination signal, an error) kills them
    at once instead of waiting for them.
    """

    def __init__(self, jobs: int) -> None:
        self.jobs = max(1, int(jobs))
        self._pool = None
        self._width = 0
        self._busy: dict[int, int] = {}  # id of a pool -> batches running on it

    def __enter__(self) -> PoolRunner:
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        self.close(kill=exc_type is not None)

    def close(self, kill: bool = False) -> None:
        """Shut the workers down (``kill``: at once, without waiting for them)."""
        pool, self._pool, self._width = self._pool, None, 0
        if pool is None:
            return
        if kill:
            _kill(pool)
        else:
            pool.shutdown(wait=True)

    def _retire(self) -> None:
        """No more batches for the current pool: shut it down now when it is idle, else
        when its batch ends (see :meth:`map`)."""
        if self._pool is not None and self._busy.get(id(self._pool)):
            self._pool, self._width = None, 0
        else:
            self.close()

    def _open(self, width: int):
        if self._pool is not None and self._width != width:
            self._retire()
        if self._pool is None:
            import multiprocessing
            from concurrent.futures import ProcessPoolExecutor

            ctx = multiprocessing.get_context("fork")
            self._pool = ProcessPoolExecutor(max_workers=width, mp_context=ctx,
                                             initializer=_die_with_parent,
                                             initargs=(os.getpid(),))
            self._width = width
        return self._pool

    def map(self, fn: Callable[..., Any], tasks: Sequence[tuple], *,
            meanwhile: Callable[[], None] | None = None,
            order: Sequence[int] | None = None, limit: int | None = None) -> list:
        """``[fn(*task) for task in tasks]`` (see :class:`pulsepick.runner.Runner`)."""
        width = self.jobs if limit is None else max(1, min(self.jobs, limit))
        if width <= 1 or len(tasks) <= 1:
            from pulsepick.runner import SERIAL

            return SERIAL.map(fn, tasks, meanwhile=meanwhile)
        pool = self._open(width)
        self._busy[id(pool)] = self._busy.get(id(pool), 0) + 1
        killed = False
        try:
            idx = list(range(len(tasks))) if order is None else list(order)
            with _held(), _frozen():  # the first batch forks the workers
                futures = {i: pool.submit(fn, *tasks[i]) for i in idx}
            if meanwhile is not None:
                meanwhile()
            return [futures[i].result() for i in range(len(tasks))]
        except BaseException:
            killed = True
            if pool is not self._pool:
                _kill(pool)
            self.close(kill=True)
            raise
        finally:
            self._busy[id(pool)] -= 1
            if not self._busy[id(pool)]:
                del self._busy[id(pool)]
                if pool is not self._pool and not killed:
                    pool.shutdown(wait=True)  # retired meanwhile: its workers are idle


def pool_runner(jobs: int | None = None) -> PoolRunner:
    """The runner of a command: ``jobs`` worker processes (None: :func:`default_jobs`)."""
    return PoolRunner(default_jobs() if jobs is None else jobs)


def on_workers(fn: Callable[..., Any], *args: Any, jobs: int | None = None,
               **kwargs: Any) -> Any:
    """``fn(*args, runner=..., **kwargs)`` on a :func:`pool_runner` of ``jobs`` workers
    that lives as long as the call."""
    with pool_runner(jobs) as runner:
        return fn(*args, runner=runner, **kwargs)


def process_table() -> dict[int, tuple[int, str, int]]:
    """Every process of the machine: process id -> (parent's id, state letter, resident
    pages), read from ``/proc`` (Linux; empty elsewhere). For checking that no worker
    outlives its parent (tests, benchmarks)."""
    out: dict[int, tuple[int, str, int]] = {}
    try:
        entries = os.listdir("/proc")
    except OSError:
        return out
    for entry in entries:
        row = _stat(entry) if entry.isdigit() else None
        if row is not None:
            out[int(entry)] = row
    return out


def _stat(pid: int | str) -> tuple[int, str, int] | None:
    """(parent's id, state letter, resident pages) of ``pid``; None when it is gone."""
    try:
        with open(f"/proc/{pid}/stat", encoding="ascii", errors="replace") as fh:
            fields = fh.read().rsplit(")", 1)[1].split()
    except (OSError, IndexError):
        return None
    return int(fields[1]), fields[0], int(fields[21])


def children(pid: int, table: dict[int, tuple[int, str, int]] | None = None) -> list[int]:
    """The processes whose parent is ``pid``."""
    table = process_table() if table is None else table
    return [p for p, (parent, _, _) in table.items() if parent == pid]


def tree(pid: int, table: dict[int, tuple[int, str, int]] | None = None) -> set[int]:
    """``pid`` and every process below it."""
    table = process_table() if table is None else table
    found, todo = set(), [pid]
    while todo:
        p = todo.pop()
        if p not in found:
            found.add(p)
            todo.extend(children(p, table))
    return found


def alive(pid: int) -> bool:
    """True while ``pid`` runs (a zombie, ended but not yet reaped, is not alive)."""
    row = _stat(pid)
    return row is not None and row[1] != "Z"
