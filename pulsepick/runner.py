"""How the computational core runs a batch of independent tasks: the caller decides.

The core (the solver's search, the reference checks and spreads of the chosen circuits,
the lock remedies worked out meanwhile) hands its tasks to a *runner* it is given and
never starts a process itself. The default, :data:`SERIAL`, runs every task here, one
after another; the shell passes a :class:`pulsepick.workers.PoolRunner` to spread them
over worker processes it owns (their number and their lifetime).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any, Protocol


class Runner(Protocol):
    """Runs ``fn(*task)`` for every task and returns the results in the order of ``tasks``."""

    def map(self, fn: Callable[..., Any], tasks: Sequence[tuple], *,
            meanwhile: Callable[[], None] | None = None,
            order: Sequence[int] | None = None, limit: int | None = None) -> list:
        """``[fn(*task) for task in tasks]``.

        ``meanwhile()``, when given, runs in this process while the tasks run elsewhere
        (or first, when they run here). ``order`` is the order in which the tasks are
        handed out (default: as given). ``limit`` is the most tasks that may run at
        once (a memory bound; None: no bound). ``meanwhile`` may run a batch of its own
        on the same runner.
        """
        ...


class SerialRunner:
    """Every task in this process, one after another."""

    def map(self, fn: Callable[..., Any], tasks: Sequence[tuple], *,
            meanwhile: Callable[[], None] | None = None,
            order: Sequence[int] | None = None, limit: int | None = None) -> list:
        if meanwhile is not None:
            meanwhile()
        return [fn(*task) for task in tasks]


#: The runner the core uses when its caller gives none.
SERIAL = SerialRunner()


def runner_or_serial(runner: Runner | None) -> Runner:
    """``runner``, or :data:`SERIAL` when None."""
    return SERIAL if runner is None else runner


__all__ = ["SERIAL", "Runner", "SerialRunner", "runner_or_serial"]
