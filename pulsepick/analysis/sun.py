"""Sunrise, sunset and civil twilight, for the length and clock times of a night.

The equations are those published by the NOAA Global Monitoring Laboratory in "General
Solar Position Calculations": the fractional year γ, the equation of time and the solar
declination as Fourier series in γ, and the hour angle at which the sun's centre reaches a
zenith angle of 90.833° (sunrise and sunset: refraction and the sun's radius) or 96° (civil
twilight):

    γ = 2π/365·(day_of_year − 1 + (hour − 12)/24)        (366 in leap years)
    cos(HA) = cos(zenith) / (cos(lat)·cos(decl)) − tan(lat)·tan(decl)
    event (minutes after UTC midnight) = 720 − 4·(longitude ± HA) − eqtime

(+HA for the morning event, −HA for the evening one; local clock = UTC + 60·utc_offset.)

The declination and equation of time are taken again at the time of the event itself (three
passes). The series themselves are the limit on accuracy: against a full solar-position
algorithm the events land within about 1 minute near the equator and within about 5 minutes
at latitude 60-65° (measured against pvlib's NREL SPA in tests/test_sun.py).

Longitude is positive east. Times are returned as timezone-aware datetimes at the given UTC
offset; with no offset the local mean solar time of the longitude is used (offset =
longitude/15 h).
"""

from __future__ import annotations

import calendar
import math
from dataclasses import dataclass
from datetime import date as Date
from datetime import datetime, timedelta, timezone
from typing import Literal

from pulsepick.errors import RequestError

# Zenith angles of the events: NOAA Global Monitoring Laboratory, "General Solar Position
# Calculations" (90.833° for sunrise and sunset; 96° for civil twilight).
SUNRISE_ZENITH_DEG = 90.833  # sun's upper limb on the horizon, with standard refraction
CIVIL_ZENITH_DEG = 96.0  # centre of the sun 6° below the horizon

Polar = Literal["day", "night"]
TurnOn = Literal["civil", "sunset"]
TURN_ON_CHOICES = ("civil", "sunset")

_JD_UNIX_ORDINAL_OFFSET = 1721424.5  # JD at 00:00 UTC of proleptic Gregorian ordinal 0


@dataclass(frozen=True)
class SunEvents:
    """The sun's events on one local date."""

    latitude_deg: float  # latitude (degrees, north positive)
    longitude_deg: float  # longitude (degrees, east positive)
    date: Date  # local calendar date
    utc_offset_h: float  # clock offset from UTC (hours)
    sunrise: datetime | None  # None in polar day or night
    sunset: datetime | None
    civil_dawn: datetime | None  # None when the sun does not cross 6° below the horizon
    civil_dusk: datetime | None
    polar: Polar | None  # "day": the sun stays up; "night": it stays down; None otherwise
    civil_polar: Polar | None  # same for civil twilight ("day": never darker than civil twilight)
    solar_noon: datetime  # the sun's transit

    @property
    def day_length_s(self) -> float:
        """Time from sunrise to sunset (s); 0 in polar night, 86 400 in polar day."""
        if self.polar == "night":
            return 0.0
        if self.polar == "day":
            return 86400.0
        assert self.sunrise is not None and self.sunset is not None
        return (self.sunset - self.sunrise).total_seconds()


@dataclass(frozen=True)
class _SolarTerms:
    declination_rad: float
    eqtime_min: float


def _fractional_year_rad(jd: float) -> float:
    """The fractional year γ (radians) at Julian day ``jd`` (UTC).

    γ = 2π/365·(day_of_year − 1 + (hour − 12)/24), with 366 in place of 365 in leap years
    (NOAA Global Monitoring Laboratory, "General Solar Position Calculations").
    """
    ordinal = jd - _JD_UNIX_ORDINAL_OFFSET  # days since 00:00 UTC of ordinal 0
    whole = math.floor(ordinal)
    day = Date.fromordinal(whole)
    hour = (ordinal - whole) * 24.0
    day_of_year = day.timetuple().tm_yday
    days_in_year = 366 if calendar.isleap(day.year) else 365
    return 2.0 * math.pi / days_in_year * (day_of_year - 1 + (hour - 12.0) / 24.0)


