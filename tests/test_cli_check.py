"""`pulsepick check`: JSON shape and values, the text report, warnings, bad input."""

from __future__ import annotations

import json
import math

import pytest

from pulsepick.cli import main

EXAMPLE = ["check", "--core", "schmitt", "--r", "2M2", "--c", "1u", "--stage", "pulse",
           "--cp", "22u", "--rs", "47", "--family", "hc", "--supply", "3.0V", "--led", "red"]
FIGURE_KEYS = {"period_s", "high_s", "low_s", "led_peak_a", "flash_s", "flash_10pct_s",
               "led_charge_c", "effective_a", "effective_mcd", "supply_avg_a", "status"}


def run_json(capsys, argv):
    assert main([*argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_json_has_exactly_the_figure_keys(capsys):
    out = run_json(capsys, EXAMPLE)
    assert set(out) == FIGURE_KEYS | {"assumptions", "warnings"}
    assert out["status"]["state"] == "runs"
    # the period follows the thresholds used: T = R1*C1*[ln((V-VT-)/(V-VT+)) + ln(VT+/VT-)]
    # (onsemi MC14106B astable figure, ref:onsemi-mc14106b) within the few percent that the
    # output resistance, leakage and the flash's load add
    a = out["assumptions"]
    v, vtp, vtm = 3.0, a["vt_plus_v"], a["vt_minus_v"]
    k = math.log((v - vtm) / (v - vtp)) + math.log(vtp / vtm)
    assert out["period_s"] == pytest.approx(2.2e6 * 1e-6 * k, rel=0.03)
    assert out["high_s"] + out["low_s"] == pytest.approx(out["period_s"], rel=1e-12)
    # a pulse stage's flash is far shorter than the period and its charge bounded by CP*V
    assert out["flash_s"] < 0.01 * out["period_s"]
    assert 0 < out["led_charge_c"] < 22e-6 * 3.0
    # Schmidt-Clausen effective current from the same peak and charge (a = 0.2 s)
    ip, q = out["led_peak_a"], out["led_charge_c"]
    assert out["effective_a"] == pytest.approx(ip * q / (0.2 * ip + q), rel=1e-9)
    assert "ESTIMATE" in a["crossing_current"]


def test_reference_engine_agrees_with_fast(capsys):
    fast = run_json(capsys, EXAMPLE)
    ref = run_json(capsys, [*EXAMPLE, "--reference"])
    assert ref["assumptions"]["engine"] == "reference"
    for key in ("period_s", "high_s", "low_s"):
        assert ref[key] == pytest.approx(fast[key], rel=0.01)
    for key in ("led_peak_a", "flash_s", "led_charge_c", "effective_a", "supply_avg_a"):
        assert ref[key] == pytest.approx(fast[key], rel=0.03)


def test_measured_chip_and_led(capsys):
    out = run_json(capsys, [*EXAMPLE, "--vt-plus", "1.6", "--vt-minus", "0.9", "--rout", "60",
                            "--led-vf", "1.9V@20mA", "--led-n", "2", "--led-rs", "10"])
    assert out["assumptions"]["vt_plus_v"] == pytest.approx(1.6)
    assert out["assumptions"]["vt_minus_v"] == pytest.approx(0.9)
    assert out["assumptions"]["thresholds_from"] == "measured by the user"
    assert out["assumptions"]["led_ideality"] == pytest.approx(2.0)


def test_worst_case_leakage_warning_names_its_numbers(capsys):
    # HC input leakage is guaranteed only to 1 uA over temperature (ref:onsemi-mm74hc04, ref:ti-schs129-hct)
    out = run_json(capsys, EXAMPLE)
    text = " ".join(out["warnings"])
    assert "worst-case chip" in text and "2.2 MΩ" in text and "1 µA" in text


def test_white_led_on_a_low_supply_is_dark(capsys):
    # a white InGaN LED needs well above 2.5 V (ref:cree-lc513fwh1; common practice)
    out = run_json(capsys, ["check", "--r", "1M", "--c", "1u", "--stage", "direct", "--rs",
                            "100", "--supply", "2.2V", "--led", "white"])
    assert out["status"]["state"] == "dark"
    assert "visible current" in out["status"]["reason"]


def test_stall_is_a_status_not_an_error(capsys):
    # a leaky electrolytic against a 22 MOhm timing resistor never reaches VT+
    out = run_json(capsys, ["check", "--r", "22M", "--c", "220u", "--stage", "direct", "--rs",
                            "470", "--timing-cap", "electrolytic"])
    assert out["status"]["state"] == "stalls"
    assert out["period_s"] is None


def test_text_report_reads_at_100_columns(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    assert main(EXAMPLE) == 0
    text = capsys.readouterr().out
    assert max(len(line) for line in text.splitlines()) <= 100
    for phrase in ("period", "LED peak current", "assumptions", "warnings", "one period",
                   "not a safety, navigation or warning light"):
        assert phrase in text
    assert "\x1b[" not in text


@pytest.mark.parametrize("argv, fragment", [
    (["check", "--r", "0", "--c", "1u", "--rs", "1k"], "above zero"),
    (["check", "--r", "1M", "--c=-1u", "--rs", "1k"], "negative"),
    (["check", "--r", "1M", "--c", "1u", "--rs", "1k", "--vt-plus", "0.8", "--vt-minus", "1"],
     "below --vt-plus"),
    (["check", "--r", "1M", "--c", "1u", "--rs", "1k", "--vt-plus", "3.5"], "below the supply"),
    (["check", "--r", "1M", "--c", "1u", "--rs", "1k", "--family", "ttl"], "accepted"),
    (["check", "--r", "1M", "--c", "1u", "--rs", "1k", "--stage", "strobe"], "accepted"),
    (["check", "--r", "1M", "--c", "1u", "--rs", "1k", "--led", "purple"], "accepted"),
    (["check", "--r", "1M", "--c", "1u", "--stage", "pulse"], "--cp"),
    (["check", "--core", "timer555", "--r", "1M", "--c", "1u", "--rs", "1k"], "--ra"),
])
def test_bad_input_is_one_line_and_exit_2(capsys, argv, fragment):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert fragment in err
