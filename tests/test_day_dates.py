"""Runs of several days take each date's own night; the weak-light restart check takes the
date's clear sky; ``dusk`` puts the shunt-resistance spread under its light-level table."""

import io
import json
from datetime import UTC, date, datetime, timedelta

import numpy as np
import pandas as pd
import pytest
from pvlib import irradiance, location, solarposition
from rich.console import Console

from pulsepick.analysis.day import ChargePath, NightWindow, charge_current, simulate_days
from pulsepick.analysis.irradiance import Profile
from pulsepick.cli import main
from pulsepick.commands import dusk as dusk_cmd
from pulsepick.parts.diode import get_diode
from pulsepick.parts.panel import get_panel
from pulsepick.parts.storage import custom_storage

# pvlib 0.16 reads DatetimeIndex.dayofyear inside its clear-sky code, which pandas deprecates;
# that one warning from the reference library is let through, every other stays an error.
pytestmark = pytest.mark.filterwarnings("ignore:DatetimeIndex.dayofyear is deprecated")

STEADY = Profile(name="steady", hours=np.array([0.0, 24.0]),
                 irradiance_w_m2=np.array([50.0, 50.0]))


def _run(capsys, argv):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def _minutes(clock: str) -> int:
    h, m = clock.split(":")
    return int(h) * 60 + int(m)


def _clock_gap_min(a: str, b: datetime) -> int:
    """Minutes between a HH:MM clock and a time's clock, across midnight."""
    gap = (_minutes(a) - (b.hour * 60 + b.minute + b.second / 60.0)) % 1440
    return min(gap, 1440 - gap)


# --------------------------------------------------------------------------- the core


def _windows():
    # three nights of 16, 14 and 12 h (hand-made clock times)
    return (NightWindow.from_times(datetime(2026, 12, 1, 16, tzinfo=UTC),
                                   datetime(2026, 12, 2, 8, tzinfo=UTC)),
            NightWindow.from_times(datetime(2026, 12, 2, 17, tzinfo=UTC),
                                   datetime(2026, 12, 3, 7, tzinfo=UTC)),
            NightWindow.from_times(datetime(2026, 12, 3, 18, tzinfo=UTC),
                                   datetime(2026, 12, 4, 6, tzinfo=UTC)))


def test_each_day_runs_from_the_night_befores_dawn_to_its_own_dusk():
    # A 1000 F store without leakage in steady 50 W/m² light: the panel's current is flat
    # (it charges a few tenths of a volt, far under the knee), so each day's charge is that
    # current times the day's length: 8 h (08:00-16:00), 9 h (08:00-17:00) and 11 h
    # (07:00-18:00) from the hand-made windows. One window for all would give 8 h each day.
    store = custom_storage(1000.0, v_rated_v=5.5, leak_a=0.0)
    panel, diode = get_panel("5v60ma"), get_diode("schottky")
    r = simulate_days(store, panel, diode, [STEADY], 0.0, _windows(), 0.0, days=3,
                      autonomy=False, recovery=False)
    path = ChargePath(panel, diode)
    for row, day_h in zip(r.rows, (8.0, 9.0, 11.0), strict=True):
        i_mid = charge_current(path, 50.0, 0.5 * (row.v_dawn_v + row.v_dusk_v))
        assert row.charge_in_c == pytest.approx(i_mid * day_h * 3600.0, rel=2e-3)
    assert [row.night_s / 3600 for row in r.rows] == [16.0, 14.0, 12.0]
    assert [(row.dawn_s / 3600, row.dusk_s / 3600) for row in r.rows] == [
        (8.0, 16.0), (8.0, 17.0), (7.0, 18.0)]
    # the timeline runs from the first dawn (1 Dec 08:00) to the last (4 Dec 06:00): 70 h
    assert r.timeline_t_s[-1] == pytest.approx(70 * 3600.0, abs=1.0)
    # and the nights themselves: with no load and no storage leakage only the diode's reverse
    # leakage at the dusk voltage drains the store, over each night's own length
    for row, night_h in zip(r.rows, (16.0, 14.0, 12.0), strict=True):
        lost_c = (row.v_dusk_v - row.v_next_dawn_v) * 1000.0
        i_rev = float(diode.reverse_current(row.v_dusk_v, "typ"))
        assert lost_c == pytest.approx(i_rev * night_h * 3600.0, rel=0.01)


