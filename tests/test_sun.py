"""Sun times against pvlib's solar position (NREL SPA), and the night window."""

from datetime import date, datetime, timedelta, timezone

import numpy as np
import pandas as pd
import pytest
from pvlib import solarposition

from pulsepick.analysis.sun import (
    CIVIL_ZENITH_DEG,
    SUNRISE_ZENITH_DEG,
    julian_day,
    night_span,
    night_window,
    solar_position,
    sun_events,
)
from pulsepick.errors import RequestError

LATITUDES = (-60.0, -45.0, -33.9, -10.0, 0.0, 12.0, 35.0, 52.1, 60.0, 65.0)
DATES = (date(2026, 1, 15), date(2026, 3, 20), date(2026, 5, 5), date(2026, 6, 21),
         date(2026, 8, 30), date(2026, 10, 10), date(2026, 12, 21), date(2024, 2, 29))
TWO_MINUTES_S = 120.0


def _spa(day: date, latitude: float, longitude: float, tz_h: float):
    times = pd.DatetimeIndex([pd.Timestamp(day.isoformat()).tz_localize(
        timezone(timedelta(hours=tz_h)))])
    return solarposition.sun_rise_set_transit_spa(times, latitude, longitude)


@pytest.mark.parametrize("latitude", LATITUDES)
def test_sunrise_sunset_match_pvlib_spa_within_two_minutes(latitude):
    # pvlib's NREL SPA sunrise and sunset (a general-purpose photovoltaic library): within
    # 2 minutes over latitudes -60..65 and the year. Longitudes near the offset's meridian,
    # where pvlib's events fall on the same local date as ours.
    checked = 0
    for day in DATES:
        for longitude, tz_h in ((0.0, 0.0), (5.1, 1.0), (-3.7, 0.0)):
            ev = sun_events(latitude, day, longitude, tz_h)
            if ev.polar:
                continue
            ref = _spa(day, latitude, longitude, tz_h)
            rise = (ref["sunrise"].iloc[0] - pd.Timestamp(ev.sunrise)).total_seconds()
            sset = (ref["sunset"].iloc[0] - pd.Timestamp(ev.sunset)).total_seconds()
            assert abs(rise) < TWO_MINUTES_S, (day, longitude)
            assert abs(sset) < TWO_MINUTES_S, (day, longitude)
            checked += 1
    assert checked >= 20


def _zenith_crossing_offset_s(latitude, longitude, when: datetime, zenith, rising) -> float:
    """Seconds from ``when`` to pvlib's crossing of ``zenith`` (geometric), found on a
    10-second grid of pvlib's SPA solar position within 20 minutes."""
    times = pd.date_range(pd.Timestamp(when) - pd.Timedelta(minutes=20), periods=241, freq="10s")
    z = solarposition.get_solarposition(times, latitude, longitude)["zenith"].to_numpy()
    s = np.arange(241) * 10.0 - 1200.0
    if rising:
        idx = np.nonzero((z[:-1] >= zenith) & (z[1:] < zenith))[0]
    else:
        idx = np.nonzero((z[:-1] <= zenith) & (z[1:] > zenith))[0]
    assert idx.size, "no crossing within 20 minutes"
    i = idx[0]
    return float(s[i] + (zenith - z[i]) / (z[i + 1] - z[i]) * 10.0)


@pytest.mark.parametrize("latitude", (-60.0, -33.9, 0.0, 35.0, 52.1, 65.0))
def test_all_four_events_match_pvlib_zenith_crossings(latitude):
    # At our event times pvlib's SPA geometric zenith crosses 90.833° (sunrise/sunset) and
    # 96° (civil twilight) within 2 minutes, including far-east and far-west longitudes.
    for day in (date(2026, 1, 15), date(2026, 3, 20), date(2026, 10, 10), date(2026, 12, 21)):
        for longitude, tz_h in ((-120.3, -8.0), (151.2, 10.0)):
            ev = sun_events(latitude, day, longitude, tz_h)
            if ev.polar or ev.civil_polar:
                continue
            for when, zen, rising in ((ev.sunrise, SUNRISE_ZENITH_DEG, True),
                                      (ev.sunset, SUNRISE_ZENITH_DEG, False),
                                      (ev.civil_dawn, CIVIL_ZENITH_DEG, True),
                                      (ev.civil_dusk, CIVIL_ZENITH_DEG, False)):
                off = _zenith_crossing_offset_s(latitude, longitude, when, zen, rising)
                assert abs(off) < TWO_MINUTES_S, (day, longitude, zen)


def test_polar_day_and_night():
    summer = sun_events(78.2, date(2026, 6, 21), 15.6, 2.0)
    winter = sun_events(78.2, date(2026, 12, 21), 15.6, 1.0)
    assert summer.polar == "day" and summer.sunrise is None
    assert summer.day_length_s == 86400.0
    assert winter.polar == "night" and winter.sunset is None
    with pytest.raises(RequestError, match="midnight sun"):
        night_window(78.2, date(2026, 6, 21), 15.6, 2.0)
    # At 78.2 N on 21 December the sun culminates near 90 - 78.2 - 23.4 = -11.6 degrees
    # (hand): neither sunset nor civil dusk, so the whole day is night, and it says so.
    span = night_span(78.2, date(2026, 12, 21), 15.6, 1.0)
    assert span.rule == "whole day" and span.night_s == 86400.0
    assert "neither sunset nor civil dusk" in span.note


