"""Reading the options of ``pulsepick day``: the night load, the night (a length, or the
sun's times of a place and date, each day of a run its own), the weak light of the restart
check, the weather and the number of days."""

from __future__ import annotations

import argparse
import math
from datetime import date, timedelta

from pulsepick.analysis.day import MAX_DAYS, NightWindow
from pulsepick.analysis.irradiance import load_profile_csv, parse_weather
from pulsepick.commands import circuit_options, sky_options
from pulsepick.commands.night_options import degrees, quantity
from pulsepick.errors import RequestError

DEFAULT_NIGHT = "12h"


def _circuit_given(args: argparse.Namespace) -> bool:
    """True when any component value of a circuit was given (--r, --c, ...)."""
    return any(v is not None for k, v in vars(args).items() if k.startswith("value_"))


def read_night_load(args: argparse.Namespace, v_top_v: float):
    """The night load: a constant current, or the described circuit's load curve."""
    if not _circuit_given(args):
        text = "0A" if args.night_load is None else args.night_load
        return quantity(text, "current", "--night-load", "30uA", allow_zero=True)
    if args.night_load is not None:
        raise RequestError("give the night load one way: --night-load, or the circuit's values")
    from pulsepick.commands.night_options import supply_grid

    return circuit_options.load_curve_from_args(args, supply_grid(v_top_v))


def read_night(args: argparse.Namespace) -> tuple[NightWindow, dict]:
    """The night window and a description of how it was given."""
    sun = [args.latitude, args.date, args.longitude, args.utc_offset]
    if args.latitude is None:
        if any(x is not None for x in sun):
            raise RequestError("--date, --longitude and --utc-offset need --latitude "
                               "(the sun's times)")
        text = args.night or DEFAULT_NIGHT
        night_s = quantity(text, "time", "--night", "12.5h")
        if not 0 < night_s < 86400:
            raise RequestError(f"--night {text!r}: a night lasts more than 0 and under 24 h, "
                               "such as 12.5h")
        clock_given = getattr(args, "design_clock", None)
        if clock_given is not None and abs(clock_given[1] - night_s) < 1.0:
            dusk = clock_given[0]
            return (NightWindow.from_times(dusk, dusk + timedelta(seconds=night_s)),
                    {"given": "clock", "night_s": night_s})
        return NightWindow.centred(night_s), {"given": "length", "night_s": night_s}
    if args.night is not None:
        raise RequestError("give the night one way: --night, or --latitude with --date")
    if args.date is None:
        raise RequestError("--latitude needs --date YYYY-MM-DD (the first evening)")
    latitude = degrees(args.latitude, "--latitude", 90.0)
    longitude = None if args.longitude is None else degrees(args.longitude, "--longitude", 180.0)
    offset = None
    if args.utc_offset is not None:
        try:
            offset = float(args.utc_offset)
        except ValueError:
            offset = math.nan
        if not (math.isfinite(offset) and -14 <= offset <= 14):
            raise RequestError(f"--utc-offset {args.utc_offset!r}: give hours from -14 to 14, "
                               "such as 1 or -5.5")
    try:
        day = date.fromisoformat(args.date.strip())
    except ValueError as err:
        raise RequestError(f"--date {args.date!r} is not a date; use YYYY-MM-DD such as "
                           "2026-12-21") from err
    from pulsepick.analysis.sun import night_span

    span = night_span(latitude, day, longitude_deg=longitude, utc_offset_h=offset,
                      turn_on=args.turn_on)
    if span.rule == "whole day":
        raise RequestError(f"{span.note}: the panel gets no daylight to charge from; accepted: "
                           "a date with daylight, or --night with a length under 24 h")
    window = NightWindow.from_times(span.dusk, span.dawn)
    return window, {"given": "sun", "latitude_deg": latitude, "longitude_deg": longitude,
                    "utc_offset_h": offset, "date": day.isoformat(), "turn_on": args.turn_on,
                    "night_rule": span.rule, "night_note": span.note,
                    "night_s": window.night_s}


def read_windows(night_info: dict, first: NightWindow, n_days: int):
    """The night window of each day of the run: each date's own dusk and dawn when the place
    and the first date are known (the sky's light changes per date, so does the night);
    else the one window. Adds a note to ``night_info`` when a later date turns polar."""
    if night_info.get("given") != "sun" or n_days <= 1:
        return first
    from datetime import timedelta

    from pulsepick.analysis.sun import night_span

    day = date.fromisoformat(night_info["date"])
    windows = [first]
    rules = {night_info.get("night_rule")}
    for i in range(1, n_days):
        when = day + timedelta(days=i)
        try:
            span = night_span(night_info["latitude_deg"], when, night_info["longitude_deg"],
                              night_info["utc_offset_h"], night_info["turn_on"])
        except RequestError as err:
            raise RequestError(f"day {i + 1} of the run: {err}; accepted: fewer --days, or "
                               "--night with a length") from err
        if span.rule == "whole day":
            raise RequestError(f"day {i + 1} of the run: {span.note}: the panel gets no "
                               "daylight to charge from; accepted: fewer --days, or --night "
                               "with a length under 24 h")
        if span.note and span.rule not in rules and not night_info.get("night_note"):
            night_info["night_note"] = f"from day {i + 1}: {span.note}"
        rules.add(span.rule)
        windows.append(NightWindow.from_times(span.dusk, span.dawn))
    return tuple(windows)


def weak_light(args: argparse.Namespace, night_info: dict, n_days: int, sky=None):
    """The weak light of each day for the restart check: with a place and date, each date's
    clear sky times the dim clear-sky index; else None (the dim profile shape)."""
    if night_info.get("given") != "sun":
        return None
    from dataclasses import replace
    from datetime import timedelta

    from pulsepick.analysis.sky import CLEAR_SKY_INDEX, day_profile

    site = sky.site if sky is not None else sky_options.read_site(args, night_info)
    first = date.fromisoformat(night_info["date"])
    dim = CLEAR_SKY_INDEX["dim"]
    out = []
    for i in range(n_days):
        when = first + timedelta(days=i)
        prof = day_profile(site, when, dim, name="dim")
        out.append(replace(prof, source=f"the clear sky of {when.isoformat()} on the panel "
                                        f"times the dim clear-sky index {dim:g}"))
    return out


def _weather(args: argparse.Namespace):
    if args.weather is not None and args.profile is not None:
        raise RequestError("give the light one way: --weather words or --profile FILE.csv")
    if args.profile is not None:
        return [load_profile_csv(args.profile)]
    return parse_weather(args.weather or "clear")


def _days(args: argparse.Namespace) -> int | None:
    if args.days is None:
        return None
    try:
        n = int(args.days)
    except ValueError:
        n = 0
    if not 1 <= n <= MAX_DAYS:
        raise RequestError(f"--days {args.days!r}: give a whole number from 1 to {MAX_DAYS}, "
                           "such as 7")
    return n