def _solar_terms(jd: float) -> _SolarTerms:
    """Declination and equation of time at Julian day ``jd``.

    Both are the Fourier series in the fractional year γ of NOAA Global Monitoring
    Laboratory, "General Solar Position Calculations" (coefficients as published there).
    """
    g = _fractional_year_rad(jd)
    # equation of time (minutes); NOAA GML "General Solar Position Calculations"
    eqtime = 229.18 * (0.000075 + 0.001868 * math.cos(g) - 0.032077 * math.sin(g)
                       - 0.014615 * math.cos(2 * g) - 0.040849 * math.sin(2 * g))
    # solar declination (radians); NOAA GML "General Solar Position Calculations"
    decl = (0.006918 - 0.399912 * math.cos(g) + 0.070257 * math.sin(g)
            - 0.006758 * math.cos(2 * g) + 0.000907 * math.sin(2 * g)
            - 0.002697 * math.cos(3 * g) + 0.00148 * math.sin(3 * g))
    return _SolarTerms(decl, eqtime)


def _cos_hour_angle(lat_rad: float, decl: float, zenith_deg: float) -> float:
    # hour-angle equation; NOAA GML "General Solar Position Calculations"
    return (math.cos(math.radians(zenith_deg)) / (math.cos(lat_rad) * math.cos(decl))
            - math.tan(lat_rad) * math.tan(decl))


def _event_minutes(jd0: float, lat_rad: float, lon: float, tz_h: float, zenith_deg: float,
                   rising: bool) -> tuple[float | None, Polar | None]:
    """Minutes after local midnight of an event, or (None, polar state)."""
    local = 720.0 - 4.0 * lon + 60.0 * tz_h  # first guess: around solar noon
    terms = _solar_terms(jd0 + (local - 60.0 * tz_h) / 1440.0)
    cos_ha = _cos_hour_angle(lat_rad, terms.declination_rad, zenith_deg)
    if cos_ha > 1.0:
        return None, "night"
    if cos_ha < -1.0:
        return None, "day"
    for _ in range(3):
        ha = math.degrees(math.acos(min(1.0, max(-1.0, cos_ha))))
        # solar noon and the event at ∓HA, 4 minutes per degree; NOAA GML "General Solar
        # Position Calculations" (there in UTC minutes, here shifted to the local clock)
        noon = 720.0 - 4.0 * lon - terms.eqtime_min + 60.0 * tz_h
        local = noon - 4.0 * ha if rising else noon + 4.0 * ha
        terms = _solar_terms(jd0 + (local - 60.0 * tz_h) / 1440.0)
        cos_ha = _cos_hour_angle(lat_rad, terms.declination_rad, zenith_deg)
    return local, None


def _check_place(latitude_deg: float, longitude_deg: float, utc_offset_h: float) -> None:
    problems = []
    if not (isinstance(latitude_deg, (int, float)) and -90.0 <= latitude_deg <= 90.0):
        problems.append(
            f"latitude {latitude_deg} must lie between -90 and 90 degrees (north positive)")
    if not (isinstance(longitude_deg, (int, float)) and -180.0 <= longitude_deg <= 180.0):
        problems.append(
            f"longitude {longitude_deg} must lie between -180 and 180 degrees (east positive)")
    if not (isinstance(utc_offset_h, (int, float)) and -14.0 <= utc_offset_h <= 14.0):
        problems.append(f"UTC offset {utc_offset_h} h must lie between -14 and +14 hours")
    if problems:
        raise RequestError("; ".join(problems))