@pytest.mark.parametrize("turn_on", ["civil", "sunset"])
def test_polar_night_at_70_north_is_the_civil_dark_span(turn_on):
    # 70 N, 21 December: the sun does not rise (noon elevation about 90 - 70 - 23.4 = -3.4
    # degrees, hand) but civil twilight comes around noon. pvlib's SPA geometric zenith
    # crosses 96 degrees at our civil dusk and at the next civil dawn within 2 minutes.
    span = night_span(70.0, date(2026, 12, 21), 0.0, 0.0, turn_on=turn_on)
    if turn_on == "civil":
        assert span.rule == "civil" and span.note is None
    else:  # no sunset to turn on at: the civil dark span, and it says so
        assert span.rule == "civil (no sunset)" and "polar night" in span.note
    assert abs(_zenith_crossing_offset_s(70.0, 0.0, span.dusk, CIVIL_ZENITH_DEG,
                                         False)) < TWO_MINUTES_S
    assert abs(_zenith_crossing_offset_s(70.0, 0.0, span.dawn, CIVIL_ZENITH_DEG,
                                         True)) < TWO_MINUTES_S
    assert 19.5 * 3600 < span.night_s < 21.0 * 3600  # roughly 20 h


def test_midnight_sun_at_70_north():
    # 70 N, 21 June: pvlib's SPA says the sun stays up all day (lowest elevation above the
    # -0.833 degrees of sunset), and we refuse to give a night.
    times = pd.date_range("2026-06-21", periods=24 * 12, freq="5min", tz="UTC")
    z = solarposition.get_solarposition(times, 70.0, 0.0)["zenith"].to_numpy()
    assert z.max() < SUNRISE_ZENITH_DEG
    with pytest.raises(RequestError, match="midnight sun"):
        night_span(70.0, date(2026, 6, 21), 0.0, 0.0)


def test_white_nights_have_no_civil_dusk():
    # At 62 N on midsummer the sun dips only to about -4.6° (90 - 62 - 23.4): no civil
    # dusk, but a sunset.
    span = night_span(62.0, date(2026, 6, 21), 10.0, 1.0, turn_on="civil")
    assert span.rule == "sunset (no civil dusk)" and "white night" in span.note
    dusk, dawn = night_window(62.0, date(2026, 6, 21), 10.0, 1.0, turn_on="sunset")
    assert (span.dusk, span.dawn) == (dusk, dawn)
    assert 4 * 3600 < (dawn - dusk).total_seconds() < 7 * 3600


def test_night_window_dusk_today_dawn_tomorrow():
    dusk, dawn = night_window(52.1, date(2026, 12, 21), 5.1, 1.0)
    assert dusk.date() == date(2026, 12, 21)
    assert dawn.date() == date(2026, 12, 22)
    # the civil night is shorter than the night from sunset to sunrise
    s_dusk, s_dawn = night_window(52.1, date(2026, 12, 21), 5.1, 1.0, turn_on="sunset")
    assert s_dusk < dusk and dawn < s_dawn
    # against pvlib's SPA sunset and next sunrise, within 2 minutes
    ref_today = _spa(date(2026, 12, 21), 52.1, 5.1, 1.0)
    ref_next = _spa(date(2026, 12, 22), 52.1, 5.1, 1.0)
    assert abs((ref_today["sunset"].iloc[0] - pd.Timestamp(s_dusk)).total_seconds()) < 120
    assert abs((ref_next["sunrise"].iloc[0] - pd.Timestamp(s_dawn)).total_seconds()) < 120


def test_no_longitude_gives_mean_solar_time_with_exact_length():
    # Without a longitude the clock is mean solar time at longitude 0, offset 0; the night's
    # length matches the one at the real longitude within 2 minutes.
    dusk0, dawn0 = night_window(52.1, date(2026, 12, 21))
    assert dusk0.utcoffset() == timedelta(0)
    dusk, dawn = night_window(52.1, date(2026, 12, 21), 5.1, 1.0)
    assert abs((dawn0 - dusk0) - (dawn - dusk)).total_seconds() < 120


def test_mean_solar_offset_when_only_longitude_is_given():
    ev = sun_events(40.0, date(2026, 3, 20), longitude_deg=-75.0)
    assert ev.utc_offset_h == -5.0
    # solar noon near 12:00 local mean time (the equation of time is under 20 minutes)
    noon = ev.solar_noon
    assert abs(noon.hour * 60 + noon.minute - 720) < 20


@pytest.mark.parametrize(
    "args, words",
    [
        ((95.0, date(2026, 1, 1)), "latitude 95.0 must lie between -90 and 90"),
        ((50.0, date(2026, 1, 1), 200.0), "longitude 200.0 must lie between"),
        ((50.0, date(2026, 1, 1), 0.0, 20.0), "UTC offset"),
    ],
)
def test_bad_places_are_refused(args, words):
    with pytest.raises(RequestError, match=words):
        sun_events(*args)


def test_unknown_turn_on_is_refused():
    with pytest.raises(RequestError, match="accepted: civil, sunset"):
        night_window(50.0, date(2026, 1, 1), turn_on="midnight")  # type: ignore[arg-type]


@pytest.mark.parametrize("latitude", (-33.9, 0.0, 52.1, 70.0))
def test_solar_position_matches_pvlib_spa(latitude):
    # pvlib's SPA geometric zenith and azimuth, hourly over two days: within 0.05 degrees.
    times = pd.date_range("2026-06-21", periods=24, freq="1h", tz="UTC").append(
        pd.date_range("2026-12-21", periods=24, freq="1h", tz="UTC"))
    ref = solarposition.get_solarposition(times, latitude, 5.1)
    jd = np.array([julian_day(t.to_pydatetime()) for t in times])
    zen, az = solar_position(latitude, 5.1, jd)
    np.testing.assert_allclose(zen, ref["zenith"].to_numpy(), atol=0.05)
    up = ref["zenith"].to_numpy() < 89.0
    d_az = (az - ref["azimuth"].to_numpy() + 180.0) % 360.0 - 180.0
    assert np.all(np.abs(d_az[up]) < 0.1)
