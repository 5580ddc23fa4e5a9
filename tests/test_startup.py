"""What a cold start imports: scipy.integrate is slow to import and only the reference
engine needs it (see DEVELOPERS.md, start-up time)."""

from __future__ import annotations

import subprocess
import sys


def test_solve_path_imports_no_scipy_until_a_reference_run():
    code = ("import sys\n"
            "import pulsepick.cli, pulsepick.commands.solve, pulsepick.solve, pulsepick.design\n"
            "import pulsepick.analysis.spread, pulsepick.analysis.checks\n"
            "print(sorted(m for m in sys.modules if m.split('.')[0] == 'scipy'))\n"
            "from pulsepick.engine.reference import load_integrator\n"
            "print(load_integrator().__name__, 'scipy.integrate' in sys.modules)\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.splitlines()
    assert out == ["[]", "solve_ivp True"]


def test_the_median_aim_needs_no_scipy():
    # the solver's search workers compute median builds (split-normal quantiles): the
    # standard library's normal distribution serves, so they import no scipy at all
    code = ("import sys\n"
            "from pulsepick.analysis.median import chip_grid\n"
            "s, p, m = chip_grid('hc', [3.0, 2.0], 9)\n"
            "print(len(s) > 0, sorted(m for m in sys.modules if m.split('.')[0] == 'scipy'))\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.splitlines()
    assert out == ["True []"]
