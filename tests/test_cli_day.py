"""``pulsepick day`` and ``pulsepick dusk`` from the command line: reports, JSON, bad input."""

import io
import json

import pytest
from rich.console import Console

from pulsepick.cli import main
from pulsepick.commands import day as day_cmd
from pulsepick.commands import dusk as dusk_cmd

DAY = ["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--clamp", "2.5V",
       "--weather", "clear,overcast,dim", "--days", "7", "--night-load", "30uA",
       "--day-load", "2uA"]


def _run(capsys, argv):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def test_day_json(capsys):
    code, out, err = _run(capsys, [*DAY, "--json"])
    assert code == 0 and err == ""
    doc = json.loads(out)
    assert doc["command"] == "day"
    assert len(doc["days"]) == 7
    assert [d["weather"] for d in doc["days"][:3]] == ["clear", "overcast", "dim"]
    first = doc["days"][0]
    for key in ("v_dawn_v", "v_dusk_v", "runtime_s", "lasted", "time_to_full_s", "charge_in_c",
                "energy_in_j", "v_eq_v", "v_next_dawn_v", "full_at"):
        assert key in first
    assert first["v_dawn_v"] == 0.0 and first["full"]
    assert doc["night"]["night_s"] == 12 * 3600.0
    assert doc["night"]["dusk"] == "18:00" and doc["night"]["dawn"] == "06:00"
    assert doc["charge_path"]["clamp_v"] == 2.5
    assert doc["recovery"]["weather"] == "dim"
    assert isinstance(doc["autonomy_nights"], int)
    assert any("short circuit" in c for c in doc["cautions"])


