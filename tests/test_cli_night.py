"""``pulsepick night`` on the command line: JSON, the report, bad input."""

import argparse
import io
import json
from datetime import date, datetime

import numpy as np
import pytest
from rich.console import Console

from pulsepick import cli
from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT, POLARITY_AND_SHORTS
from pulsepick.analysis.night import simulate_night
from pulsepick.commands import night as night_cmd
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.parts.storage import custom_storage, get_storage

# The bare budget of the Panasonic Gold Capacitors technical guide (ref:panasonic-gold-cap):
# 0.2 F from 2.5 V to 1.8 V at 10 uA plus 0.2 uA leakage lasts 13,725 s.
GOLD_ARGS = ["night", "--no-circuit", "--storage", "0.2F", "--start", "2.5V", "--stop-at", "1.8V",
             "--storage-leak", "0.2uA", "--extra-load", "10uA"]
GOLD_T_S = 13_725.0  # s, ref:panasonic-gold-cap
# A pulse-stage Schmitt blinker on the Maxwell 5 F 2.7 V cell (ref:maxwell-bcap0005); demo values.
CIRCUIT_OPTIONS = ["--r", "2M2", "--c", "1u", "--stage", "pulse", "--cp", "22u", "--rs", "47"]
CIRCUIT_ARGS = ["night", "--storage", "5f-2v7", "--start", "2.6V", "--dusk", "18:30",
                "--dawn", "07:10", *CIRCUIT_OPTIONS]


def run_json(capsys, argv):
    status = cli.main([*argv, "--json"])
    out = capsys.readouterr()
    assert status == 0, out.err
    assert out.err == ""
    return json.loads(out.out)


def test_bare_budget_json(capsys):
    doc = run_json(capsys, GOLD_ARGS)
    assert doc["runtime_s"] == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap
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
    assert doc["runtime_s"] == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap
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
    assert any("vent" in c for c in doc["cautions"])  # ref:bussmann-powerstor-guide


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


def test_circuit_mode_uses_the_check_options(capsys):
    """Without --no-circuit the check-style options describe the circuit."""
    from pulsepick.commands.circuit_options import add_circuit_arguments, design_from_args
    from pulsepick.design import load_curve

    doc = run_json(capsys, CIRCUIT_ARGS)
    assert doc["circuit"] == "schmitt + pulse, hc, standard red (GaAsP/GaP, 660 nm)"
    # the dusk figures are the load curve's at the start voltage (same options, same grid)
    parser = argparse.ArgumentParser()
    add_circuit_arguments(parser)
    design = design_from_args(parser.parse_args(CIRCUIT_OPTIONS))
    curve = load_curve(design, night_cmd.supply_grid(2.7))  # 2.7 V: the 5f-2v7 rating (ref:maxwell-bcap0005)
    dusk = doc["figures"][0]
    assert dusk["label"] == "dusk" and dusk["v_v"] == pytest.approx(2.6)
    assert dusk["supply_avg_a"] == pytest.approx(float(curve.current_a(2.6)), rel=1e-9)
    assert doc["flashes"] > 0


def test_report_of_a_circuit_that_never_lights():
    v = np.linspace(1.0, 3.0, 3)
    dark = LoadCurve(label="dark", supply_v=v, supply_avg_a=np.full(3, 1e-6),
                     period_s=np.full(3, np.nan), flash_s=np.full(3, np.nan),
                     led_peak_a=np.full(3, np.nan), effective_a=np.full(3, np.nan),
                     effective_cd=np.full(3, np.nan), lit=np.zeros(3, bool))
    result = simulate_night(custom_storage(1.0), 2.7, 12 * 3600.0, dark)
    text = render(result, {"dusk": None, "duration_s": 12 * 3600.0, "given": "length"})
    assert "light never starts: the circuit is not lit at 2.70 V" in text


