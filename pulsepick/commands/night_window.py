"""The night of ``pulsepick night``: dusk and the night's length from clock times, a
length, or a place and date (the sun's times)."""

from __future__ import annotations

import argparse
from datetime import date, datetime, timedelta

from pulsepick.commands.night_options import (
    clock_time,
    degrees,
    quantity,
    read_date,
    utc_offset,
)
from pulsepick.errors import RequestError

_MAX_NIGHT_S = 24 * 3600.0  # a night is at most a day long


def _read_night(args: argparse.Namespace) -> dict | None:
    """The night window: dusk (datetime or None), duration (s) and how it was given.

    None when no night is given at all.
    """
    clock_given = args.dusk is not None or args.dawn is not None
    sun_given = args.latitude is not None
    ways = sum([clock_given or args.night is not None, sun_given])
    if ways > 1:
        raise RequestError(
            "give the night one way: --dusk with --dawn or --night, --night alone, "
            "or --latitude with --date"
        )
    if not sun_given:
        for option, value in (("--longitude", args.longitude), ("--utc-offset", args.utc_offset)):
            if value is not None:
                raise RequestError(f"{option} needs --latitude and --date (the sun's times)")
    if sun_given:
        return _night_from_sun(args)
    day = read_date(args.date) if args.date is not None else date.today()
    night_s = None
    if args.night is not None:
        night_s = quantity(args.night, "time", "--night", "12.5h")
        if not 0 < night_s <= _MAX_NIGHT_S:
            raise RequestError(
                f"--night {args.night!r}: a night lasts more than 0 and at most 24 h"
            )
    if args.dusk is not None and args.dawn is not None:
        if night_s is not None:
            raise RequestError("give --dusk with either --dawn or --night, not both")
        dusk = datetime.combine(day, datetime.min.time()).replace(
            hour=clock_time(args.dusk, "--dusk")[0], minute=clock_time(args.dusk, "--dusk")[1])
        hour, minute = clock_time(args.dawn, "--dawn")
        dawn = dusk.replace(hour=hour, minute=minute)
        if dawn <= dusk:
            dawn += timedelta(days=1)  # dawn before dusk: the next morning
        if dawn == dusk + timedelta(days=1) and (hour, minute) == (dusk.hour, dusk.minute):
            raise RequestError("--dusk and --dawn are the same time; give a night longer than 0")
        return {"dusk": dusk, "duration_s": (dawn - dusk).total_seconds(), "given": "clock"}
    if args.dusk is not None or args.dawn is not None:
        which = "--dusk" if args.dusk is not None else "--dawn"
        if night_s is None:
            other = "--dawn" if which == "--dusk" else "--dusk"
            raise RequestError(f"{which} needs {other}, or --night for the night's length")
        hour, minute = clock_time(args.dusk or args.dawn, which)
        anchor = datetime.combine(day, datetime.min.time()).replace(hour=hour, minute=minute)
        dusk = anchor if args.dusk is not None else anchor - timedelta(seconds=night_s)
        return {"dusk": dusk, "duration_s": night_s, "given": "clock"}
    if night_s is not None:
        return {"dusk": None, "duration_s": night_s, "given": "length"}
    return None


NO_NIGHT = (
    "no night given; use --dusk 18:30 --dawn 07:10, --night 12.5h, "
    "or --latitude 52.1 --date 2026-12-21 (a bare run with --stop-at may leave it out)"
)


def _night_from_sun(args: argparse.Namespace) -> dict:
    if args.date is None:
        raise RequestError("--latitude needs --date YYYY-MM-DD (the evening of the night)")
    latitude = degrees(args.latitude, "--latitude", 90.0)
    longitude = None if args.longitude is None else degrees(args.longitude, "--longitude", 180.0)
    offset = None if args.utc_offset is None else utc_offset(args.utc_offset)
    day = read_date(args.date)
    from pulsepick.analysis.sun import night_span

    span = night_span(latitude, day, longitude_deg=longitude, utc_offset_h=offset,
                      turn_on=args.turn_on)
    dusk, dawn = span.dusk, span.dawn
    if dawn <= dusk:
        dawn += timedelta(days=1)
    return {
        "dusk": dusk, "duration_s": (dawn - dusk).total_seconds(), "given": "sun",
        "latitude_deg": latitude, "longitude_deg": longitude, "utc_offset_h": offset,
        "date": day.isoformat(), "turn_on": args.turn_on,
        **({"note": span.note} if span.note else {}),
    }
