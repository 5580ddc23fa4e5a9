"""The transistor stage: its part model against the data sheet, its two solvers against
each other, and the commands that search, check and list it."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest

from pulsepick import cli
from pulsepick.circuits.transistor import PART, _on_current_scalar, on_current
from pulsepick.output.export import read_buylist
from pulsepick.parts.led import get_led
from pulsepick.parts.transistor import TRANSISTOR_KEYS, get_transistor

sys.path.insert(0, str(Path(__file__).parent / "reference"))
from test_reference_netlists import OUT

TR = get_transistor(PART)


def saturated(ic: float, ib: float) -> tuple[float, float]:
    """(VBE, VCE) of the model carrying ``ic`` and ``ib`` (A): the transport equations are
    linear in e^(VBE/nVT) - 1 and e^(VBC/nVT) - 1, so this is a 2x2 solve."""
    k = 1.0 + 1.0 / TR.br
    a = np.array([[1.0 / TR.bf, 1.0 / TR.br], [1.0, -k]])
    ebe, ebc = np.linalg.solve(a, np.array([ib, ic]) / TR.i_s_a)
    vbe, vbc = TR.n_vt * math.log1p(ebe), TR.n_vt * math.log1p(ebc)
    return vbe, vbe - vbc


def test_table_has_its_one_row_with_a_source():
    assert TRANSISTOR_KEYS == ("npn-small",)
    assert "ref:onsemi-2n3904" in TR.source and TR.name.startswith("small-signal NPN")
    assert TR.ic_max_a == pytest.approx(0.2)  # 2N3904 IC max 200 mA (ref:onsemi-2n3904)


@pytest.mark.parametrize(("ic", "ib", "vbe_max", "vce_max"), [
    (10e-3, 1e-3, 0.85, 0.2),  # 2N3904 VBE(sat), VCE(sat) maxima at 10/1 mA (ref:onsemi-2n3904)
    (50e-3, 5e-3, 0.95, 0.3),  # the same at 50/5 mA (ref:onsemi-2n3904)
])
def test_saturation_voltages_are_inside_the_data_sheet_limits(ic, ib, vbe_max, vce_max):
    vbe, vce = saturated(ic, ib)
    assert 0.65 <= vbe <= vbe_max  # VBE(sat) min 0.65 V at 10 mA (ref:onsemi-2n3904)
    assert 0.0 < vce <= vce_max


def test_forward_gain_is_the_data_sheet_minimum():
    # hFE min 100 at IC 10 mA, VCE 1 V (ref:onsemi-2n3904): in the forward-active region
    # the transport model's IC/IB is BF
    assert TR.bf == pytest.approx(TR.hfe_min_10ma) == pytest.approx(100.0)


@pytest.mark.parametrize("led_key", ["red", "amber", "white"])
def test_fast_and_scalar_solvers_agree(led_key):
    led = get_led(led_key)
    rows = []
    for vdd in (2.5, 3.3, 5.0):
        for v_src in (0.3, 0.7, 1.2, vdd):
            for r_base in (300.0, 2.2e3, 47e3):
                for rs in (10.0, 68.0, 470.0):
                    rows.append((vdd, v_src, r_base, rs))
    vdd, v_src, r_base, rs = (np.array(c) for c in zip(*rows, strict=True))
    i, ib = on_current(TR, led, vdd, v_src, r_base, rs)
    assert i.size == len(rows) == 108
    for k, row in enumerate(rows):
        i1, ib1 = _on_current_scalar(TR, led.junction, *row)
        assert i[k] == pytest.approx(i1, rel=1e-9, abs=1e-15), row
        assert ib[k] == pytest.approx(ib1, rel=1e-9, abs=1e-15), row


def test_saturated_switch_gives_the_led_law_at_the_collector():
    # driven hard, the LED current is what the LED and RS take from VDD - VCE(sat), with
    # VCE(sat) from the 2x2 solve at the same currents (an independent route)
    led = get_led("amber")
    i, ib = on_current(TR, led, 5.0, 5.0, 470.0, 47.0)
    i, ib = float(i), float(ib)
    assert 0.04 < i < 0.07 and 0.005 < ib < 0.01
    _, vce = saturated(i, ib)
    assert i == pytest.approx(float(led.current(5.0 - vce, r_ext=47.0)), rel=1e-6)


def run(capsys, argv):
    status = cli.main(argv)
    out = capsys.readouterr()
    assert status == 0, out.err
    return out.out


def test_check_takes_the_stage_and_matches_the_simulator(capsys):
    import json

    doc = json.loads(run(capsys, ["check", "--stage", "transistor", "--r", "1M", "--c", "1u",
                                  "--rs", "22", "--rbase", "2k2", "--led", "amber",
                                  "--supply", "3V", "--json"]))
    ref = OUT["schmitt-hc-transistor"]  # ngspice, tests/reference/outputs.csv
    assert doc["period_s"] == pytest.approx(ref["period_s"], rel=0.01)
    assert doc["led_peak_a"] == pytest.approx(ref["led_peak_a"], rel=0.03)
    assert doc["assumptions"]["values"] == {"r1": 1e6, "c1": 1e-6, "rs": 22.0, "rbase": 2200.0}


def test_check_names_the_missing_base_resistor(capsys):
    status = cli.main(["check", "--stage", "transistor", "--r", "1M", "--c", "1u", "--rs", "22"])
    out = capsys.readouterr()
    assert status == 2 and out.out == ""
    assert "--rbase (base resistor of the LED switch) is needed" in out.err
    assert "e.g. --rbase 2k2" in out.err


def test_solve_offers_the_switch_for_fifty_milliamperes_and_lists_it(capsys, tmp_path):
    path = tmp_path / "marker.csv"
    run(capsys, ["solve", "one flash every 3 s, 50 mA peak", "--led", "amber", "--top", "3",
                 "--builds", "200", "--jobs", "1", "--buylist", str(path)])
    rows = read_buylist(path.read_text(encoding="utf-8-sig"))
    kinds = {r["kind"]: r for r in rows}
    assert kinds["transistor"]["code"] == "npn-small" and kinds["transistor"]["refs"] == "Q1"
    # VCEO 40 V, IC 200 mA: 2N3904 maximum ratings (ref:onsemi-2n3904)
    assert kinds["transistor"]["rating"] == "40 V, 200 mA"
    assert "base resistor" in " ".join(r["notes"] for r in rows)
    # the circuit the list belongs to, in its provenance column
    assert rows[0]["circuit"].startswith("candidate 1:")
    assert "transistor" in rows[0]["circuit"]


def test_solve_leaves_the_switch_out_for_small_currents(capsys):
    # 5 mA assumed peak: below the stage's 20 mA floor, so it is not searched by default
    import json

    doc = json.loads(run(capsys, ["solve", "one flash every 3 s", "--top", "5", "--builds",
                                  "200", "--jobs", "1", "--json"]))
    stages = [c["stage"] for c in doc["candidates"]]
    assert len(stages) == 5 and "transistor" not in stages
    assert set(stages) <= {"direct", "pulse", "fade"}


def _switch(rbase: float, vdd: float = 5.0, family: str = "hc"):
    from pulsepick.circuits.base import Topology
    from pulsepick.design import Design
    from pulsepick.engine.environment import ChipSpec, PartChoice

    return Design(Topology("schmitt", "transistor"),
                  {"r1": 1e6, "c1": 1e-6, "rs": 22.0, "rbase": rbase}, ChipSpec(family),
                  PartChoice(led=get_led("amber")), vdd)


def test_a_small_base_resistor_is_checked_against_the_gate_pin_rating():
    from pulsepick.analysis.ratings import gate_ratings, rating_excesses

    limit = gate_ratings("hc").out_pin_max_a  # 25 mA per pin (ref:in74hc14a)
    design = _switch(91.0)
    env, _ = design.env()
    # the gate sources the base current, the LED's 40 mA flows through the transistor
    _, ib = on_current(TR, env.led, 5.0, 5.0, float(np.ravel(env.rout_high)[0]) + 91.0, 22.0)
    found = rating_excesses(design, 40e-3)
    assert [e.part for e in found] == ["U1 timing gate's output pin"]
    assert found[0].figure_a == pytest.approx(float(np.ravel(ib)[0]))
    assert 25e-3 < found[0].figure_a < 30e-3 and found[0].limit_a == limit
    assert "drive of the LED's switch" in found[0].what and "larger RBASE" in found[0].fix
    # a larger base resistor, or a lower supply, keeps the pin within its rating
    assert rating_excesses(_switch(220.0), 40e-3) == []
    assert rating_excesses(_switch(91.0, vdd=3.0), 40e-3) == []


def test_the_base_resistor_search_keeps_the_pin_within_its_rating():
    from pulsepick.analysis.ratings import rating_excesses
    from pulsepick.request import make_request
    from pulsepick.solve import solve

    req = make_request("one flash every 3 s, 60 mA peak", supply="5V", family="hc",
                       cores="schmitt", stages="transistor", top=5, led="amber")
    cands = solve(req).candidates
    over = [bool(rating_excesses(c.design, float(c.figures["led_peak_a"]))) for c in cands]
    # the base resistor is searched from a forced gain of 5 up (MIN_FORCED_GAIN), so no
    # offered switch overdrives the gate pin, and the base takes at most a fifth of the
    # LED's current
    assert cands and over == [False] * len(cands)
    for c in cands:
        rb = c.design.values["rbase"]
        assert rb >= 220.0
        assert (5.0 - 0.75) / rb <= c.figures["led_peak_a"] / 5.0 * 1.3
