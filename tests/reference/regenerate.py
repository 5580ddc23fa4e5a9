"""Regenerate the reference netlists and the simulator's outputs (needs ngspice).

    python tests/reference/regenerate.py

Writes ``netlists/<case>.cir`` from ``netlist.py`` and runs each through ngspice in
batch mode, then measures the last full period (between rising crossings of the timing
output through half the supply), its high time, and the LED's peak current in it, and
writes them to ``outputs.csv``. The tests read the committed files; they do not need
the simulator.
"""

from __future__ import annotations

import csv
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from netlist import CASES, NETLISTS, OUTPUTS, design, netlist

FIELDS = ("case", "period_s", "high_s", "led_peak_a", "simulator")


def measure(data: np.ndarray, vdd: float) -> tuple[float, float, float]:
    """(period s, high time s, LED peak A) of the last full period of a trace."""
    t, vo, i_led = data[:, 0], data[:, 1], data[:, 2]
    half = 0.5 * vdd
    above = vo > half
    k = np.flatnonzero(np.diff(above.astype(int)))
    cross = t[k] + (half - vo[k]) * (t[k + 1] - t[k]) / (vo[k + 1] - vo[k])
    rising = cross[above[k + 1]]
    falling = cross[~above[k + 1]]
    t0, t1 = rising[-2], rising[-1]
    fall = falling[(falling > t0) & (falling < t1)][0]
    inside = (t >= t0) & (t <= t1)
    return float(t1 - t0), float(fall - t0), float(np.max(i_led[inside]))


def main() -> int:
    exe = shutil.which("ngspice")
    if exe is None:
        print("ngspice is not installed (Debian package 'ngspice')", file=sys.stderr)
        return 2
    version = subprocess.run([exe, "--version"], capture_output=True, text=True).stdout
    version = next((w for w in version.split() if w[:1].isdigit()), "?")
    NETLISTS.mkdir(exist_ok=True)
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name in CASES:
            text = netlist(name)
            (NETLISTS / f"{name}.cir").write_text(text)
            out = Path(tmp) / f"{name}.txt"
            run = Path(tmp) / f"{name}.cir"
            run.write_text(text.replace("{OUT}", str(out)))
            subprocess.run([exe, "-b", str(run)], check=True, capture_output=True)
            data = np.loadtxt(out, skiprows=1)
            period, high, peak = measure(data, design(name).supply_v)
            rows.append({"case": name, "period_s": f"{period:.6g}", "high_s": f"{high:.6g}",
                         "led_peak_a": f"{peak:.6g}", "simulator": f"ngspice {version}"})
            print(f"{name:32s} period {period:.4g} s  high {high:.4g} s  peak {peak:.4g} A")
    with OUTPUTS.open("w", newline="") as fh:
        fh.write("# ngspice outputs of tests/reference/netlists (regenerate.py); last full "
                 "period, its high time, LED peak current\n")
        w = csv.DictWriter(fh, fieldnames=FIELDS)
        w.writeheader()
        w.writerows(rows)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
