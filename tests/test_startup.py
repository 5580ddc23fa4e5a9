"""What a cold start imports and how the program sets itself up: scipy.integrate is slow
to import and only the reference engine needs it (see DEVELOPERS.md, start-up time)."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

#: Prints the names of the scipy modules imported so far.
SCIPY_LOADED = "print(sorted(m for m in sys.modules if m.split('.')[0] == 'scipy'))\n"


def _lines(code: str) -> list[str]:
    """What ``code`` prints, line by line, run in a fresh interpreter."""
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True).stdout.splitlines()


def test_solve_path_imports_no_scipy_until_a_reference_run():
    code = ("import sys\n"
            "import pulsepick.cli, pulsepick.commands.solve, pulsepick.solve, pulsepick.design\n"
            "import pulsepick.analysis.spread, pulsepick.analysis.checks\n"
            + SCIPY_LOADED +
            "from pulsepick.engine.reference import load_integrator\n"
            "print(load_integrator().__name__, 'scipy.integrate' in sys.modules)\n")
    out = _lines(code)
    assert out == ["[]", "solve_ivp True"]


def test_the_median_aim_needs_no_scipy():
    # the solver's search workers compute median builds (split-normal quantiles): the
    # standard library's normal distribution serves, so they import no scipy at all
    code = ("import sys\n"
            "from pulsepick.analysis.median import chip_grid\n"
            "s, p, m = chip_grid('hc', [3.0, 2.0], 9)\n"
            "print(len(s) > 0, sorted(m for m in sys.modules if m.split('.')[0] == 'scipy'))\n")
    out = _lines(code)
    assert out == ["True []"]


def test_the_checks_beside_the_reference_runs_need_no_scipy():
    # the spreads, drift and warnings of the offered circuits start on the search's
    # workers while this process still imports the integrator, so they must need none
    code = ("import sys, importlib\n"
            "import pulsepick.prefetch\n"
            "pulsepick.prefetch.prefetch = lambda *names: None\n"
            "from pulsepick.request import make_request\n"
            "from pulsepick.solve import solve\n"
            "A = importlib.import_module('pulsepick.solve.assessment')\n"
            "req = make_request('one flash every 3 s, 40 ms long', led='red',\n"
            "                   supply='2.7V..1.8V', family='lvc,timer555')\n"
            "res = solve(req)\n"
            "outs = [A._assess_part(part, A._assess_args(req, c))\n"
            "        for c in res.candidates for part in ('spread', 'checks')]\n"
            "print(len(outs) // 2, all(o.get('spread') is not None for o in outs[::2]))\n"
            + SCIPY_LOADED)
    out = _lines(code)
    assert out[0].split()[1] == "True" and int(out[0].split()[0]) >= 3
    assert out[1] == "[]"


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork")
def test_a_fork_waits_for_the_integrator_import_under_way():
    # the import runs in a thread; a child forked meanwhile must start with it whole
    code = ("import os, sys\n"
            "from pulsepick.prefetch import prefetch\n"
            "prefetch('scipy.integrate')\n"
            "pid = os.fork()\n"
            "if pid == 0:\n"
            "    m = sys.modules.get('scipy.integrate')\n"
            "    os._exit(0 if m is not None and hasattr(m, 'solve_ivp') else 3)\n"
            "print(os.waitpid(pid, 0)[1] >> 8)\n")
    out = " ".join(_lines(code)).split()
    assert out == ["0"]


def test_the_program_collects_garbage_less_often_than_pythons_default():
    code = ("import gc, sys\n"
            "import pulsepick.cli as cli\n"
            "cli.main = lambda: print(gc.get_threshold()[0]) or 0\n"
            "cli.run()\n")
    from pulsepick.cli import GC_YOUNG_THRESHOLD

    assert _lines(code) == [str(GC_YOUNG_THRESHOLD)] and GC_YOUNG_THRESHOLD > 700
