"""Modules imported ahead of their use, in a thread, while other processes work.

Some imports are slow (scipy.integrate takes about half a second of CPU) and are needed
only after work that other processes do, such as the solver's search on its workers.
:func:`prefetch` starts importing them in a thread of this process and returns at once,
so the import overlaps with that work instead of following it.

A fork of this process waits for every prefetch under way (``os.register_at_fork``): a
child forked half way through an import would start with the thread's module locks held
and its modules half made. :func:`wait` waits for them too; the code that uses a
prefetched module imports it as usual (an import that failed in the thread is tried
again there, and reports its error there).
"""

from __future__ import annotations

import importlib
import os
import sys
import threading

_threads: list[threading.Thread] = []
_guard = threading.Lock()
_fork_waits = False


def prefetch(*names: str) -> None:
    """Start importing the modules ``names``, in this order, in a thread; return at once.

    Modules already imported are skipped, and no thread starts when every one is.
    """
    global _fork_waits
    todo = [name for name in names if name not in sys.modules]
    if not todo:
        return
    with _guard:
        if not _fork_waits and hasattr(os, "register_at_fork"):
            os.register_at_fork(before=wait)
            _fork_waits = True
        thread = threading.Thread(target=_import_all, args=(todo,),
                                  name="pulsepick-prefetch")
        _threads.append(thread)
        thread.start()


def _import_all(names: list[str]) -> None:
    for name in names:
        try:
            importlib.import_module(name)
        except Exception:
            return  # imported again where it is used, which reports the error


def wait() -> None:
    """Wait until every prefetch started in this process has ended."""
    with _guard:
        threads = list(_threads)
    for thread in threads:
        if thread is not threading.current_thread():
            thread.join()
    with _guard:
        _threads[:] = [t for t in _threads if t.is_alive()]
