"""Sunrise, sunset and civil twilight, for the length and clock times of a night.

The sun's declination and the equation of time follow J. Meeus, "Astronomical Algorithms"
(2nd ed., 1998), ch. 25 "Solar Coordinates" (low-accuracy method: Julian century, the sun's
geometric mean longitude and anomaly, the equation of centre, apparent longitude, corrected
obliquity) and ch. 28 "Equation of Time" — the equations NOAA's Global Monitoring
Laboratory publishes for its sunrise/sunset results. The events use the hour angle at which
the sun's centre reaches a zenith angle of 90.833° (sunrise and sunset: refraction and the
sun's radius) or 96° (civil twilight), as in NOAA GML's "General Solar Position
Calculations":

    cos(HA) = cos(zenith) / (cos(lat)·cos(decl)) - tan(lat)·tan(decl)
    event (minutes after local midnight) = 720 - 4·longitude - eqtime + 60·utc_offset ∓ 4·HA

The declination and equation of time are taken again at the time of the event itself (three
passes), which keeps the error to seconds away from the polar circles.

Longitude is positive east. Times are returned as timezone-aware datetimes at the given UTC
offset; with no offset the local mean solar time of the longitude is used (offset =
longitude/15 h).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date as Date
from datetime import datetime, timedelta, timezone
from typing import Literal

import numpy as np

from pulsepick.errors import RequestError

# Zenith angles of the events (NOAA General Solar Position Calculations).
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


def _solar_terms(jd) -> _SolarTerms:
    """Declination and equation of time at Julian day ``jd`` (Meeus ch. 25 and 28).

    ``jd`` may be a float or a numpy array (the sky model takes many instants at once).
    """
    jc = (jd - 2451545.0) / 36525.0
    l0 = (280.46646 + jc * (36000.76983 + jc * 0.0003032)) % 360.0
    m = 357.52911 + jc * (35999.05029 - 0.0001537 * jc)
    e = 0.016708634 - jc * (0.000042037 + 0.0000001267 * jc)
    m_rad = np.radians(m)
    c = (np.sin(m_rad) * (1.914602 - jc * (0.004817 + 0.000014 * jc))
         + np.sin(2 * m_rad) * (0.019993 - 0.000101 * jc)
         + np.sin(3 * m_rad) * 0.000289)
    true_long = l0 + c
    omega = np.radians(125.04 - 1934.136 * jc)
    app_long = true_long - 0.00569 - 0.00478 * np.sin(omega)
    seconds = 21.448 - jc * (46.815 + jc * (0.00059 - jc * 0.001813))
    mean_obliq = 23.0 + (26.0 + seconds / 60.0) / 60.0
    obliq = np.radians(mean_obliq + 0.00256 * np.cos(omega))
    decl = np.arcsin(np.sin(obliq) * np.sin(np.radians(app_long)))
    y = np.tan(obliq / 2.0) ** 2
    l0_rad = np.radians(l0)
    eqtime = 4.0 * np.degrees(
        y * np.sin(2 * l0_rad)
        - 2 * e * np.sin(m_rad)
        + 4 * e * y * np.sin(m_rad) * np.cos(2 * l0_rad)
        - 0.5 * y * y * np.sin(4 * l0_rad)
        - 1.25 * e * e * np.sin(2 * m_rad)
    )
    return _SolarTerms(decl, eqtime)


def julian_day(when: datetime) -> float:
    """Julian day of a timezone-aware datetime (naive: taken as UTC)."""
    if when.tzinfo is not None:
        when = when.astimezone(timezone.utc).replace(tzinfo=None)
    midnight = datetime(when.year, when.month, when.day)
    return (when.toordinal() + _JD_UNIX_ORDINAL_OFFSET
            + (when - midnight).total_seconds() / 86400.0)


def solar_position(latitude_deg: float, longitude_deg: float, jd):
    """The sun's geometric zenith and azimuth angles (degrees) at Julian day(s) ``jd``.

    The hour angle follows from the true solar time (UTC, the equation of time and the
    longitude); the zenith from cos Z = sin(lat)·sin(decl) + cos(lat)·cos(decl)·cos(HA); the
    azimuth is measured from north through east. Same solar terms as :func:`sun_events`
    (Meeus ch. 25 and 28; NOAA GML's "General Solar Position Calculations"). No refraction.

    Returns
    -------
    (zenith_deg, azimuth_deg) : numpy arrays shaped like ``jd``.
    """
    jd = np.asarray(jd, dtype=float)
    terms = _solar_terms(jd)
    utc_min = ((jd - 0.5) % 1.0) * 1440.0
    true_solar_min = utc_min + terms.eqtime_min + 4.0 * longitude_deg
    ha = np.radians(true_solar_min / 4.0 - 180.0)
    lat = np.radians(latitude_deg)
    decl = terms.declination_rad
    cos_z = np.sin(lat) * np.sin(decl) + np.cos(lat) * np.cos(decl) * np.cos(ha)
    zenith = np.degrees(np.arccos(np.clip(cos_z, -1.0, 1.0)))
    # Azimuth from south, westward positive; +180 turns it to from north, eastward.
    az_south = np.arctan2(np.sin(ha), np.cos(ha) * np.sin(lat) - np.tan(decl) * np.cos(lat))
    azimuth = (np.degrees(az_south) + 180.0) % 360.0
    return zenith, azimuth


def _cos_hour_angle(lat_rad: float, decl: float, zenith_deg: float) -> float:
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
    J. Meeus, "Astronomical Algorithms", 2nd ed. (1998), ch. 25 and 28; NOAA Global
    Monitoring Laboratory, "General Solar Position Calculations" (zenith angles).

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


@dataclass(frozen=True)
class NightSpan:
    """The night that starts on a date, and how it was found."""

    dusk: datetime  # the light turns on
    dawn: datetime  # the light turns off (the next morning)
    rule: str  # "civil", "sunset", "civil (no sunset)", "sunset (no civil dusk)", "whole day"
    note: str | None  # a sentence for the user when the rule differs from the one asked

    @property
    def night_s(self) -> float:
        """Length of the night (s)."""
        return (self.dawn - self.dusk).total_seconds()


def night_span(latitude_deg: float, date: Date, longitude_deg: float | None = None,
               utc_offset_h: float | None = None, turn_on: TurnOn = "civil") -> NightSpan:
    """The night that starts on ``date``, polar and edge dates included.

    As :func:`night_window`, and where the asked events do not happen:

    - the sun does not rise (polar night) but civil twilight comes: the night is the civil
      dark span, civil dusk to the next civil dawn, whatever ``turn_on`` asks;
    - the sun sets but stays above 6° below the horizon (white nights) with
      ``turn_on="civil"``: the night is sunset to sunrise;
    - neither sunset nor civil dusk (the sun stays more than 6° below the horizon all
      day): the whole day, local midnight to midnight, is night.

    Raises
    ------
    RequestError
        Under the midnight sun (the sun does not set): there is no night.
    """
    if turn_on not in TURN_ON_CHOICES:
        raise RequestError(
            f"turn-on {turn_on!r} is not known; accepted: {', '.join(TURN_ON_CHOICES)}")
    lon = 0.0 if longitude_deg is None else longitude_deg
    offset = 0.0 if longitude_deg is None and utc_offset_h is None else utc_offset_h
    today = sun_events(latitude_deg, date, lon, offset)
    tomorrow = sun_events(latitude_deg, date + timedelta(days=1), lon, offset)
    where = f"at latitude {latitude_deg:g} on {date.isoformat()}"
    if today.polar == "day" or tomorrow.polar == "day":
        raise RequestError(
            f"midnight sun {where}: the sun does not set, so there is no night; "
            "give the night length instead")
    civil = today.civil_dusk is not None and tomorrow.civil_dawn is not None
    sunset = today.sunset is not None and tomorrow.sunrise is not None
    if turn_on == "civil" and civil:
        return NightSpan(today.civil_dusk, tomorrow.civil_dawn, "civil", None)
    if turn_on == "sunset" and sunset:
        return NightSpan(today.sunset, tomorrow.sunrise, "sunset", None)
    if civil and not sunset:
        return NightSpan(today.civil_dusk, tomorrow.civil_dawn, "civil (no sunset)",
                         f"polar night {where}: the sun does not rise; the night is the civil "
                         "dark span, civil dusk to civil dawn")
    if sunset and not civil:
        return NightSpan(today.sunset, tomorrow.sunrise, "sunset (no civil dusk)",
                         f"white night {where}: the sun stays above 6 degrees below the "
                         "horizon; the night is sunset to sunrise")
    midnight = datetime(date.year, date.month, date.day,
                        tzinfo=timezone(timedelta(hours=today.utc_offset_h)))
    return NightSpan(midnight, midnight + timedelta(days=1), "whole day",
                     f"polar night {where}: neither sunset nor civil dusk happens (the sun stays "
                     "more than 6 degrees below the horizon); the whole day is taken as night")


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

    Polar and edge dates follow :func:`night_span` (the civil dark span in polar night,
    sunset to sunrise in white nights, the whole day when neither happens).

    Raises
    ------
    RequestError
        Under the midnight sun: there is then no night window to give.
    """
    span = night_span(latitude_deg, date, longitude_deg, utc_offset_h, turn_on)
    return span.dusk, span.dawn
