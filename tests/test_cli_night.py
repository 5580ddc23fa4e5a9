"""``pulsepick night`` on the command line: JSON, the report, bad input."""

import io
import json
import types
from datetime import date, datetime

import numpy as np
import pytest
from rich.console import Console

from pulsepick import cli
from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT
from pulsepick.analysis.loadcurve import LoadCurve
from pulsepick.analysis.night import simulate_night
from pulsepick.commands import night as night_cmd
from pulsepick.parts.storage import custom_storage, get_storage

# The bare budget of the Panasonic Gold Capacitors technical guide (facts.md S44):
# 0.2 F from 2.5 V to 1.8 V at 10 uA plus 0.2 uA leakage lasts 13,725 s.
GOLD_ARGS = ["night", "--no-circuit", "--storage", "0.2F", "--start", "2.5V", "--stop-at", "1.8V",
             "--storage-leak", "0.2uA", "--extra-load", "10uA"]
GOLD_T_S = 13_725.0  # s, S44


def run_json(capsys, argv):
    status = cli.main([*argv, "--json"])
    out = capsys.readouterr()
    assert status == 0, out.err
    assert out.err == ""
    return json.loads(out.out)


def test_bare_budget_json(capsys):
    doc = run_json(capsys, GOLD_ARGS)
    assert doc["runtime_s"] == pytest.approx(GOLD_T_S, rel=0.005)  # S44
    assert doc["stops_at"] is None
    assert doc["v_end_v"] == pytest.approx(1.8, abs=1e-6)
    assert doc["flashes"] == 0
    # 1 - (1.8/2.5)^2 = 0.4816 (E = C V^2 / 2)
    assert doc["usable_energy_fraction"] == pytest.approx(0.4816, abs=1e-4)
    assert isinstance(doc["assumptions"], list) and doc["assumptions"]
    assert isinstance(doc["warnings"], list)
    assert NOT_A_SAFETY_LIGHT in doc["cautions"]
    assert doc["night"]["given"] == "none"


def test_clock_night_crossing_midnight(capsys):
    doc = run_json(capsys, [*GOLD_ARGS, "--dusk", "18:30", "--dawn", "07:10"])
    assert doc["night"]["duration_s"] == 12 * 3600 + 40 * 60  # 18:30 to 07:10 next morning
    assert doc["runtime_s"] == pytest.approx(GOLD_T_S, rel=0.005)  # S44
    assert doc["stops_at"] == "22:19"  # 18:30 + 13,725 s = 22:18:45, to the minute
    assert doc["lasts_the_night"] is False
    assert len(doc["timeline"]["t_s"]) == len(doc["timeline"]["v_v"])


def test_night_length(capsys):
    doc = run_json(capsys, ["night", "--no-circuit", "--storage", "5f-2v7", "--start", "2.6V",
                            "--extra-load", "10uA", "--night", "12.5h"])
    assert doc["night"]["duration_s"] == pytest.approx(45_000.0)
    assert doc["lasts_the_night"] is True
    assert doc["runtime_s"] == pytest.approx(45_000.0)
    assert doc["stops_at"] is None
    assert doc["storage"]["key"] == "5f-2v7"


def test_night_from_latitude_and_date_uses_the_sun(capsys):
    from pulsepick.analysis.sun import night_window

    doc = run_json(capsys, ["night", "--no-circuit", "--storage", "1f-5v5", "--start", "5V",
                            "--extra-load", "10uA", "--latitude", "52.1", "--date",
                            "2026-12-21", "--longitude", "5.1", "--utc-offset", "1"])
    dusk, dawn = night_window(52.1, date(2026, 12, 21), longitude_deg=5.1, utc_offset_h=1.0)
    assert doc["night"]["given"] == "sun"
    assert doc["night"]["duration_s"] == pytest.approx((dawn - dusk).total_seconds(), abs=1e-6)
    assert doc["night"]["dusk"] == dusk.strftime("%H:%M")


def test_start_above_rating_warns_and_cautions(capsys):
    doc = run_json(capsys, ["night", "--no-circuit", "--storage", "5f-2v7", "--start", "2.8V",
                            "--night", "10h"])
    assert any("above the storage rating" in w for w in doc["warnings"])
    assert any("vent" in c for c in doc["cautions"])  # facts.md S41


