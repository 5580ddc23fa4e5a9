"""The season and the sky from the command line: day light by place and date, sizing,
one design file for every command, polar dates and the design-file reference page."""

import json
import re
from pathlib import Path

import pytest

from pulsepick.cli import main
from pulsepick.designfile import TOP_KEYS

LANTERN = """
name = "Garden path lantern"

[storage]
part = "5f-2v7"
start = "2.6V"
stop_at = "1.8V"

[panel]
voc = "3V"
isc = "20mA"

[site]
latitude = 52.1
longitude = 5.1
utc_offset = 1
date = "2026-12-21"

[[light]]
name = "path marker"
blink = "one flash every 3 s"
"""


def _run(capsys, argv):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def _day_json(capsys, *extra):
    code, out, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                   "--clamp", "2.4V", "--night-load", "20uA", "--json", *extra])
    assert code == 0, err
    return json.loads(out)


@pytest.mark.parametrize("date, tilt, expected_wh", [
    # ref:pvlib-clearsky-runs: 60 N, longitude 0, UTC, Linke turbidity 3 (kWh/m² -> Wh/m²)
    ("2026-06-21", ["--tilt", "0"], 8004.0),
    ("2026-12-21", ["--tilt", "0"], 168.0),
    ("2026-06-21", ["--tilt", "60", "--azimuth", "180"], 7200.0),
    ("2026-12-21", ["--tilt", "60", "--azimuth", "180"], 863.0),
])
def test_day_light_on_the_panel_plane_at_60_north(capsys, date, tilt, expected_wh):
    doc = _day_json(capsys, "--latitude", "60", "--longitude", "0", "--utc-offset", "0",
                    "--date", date, "--turbidity", "3", *tilt)
    assert doc["sky"]["turbidity"] == 3.0
    assert doc["days"][0]["irradiation_wh_m2"] == pytest.approx(expected_wh, rel=0.10)
    assert doc["days"][0]["clear_sky_index"] == 1.0


def test_winter_at_60_north_shows_the_turbidity_spread(capsys):
    doc = _day_json(capsys, "--latitude", "60", "--longitude", "0", "--utc-offset", "0",
                    "--date", "2026-12-21", "--tilt", "60", "--azimuth", "180")
    sens = doc["sky"]["turbidity_sensitivity_wh_m2"]
    # ref:pvlib-clearsky-runs: the tilted December total falls steeply with turbidity
    assert sens["2"] > 2.0 * sens["3"] > 4.0 * sens["4"] * 0.9
    assert doc["sky"]["low_sun"] is True
    assert any(w.startswith("Low sun:") for w in doc["warnings"])


def test_december_and_june_differ_by_latitude(capsys):
    # The shapes gave about the same harvest in June and December; the sky does not:
    # 52 N, a panel tilted 52 degrees south, 2.69 against 7.26 kWh/m² (ref:pvlib-clearsky-runs).
    june = _day_json(capsys, "--latitude", "52", "--date", "2026-06-21")
    dec = _day_json(capsys, "--latitude", "52", "--date", "2026-12-21")
    ratio = dec["days"][0]["irradiation_wh_m2"] / june["days"][0]["irradiation_wh_m2"]
    assert ratio == pytest.approx(2.689 / 7.255, rel=0.05)
    assert june["sky"]["tilt_deg"] == 52.0 and june["sky"]["azimuth_deg"] == 180.0


def test_weather_words_scale_the_clear_sky(capsys):
    doc = _day_json(capsys, "--latitude", "52", "--date", "2026-03-20", "--weather",
                    "clear,overcast,dim", "--days", "3")
    k = [d["clear_sky_index"] for d in doc["days"]]
    assert k == [1.0, 0.2, 0.01]  # common practice (clear, overcast, dim)
    e = [d["irradiation_wh_m2"] for d in doc["days"]]
    assert e[1] == pytest.approx(0.2 * e[0], rel=0.02)  # consecutive days: near the same sky


def test_daily_clear_sky_index_file(capsys, tmp_path):
    f = tmp_path / "garden-weather.csv"
    f.write_text("day,clear_sky_index,source\n1,0.8,diary\n2,0.35,diary\n", encoding="utf-8")
    doc = _day_json(capsys, "--latitude", "52", "--date", "2026-04-01", "--sky-index", str(f))
    assert [d["clear_sky_index"] for d in doc["days"]] == [0.8, 0.35]
    bad = tmp_path / "bad.csv"
    bad.write_text("day,clear_sky_index\n1,0.8\n3,0.5\n", encoding="utf-8")
    code, out, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                   "--latitude", "52", "--date", "2026-04-01", "--sky-index",
                                   str(bad)])
    assert code == 2 and "line 3" in err and "day 2 comes next" in err


def test_sky_options_need_a_place(capsys):
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--turbidity", "4"])
    assert code == 2 and "need --latitude with --date" in err
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--latitude", "52", "--date", "2026-04-01", "--turbidity",
                                 "20"])
    assert code == 2 and "--turbidity '20'" in err


