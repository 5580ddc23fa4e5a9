"""Worker processes that never outlive the program that started them.

:func:`run_pool` runs tasks in forked worker processes. Each worker

- asks the kernel to end it when its parent dies (Linux ``PR_SET_PDEATHSIG``), and
  also watches its parent's process id from a thread, so a parent killed outright
  (SIGKILL included) leaves no worker behind;
- ignores Ctrl-C (SIGINT goes to the whole process group; only the parent decides);
- gets SIGTERM, SIGHUP and SIGINT back to their default actions, so the signal
  handlers of the parent (see :mod:`pulsepick.cli`) never run in a worker.

When the parent leaves the pool with an exception (Ctrl-C, a termination signal, an
error) the workers are killed at once instead of being waited for.
"""

from __future__ import annotations

import os
import signal
import threading
import time
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from typing import Any

# How often (s) a worker checks that its parent is still alive (estimate: short enough
# that an orphan dies well inside the 2 s the signal test allows).
PARENT_POLL_S = 0.2
_PR_SET_PDEATHSIG = 1  # prctl option number from <linux/prctl.h>


def _die_with_parent(parent_pid: int) -> None:
    """Initialiser of every worker (runs in the worker)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    if hasattr(signal, "SIGHUP"):
        signal.signal(signal.SIGHUP, signal.SIG_DFL)
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
    procs = list(getattr(pool, "_processes", {}).values())
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


@contextmanager
def signals_deferred() -> Iterator[None]:
    """Ctrl-C, SIGTERM and SIGHUP arriving inside the block take effect as it ends.

    For work that must not be broken off half way, such as importing a large package:
    an import stopped half way leaves modules half made, and the program's own exit then
    fails. Only the main thread handles signals; elsewhere the block runs as it is.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught: list[int] = []

    def note(signum, _frame) -> None:
        caught.append(signum)

    old = {}
    for name in ("SIGINT", "SIGTERM", "SIGHUP"):
        sig = getattr(signal, name, None)
        if sig is not None and signal.getsignal(sig) is not None:
            old[sig] = signal.signal(sig, note)
    try:
        yield
    finally:
        for sig, handler in old.items():
            signal.signal(sig, handler)
        if caught:
            signal.raise_signal(caught[0])  # now handled as it would have been


def run_pool(fn: Callable[..., Any], tasks: Sequence[tuple], jobs: int,
             meanwhile: Callable[[], None] | None = None,
             order: Sequence[int] | None = None) -> list:
    """``[fn(*task) for task in tasks]`` computed by up to ``jobs`` worker processes.

    ``meanwhile()``, when given, runs in this process while the workers work.
    ``order`` is the order in which the tasks are handed out (default: as given);
    the results always come back in the order of ``tasks``.
    """
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    ctx = multiprocessing.get_context("fork")
    pool = ProcessPoolExecutor(max_workers=max(1, min(jobs, len(tasks))), mp_context=ctx,
                               initializer=_die_with_parent, initargs=(os.getpid(),))
    try:
        idx = list(range(len(tasks))) if order is None else list(order)
        futures = {i: pool.submit(fn, *tasks[i]) for i in idx}
        if meanwhile is not None:
            meanwhile()
        out = [futures[i].result() for i in range(len(tasks))]
    except BaseException:
        _kill(pool)
        raise
    pool.shutdown(wait=True)
    return out