def test_one_window_per_day_alike_is_the_same_run_as_one_window():
    store = custom_storage(1.0, v_rated_v=2.7, leak_a=2e-6)
    w = NightWindow.centred(13 * 3600.0)
    args = (store, get_panel("3v20ma"), get_diode("schottky"), ["clear", "overcast"], 20e-6)
    one = simulate_days(*args, w, 0.0, days=4, clamp_v=2.5)
    each = simulate_days(*args, [w] * 4, 0.0, days=4, clamp_v=2.5)
    assert len(one.rows) == 4
    for a, b in zip(one.rows, each.rows, strict=True):
        assert a == b
    assert each.windows == (w,) * 4


def test_too_few_windows_are_refused():
    from pulsepick.errors import RequestError

    with pytest.raises(RequestError, match="one per day"):
        simulate_days(custom_storage(1.0), get_panel("3v20ma"), get_diode("schottky"),
                      ["clear"], 0.0, list(_windows())[:2], 0.0, days=3)


# --------------------------------------------------------------------------- the command


def _spa_events(day: date, latitude: float):
    """pvlib's NREL SPA sunrise and sunset on a UTC date at longitude 0."""
    times = pd.DatetimeIndex([pd.Timestamp(day.isoformat()).tz_localize("UTC")])
    ev = solarposition.sun_rise_set_transit_spa(times, latitude, 0.0)
    return (ev["sunrise"].iloc[0].floor("s").to_pydatetime(),
            ev["sunset"].iloc[0].floor("s").to_pydatetime())


def test_a_month_long_run_follows_each_dates_sunset_and_sunrise(capsys):
    # 60 N, longitude 0, UTC, from 1 November for 20 days, the light on at sunset: each day's
    # dusk, dawn and night against pvlib's SPA sunset and sunrise (within 2 minutes, plus the
    # report's rounding to the minute). The nights grow by some 1.5 h over these 20 days
    # (the same SPA figures); a run on the first night's window kept its 14 h throughout.
    first = date(2026, 11, 1)
    code, out, err = _run(capsys, [
        "day", "--storage", "5f-2v7", "--panel", "5v60ma", "--clamp", "2.4V",
        "--night-load", "20uA", "--latitude", "60", "--longitude", "0", "--utc-offset", "0",
        "--date", first.isoformat(), "--turn-on", "sunset", "--days", "20", "--json"])
    assert code == 0, err
    days = json.loads(out)["days"]
    assert len(days) == 20
    ref_nights = []
    for i, row in enumerate(days):
        rise, sset = _spa_events(first + timedelta(days=i), 60.0)
        next_rise, _ = _spa_events(first + timedelta(days=i + 1), 60.0)
        assert _clock_gap_min(row["dusk"], sset) <= 2.5, (i, row["dusk"], sset)
        if i > 0:  # day 1 starts at the first night's dawn clock (the next morning's)
            assert _clock_gap_min(row["dawn"], rise) <= 2.5, (i, row["dawn"], rise)
        ref_nights.append((next_rise - sset).total_seconds())
        assert row["night_s"] == pytest.approx(ref_nights[-1], abs=120.0)
    growth_s = days[-1]["night_s"] - days[0]["night_s"]
    assert growth_s == pytest.approx(ref_nights[-1] - ref_nights[0], abs=120.0)
    assert growth_s > 1.4 * 3600.0  # SPA: 16.9 h against 15.3 h


def test_a_run_into_the_midnight_sun_is_refused(capsys):
    # 70 N: the sun stops setting in May (pvlib's SPA gives no sunset from 17 May, UTC)
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--latitude", "70", "--date", "2026-05-01", "--days", "30"])
    assert code == 2 and "midnight sun" in err and "fewer --days" in err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1


