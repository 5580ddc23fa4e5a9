"""What a cold start imports and how the program sets itself up: scipy.integrate is slow
to import, and a solve with its checks needs no scipy at all (see DEVELOPERS.md,
start-up time)."""

from __future__ import annotations

import subprocess
import sys

#: Prints the names of the scipy modules imported so far.
SCIPY_LOADED = "print(sorted(m for m in sys.modules if m.split('.')[0] == 'scipy'))\n"


def _lines(code: str) -> list[str]:
    """What ``code`` prints, line by line, run in a fresh interpreter."""
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True).stdout.splitlines()


def test_a_solve_and_its_checks_import_no_scipy():
    # the README's demo solve, its spreads, drift, checks and reference runs, in this
    # process: no scipy module; only a circuit too stiff for the reference engine's own
    # integrator imports scipy.integrate (for LSODA)
    code = ("import sys\n"
            "import pulsepick.cli, pulsepick.commands.solve\n"
            "from pulsepick.request import make_request\n"
            "from pulsepick.solve import assess, solve\n"
            "req = make_request('one flash every 3 s, 40 ms long', led='red',\n"
            "                   supply='2.7V..1.8V', family='lvc,timer555')\n"
            "res = assess(solve(req))\n"
            "print(len(res.candidates), all(c.reference.success for c in res.candidates))\n"
            + SCIPY_LOADED +
            "from pulsepick.engine.reference import load_integrator\n"
            "print(load_integrator().func.__name__, 'scipy.integrate' in sys.modules)\n")
    out = _lines(code)
    assert out == ["5 True", "[]", "solve_ivp True"]


def test_the_median_aim_needs_no_scipy():
    # the solver's search workers compute median builds (split-normal quantiles): the
    # standard library's normal distribution serves, so they import no scipy at all
    code = ("import sys\n"
            "from pulsepick.analysis.median import chip_grid\n"
            "s, p, m = chip_grid('hc', [3.0, 2.0], 9)\n"
            "print(len(s) > 0, sorted(m for m in sys.modules if m.split('.')[0] == 'scipy'))\n")
    out = _lines(code)
    assert out == ["True []"]


def test_the_program_collects_garbage_less_often_than_pythons_default():
    code = ("import gc, sys\n"
            "import pulsepick.cli as cli\n"
            "cli.main = lambda: print(gc.get_threshold()[0]) or 0\n"
            "cli.run()\n")
    from pulsepick.cli import GC_YOUNG_THRESHOLD

    assert _lines(code) == [str(GC_YOUNG_THRESHOLD)] and GC_YOUNG_THRESHOLD > 700


def test_a_solve_without_pictures_loads_no_drawing_or_page_module():
    # the summary of a solve writes no image or report: the plot and HTML modules (and
    # matplotlib) stay unloaded (tests/test_cli_solve.py writes both)
    code = ("import io, sys, contextlib\n"
            "import pulsepick.cli as cli\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    cli.main(['solve', 'flash every 2 s for 40 ms', '--cores', 'timer555',\n"
            "              '--stages', 'direct', '--top', '1', '--builds', '200',\n"
            "              '--jobs', '1'])\n"
            "print(sorted(m for m in sys.modules if m.endswith(('htmlreport', 'output.plot'))\n"
            "             or m.startswith('matplotlib')))\n")
    assert _lines(code) == ["[]"]


def test_a_night_on_a_storage_imports_no_scipy():
    # solve --storage runs each candidate's night (analysis/night.py): the same
    # Dormand-Prince integrator, no scipy module; scipy's RK45 only past its step bound
    code = ("import sys\n"
            "import numpy as np\n"
            "from pulsepick.analysis.night import simulate_night\n"
            "from pulsepick.design import load_curve\n"
            "from pulsepick.parts.storage import get_storage\n"
            "from pulsepick.request import make_request\n"
            "from pulsepick.solve import solve\n"
            "req = make_request('one flash every 3 s, 40 ms long', led='red',\n"
            "                   supply='2.7V..1.8V', family='lvc,timer555')\n"
            "c = solve(req).candidates[0]\n"
            "load = load_curve(c.design, np.linspace(0.5, 2.75, 226))\n"
            "run = simulate_night(get_storage('5f-2v7'), 2.7, 12 * 3600.0, load,\n"
            "                     stop_at_v=1.8)\n"
            "print(run.lasts_the_night, round(run.v_end_v, 2))\n"
            + SCIPY_LOADED)
    assert _lines(code) == ["True 1.84", "[]"]
