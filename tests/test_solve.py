"""The inverse solver (pulsepick.solve): known answers, round trips, infeasible requests."""

from __future__ import annotations

import math

import numpy as np
import pytest

from pulsepick.circuits.base import DARK, RUNS, Topology
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led
from pulsepick.request import make_request
from pulsepick.series import get_series
from pulsepick.solve import assess, solve

# One E24 step is a factor 10^(1/24) = 1.10 (IEC 60063, facts.md S22): a pick is
# "within the series step" when it is within 10 % of the wanted figure.
STEP = 0.10


def test_bare_schmitt_reproduces_the_period_at_typical_hc_thresholds():
    # 74HC1G14 at 4.5 V, typical VT+ 2.36 V and VT- 1.53 V (NXP, facts.md S1) in
    # T = RC[ln((V-VT-)/(V-VT+)) + ln(VT+/VT-)] (onsemi MC14106B, facts.md S11) give
    # T = 0.761 RC (facts.md check value 10).
    req = make_request("one flash every 1 s", cores="schmitt", stages="direct", buffered=True,
                       supply="4.5V", family="hc", top=1)
    result = solve(req)
    assert result.success
    best = result.candidates[0]
    v = best.design.values
    assert v["r1"] * v["c1"] * 0.761 == pytest.approx(1.0, rel=STEP)
    assert best.figures["period_s"] == pytest.approx(1.0, rel=STEP / 2)
    assert get_series("E24").contains(v["r1"]) and get_series("E12").contains(v["c1"])


def _random_circuit(rng):
    """A seeded random circuit whose fast-engine figures are a sensible blink."""
    e24 = get_series("E24").values(1e3, 10e6)
    e12 = get_series("E12").values(100e-9, 10e-6)
    e6 = get_series("E6").values(1e-6, 1e-3)
    shapes = [
        (Topology("schmitt-steered", "direct", buffered=True, steer="low"), "hc",
         lambda: {"r1": rng.choice(e24[e24 >= 100e3]), "r2": rng.choice(e24[e24 <= 100e3]),
                  "c1": rng.choice(e12), "rs": rng.choice(e24[e24 <= 2e3] / 10)}),
        (Topology("timer555", "direct", lit="low"), "timer555",
         lambda: {"ra": rng.choice(e24[e24 >= 100e3]), "rb": rng.choice(e24[e24 <= 300e3]),
                  "c1": rng.choice(e12), "rs": rng.choice(e24[e24 <= 2e3] / 10)}),
        (Topology("schmitt", "pulse"), "hc",
         lambda: {"r1": rng.choice(e24[e24 >= 100e3]), "c1": rng.choice(e12),
                  "cp": rng.choice(e6), "rs": rng.choice(e24[e24 <= 1e3] / 10)}),
    ]
    topo, family, draw = shapes[int(rng.integers(len(shapes)))]
    for _ in range(200):
        values = {k: float(v) for k, v in draw().items()}
        d = Design(topo, values, ChipSpec(family), PartChoice(led=get_led("red"),
                                                             timing_cap="film-pet"), 3.0)
        f = d.fast().row(0)
        if f["status"] == RUNS and 0.3 < f["period_s"] < 20 and 0.005 < f["flash_s"] \
                < 0.3 * f["period_s"] and 1e-3 < f["led_peak_a"] < 15e-3:
            return topo, family, f
    raise AssertionError("no sensible random circuit drawn")


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_round_trip_random_circuit(seed):
    rng = np.random.default_rng(seed)
    topo, family, f = _random_circuit(rng)
    req = make_request(every=f"{f['period_s']:.6g}s", flash=f"{f['flash_s'] * 1e3:.6g}ms",
                       peak=f"{f['led_peak_a'] * 1e3:.6g}mA", cores=topo.core,
                       stages=topo.stage, family=family, top=1)
    result = solve(req)
    assert result.success
    got = result.candidates[0].figures
    for key in ("period_s", "flash_s", "led_peak_a"):
        assert got[key] == pytest.approx(f[key], rel=STEP), key


def test_default_request_offers_diverse_circuits():
    result = solve(make_request("one flash every 3 s", top=5))
    assert result.success and len(result.candidates) == 5
    kinds = {(c.design.topo.core, c.design.topo.stage) for c in result.candidates}
    assert len(kinds) == 5  # the best of each topology, not near-copies
    assert [c.rank for c in result.candidates] == [1, 2, 3, 4, 5]
    scores = [c.score for c in result.candidates]
    assert scores == sorted(scores)
    for c in result.candidates:
        assert c.figures["status"] == RUNS
        assert c.figures["period_s"] == pytest.approx(3.0, rel=STEP)
        assert c.parts[0].ref == "U1" and c.parts[-1].ref == "LED1"
    assert result.evaluated > 100_000


def test_short_flash_is_lit_in_the_short_phase():
    req = make_request("flash every 2 s for 20 ms", cores="schmitt-steered,timer555",
                       stages="direct")
    for c in solve(req).candidates[:2]:
        f = c.figures
        assert f["flash_s"] == pytest.approx(0.02, rel=STEP)
        assert min(f["high_s"], f["low_s"]) == pytest.approx(f["flash_s"], rel=0.01)