def test_unclamped_day_says_what_the_clamp_leaves(capsys):
    code, out, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                   "--latitude", "52", "--date", "2026-06-21", "--night-load",
                                   "200uA", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    over = doc["over_charge"]
    assert over["rated_v"] == 2.7
    assert over["over_charge_c"][0] > 0
    assert over["with_proposed_clamp"]["clamp_v"] == 2.4  # 0.92 × 2.7 V rounded down
    clamped = sum(over["with_proposed_clamp"]["runtime_s"])
    assert 0 < clamped < sum(d["runtime_s"] for d in doc["days"])


def test_day_design_file(capsys, tmp_path):
    path = tmp_path / "lantern.toml"
    path.write_text(LANTERN, encoding="utf-8")
    code, out, err = _run(capsys, ["day", str(path), "--days", "2", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["storage"]["key"] == "5f-2v7"
    assert doc["panel"]["voc_v"] == 3.0
    assert doc["night"]["date"] == "2026-12-21"
    assert 14.5 * 3600 < doc["night"]["night_s"] < 15.2 * 3600  # civil night at 52 N
    assert "path marker" in doc["night_load"]["label"]
    assert doc["days"][0]["irradiation_wh_m2"] > 2000.0  # tilted 52° south in December
    assert any("Proposed: a shunt clamp" in c for c in doc["cautions"])


def test_solve_design_prints_the_real_night_and_the_clamp(capsys, tmp_path, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    path = tmp_path / "lantern.toml"
    path.write_text(LANTERN, encoding="utf-8")
    buy = tmp_path / "parts.csv"
    code, out, err = _run(capsys, ["solve", str(path), "--buylist", str(buy)])
    assert code == 0, err
    flat = " ".join(out.split())
    assert re.search(r"over the 14 h 5\d min night \(civil", flat)
    assert "12 h night" not in flat
    assert "above the storage rating 2.70 V" in flat and "Proposed: a shunt clamp" in flat
    text = buy.read_text(encoding="utf-8")
    assert "decoupling for U1" in text
    assert "charge diode from the panel" in text
    assert "2.4 V zener" in text


def test_solve_design_json_carries_the_night(capsys, tmp_path):
    path = tmp_path / "lantern.toml"
    path.write_text(LANTERN, encoding="utf-8")
    code, out, err = _run(capsys, ["solve", str(path), "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["night"]["given"] == "site"
    assert doc["clamp"]["proposed_clamp_v"] == 2.4
    packages = len(doc["packages"])
    decoupling = [p for p in doc["parts"] if "decoupling" in p["role"]]
    assert len(decoupling) == packages >= 1


def test_night_design_file_cautions_the_panel(capsys, tmp_path):
    path = tmp_path / "lantern.toml"
    path.write_text(LANTERN, encoding="utf-8")
    code, out, err = _run(capsys, ["night", str(path), "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert any("Proposed: a shunt clamp" in c for c in doc["cautions"])
    assert doc["night"]["given"] == "sun"


def test_night_size_against_the_charge_budget(capsys):
    # A bare budget with no leakage: C·(V0 - Vstop) = I·T (charge of a capacitor), so the
    # smallest C for 30 µA over 12 h + 20 % from 2.6 V to 1.8 V is
    # 30e-6 × 51840 / 0.8 = 1.944 F (hand), and the largest load on 5 F is
    # 5 × 0.8 / 51840 = 77.16 µA (hand).
    code, out, err = _run(capsys, ["night", "--no-circuit", "--storage", "5f-2v7", "--start",
                                   "2.6V", "--stop-at", "1.8V", "--storage-leak", "0A",
                                   "--extra-load", "30uA", "--night", "12h", "--size",
                                   "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["min_capacitance_f"] == pytest.approx(1.944, rel=0.005)
    assert doc["max_average_load_a"] == pytest.approx(77.16e-6, rel=0.005)
    assert doc["night_s"] == 12 * 3600.0 and doc["margin"] == 0.2
    assert doc["lasts_now"] is True
    # the smallest table part rated for 2.6 V that lasts: 5 F beats 1 F (1 F < 1.944 F)
    assert doc["suggested_storage"] == "5f-2v7"
    assert doc["worst_date"] is None


def test_night_size_finds_the_longest_night_of_the_year(capsys):
    code, out, err = _run(capsys, ["night", "--no-circuit", "--storage", "1f-5v5", "--start",
                                   "5V", "--stop-at", "2V", "--extra-load", "20uA",
                                   "--latitude", "52.1", "--longitude", "5.1", "--utc-offset",
                                   "1", "--year", "2026", "--size", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    # the longest civil night falls within a few days of the December solstice (21 Dec 2026)
    month, day = map(int, doc["worst_date"].split("-")[1:])
    assert month == 12 and 17 <= day <= 25
    assert 14.5 * 3600 < doc["night_s"] < 15.2 * 3600
    for key in ("min_capacitance_f", "suggested_storage", "max_average_load_a"):
        assert doc[key] is not None


def test_stops_at_is_a_clock_time_with_a_place_and_date(capsys):
    code, out, err = _run(capsys, ["night", "--no-circuit", "--storage", "0f47-2v7",
                                   "--start", "2.6V", "--stop-at", "1.8V", "--extra-load",
                                   "30uA", "--latitude", "52.1", "--date", "2026-12-21",
                                   "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["lasts_the_night"] is False
    assert re.fullmatch(r"\d\d:\d\d", doc["stops_at"])


def test_polar_night_at_70_north(capsys):
    code, out, err = _run(capsys, ["night", "--no-circuit", "--storage", "5f-2v7", "--start",
                                   "2.6V", "--extra-load", "10uA", "--latitude", "70",
                                   "--date", "2026-12-21", "--turn-on", "sunset", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert 19.5 * 3600 < doc["night"]["duration_s"] < 21 * 3600  # the civil dark span
    assert any("polar night" in w for w in doc["warnings"])
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--latitude", "80", "--date", "2026-12-21"])
    assert code == 2 and "no daylight" in err and "Traceback" not in err


def test_design_file_reference_page_documents_every_key():
    page = (Path(__file__).resolve().parents[1] / "docs" / "design-file.md").read_text(
        encoding="utf-8")
    rows = set(re.findall(r"^\| `([a-z_]+)` \|", page, flags=re.MULTILINE))
    keys = {"name"}
    for table in TOP_KEYS.values():
        if isinstance(table, dict):
            keys.update(table)
    missing = sorted(keys - rows)
    assert not missing, f"keys missing from docs/design-file.md: {missing}"
    assert len(keys) > 40


def test_day_size_for_autonomy_in_the_worst_month(capsys):
    code, out, err = _run(capsys, ["day", "--storage", "1F", "--rated", "2.7V", "--panel",
                                   "5v60ma", "--clamp", "2.5V", "--night-load", "30uA",
                                   "--latitude", "52.1", "--date", "2026-06-01", "--size",
                                   "--autonomy", "2", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    # the least clear-sky light on a 52° south-facing plane falls in December
    # (ref:pvlib-clearsky-runs: 2.69 kWh/m² on 21 December at 52 N)
    assert doc["worst_date"] == "2026-12-15"
    assert doc["irradiation_wh_m2"] == pytest.approx(2689.0, rel=0.05)
    # charge of a capacitor: 30 µA over two nights from the 2.5 V clamp to 1.8 V needs
    # C = I·2·T/0.7 V (hand); leakage only adds to it, a few per cent here
    bare = 30e-6 * 2 * doc["night_s"] / 0.7
    assert bare <= doc["min_capacitance_f"] <= 1.10 * bare
    assert doc["suggested_storage"] == "5f-2v7" and doc["storage_autonomy_nights"] >= 2
    assert doc["suggested_panel"] is not None and doc["clamp_v"] == 2.5


def test_day_size_needs_a_latitude(capsys):
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--size", "--autonomy", "3"])
    assert code == 2 and "--size needs --latitude" in err


def test_dusk_turn_on_over_the_shunt_resistance_spread(capsys):
    # The estimated shunt resistance ×0.1 and ×10 moves a 10 lx turn-on to about 46 and 7 lx
    # (the spread this model gives; the figures the issue measured with it).
    code, out, err = _run(capsys, ["dusk", "--panel", "5v60ma", "--dusk-at", "10lux",
                                   "--json"])
    assert code == 0, err
    s = json.loads(out)["turn_on_shunt_spread"]
    assert s["status"] == "estimate"
    assert s["low_r_sh_ohm"] == pytest.approx(0.1 * s["r_sh_ohm"])
    assert s["turn_on_low_r_sh_lux"] == pytest.approx(46.0, rel=0.05)
    assert s["turn_on_high_r_sh_lux"] == pytest.approx(7.0, rel=0.05)
    code, out, err = _run(capsys, ["dusk", "--panel", "5v60ma", "--dusk-at", "10lux",
                                   "--panel-rsh", "1M", "--json"])
    s = json.loads(out)["turn_on_shunt_spread"]
    assert s["status"] == "given" and s["turn_on_min_lux"] == s["turn_on_max_lux"]


def test_dusk_design_file(capsys, tmp_path):
    path = tmp_path / "lantern.toml"
    path.write_text(LANTERN, encoding="utf-8")
    code, out, err = _run(capsys, ["dusk", str(path), "--dusk-at", "10lux", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["panel"]["voc_v"] == 3.0 and doc["supply_v"] == 2.6
    assert doc["family"] == "hc"


def test_ldr_design_file(capsys, tmp_path):
    path = tmp_path / "lantern.toml"
    path.write_text(LANTERN, encoding="utf-8")
    code, out, err = _run(capsys, ["ldr", str(path), "--light", "path marker", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["replaces"] in ("r1", "rb") and len(doc["levels"]) == 21
    code, _, err = _run(capsys, ["ldr", str(path), "--light", "porch"])
    assert code == 2 and "accepted: path marker" in err