def sun_events(latitude_deg: float, date: Date, longitude_deg: float = 0.0,
               utc_offset_h: float | None = None) -> SunEvents:
    """Sunrise, sunset and civil dawn/dusk on a local date.

    Parameters
    ----------
    latitude_deg : float
        Latitude (degrees, north positive), -90..90.
    date : datetime.date
        The local calendar date.
    longitude_deg : float
        Longitude (degrees, east positive).
    utc_offset_h : float or None
        Clock offset from UTC (hours). None: local mean solar time, ``longitude/15`` hours.

    References
    ----------
    NOAA Global Monitoring Laboratory, "General Solar Position Calculations" (fractional
    year, equation of time, declination, hour angle; zenith 90.833° and 96°).

    Examples
    --------
    >>> from datetime import date
    >>> ev = sun_events(0.0, date(2026, 3, 20))
    >>> round(ev.day_length_s / 3600, 1)
    12.1
    """
    tz_h = longitude_deg / 15.0 if utc_offset_h is None else utc_offset_h
    _check_place(latitude_deg, longitude_deg, tz_h)
    if isinstance(date, datetime) or not isinstance(date, Date):
        raise RequestError(f"date {date!r} must be a calendar date (YYYY-MM-DD)")
    lat = math.radians(max(-89.9999, min(89.9999, latitude_deg)))
    jd0 = date.toordinal() + _JD_UNIX_ORDINAL_OFFSET
    tzinfo = timezone(timedelta(hours=tz_h))
    midnight = datetime(date.year, date.month, date.day, tzinfo=tzinfo)

    def at(minutes: float | None) -> datetime | None:
        return None if minutes is None else midnight + timedelta(minutes=minutes)

    rise, polar = _event_minutes(jd0, lat, longitude_deg, tz_h, SUNRISE_ZENITH_DEG, True)
    sset, _ = _event_minutes(jd0, lat, longitude_deg, tz_h, SUNRISE_ZENITH_DEG, False)
    dawn, civil_polar = _event_minutes(jd0, lat, longitude_deg, tz_h, CIVIL_ZENITH_DEG, True)
    dusk, _ = _event_minutes(jd0, lat, longitude_deg, tz_h, CIVIL_ZENITH_DEG, False)
    noon_terms = _solar_terms(jd0 + (720.0 - 4.0 * longitude_deg) / 1440.0)
    noon = 720.0 - 4.0 * longitude_deg - noon_terms.eqtime_min + 60.0 * tz_h
    return SunEvents(
        latitude_deg=float(latitude_deg),
        longitude_deg=float(longitude_deg),
        date=date,
        utc_offset_h=float(tz_h),
        sunrise=at(rise),
        sunset=at(sset),
        civil_dawn=at(dawn),
        civil_dusk=at(dusk),
        polar=polar,
        civil_polar=civil_polar,
        solar_noon=midnight + timedelta(minutes=noon),
    )


def night_window(latitude_deg: float, date: Date, longitude_deg: float | None = None,
                 utc_offset_h: float | None = None,
                 turn_on: TurnOn = "civil") -> tuple[datetime, datetime]:
    """The night that starts on ``date``: (dusk on that date, dawn on the next morning).

    Parameters
    ----------
    latitude_deg, date, longitude_deg, utc_offset_h
        As for :func:`sun_events`. With no longitude, the times are local mean solar time at
        longitude 0 with offset 0: the night's *length* is then exact, but the clock times are
        only near the local clock (within the zone's offset from mean solar time).
    turn_on : "civil" or "sunset"
        When the light is taken to turn on: at civil dusk (the default; off at civil dawn) or
        at sunset (off at sunrise).

    Raises
    ------
    RequestError
        In polar night or polar day, or when civil twilight never ends (white nights) with
        ``turn_on="civil"``: there is then no night window to give.
    """
    if turn_on not in TURN_ON_CHOICES:
        raise RequestError(
            f"turn-on {turn_on!r} is not known; accepted: {', '.join(TURN_ON_CHOICES)}")
    lon = 0.0 if longitude_deg is None else longitude_deg
    offset = 0.0 if longitude_deg is None and utc_offset_h is None else utc_offset_h
    today = sun_events(latitude_deg, date, lon, offset)
    tomorrow = sun_events(latitude_deg, date + timedelta(days=1), lon, offset)
    where = f"at latitude {latitude_deg:g} on {date.isoformat()}"
    for ev in (today, tomorrow):
        if ev.polar == "night":
            raise RequestError(
                f"polar night {where}: the sun does not rise, so there is no dusk and dawn; "
                "give the night length instead (for example 24h)")
        if ev.polar == "day":
            raise RequestError(
                f"midnight sun {where}: the sun does not set, so there is no night; "
                "give the night length instead")
    if turn_on == "civil":
        if today.civil_dusk is None or tomorrow.civil_dawn is None:
            raise RequestError(
                f"no civil dusk {where}: the sun stays above 6 degrees below the horizon all "
                "night (white nights); accepted: turn-on at sunset, or a given night length")
        return today.civil_dusk, tomorrow.civil_dawn
    assert today.sunset is not None and tomorrow.sunrise is not None
    return today.sunset, tomorrow.sunrise