def test_flash_longer_than_period_gets_explanation_and_nearest():
    result = solve(make_request("flash every 2 s for 3 s", cores="schmitt-steered,timer555",
                                stages="direct"))
    assert result.success  # something can be offered: mostly-lit circuits
    assert any("cannot last longer" in e for e in result.explanations)
    best = result.candidates[0].figures
    assert best["flash_s"] / best["period_s"] > 0.8


def test_white_led_on_1v8_cannot_be_offered():
    # a white InGaN LED needs about 2.7 V at 0.1 mA (data/parts/leds.csv estimate; practice.md
    # item 19: "a white LED takes more than 2.7 V to light")
    result = solve(make_request("one flash every 3 s", led="white", supply="1.8V",
                                family="lvc,timer555", stages="direct"))
    assert not result.success
    assert result.candidates == ()
    assert any("needs about" in e and "white" in e for e in result.explanations)
    assert result.nearest is not None and result.nearest["status"] == DARK


def test_peak_beyond_the_gate_is_explained_with_the_nearest():
    result = solve(make_request("every 3 s, 500 mA peak", cores="timer555",
                                stages="direct,pulse"))
    assert result.success
    text = " ".join(result.explanations)
    assert "500 mA" in text and "limit the current" in text
    assert result.candidates[0].figures["led_peak_a"] < 0.1


def test_supply_outside_every_chip_range():
    # HC runs from 2.0 V (NXP 74HC1G14, facts.md S1)
    result = solve(make_request("every 3 s", supply="1.8V", family="hc", stages="direct"))
    assert not result.success
    assert any("outside their supply range" in e for e in result.explanations)


def test_supply_range_gives_end_of_night_figures():
    req = make_request("every 3 s", supply="2.7V..1.8V", family="lvc", stages="direct",
                       cores="schmitt-steered", top=1)
    c = solve(req).candidates[0]
    assert c.end_figures is not None
    assert c.end_figures["period_s"] != c.figures["period_s"]
    assert "night" in c.score_parts


def test_stock_only_parts_from_the_drawer(tmp_path):
    drawer = tmp_path / "drawer.csv"
    drawer.write_text("kind,value,qty,dielectric\nR,330k,2\nR,47k,1\nR,220,1\nR,1k,1\n"
                      "C,4u7,1,film\nC,10u,1,film\nC,1u,2,film\n", encoding="utf-8")
    req = make_request("flash every 2 s for 50 ms", stock=str(drawer), stages="direct",
                       cores="schmitt-steered,timer555")
    result = solve(req)
    assert result.success
    allowed_r = {330e3, 47e3, 220.0, 1e3}
    allowed_c = {4.7e-6, 10e-6, 1e-6}
    for c in result.candidates:
        values = c.design.values
        rs = [v for k, v in values.items() if k[0] == "r"]
        cs = [v for k, v in values.items() if k[0] == "c"]
        assert all(any(math.isclose(v, a, rel_tol=1e-9) for a in allowed_r) for v in rs)
        assert all(any(math.isclose(v, a, rel_tol=1e-9) for a in allowed_c) for v in cs)
        # quantities: 47k and 1k are single pieces
        assert sum(math.isclose(v, 47e3) for v in rs) <= 1
        assert sum(math.isclose(v, 1e3) for v in rs) <= 1


def test_assess_verifies_with_the_reference_engine():
    req = make_request("flash every 2 s for 40 ms, 5 mA peak", cores="timer555",
                       stages="direct", top=1, builds=200)
    result = assess(solve(req), jobs=1)
    c = result.candidates[0]
    ref = c.reference_figures
    assert ref is not None and c.reference.success
    # the two engines are independent (closed form vs transient simulation): agree to 1 %
    for key in ("period_s", "flash_s", "led_peak_a", "supply_avg_a"):
        assert ref[key] == pytest.approx(c.figures[key], rel=0.01), key
    assert c.spread is not None and c.spread.builds == 200
    assert "reference" in c.timings_s


def test_drawer_without_a_usable_timing_capacitor_is_explained():
    from pulsepick.request import parse_stock

    drawer = parse_stock("kind,value,qty,dielectric\nR,1M,2\nC,10u,1,electrolytic\n",
                         "drawer.csv")
    result = solve(make_request("every 3 s", stock=drawer, timing_cap="film"))
    assert not result.success
    assert any("No timing capacitor" in e and "drawer.csv" in e for e in result.explanations)


def test_offered_figures_are_the_designs_own():
    # the search evaluates in batches; each candidate's figures must be exactly what its
    # Design gives alone (an X7R timing capacitor is evaluated under its DC bias by both)
    req = make_request("flash every 1 s for 30 ms", timing_cap="x7r", supply="2.7V..1.8V",
                       family="lvc,timer555", stages="direct,pulse", top=4)
    for c in solve(req).candidates:
        alone = c.design.fast().row(0)
        end = c.design.fast(1.8).row(0)
        for key in ("period_s", "flash_s", "led_peak_a", "supply_avg_a"):
            assert c.figures[key] == pytest.approx(alone[key], rel=1e-9), key
            assert c.end_figures[key] == pytest.approx(end[key], rel=1e-9), key


def test_no_near_copies_fill_the_list():
    req = make_request("flash every 1 s for 30 ms", stages="direct", top=5)
    cands = solve(req).candidates
    timing = set()
    for c in cands:
        core_values = tuple(v for k, v in sorted(c.design.values.items()) if k != "rs")
        key = (c.design.chip.family, c.design.topo, core_values)
        assert key not in timing
        timing.add(key)