def _pvlib_peak_poa(lat: float, day: date, tilt: float, azimuth: float) -> float:
    """pvlib's Ineichen clear sky on an isotropic plane, peak over a UTC day at longitude 0
    (W/m², ref:ineichen-perez-2002, ref:liu-jordan-1963 as in pvlib), Linke turbidity 3."""
    times = pd.date_range(day.isoformat(), periods=1440, freq="1min", tz="UTC")
    site = location.Location(lat, 0.0, tz="UTC", altitude=0.0)
    sky = site.get_clearsky(times, model="ineichen", linke_turbidity=3.0)
    sun = site.get_solarposition(times)
    poa = irradiance.get_total_irradiance(
        tilt, azimuth, sun["apparent_zenith"], sun["azimuth"], sky["dni"], sky["ghi"],
        sky["dhi"], albedo=0.2, model="isotropic")
    return float(poa["poa_global"].max())


@pytest.mark.parametrize("light", [[], ["--profile", "PROFILE"]])
def test_restart_check_takes_the_dates_clear_sky_times_the_dim_index(capsys, tmp_path, light):
    # With a place and a date the weak light is that date's clear sky times 0.01 (the dim
    # clear-sky index, common practice), also under a user's own profile. At 60 N on
    # 21 December the panel (tilted 60, facing south) peaks near 2.7 W/m² in it, against
    # 7.1 W/m² in the dim profile shape that was used before.
    if light:
        f = tmp_path / "porch.csv"
        f.write_text("hour,irradiance_w_m2\n9,0\n12,200\n15,0\n", encoding="utf-8")
        light = ["--profile", str(f)]
    code, out, err = _run(capsys, [
        "day", "--storage", "5f-2v7", "--panel", "5v60ma", "--clamp", "2.4V",
        "--night-load", "20uA", "--latitude", "60", "--longitude", "0", "--utc-offset", "0",
        "--date", "2026-12-21", *light, "--json"])
    assert code == 0, err
    doc = json.loads(out)
    rec = doc["recovery"]
    assert rec["weather"] == "dim"
    ref = 0.01 * _pvlib_peak_poa(60.0, date(2026, 12, 21), 60.0, 180.0)
    assert rec["peak_irradiance_w_m2"] == pytest.approx(ref, rel=0.03)
    # one dim December day there does not lift an empty store to the 1.8 V stop voltage
    assert rec["restarts"] is False and 0.0 < rec["v_dusk_from_empty_v"] < 1.8
    assert any("clear sky of 2026-12-21" in a for a in doc["assumptions"])


