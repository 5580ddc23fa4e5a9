"""Parts lists and buy rows (pulsepick.partslist)."""

from __future__ import annotations

import pytest

from pulsepick.circuits.base import Topology
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led
from pulsepick.partslist import buy_rows, parts_list


def _design(topo, values, family="hc", timing_cap="film-pet", stage_cap="electrolytic",
            supply=3.0):
    return Design(topo, values, ChipSpec(family),
                  PartChoice(led=get_led("red"), timing_cap=timing_cap, stage_cap=stage_cap),
                  supply)


def test_steered_pulse_designators_and_values():
    d = _design(Topology("schmitt-steered", "pulse", buffered=True, steer="low"),
                {"r1": 820e3, "r2": 8200.0, "c1": 10e-6, "cp": 330e-6, "rs": 82.0})
    lines = parts_list(d)
    refs = [p.ref for p in lines]
    assert refs == ["U1", "R1", "R2", "C1", "C2", "R3", "D1", "D2", "LED1"]
    by = {p.ref: p for p in lines}
    assert by["R1"].code == "820k" and by["R1"].display == "820 kΩ"
    assert by["R2"].code == "8k2"
    assert by["R3"].code == "82R" and by["R3"].param == "rs"
    assert by["C1"].code == "10u" and by["C2"].code == "330u"
    # IEC 60063: E24 parts are 5 % (ref:e-series-tolerances); 820k and 8k2 are E24 values (ref:iec-60063)
    assert by["R1"].series == "E24" and by["R1"].tolerance == "±5 %"
    # capacitor kinds from data/parts/capacitor_kinds.csv: PET film 10 %, electrolytic 20 %
    assert by["C1"].tolerance == "±10 %" and "polyester" in by["C1"].dielectric
    assert by["C2"].tolerance == "±20 %" and "electrolytic" in by["C2"].dielectric
    # rating: the smallest usual rating at least 1.5 x 3 V (common practice): 6.3 V for an
    # electrolytic, 63 V for PET film (the table's smallest)
    assert by["C2"].rating == "6.3 V" and by["C1"].rating == "63 V"
    assert "2 of 6 gates" in by["U1"].note and "tie the 4 unused inputs" in by["U1"].note
    assert by["D1"].code == "schottky" and by["D2"].code == "si"
    assert by["LED1"].code == "red"


def test_timer_and_direct_stage():
    d = _design(Topology("timer555", "direct", lit="low"),
                {"ra": 9.1e6, "rb": 150e3, "c1": 470e-9, "rs": 220.0}, family="timer555",
                timing_cap="film-pp")
    lines = parts_list(d)
    assert [p.ref for p in lines] == ["U1", "R1", "R2", "C1", "R3", "LED1"]
    assert lines[0].kind == "chip" and "555" in lines[0].display
    assert lines[3].tolerance == "±5 %"  # PP film, capacitor_kinds.csv
    assert "anode towards the supply" in lines[-1].note  # lit while the output is low


def test_optional_pulse_resistor_left_out():
    d = _design(Topology("schmitt", "pulse"), {"r1": 1e6, "c1": 1e-6, "cp": 22e-6, "rs": 0.0})
    refs = [p.ref for p in parts_list(d)]
    assert refs == ["U1", "R1", "C1", "C2", "D1", "LED1"]


def test_buy_rows_group_identical_parts_and_give_bands():
    d = _design(Topology("schmitt-steered", "direct"),
                {"r1": 4700.0, "r2": 4700.0, "c1": 100e-6, "rs": 4700.0},
                timing_cap="electrolytic")
    rows = buy_rows(parts_list(d))
    r = next(row for row in rows if row.part.kind == "resistor")
    assert r.quantity == 3 and r.refs == ("R1", "R2", "R3")
    # yellow-violet-red-gold is 4.7 kohm +/-5 % (ref:iec-60062-colour)
    assert r.bands == ("yellow", "violet", "red", "gold")
    assert sum(row.quantity for row in rows) == len(parts_list(d))


def test_off_series_value_keeps_its_own_series_name():
    d = _design(Topology("schmitt", "direct", buffered=True),
                {"r1": 4750.0, "c1": 1e-6, "rs": 1000.0})
    r1 = parts_list(d)[1]
    assert r1.series == "E96"  # 4.75 is an E96 value, not E24 (ref:g4usp-preferred-values)


def test_led_resistor_rating_follows_dissipation():
    d = _design(Topology("schmitt", "direct", buffered=True),
                {"r1": 1e6, "c1": 1e-6, "rs": 100.0})
    # 60 mA through 100 ohm is 0.36 W: above half of 0.25 W (common practice)
    rs = next(p for p in parts_list(d, led_peak_a=0.06) if p.param == "rs")
    assert rs.rating == "0.5 W"
    rs = next(p for p in parts_list(d, led_peak_a=0.005) if p.param == "rs")
    assert rs.rating == "0.25 W"


@pytest.mark.parametrize("series, tol", [("E12", "±10 %"), ("E96", "±1 %")])
def test_resistor_tolerance_from_series(series, tol):
    # IEC 60063 usual tolerances: E12 10 %, E96 1 % (ref:e-series-tolerances)
    d = _design(Topology("schmitt", "direct"), {"r1": 1e6, "c1": 1e-6, "rs": 1000.0})
    assert parts_list(d, r_series=series)[1].tolerance == tol