@pytest.mark.parametrize(
    ("extra", "word"),
    [
        (["--storage", "0F", "--night", "12h"], "--storage"),
        (["--storage", "-0.2F", "--night", "12h"], "--storage"),
        (["--storage", "big", "--night", "12h"], "--storage"),
        (["--storage", "1F", "--dusk", "25:70", "--dawn", "07:00"], "--dusk"),
        (["--storage", "1F", "--dusk", "6pm?", "--dawn", "07:00"], "--dusk"),
        (["--storage", "1F", "--dusk", "18:00", "--dawn", "7"], "--dawn"),
        (["--storage", "1F", "--start", "2V", "--stop-at", "2.2V", "--night", "12h"],
         "--stop-at"),
        (["--storage", "1F", "--start", "2.5V"], "no night"),
        (["--storage", "1F", "--night", "12 mA"], "--night"),
        (["--storage", "1F", "--night", "30h"], "--night"),
        (["--storage", "1F", "--night", "12h", "--latitude", "52", "--date", "2026-12-21"],
         "one way"),
        (["--storage", "1F", "--latitude", "52"], "--date"),
        (["--storage", "1F", "--latitude", "52", "--date", "2026-13-40"], "--date"),
        (["--storage", "1F", "--latitude", "95", "--date", "2026-12-21"], "--latitude"),
        (["--storage", "1F", "--night", "12h", "--extra-load", "-3uA"], "--extra-load"),
        (["--night", "12h"], "no storage"),
        (["--storage", "5f-2v7", "--rated", "3V", "--night", "12h"], "--rated"),
        (["--storage", "1F", "--night", "12h", "--turn-on", "noon"], "--turn-on"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(capsys, extra, word):
    status = cli.main(["night", "--no-circuit", *extra])
    out = capsys.readouterr()
    assert status == 2
    assert out.out == ""
    lines = out.err.strip().splitlines()
    assert len(lines) == 1 and word in lines[0]


def render(result, night):
    buf = io.StringIO()
    night_cmd.render_report(result, night, Console(file=buf, width=100, color_system=None))
    return buf.getvalue()


def test_report_of_a_bare_budget_at_width_100():
    dusk = datetime(2026, 12, 21, 18, 30)
    result = simulate_night(custom_storage(0.2), 2.5, 12 * 3600 + 40 * 60, None,
                            extra_load_a=10e-6, storage_leak_a=0.2e-6, stop_at_v=1.8, dusk=dusk)
    text = render(result, {"dusk": dusk, "duration_s": result.duration_s, "given": "clock"})
    assert "storage reaches 1.80 V at 22:19 after 3 h 49 min" in text
    assert "not a safety, navigation or warning light" in text
    assert all(len(line) <= 100 for line in text.splitlines())
    assert "\x1b[" not in text


def fake_blinker() -> LoadCurve:
    """A made-up blinker for tests (demo numbers): dark below 2.0 V."""
    v = np.linspace(1.0, 3.0, 201)
    lit = v >= 2.0 - 1e-9
    return LoadCurve(
        label="fake blinker", supply_v=v, supply_avg_a=5e-6 + 10e-6 * (v - 1.0),
        period_s=np.where(lit, 2.0, np.nan), flash_s=np.where(lit, 0.05, np.nan),
        led_peak_a=np.where(lit, 5e-3, np.nan), effective_a=np.where(lit, 1e-3 * v, np.nan),
        effective_cd=np.where(lit, 0.02 * v, np.nan), lit=lit,
    )


def test_report_of_a_circuit_that_stops():
    dusk = datetime(2026, 12, 21, 17, 0)
    result = simulate_night(custom_storage(0.47), 2.7, 15 * 3600.0, fake_blinker(), dusk=dusk,
                            storage_leak_a=0.0)
    text = render(result, {"dusk": dusk, "duration_s": 15 * 3600.0, "given": "clock"})
    assert f"light stops at {result.stops_at}" in text
    assert "Over the night" in text and "midnight" in text
    assert "#" in text  # the brightness rows of the chart
    assert "X" in text  # where the light stops
    assert "not a safety, navigation or warning light" in text
    assert all(len(line) <= 100 for line in text.splitlines())


def test_report_of_a_circuit_that_lasts():
    result = simulate_night(get_storage("5f-2v7"), 2.7, 12 * 3600.0, fake_blinker())
    text = render(result, {"dusk": None, "duration_s": 12 * 3600.0, "given": "length"})
    assert f"lasts the night, {result.v_end_v:.2f} V left at dawn" in text


def test_cli_report_honours_no_color(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    status = cli.main([*GOLD_ARGS, "--dusk", "18:30", "--dawn", "07:10"])
    out = capsys.readouterr()
    assert status == 0
    assert out.out.startswith("night: storage reaches 1.80 V at 22:19")
    assert "\x1b[" not in out.out
    assert all(len(line) <= 100 for line in out.out.splitlines())


def test_circuit_mode_calls_the_circuit_options(capsys, monkeypatch):
    """Without --no-circuit the command asks the shared circuit options for a load curve."""
    seen = {}

    def add_circuit_arguments(parser):
        parser.add_argument("--fake-circuit", default="x")

    def load_curve_from_args(args, supplies):
        seen["supplies"] = supplies
        return fake_blinker()

    fake = types.SimpleNamespace(add_circuit_arguments=add_circuit_arguments,
                                 load_curve_from_args=load_curve_from_args)
    monkeypatch.setattr(night_cmd, "_circuit_options", lambda: fake)
    doc = run_json(capsys, ["night", "--storage", "0.47F", "--start", "2.7V",
                            "--dusk", "17:00", "--dawn", "08:00", "--fake-circuit", "y"])
    assert seen["supplies"][-1] == pytest.approx(2.7) and np.all(np.diff(seen["supplies"]) > 0)
    assert doc["circuit"] == "fake blinker"
    assert doc["v_stop_v"] == pytest.approx(2.0, abs=1e-9)
    assert doc["stops_at"] is not None
    assert doc["flashes"] == pytest.approx(doc["runtime_s"] / 2.0, rel=0.005)  # fixed 2 s period


def test_report_of_a_circuit_that_never_lights():
    v = np.linspace(1.0, 3.0, 3)
    dark = LoadCurve(label="dark", supply_v=v, supply_avg_a=np.full(3, 1e-6),
                     period_s=np.full(3, np.nan), flash_s=np.full(3, np.nan),
                     led_peak_a=np.full(3, np.nan), effective_a=np.full(3, np.nan),
                     effective_cd=np.full(3, np.nan), lit=np.zeros(3, bool))
    result = simulate_night(custom_storage(1.0), 2.7, 12 * 3600.0, dark)
    text = render(result, {"dusk": None, "duration_s": 12 * 3600.0, "given": "length"})
    assert "light never starts: the circuit is not lit at 2.70 V" in text