def test_restart_check_over_a_run_takes_its_darkest_date(capsys):
    # From 1 to 21 December at 60 N the clear sky on the panel is least on the last of those
    # dates (pvlib's clear-sky peaks on the plane below); the restart check names that date.
    first = date(2026, 12, 1)
    code, out, err = _run(capsys, [
        "day", "--storage", "5f-2v7", "--panel", "5v60ma", "--clamp", "2.4V",
        "--night-load", "20uA", "--latitude", "60", "--longitude", "0", "--utc-offset", "0",
        "--date", first.isoformat(), "--days", "21", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    peaks = {first + timedelta(days=i): _pvlib_peak_poa(60.0, first + timedelta(days=i),
                                                        60.0, 180.0) for i in (0, 10, 19, 20)}
    darkest = min(peaks, key=peaks.get)
    assert darkest >= date(2026, 12, 20)
    assert any(f"clear sky of {darkest.isoformat()}" in a
               or f"clear sky of {(darkest - timedelta(days=1)).isoformat()}" in a
               for a in doc["assumptions"])
    assert doc["recovery"]["peak_irradiance_w_m2"] == pytest.approx(0.01 * peaks[darkest],
                                                                    rel=0.03)


# --------------------------------------------------------------------------- dusk


def test_dusk_prints_the_shunt_spread_under_the_light_levels(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.setenv("COLUMNS", "100")
    code, out, err = _run(capsys, ["dusk", "--panel", "5v60ma", "--dusk-at", "10lux"])
    assert code == 0, err
    lines = [line.strip() for line in out.splitlines()]
    off = next(i for i, line in enumerate(lines) if line.startswith("turns off (day)"))
    after = [line for line in lines[off + 1:] if line]
    # the first words after the table are the spread (the estimate's 46 and 7 lx ends)
    assert after[0].startswith("Panel shunt resistance 400 kΩ is an estimate")
    flat = " ".join(out.split())
    assert flat.index("Panel shunt resistance") < flat.index("Hysteresis:")
    assert "45.7 lx" in flat and "6.81 lx" in flat
    assert not lines[-1].startswith("Panel shunt")


def test_dusk_report_renders_the_shunt_line_into_a_plain_console():
    from pulsepick.analysis.dusk import bleed_for_dusk, shunt_spread
    from pulsepick.parts.logic import get_family

    r = bleed_for_dusk(get_panel("5v60ma"), 10.0, get_family("hc"), 2.5, get_diode("schottky"))
    line = dusk_cmd.shunt_line(shunt_spread(r, given=False))
    buf = io.StringIO()
    dusk_cmd.render_report(r, Console(file=buf, width=100, color_system=None), shunt=line)
    text = " ".join(buf.getvalue().split())
    assert text.index("turns off (day)") < text.index("Panel shunt resistance") \
        < text.index("Hysteresis:") < text.index("Cautions:")


# --------------------------------------------------------------------------- the design's clamp

CLAMPED_LANTERN = """
name = "Clamped path lantern"

[storage]
part = "5f-2v7"
start = "2.4V"
stop_at = "1.8V"

[panel]
voc = "{voc}"
isc = "20mA"
clamp = "2.4V"

[site]
latitude = 52.1
date = "2026-12-21"

[[light]]
name = "path marker"
blink = "one flash every 3 s"
"""


def test_the_design_files_own_clamp_goes_in_the_buy_list(capsys, tmp_path):
    # A 3 V panel through a Schottky reaches about 2.9 V, past the 2.7 V cell: the file's
    # 2.4 V clamp is part of the build, rated for 2.4 V x 20 mA = 48 mW (P = V I) with 50 %
    # margin, at least the common 0.25 W (common practice).
    path = tmp_path / "clamped.toml"
    path.write_text(CLAMPED_LANTERN.format(voc="3V"), encoding="utf-8")
    buy = tmp_path / "parts.csv"
    code, out, err = _run(capsys, ["solve", str(path), "--buylist", str(buy)])
    assert code == 0, err
    rows = [line for line in buy.read_text(encoding="utf-8").splitlines()
            if "clamp-2.4V" in line]
    assert len(rows) == 1 and "2.4 V zener" in rows[0] and ",0.25 W," in rows[0]
    assert "Proposed: a shunt clamp" not in " ".join(out.split())
    # A 2 V panel cannot pass 2.7 V: no clamp needed, none listed.
    path.write_text(CLAMPED_LANTERN.format(voc="2V"), encoding="utf-8")
    code, out, err = _run(capsys, ["solve", str(path), "--buylist", str(buy), "--force"])
    assert code == 0, err
    assert "clamp-" not in buy.read_text(encoding="utf-8")


# --------------------------------------------------------------------------- a new user's commands

REPO = __import__("pathlib").Path(__file__).resolve().parents[1]


def _design_examples():
    import importlib
    import shlex

    out = []
    for name in ("day", "dusk", "night", "ldr", "solve"):
        for text in importlib.import_module(f"pulsepick.commands.{name}").EXAMPLES:
            if "examples/" in text and "<" not in text:
                out.append(pytest.param(shlex.split(text)[1:], id=f"{name}-{len(out)}"))
    return out


@pytest.mark.parametrize("argv", _design_examples())
def test_help_examples_on_the_shipped_design_files_run(capsys, tmp_path, monkeypatch, argv):
    # What a new user copies from --help: every example on a shipped design file works.
    monkeypatch.chdir(tmp_path)  # files an example writes land here
    argv = [str(REPO / a) if a.startswith("examples/") else a for a in argv]
    code, out, err = _run(capsys, argv)
    assert code == 0, err
    assert out.strip() and err == ""


def test_polar_night_says_no_sun_rather_than_a_turbidity_spread(capsys):
    # 70 N, 10 December: pvlib's SPA puts the sun's highest apparent elevation about 2.8
    # degrees below the horizon (below); the run says so instead of a spread of zeros.
    times = pd.date_range("2026-12-10", periods=1440, freq="1min", tz="UTC")
    top = 90.0 - solarposition.get_solarposition(times, 70.0, 0.0)["apparent_zenith"].min()
    assert top < 0.0
    code, out, err = _run(capsys, [
        "day", "--storage", "5f-2v7", "--panel", "5v60ma", "--clamp", "2.4V",
        "--night-load", "10uA", "--latitude", "70", "--longitude", "0", "--utc-offset", "0",
        "--date", "2026-12-10", "--days", "2", "--json"])
    assert code == 0, err
    doc = json.loads(out)
    assert doc["sky"]["highest_elevation_deg"] == pytest.approx(top, abs=0.3)
    lines = [w for w in doc["warnings"] if w.startswith(("No sun:", "Low sun:"))]
    assert len(lines) == 1 and lines[0].startswith("No sun:")
    assert [d["irradiation_wh_m2"] for d in doc["days"]] == [0.0, 0.0]


def test_a_run_into_polar_night_without_twilight_is_refused(capsys):
    # 80 N: from 6 November the sun stays more than 6 degrees under the horizon all day
    # (pvlib's SPA below: -6.06 degrees at best), so the night that starts on the 5th (day 17
    # from 20 October) has no civil dawn and no daylight is left to charge from.
    times = pd.date_range("2026-11-06", periods=1440, freq="1min", tz="UTC")
    top = 90.0 - solarposition.get_solarposition(times, 80.0, 0.0)["apparent_zenith"].min()
    assert top < -6.0
    code, _, err = _run(capsys, ["day", "--storage", "5f-2v7", "--panel", "5v60ma",
                                 "--latitude", "80", "--date", "2026-10-20", "--days", "40"])
    assert code == 2 and "day 17 of the run: polar night" in err and "2026-11-05" in err
    assert "fewer --days" in err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_the_report_names_the_last_nights_length(capsys, monkeypatch):
    # 60 N from 1 November, light on at sunset: the first night 15.3 h and the fifth 15.7 h
    # (pvlib's SPA sunset to next sunrise, as in the month-long run above).
    monkeypatch.setenv("NO_COLOR", "1")
    code, out, err = _run(capsys, [
        "day", "--storage", "5f-2v7", "--panel", "5v60ma", "--clamp", "2.4V",
        "--night-load", "20uA", "--latitude", "60", "--longitude", "0", "--utc-offset", "0",
        "--date", "2026-11-01", "--turn-on", "sunset", "--days", "5"])
    assert code == 0, err
    flat = " ".join(out.split())
    first, _ = _spa_events(date(2026, 11, 2), 60.0)
    _, sset = _spa_events(date(2026, 11, 1), 60.0)
    rise5, _ = _spa_events(date(2026, 11, 6), 60.0)
    _, sset5 = _spa_events(date(2026, 11, 5), 60.0)
    import re

    shown = re.search(r"night (\d+\.\d) h, dusk .*?the last night (\d+\.\d) h", flat)
    assert shown, flat[:400]
    # within the report's rounding (0.05 h) and the sun times' 2 minutes
    assert float(shown[1]) == pytest.approx((first - sset).total_seconds() / 3600, abs=0.09)
    assert float(shown[2]) == pytest.approx((rise5 - sset5).total_seconds() / 3600, abs=0.09)
    assert float(shown[2]) - float(shown[1]) >= 0.2