def test_day_report_text_at_100_columns(monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    from pulsepick.cli import build_parser

    ns = build_parser().parse_args(DAY)
    window, info = day_cmd.read_night(ns)
    from pulsepick.analysis.day import simulate_days
    from pulsepick.parts.diode import get_diode

    result = simulate_days(day_cmd.read_storage(ns.storage, ns.rated), day_cmd.read_panel(ns),
                           get_diode(ns.diode), ["clear", "overcast", "dim"], 30e-6, window, 0.0,
                           days=7, clamp_v=2.5, day_load=2e-6, stop_at_v=1.8)
    buf = io.StringIO()
    day_cmd.render_report(result, info, Console(file=buf, width=100, color_system=None))
    text = buf.getvalue()
    assert "\x1b[" not in text
    assert max(len(line) for line in text.splitlines()) <= 100
    for words in ("Day by day", "weather", "next V", "energy in", "Nights lasted: 7 of 7",
                  "Days of autonomy", "Weak light", "Clamp 2.50 V", "Cautions:",
                  "not a safety, navigation or warning light"):
        assert words in text


def test_day_report_through_main(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code, out, err = _run(capsys, DAY)
    assert code == 0 and err == ""
    assert "Day by day" in out and "\x1b[" not in out


def test_day_without_clamp_prints_the_over_voltage_caution(capsys):
    code, out, _ = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--night-load", "30uA"])
    assert code == 0
    flat = " ".join(out.split())
    assert "above the storage rating 2.70 V" in flat
    assert "Proposed: a shunt clamp" in flat and "2.4 V" in flat


def test_day_with_a_user_profile_and_sun_times(capsys, tmp_path):
    f = tmp_path / "path-markers.csv"
    f.write_text("hour,irradiance_w_m2\n7,0\n12,300\n17,0\n", encoding="utf-8")
    code, out, err = _run(capsys, ["day", "--storage", "1F", "--panel-voc", "5V",
                                   "--panel-isc", "60mA", "--panel-cells", "8", "--diode", "si",
                                   "--profile", str(f), "--days", "2", "--latitude", "52.1",
                                   "--date", "2026-03-20", "--longitude", "5.1",
                                   "--utc-offset", "1", "--night-load", "10uA", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert [d["weather"] for d in doc["days"]] == ["path-markers.csv"] * 2
    assert doc["night"]["given"] == "sun"
    assert 10.5 * 3600 < doc["night"]["night_s"] < 11.5 * 3600  # equinox civil night at 52 N
    assert doc["panel"]["cells"] == 8


def test_dusk_resistor_for_a_level(capsys):
    code, out, err = _run(capsys, ["dusk", "--panel", "5v60ma", "--dusk-at", "10lux",
                                   "--family", "hc", "--supply", "2.5V", "--json"])
    assert code == 0 and err == ""
    doc = json.loads(out)
    assert doc["series"] == "E24"
    assert doc["wanted_lux"] == 10.0
    assert doc["bleed_ohm"] == 240e3  # nearest E24 to the exact value
    assert doc["exact_bleed_ohm"] == pytest.approx(253e3, rel=0.01)
    assert doc["turn_off"]["typ_lux"] > doc["turn_on"]["typ_lux"]


def test_dusk_levels_report(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code, out, err = _run(capsys, ["dusk", "--panel", "5v60ma", "--bleed", "240k"])
    assert code == 0 and err == ""
    for words in ("Light levels", "turns on (night)", "turns off (day)", "Hysteresis",
                  "By day", "At night", "Gating:", "optical feedback", "Cautions:"):
        assert words in out
    assert max(len(line) for line in out.splitlines()) <= 100


def test_dusk_report_renders_into_a_plain_console():
    from pulsepick.analysis.dusk import bleed_for_dusk
    from pulsepick.parts.diode import get_diode
    from pulsepick.parts.logic import get_family
    from pulsepick.parts.panel import get_panel

    r = bleed_for_dusk(get_panel("6v100ma"), 20.0, get_family("lvc"), 3.0, get_diode("si"),
                       series="E12")
    buf = io.StringIO()
    dusk_cmd.render_report(r, Console(file=buf, width=100, color_system=None))
    text = buf.getvalue()
    assert "turn on at 20 lx" in text and "E12" in text


@pytest.mark.parametrize(
    "argv, words",
    [
        (["day", "--storage", "0F", "--panel", "5v60ma"], "capacitance must be above 0"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--weather", "clear,sunny"],
         "unknown weather 'sunny'; accepted"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--night", "25h"], "under 24 h"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--night", "12x"], "--night '12x'"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--start=-1V"], "--start '-1V'"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--days", "0"], "--days '0'"),
        (["day", "--storage", "5f-2v7", "--panel-voc", "five", "--panel-isc", "60mA"],
         "--panel-voc 'five'"),
        (["day", "--storage", "5f-2v7"], "no panel given"),
        (["day", "--storage", "5f-2v7", "--panel", "9v"], "unknown panel '9v'"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--date", "2026-01-01"],
         "need --latitude"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--latitude", "52",
          "--date", "2026-13-01"], "--date '2026-13-01' is not a date"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--latitude", "80",
          "--date", "2026-12-21"], "polar night"),
        (["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--weather", "clear",
          "--profile", "x.csv"], "give the light one way"),
        (["dusk", "--panel", "5v60ma"], "give one of --bleed"),
        (["dusk", "--panel", "5v60ma", "--bleed", "100k", "--dusk-at", "10lux"],
         "give one of --bleed"),
        (["dusk", "--panel", "5v60ma", "--dusk-at", "0.1lux"], "cannot signal dusk"),
        (["dusk", "--panel", "5v60ma", "--dusk-at", "10mA"], "--dusk-at '10mA'"),
        (["dusk", "--panel", "5v60ma", "--bleed", "100k", "--series", "E7"],
         "--series 'E7' is not known"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(capsys, argv, words):
    code, out, err = _run(capsys, argv)
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and err.startswith("pulsepick: error: ")
    assert words in err


def test_negative_irradiance_in_a_profile_is_exit_2(capsys, tmp_path):
    f = tmp_path / "bad.csv"
    f.write_text("hour,irradiance_w_m2\n6,0\n12,-40\n18,0\n", encoding="utf-8")
    code, _, err = _run(capsys, ["day", "--storage", "1F", "--panel", "5v60ma",
                                 "--profile", str(f)])
    assert code == 2
    assert "bad.csv line 3: irradiance -40 W/m2 is negative" in err


def test_help_lists_examples(capsys):
    assert main(["day", "--help"]) == 0
    out = capsys.readouterr().out
    assert "examples:" in out and "--weather clear,overcast,dim" in out


def test_day_with_a_described_circuit_as_the_night_load(capsys):
    # The night load can be the circuit itself (the shared circuit options), whose own stop
    # voltage (the chip's minimum supply) then applies.
    pytest.importorskip("pulsepick.commands.circuit_options")
    code, out, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                   "--clamp", "2.5V", "--weather", "clear", "--core", "schmitt",
                                   "--stage", "pulse", "--r", "2M2", "--c", "1u", "--cp", "22u",
                                   "--rs", "47", "--family", "hc", "--led", "red", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["night_load"]["label"].startswith("schmitt + pulse")
    assert doc["v_stop_v"] >= doc["night_load"]["light_stops_below_v"]
    assert doc["days"][0]["flashes"] > 0


def test_night_load_given_twice_is_refused(capsys):
    pytest.importorskip("pulsepick.commands.circuit_options")
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--night-load", "30uA", "--r", "2M2", "--c", "1u"])
    assert code == 2 and "give the night load one way" in err


def test_weak_panel_report_names_the_trap_and_never_restarts(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code, out, _ = _run(capsys, ["day", "--storage", "0f47-2v7", "--panel", "2v40ma",
                                 "--weather", "clear,overcast,dim", "--night-load", "30uA"])
    assert code == 0
    flat = " ".join(out.split())
    assert "never restarts after a dark day" in flat
    assert "Equilibrium trap: the charge equals the draw on overcast days" in flat
    assert "no light" in flat


def test_day_table_words_units_and_full(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    from pulsepick.units import format_eng

    code, out, err = _run(capsys, [*DAY, "--days", "3", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    # full means the clamp when there is one
    assert doc["full_v"] == 2.5 and doc["full_is"] == "clamp"
    code, out, err = _run(capsys, [*DAY, "--days", "3"])
    assert code == 0, err
    head = next(line for line in out.splitlines() if line.lstrip().startswith("day "))
    assert head.split() == ["day", "weather", "dawn", "V", "full", "at", "max", "V", "dusk", "V",
                            "charge", "in", "energy", "in", "clamp", "took", "light", "ran",
                            "next", "V"]
    assert "in C" not in out and "clamp C" not in out
    first = next(line for line in out.splitlines() if line.lstrip().startswith("1 "))
    day1 = doc["days"][0]
    for value, unit in ((day1["charge_in_c"], "C"), (day1["energy_in_j"], "J"),
                        (day1["charge_clamp_c"], "C")):
        assert format_eng(value, unit) in first
    assert "full at: the time the storage first reaches the clamp voltage 2.50 V." in out
    clamp_line = " ".join(out[out.index("Clamp 2.50 V"):].split())
    peak = max(d["charge_clamp_c"] for d in doc["days"])
    assert clamp_line.startswith(f"Clamp 2.50 V: absorbs up to {format_eng(peak, 'C')} a day")


def test_full_without_a_clamp_is_the_rating(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    argv = ["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--night-load", "30uA",
            "--start", "2V"]
    code, out, _ = _run(capsys, [*argv, "--json"])
    assert code == 0
    doc = json.loads(out)
    # Maxwell 2.7 V 5 F cell (ref:maxwell-bcap0005): full is its rated 2.7 V
    assert doc["full_v"] == 2.7 and doc["full_is"] == "rated voltage"
    assert doc["days"][0]["v_max_v"] > 2.7  # no clamp: it charges past the rating
    code, out, _ = _run(capsys, argv)
    assert code == 0
    flat = " ".join(out.split())
    assert ("full at: the time the storage first reaches its rated 2.70 V (there is no clamp); "
            "it keeps charging above the rating, up to the max V shown.") in flat


def test_assumptions_and_night_load_in_words(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    pytest.importorskip("pulsepick.commands.circuit_options")
    argv = ["day", "--storage", "5f-2v7", "--panel", "5v60ma", "--weather", "clear",
            "--bleed", "240k", "--core", "schmitt", "--r", "1M", "--c", "1u", "--stage",
            "direct", "--rs", "1k"]
    code, out, err = _run(capsys, argv)
    assert code == 0, err
    flat = " ".join(out.split())
    # the 5v60ma row of data/parts/panels.csv: n 1.5, r_s 4 ohm, r_sh 400000 ohm (estimates)
    assert ("ideality factor 1.5, series resistance 4 Ω, shunt resistance 400 kΩ (example "
            "rating (common practice); ideality factor, series resistance and shunt "
            "resistance: estimates)") in flat
    assert "Rsh 400000" not in flat and "r_s" not in flat and "ohm" not in flat
    assert "the dusk detector's bleed 240 kΩ takes panel current by day" in flat
    assert "(average supply current " in flat and " over storage voltages " in flat
    code, out, _ = _run(capsys, [*argv, "--json"])
    assert code == 0
    doc = json.loads(out)
    assert any("shunt resistance 400 kΩ" in a for a in doc["assumptions"])


def test_custom_panel_notes_in_words(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    code, out, _ = _run(capsys, ["day", "--storage", "1F", "--panel-voc", "5V", "--panel-isc",
                                 "60mA", "--night-load", "10uA"])
    assert code == 0
    flat = " ".join(out.split())
    # custom_panel's estimates: r_s 5 % and r_sh 5000 times voc/isc (pulsepick.parts.panel)
    assert "series resistance 5 % of Voc/Isc (estimate)" in flat
    assert "shunt resistance 5000x Voc/Isc (estimate)" in flat
    assert "r_sh" not in flat and "voc/isc" not in flat
