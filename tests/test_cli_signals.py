"""Signals during a solve: the program and its worker processes end together.

Exit statuses follow the shell convention 128 + signal number (POSIX shell, "Exit
Status" of a command ended by a signal; common practice): Ctrl-C (SIGINT, 2) gives 130.
"""

from __future__ import annotations

import signal
import subprocess
import sys
import time

import pytest

from pulsepick.workers import alive, children

pytestmark = pytest.mark.skipif(sys.platform != "linux", reason="process tree via /proc")

SOLVE = [sys.executable, "-m", "pulsepick", "solve", "one flash every 3 s",
         "--builds", "300000", "--jobs", "2"]


def _workers_of(proc: subprocess.Popen) -> list[int]:
    """The two worker processes of ``proc`` once both have started (within a minute)."""
    deadline = time.monotonic() + 60
    kids: list[int] = []
    while time.monotonic() < deadline and len(kids) < 2:
        time.sleep(0.05)
        kids = children(proc.pid)
        assert proc.poll() is None, proc.stderr.read() if proc.stderr else ""
    return kids


@pytest.mark.parametrize(("sig", "status"), [(signal.SIGTERM, 128 + 15),
                                             (signal.SIGHUP, 128 + 1),
                                             (signal.SIGINT, 130)])
def test_signal_ends_the_whole_tree(sig, status):
    proc = subprocess.Popen(SOLVE, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        kids = _workers_of(proc)
        assert len(kids) == 2  # the two workers asked for with --jobs 2
        proc.send_signal(sig)
        _, err = proc.communicate(timeout=2.0)  # ends within the 2 s allowed
        assert proc.returncode == status
        assert b"Traceback" not in err
        assert len(err.decode().strip().splitlines()) == 1
        time.sleep(0.5)
        assert [k for k in kids if alive(k)] == []
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()


def test_killed_parent_takes_its_workers_along():
    """SIGKILL cannot be caught: the workers notice their parent is gone by themselves."""
    proc = subprocess.Popen(SOLVE, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        kids = _workers_of(proc)
        assert len(kids) == 2
        proc.kill()
        proc.wait()
        end = time.monotonic() + 2.0
        while time.monotonic() < end and any(alive(k) for k in kids):
            time.sleep(0.05)
        assert [k for k in kids if alive(k)] == []
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