def run_text(capsys, argv, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    status = cli.main(argv)
    out = capsys.readouterr()
    assert status == 0, out.err
    return out.out


def flat(text: str) -> str:
    """The report with its wrapped lines joined (for phrases that wrap)."""
    return " ".join(text.split())


# ------------------------------------------------------------------ the crossing-current estimate

def crossing_estimate_text(volts: float) -> str:
    """The check report's crossing-current text for the CIRCUIT_OPTIONS circuit at ``volts``."""
    from dataclasses import replace

    from pulsepick.analysis.checks import assumptions
    from pulsepick.commands.circuit_options import add_circuit_arguments, design_from_args

    parser = argparse.ArgumentParser()
    add_circuit_arguments(parser)
    design = design_from_args(parser.parse_args(CIRCUIT_OPTIONS))
    return assumptions(replace(design, supply_v=volts))["crossing_current"]


def test_crossing_current_estimate_is_labelled_in_json(capsys):
    doc = run_json(capsys, CIRCUIT_ARGS)
    cross = doc["crossing_current"]
    assert cross["estimate"] is True and cross["at_v"] == pytest.approx(2.6)
    assert cross["override"] == "--cross-current"
    assert len(cross["lights"]) == 1 and cross["lights"][0]["estimate"] is True
    # the same figure the check report gives at 2.6 V ("ESTIMATE 23.4 µA average (...)")
    check_text = crossing_estimate_text(2.6)
    from pulsepick.units import format_eng

    value = format_eng(cross["total_a"], "A")
    assert check_text.startswith(f"ESTIMATE {value} average")
    # part of the circuit's average supply current at the start (the dusk figure)
    dusk_a = doc["figures"][0]["supply_avg_a"]
    assert 0 < cross["total_a"] < dusk_a
    note = cross["note"]
    assert note in doc["assumptions"]
    assert f"an ESTIMATE of {value} average at the start voltage 2.60 V" in note
    assert f"{cross['total_a'] / dusk_a:.0%} of the circuit's {format_eng(dusk_a, 'A')}" in note
    assert note.endswith("give a measured figure per gate with --cross-current 15uA")


def test_crossing_current_estimate_is_in_the_text_report(capsys, monkeypatch):
    text = flat(run_text(capsys, CIRCUIT_ARGS, monkeypatch))
    assert "the circuit's supply current includes the Schmitt input's crossing current, an " \
           "ESTIMATE of" in text
    assert "--cross-current 15uA" in text


def test_measured_crossing_current_replaces_the_estimate(capsys):
    estimated = run_json(capsys, CIRCUIT_ARGS)
    measured = run_json(capsys, [*CIRCUIT_ARGS, "--cross-current", "15uA"])
    cross = measured["crossing_current"]
    assert cross["estimate"] is False
    assert cross["lights"][0]["crossing_current_a"] == pytest.approx(15e-6, rel=1e-12)
    assert "measured: 15 µA per gate (given with --cross-current)" in cross["note"]
    assert not any("ESTIMATE" in a for a in measured["assumptions"])
    # only the crossing part of the supply current changes at dusk
    before = estimated["figures"][0]["supply_avg_a"] - estimated["crossing_current"]["total_a"]
    after = measured["figures"][0]["supply_avg_a"] - 15e-6
    assert after == pytest.approx(before, rel=1e-6)


def test_crossing_current_of_the_solver_pick_and_its_override(capsys):
    argv = ["night", "--from-solve", "one flash every 3 s", "--family", "lvc", "--storage",
            "5f-2v7", "--start", "2.6V", "--stop-at", "1.8V", "--night", "12h"]
    doc = run_json(capsys, argv)
    assert doc["crossing_current"]["estimate"] is True
    assert doc["crossing_current"]["note"] in doc["assumptions"]
    measured = run_json(capsys, [*argv, "--cross-current", "15uA"])
    assert measured["crossing_current"]["estimate"] is False
    assert measured["crossing_current"]["total_a"] == pytest.approx(15e-6, rel=1e-12)


def test_no_crossing_current_without_a_schmitt_chip(capsys):
    bare = run_json(capsys, GOLD_ARGS)
    assert bare["crossing_current"] is None
    timer = run_json(capsys, ["night", "--storage", "5f-2v7", "--start", "2.6V", "--night", "12h",
                              "--core", "timer555", "--ra", "1M", "--rb", "22k", "--c", "1u",
                              "--rs", "470"])
    assert timer["crossing_current"] is None
    assert not any("crossing" in a for a in timer["assumptions"])


# ------------------------------------------------------------------ a run with no night

def test_open_ended_json_leaves_out_midnight_and_dawn(capsys):
    doc = run_json(capsys, GOLD_ARGS)
    assert doc["night"]["dusk"] is None and doc["night"]["dawn"] is None
    assert doc["night"]["note"] == night_cmd.OPEN_ENDED_NOTE
    assert [p["label"] for p in doc["figures"]] == ["start"]
    assert doc["figures"][0]["t_s"] == 0.0 and doc["figures"][0]["v_v"] == 2.5
    # the end of the run is in runtime_s and v_end_v (ref:panasonic-gold-cap backup time)
    assert doc["runtime_s"] == pytest.approx(GOLD_T_S, rel=0.005)
    assert doc["v_end_v"] == pytest.approx(1.8, abs=1e-6)


def test_a_night_keeps_dusk_midnight_and_dawn(capsys):
    doc = run_json(capsys, [*GOLD_ARGS, "--night", "12h"])
    assert [p["label"] for p in doc["figures"]] == ["dusk", "midnight", "dawn"]
    assert "note" not in doc["night"]


# ------------------------------------------------------------------ storage values given or not

def test_storage_note_says_the_rating_was_a_default(capsys, monkeypatch):
    doc = run_json(capsys, GOLD_ARGS)
    notes = doc["storage"]["source_notes"]
    assert notes[0] == ("capacitance 200 mF given by the user; rating 2.7 V by default (the "
                        "common single-cell rating, ref:maxwell-bcap0005/ref:capxx-hy-10f; --rated sets it); "
                        "tolerance taken as 0 (by default)")
    assert not any("capacitance and rating given" in n for n in notes)
    assert doc["storage"]["v_rated_default"] is True
    assert doc["storage"]["v_rated_v"] == 2.7  # ref:maxwell-bcap0005/ref:capxx-hy-10f single-cell rating
    text = run_text(capsys, GOLD_ARGS, monkeypatch)
    assert "rated 2.70 V (default)" in text


def test_storage_note_with_a_given_rating(capsys):
    doc = run_json(capsys, [*GOLD_ARGS, "--rated", "3V"])
    assert doc["storage"]["source_notes"][0].startswith(
        "capacitance 200 mF given by the user; rating 3 V given by the user;")
    assert doc["storage"]["v_rated_default"] is False


def test_storage_part_keeps_its_datasheet_notes(capsys):
    doc = run_json(capsys, ["night", "--no-circuit", "--storage", "5f-2v7", "--night", "12h",
                            "--extra-load", "10uA"])
    assert doc["storage"]["v_rated_default"] is False
    assert not any("given by the user" in n for n in doc["storage"]["source_notes"])


# ------------------------------------------------------------------ the integrator's words

def test_solver_messages_are_our_own(capsys):
    stopped = run_json(capsys, GOLD_ARGS)
    assert stopped["solver"]["message"].startswith("stopped at the stop voltage 1.80 V after ")
    lasting = run_json(capsys, [*CIRCUIT_ARGS])
    assert lasting["lasts_the_night"] is True
    assert lasting["solver"]["message"] == "ran to the end of the night (45600 s)"  # 12 h 40 min
    for doc in (stopped, lasting):
        assert "termination event" not in json.dumps(doc)
        assert "successfully reached" not in json.dumps(doc)


# ------------------------------------------------------------------ cautions

def test_night_cautions_over_voltage_shorts_and_not_a_safety_light(capsys, monkeypatch):
    argv = ["night", "--storage", "5f-2v7", "--start", "2.8V", "--night", "12h",
            *CIRCUIT_OPTIONS]
    doc = run_json(capsys, argv)
    # 2.8 V is above the 2.7 V rating and within the 2.85 V surge rating (ref:maxwell-bcap0005)
    over = [c for c in doc["cautions"] if c.startswith("The start voltage 2.80 V is above the "
                                                       "storage rating 2.70 V")]
    assert len(over) == 1 and "within its 2.85 V surge rating" in over[0]
    assert "vent" in over[0]  # PowerStor guidelines, ref:bussmann-powerstor-guide
    assert POLARITY_AND_SHORTS in doc["cautions"]
    assert NOT_A_SAFETY_LIGHT in doc["cautions"]
    text = flat(run_text(capsys, argv, monkeypatch))
    for caution in (over[0], POLARITY_AND_SHORTS, NOT_A_SAFETY_LIGHT):
        assert caution in text


def test_no_over_voltage_caution_within_the_rating(capsys):
    doc = run_json(capsys, CIRCUIT_ARGS)
    assert not any("above the storage rating" in c for c in doc["cautions"])
    assert doc["cautions"][:2] == [POLARITY_AND_SHORTS, NOT_A_SAFETY_LIGHT]


# ------------------------------------------------------------------ the dusk detector

def test_no_dusk_detector_is_an_assumption(capsys, monkeypatch):
    doc = run_json(capsys, CIRCUIT_ARGS)
    assert night_cmd.NO_DUSK_DETECTOR == (
        "no dusk detector load included (describe it with --dusk-bleed and the panel options, "
        "or add its bias from pulsepick dusk with --extra-load)")
    assert doc["assumptions"].count(night_cmd.NO_DUSK_DETECTOR) == 1
    assert doc["dusk_detector"] == {"in_design_file": False, "bias_included": False,
                                    "bias_a": None, "note": night_cmd.NO_DUSK_DETECTOR}
    text = run_text(capsys, CIRCUIT_ARGS, monkeypatch)
    assert night_cmd.NO_DUSK_DETECTOR in flat(text)
    assert "dusk detector  " not in text  # no row at the top when nothing includes one


def test_dusk_detector_note_names_the_extra_load(capsys):
    doc = run_json(capsys, GOLD_ARGS)
    assert doc["dusk_detector"]["note"] == (
        "no dusk detector load included beyond the extra load of 10 µA (describe it with "
        "--dusk-bleed and the panel options, or add its bias from pulsepick dusk with "
        "--extra-load)")


ONE_LIGHT_FILE = """
name = "Shed door marker"

[build]
family = "hc"

[storage]
part = "5f-2v7"
start = "2.6V"
stop_at = "1.8V"

[night]
length = "12h"

[[light]]
name = "door"
blink = "one flash every 3 s"
"""


def test_design_file_names_its_dusk_detector_at_the_top(tmp_path, capsys, monkeypatch):
    path = tmp_path / "shed.toml"
    path.write_text(ONE_LIGHT_FILE)
    text = run_text(capsys, ["night", str(path)], monkeypatch)
    head = flat(text.split("Over the night")[0])
    assert ("dusk detector counted as a gate in the design file; its night-time bias is not in "
            "this run (pulsepick dusk computes it; add it with --extra-load)") in head
    assert night_cmd.NO_DUSK_DETECTOR in flat(text)
    assert "crossing current" in flat(text)
    doc = run_json(capsys, ["night", str(path)])
    assert doc["dusk_detector"]["in_design_file"] is True
    assert doc["crossing_current"]["lights"][0]["light"] == "door"
    off = tmp_path / "off.toml"
    off.write_text(ONE_LIGHT_FILE.replace('family = "hc"', 'family = "hc"\ndusk_detector = false'))
    assert "dusk detector  " not in run_text(capsys, ["night", str(off)], monkeypatch)


def test_dusk_bleed_adds_the_detectors_night_bias(capsys):
    # the detector's night-time bias comes from pulsepick.analysis.dusk (the charging
    # diode's reverse leakage through the bleed); it joins the loads and is named
    from pulsepick.analysis.dusk import dusk_levels
    from pulsepick.parts.diode import get_diode
    from pulsepick.parts.logic import get_family
    from pulsepick.parts.panel import get_panel

    base = ["night", "--no-circuit", "--storage", "1f-2v7", "--start", "2.7V", "--night", "12h",
            "--json"]
    assert cli.main(base) == 0
    plain = json.loads(capsys.readouterr().out)
    assert cli.main([*base, "--dusk-bleed", "220k", "--panel", "3v20ma"]) == 0
    with_dusk = json.loads(capsys.readouterr().out)
    bias = dusk_levels(get_panel("3v20ma"), 220e3, get_family("hc"), 2.7,
                       get_diode("schottky")).night_bias_typ_a
    assert bias > 0
    # more drain, so less voltage left at dawn; the extra charge is the bias over the night
    assert with_dusk["v_end_v"] < plain["v_end_v"]
    assert any("dusk detector: bleed 220 kΩ" in a for a in with_dusk["assumptions"])
    assert cli.main([*base, "--dusk-bleed", "220k"]) == 2
    assert "no panel given" in capsys.readouterr().err
