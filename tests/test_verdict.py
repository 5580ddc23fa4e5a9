"""One verdict per design, ratings, graded leakage warnings (check command and core)."""

from __future__ import annotations

import json

import pytest

from pulsepick.analysis.checks import circuit_findings, pin_leakage_finding
from pulsepick.analysis.ratings import gate_ratings, rating_excesses
from pulsepick.analysis.verdict import LATCHED, loaded_output, verdict
from pulsepick.circuits.base import Topology
from pulsepick.cli import main
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led


def _design(r1=1e6, c1=1e-6, rs=10.0, supply=5.0, buffered=False, family="hc", lit="high",
            led="red", timing_cap="film-pet"):
    return Design(Topology("schmitt", "direct", buffered, lit, "high"),
                  {"r1": r1, "c1": c1, "rs": rs}, ChipSpec(family),
                  PartChoice(led=get_led(led), timing_cap=timing_cap), supply)


def run_json(capsys, argv):
    assert main([*argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_gate_ratings_from_the_datasheet_table():
    # IN74HC14A maximum ratings (ref:in74hc14a): +-25 mA per output pin, +-20 mA per input
    # pin, +-50 mA through VCC or GND
    hc = gate_ratings("hc")
    assert (hc.out_pin_max_a, hc.in_pin_max_a, hc.supply_pin_max_a) == (25e-3, 20e-3, 50e-3)
    assert "ref:in74hc14a" in hc.source
    # 74LVC14A class: +-50 mA per pin, +-100 mA VCC/GND (from memory)
    lvc = gate_ratings("lvc")
    assert (lvc.out_pin_max_a, lvc.supply_pin_max_a) == (50e-3, 100e-3)
    assert "from memory" in lvc.source
    assert gate_ratings("4000n") is None  # not in our sources: no check rather than a guess


def test_latched_when_the_led_pulls_the_output_below_vt_plus():
    # HC at 5 V: VT+ typ 2.61 V (NXP 74HC1G14 interpolated, ref:nxp-74hc1g14); output 67 ohm
    # high (derived from onsemi MM74HC04, ref:onsemi-mm74hc04). A red LED through 10 ohm draws
    # about 40 mA and drags the output to about 2.2 V: below VT+, so C1 never gets there.
    d = _design(rs=10.0)
    v = verdict(d)
    assert v.state == LATCHED
    assert v.led_on is True
    # the node by hand: (5 - V)/67 = I_led(V - 10 ohm * I); 41.5 mA at 2.23 V
    assert v.led_a == pytest.approx(0.0415, rel=0.03)
    assert v.output_v == pytest.approx(5.0 - 67.0 * v.led_a, rel=0.05)
    assert v.output_v < 2.61
    assert "LED on at 41" in v.reason and "VT+" in v.reason
    high, low = loaded_output(d, d.env()[0])
    assert low is None and high == pytest.approx(v.output_v)


def test_a_larger_resistor_frees_the_latch():
    assert verdict(_design(rs=470.0)).state == "runs"


def test_led_from_the_supply_latches_low():
    # LED lit while the output is low: 44 ohm low side at 5 V pulls the output up past VT-
    v = verdict(_design(rs=1.0, lit="low"))
    assert v.state == LATCHED and v.led_on and "output low" in v.reason


def test_led_and_pin_ratings_named_with_fix():
    # 46.8 mA from one HC gate: over the red LED's 20 mA (from memory, leds.csv) and the pin's
    # 25 mA absolute maximum (ref:in74hc14a), under the 50 mA VCC/GND limit
    d = _design(rs=1.0, buffered=True)
    peak = float(d.fast().led_peak_a[0]) if d.fast().led_peak_a.ndim else float(d.fast().led_peak_a)
    assert peak == pytest.approx(0.0468, rel=0.03)
    excess = rating_excesses(d, peak)
    limits = sorted(e.limit_a for e in excess)
    assert limits == [20e-3, 25e-3]
    pin = next(e for e in excess if e.limit_a == 25e-3)
    assert "IN74HC14A maximum ratings" in pin.text() and "larger RS" in pin.text()
    # the RS the fix names is the next E24 value up (IEC 60063): at most the limit, and
    # within one E24 step (about 10 %) of it
    rs_fix = float(pin.text().split("larger RS (")[1].split(" Ω")[0])
    assert rs_fix == 68.0
    got = float(_design(rs=rs_fix, buffered=True).fast().led_peak_a[0])
    assert 25e-3 / 1.12 < got <= 25e-3  # 62 Ω gives 25.1 mA: one step more


def test_check_warns_on_led_and_pin_current(capsys):
    out = run_json(capsys, ["check", "--r", "1M", "--c", "1u", "--rs", "1", "--supply", "5V",
                            "--buffered"])
    assert out["status"]["state"] == "runs"
    text = " ".join(out["warnings"])
    assert "LED1" in text and "20 mA" in text  # red LED continuous rating (leds.csv)
    assert "output pin" in text and "25 mA" in text and "IN74HC14A maximum ratings" in text


def test_check_reports_latched_with_the_led_on(capsys):
    out = run_json(capsys, ["check", "--r", "1M", "--c", "1u", "--rs", "10", "--supply", "5V"])
    assert out["status"]["state"] == "latched"
    assert out["status"]["led_on"] is True
    assert out["status"]["led_a"] == pytest.approx(0.0415, rel=0.03)
    assert out["led_peak_a"] == pytest.approx(out["status"]["led_a"])
    assert not any("stalls" in w for w in out["warnings"])
    # the latched current is over the pin's absolute maximum too (ref:in74hc14a)
    assert any("25 mA" in w for w in out["warnings"])


def test_status_and_warnings_never_disagree(capsys):
    # the leaky electrolytic case: the engine runs it; a worst-case capacitor would not
    out = run_json(capsys, ["check", "--r", "10M", "--c", "10u", "--timing-cap", "electrolytic",
                            "--rs", "220"])
    assert out["status"]["state"] == "runs"
    assert out["period_s"] == pytest.approx(102, rel=0.05)
    assert not any("stall" in w for w in out["warnings"])
    assert any(w.startswith("fails with a worst-case capacitor") for w in out["warnings"])


def test_real_stall_names_leakage():
    # a leaky electrolytic against 22 Mohm (typical leakage beats the charging current)
    d = _design(r1=22e6, c1=220e-6, rs=470.0, supply=3.0, timing_cap="electrolytic")
    v = verdict(d)
    assert v.state == "stalls" and "leakage" in v.reason
    codes = [f.code for f in circuit_findings(d)]
    assert codes.count("stalls") == 1


def test_dark_below_the_led_turn_on():
    # a white InGaN LED needs well above 2.5 V (ref:cree-lc513fwh1)
    v = verdict(_design(rs=100.0, supply=2.2, led="white"))
    assert v.state == "dark" and "turn-on" in v.reason


@pytest.mark.parametrize(("r1", "word"), [
    # HC at 3 V: VH min 0.25 V (onsemi MC74HC14A, ref:onsemi-mc74hc14a); leakage up to 1 uA over
    # temperature (ref:onsemi-mm74hc04): 1 uA x R against 0.25 V
    (100e3, None),  # 0.1 V: below half, nothing said
    (200e3, "margin"),  # 0.2 V: between half and all of VH min
    (1e6, "fails with a worst-case chip"),  # 1 V: over VH min
])
def test_input_leakage_is_graded(r1, word):
    f = pin_leakage_finding(_design(r1=r1, rs=470.0, supply=3.0))
    if word is None:
        assert f is None
    else:
        assert f.text.startswith(word + ":") and "250 mV" in f.text


def test_leakage_is_one_line_per_design():
    d = Design(Topology("schmitt-steered", "direct", True, "high", "low"),
               {"r1": 4.7e6, "r2": 2.2e6, "c1": 1e-6, "rs": 470.0}, ChipSpec("hc"),
               PartChoice(led=get_led("red")), 3.0)
    found = [f for f in circuit_findings(d) if f.code == "pin-leakage"]
    assert len(found) == 1 and "R1 4.7 MΩ" in found[0].text
