"""Both engines against a general-purpose circuit simulator on committed netlists.

The reference numbers are ngspice's, from the netlists in ``tests/reference/netlists``
(written by ``tests/reference/netlist.py``, outputs committed in
``tests/reference/outputs.csv`` by ``tests/reference/regenerate.py``). Bounds: period
within 1 %, LED peak within 3 % (the agreement bounds the engines hold to each other).
"""

from __future__ import annotations

import csv
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent / "reference"))

from netlist import CASES, NETLISTS, OUTPUTS, design, netlist

from pulsepick.circuits.base import core_names, stage_names

PERIOD_TOL, PEAK_TOL = 0.01, 0.03


def _outputs() -> dict[str, dict[str, float]]:
    with OUTPUTS.open() as fh:
        rows = csv.DictReader(line for line in fh if not line.startswith("#"))
        return {r["case"]: {k: float(r[k]) for k in ("period_s", "high_s", "led_peak_a")}
                for r in rows}


OUT = _outputs()


def test_every_case_has_a_committed_output_and_every_circuit_a_case():
    assert sorted(OUT) == sorted(CASES)
    assert len(CASES) >= 12
    assert {c[0] for c in CASES.values()} == set(core_names())
    assert {c[1] for c in CASES.values()} == set(stage_names())
    assert any(c[2].get("buffered") for c in CASES.values())


@pytest.mark.parametrize("name", sorted(CASES))
def test_committed_netlist_is_the_one_our_numbers_give(name):
    # a changed table or model must regenerate the simulator's outputs
    assert (NETLISTS / f"{name}.cir").read_text() == netlist(name)


@pytest.mark.parametrize("name", sorted(CASES))
def test_fast_engine_matches_the_simulator(name):
    ref = OUT[name]  # ngspice, tests/reference/outputs.csv
    fig = design(name).fast().row(0)
    assert fig["period_s"] == pytest.approx(ref["period_s"], rel=PERIOD_TOL)
    assert fig["led_peak_a"] == pytest.approx(ref["led_peak_a"], rel=PEAK_TOL)


@pytest.mark.slow
@pytest.mark.parametrize("name", sorted(CASES))
def test_reference_engine_matches_the_simulator(name):
    ref = OUT[name]  # ngspice, tests/reference/outputs.csv
    fig = design(name).reference().figures.row()
    assert fig["period_s"] == pytest.approx(ref["period_s"], rel=PERIOD_TOL)
    assert fig["high_s"] == pytest.approx(ref["high_s"], rel=PERIOD_TOL)
    assert fig["led_peak_a"] == pytest.approx(ref["led_peak_a"], rel=PEAK_TOL)
