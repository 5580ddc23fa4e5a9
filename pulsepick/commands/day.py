"""``pulsepick day``: charge the storage from the panel, and run days and nights in turn.

Reads the storage, the panel, the charge path (diode, clamp, dusk-detector bleed), the
weather (words or an hourly irradiance file), the night and the loads; runs
:func:`pulsepick.analysis.day.simulate_days` and prints a day-by-day table, the days of
autonomy, whether the system restarts from empty in weak light, warnings and cautions.
"""

from __future__ import annotations

import argparse
import math
import re
from datetime import date, timedelta
from typing import Any, NamedTuple

from pulsepick import __version__
from pulsepick.analysis.cautions import GENERAL_CAUTIONS
from pulsepick.analysis.day import MAX_DAYS, DaysResult, NightWindow, simulate_days
from pulsepick.analysis.irradiance import (
    WEATHER_WORDS,
    get_profile,
    load_profile_csv,
    parse_weather,
)
from pulsepick.commands import circuit_options, sky_options
from pulsepick.commands.night_options import degrees, quantity, read_storage
from pulsepick.errors import RequestError
from pulsepick.parts.diode import DIODE_KEYS, get_diode
from pulsepick.parts.panel import PanelModel, custom_panel, get_panel, panel_keys
from pulsepick.parts.storage import LEAK_LEVELS, STORAGE_KEYS
from pulsepick.output.render import dump_json, make_console, simple_table

NAME = "day"
SUMMARY = "charge the storage from the panel over a day, and run days and nights in turn"
EXAMPLES = [
    "pulsepick day --storage 5f-2v7 --panel 5v60ma --clamp 2.5V --weather clear,overcast,dim "
    "--days 7 --night-load 30uA",
    "pulsepick day --storage 1F --panel-voc 5V --panel-isc 60mA --panel-cells 8 --diode si "
    "--start 0V --profile garden.csv --night 12.5h",
    "pulsepick day --storage 0f22-5v5 --panel 2v40ma --weather dim --latitude 52.1 "
    "--date 2026-12-21 --night-load 10uA --json",
    "pulsepick day examples/garden-path-markers.toml --weather clear,overcast --days 3",
    "pulsepick day --storage 5f-2v7 --panel 5v60ma --clamp 2.4V --latitude 60 --date "
    "2026-12-21 --tilt 60 --azimuth 180 --turbidity 3 --weather clear,overcast --days 4",
]

TURN_ON_CHOICES = ("civil", "sunset")
SHAPES_NOTE = ("light: the --profile file, or an illustrative day shape that is the same in "
               "every season; --latitude with --date (and no --profile) gives the clear sky of "
               "a place and date")
DEFAULT_NIGHT = "12h"
DEFAULT_STOP = "1.8V"
#: The day load when none is given (a design file with a dusk detector: its held draw).
DEFAULT_DAY_LOAD = "0A"


# --------------------------------------------------------------------------- shared options

def add_panel_arguments(parser: argparse.ArgumentParser) -> None:
    """The panel and diode options shared by ``day`` and ``dusk``."""
    group = parser.add_argument_group("panel (--panel KEY, or --panel-voc with --panel-isc)")
    group.add_argument("--panel", metavar="KEY",
                       help=f"a panel from the table: {', '.join(panel_keys())}")
    group.add_argument("--panel-voc", metavar="V", help="rated open-circuit voltage, such as 5V")
    group.add_argument("--panel-isc", metavar="I", help="rated short-circuit current, such as 60mA")
    group.add_argument("--panel-cells", metavar="N",
                       help="cells in series (default: guessed from about 0.6 V per cell)")
    group.add_argument("--panel-rsh", metavar="R",
                       help="the panel's measured shunt resistance, such as 400k (default: an "
                            "estimate, 5000 x Voc/Isc)")
    group.add_argument("--diode", choices=DIODE_KEYS, default="schottky",
                       help="series charging diode (default schottky)")


def read_panel(args: argparse.Namespace) -> PanelModel:
    """The panel from ``--panel`` or ``--panel-voc``/``--panel-isc``/``--panel-cells``, with
    a measured ``--panel-rsh`` in place of the estimated shunt resistance."""
    panel = _read_panel(args)
    text = getattr(args, "panel_rsh", None)
    if text is None:
        return panel
    from dataclasses import replace

    from pulsepick.errors import PulsepickError

    r_sh = quantity(text, "resistance", "--panel-rsh", "400k")
    try:
        return replace(panel, r_sh_ohm=r_sh,
                       source_notes=f"{panel.source_notes}; shunt resistance given")
    except PulsepickError as err:
        raise RequestError(f"--panel-rsh {text!r}: {err}") from err


def _read_panel(args: argparse.Namespace) -> PanelModel:
    rated = [args.panel_voc, args.panel_isc, args.panel_cells]
    accepted = (f"--panel KEY ({', '.join(panel_keys())}) or --panel-voc 5V --panel-isc 60mA "
                "[--panel-cells 8]")
    if args.panel is not None:
        if any(x is not None for x in rated):
            raise RequestError(f"give the panel one way: {accepted}")
        return get_panel(args.panel)
    if args.panel_voc is None and args.panel_isc is None:
        if args.panel_cells is not None:
            raise RequestError(f"--panel-cells needs --panel-voc and --panel-isc; use {accepted}")
        raise RequestError(f"no panel given; use {accepted}")
    if args.panel_voc is None or args.panel_isc is None:
        raise RequestError(f"--panel-voc and --panel-isc go together; use {accepted}")
    voc = quantity(args.panel_voc, "voltage", "--panel-voc", "5V")
    isc = quantity(args.panel_isc, "current", "--panel-isc", "60mA")
    cells = None
    if args.panel_cells is not None:
        try:
            cells = int(args.panel_cells)
        except ValueError:
            cells = 0
        if not 1 <= cells <= 100:
            raise RequestError(f"--panel-cells {args.panel_cells!r}: give a whole number "
                               "from 1 to 100, such as 8")
    return custom_panel(voc, isc, cells)


def clock(seconds: float | None) -> str:
    """Seconds after midnight as HH:MM (wrapping at 24 h); '-' for None."""
    if seconds is None or not math.isfinite(seconds):
        return "-"
    m = round(seconds / 60.0) % (24 * 60)
    return f"{m // 60:02d}:{m % 60:02d}"


def hours(seconds: float | None) -> str:
    """A duration as '7.5 h' or '45 min'."""
    if seconds is None:
        return "-"
    if seconds < 3600:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


# --------------------------------------------------------------------------- options

def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick day``."""
    parser.add_argument("design", nargs="?", metavar="DESIGN.toml",
                        help="a design file: its storage, panel, place and lights (options "
                             "given here win)")
    store = parser.add_argument_group("storage")
    store.add_argument("--storage", metavar="KEY|C",
                       help=f"a storage part ({', '.join(STORAGE_KEYS)}) or a capacitance such "
                            "as 0.47F")
    store.add_argument("--rated", metavar="V",
                       help="rated voltage of a storage given as a capacitance (default 2.7V)")
    store.add_argument("--start", metavar="V", default="0V",
                       help="storage voltage at the first dawn (default 0V: empty)")
    store.add_argument("--stop-at", metavar="V", default=None,
                       help=f"the light stops when the storage falls to this voltage "
                            f"(default {DEFAULT_STOP})")
    store.add_argument("--leakage", choices=LEAK_LEVELS, default="settled",
                       help="storage leakage: settled (typical after days, default) or max")
    add_panel_arguments(parser)
    path = parser.add_argument_group("charge path")
    path.add_argument("--diode-leak", choices=("typ", "max"), default="typ",
                      help="the diode's reverse leakage at night: typ (default) or max")
    path.add_argument("--clamp", metavar="V",
                      help="a shunt clamp (zener or TL431-style) across the storage, such as 2.5V")
    path.add_argument("--bleed", metavar="R",
                      help="the dusk detector's bleed resistor across the panel, such as 240k")
    light = parser.add_argument_group("light (one of --weather or --profile)")
    light.add_argument("--weather", metavar="WORDS",
                       help=f"weather per day, comma-separated, repeated in turn: "
                            f"{', '.join(WEATHER_WORDS)} (default clear)")
    light.add_argument("--profile", metavar="FILE.csv",
                       help="an hourly irradiance file (header hour,irradiance_w_m2), "
                            "used every day")
    light.add_argument("--days", metavar="N",
                       help=f"days to run, 1 to {MAX_DAYS} (default: one per weather word)")
    sky_options.add_sky_arguments(parser)
    from pulsepick.commands import day_size

    day_size.add_size_arguments(parser)
    night = parser.add_argument_group("the night (--night, or --latitude with --date)")
    night.add_argument("--night", metavar="T",
                       help=f"length of the night, centred on midnight (default {DEFAULT_NIGHT})")
    night.add_argument("--latitude", metavar="DEG", help="latitude, north positive; needs --date")
    night.add_argument("--longitude", metavar="DEG", help="longitude, east positive")
    night.add_argument("--date", metavar="YYYY-MM-DD",
                       help="the first evening's date (each later day of a run takes its own "
                            "date's night and sky)")
    night.add_argument("--utc-offset", metavar="H", help="local clock offset from UTC in hours")
    night.add_argument("--turn-on", choices=TURN_ON_CHOICES, default="civil",
                       help="the light turns on at civil dusk (default) or at sunset")
    loads = parser.add_argument_group("loads (the night: --night-load, or a circuit)")
    loads.add_argument("--night-load", metavar="I",
                       help="the blinker's average current at night, such as 30uA (default 0A; "
                            "or describe the circuit with the circuit options)")
    loads.add_argument("--day-load", metavar="I", default=DEFAULT_DAY_LOAD,
                       help="current drawn by day with the oscillators gated off, such as 2uA")
    out = parser.add_argument_group("output")
    out.add_argument("--json", action="store_true", help="write the result as JSON on stdout")
    circuit_options.add_circuit_arguments(parser)


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


# --------------------------------------------------------------------------- run

class DayRun(NamedTuple):
    """What ``day`` computed: the days and nights, or with ``--size`` the sizing."""

    result: Any = None  # DaysResult
    night_info: dict | None = None
    sky: Any = None  # the clear sky of a place and date, or None (profile shapes)
    weather: list | None = None  # the weather of each day (profile names or shapes)
    clamped: Any = None  # the same run with the proposed clamp, when one is proposed
    size: dict | None = None  # with --size / --autonomy: the sizing document


def run(args: argparse.Namespace) -> int:
    """Read the options, run the days and nights, print the report or JSON."""
    out = compute(args)
    if out.size is not None:
        if args.json:
            dump_json(out.size)
        else:
            from pulsepick.commands import day_size

            day_size.render_size(out.size, make_console())
        return 0
    if args.json:
        dump_json(day_json(out))
    else:
        line = over_charge_line(out.result, out.clamped)
        render_report(out.result, out.night_info, make_console(), out.sky,
                      notes=[line] if line else [])
    return 0


def day_json(out: DayRun) -> dict:
    """The ``--json`` document of a run of days and nights."""
    doc = result_json(out.result, out.night_info, out.sky)
    if out.sky is None:
        # the profile shapes' own totals (illustrative light, not the sky of a place)
        shapes = [w if not isinstance(w, str) else get_profile(w) for w in out.weather]
        for i, day in enumerate(doc["days"]):
            day["irradiation_wh_m2"] = shapes[i % len(shapes)].insolation_wh_m2
    doc["over_charge"] = over_charge_json(out.result, out.clamped)
    return doc


def compute(args: argparse.Namespace) -> DayRun:
    """The days and nights (or with ``--size`` the sizing) the options describe."""
    from pulsepick.commands import day_design

    design = day_design.apply_design(args)
    if args.stop_at is None:
        args.stop_at = DEFAULT_STOP
    storage = read_storage(args.storage, args.rated)
    panel = read_panel(args)
    diode = get_diode(args.diode)
    if args.size or args.autonomy is not None:
        return DayRun(size=_size_doc(args, design, storage, panel, diode))
    window, night_info = read_night(args)
    days = _days(args)
    sky = None
    if night_info.get("given") == "sun" and args.profile is None:
        site = sky_options.read_site(args, night_info)
        names, indices = sky_options.read_indices(args, days)
        sky = sky_options.sky_weather(site, date.fromisoformat(night_info["date"]), names,
                                      indices)
        weather = list(sky.profiles)
        days = len(weather)
    elif sky_options.sky_given(args):
        raise RequestError("--turbidity, --tilt, --azimuth, --altitude and --sky-index need "
                           "--latitude with --date (the clear sky of a place and date), and "
                           "no --profile")
    else:
        weather = _weather(args)
    v_start = quantity(args.start, "voltage", "--start", "0V or 2.5V", allow_zero=True)
    stop_at = quantity(args.stop_at, "voltage", "--stop-at", "1.8V", allow_zero=True)
    clamp = None if args.clamp is None else quantity(args.clamp, "voltage", "--clamp", "2.5V")
    bleed = math.inf
    if args.bleed is not None:
        bleed = quantity(args.bleed, "resistance", "--bleed", "240k")
    v_top = max(storage.v_rated_v, clamp or 0.0, v_start, panel.voc_v)
    day_load = quantity(args.day_load, "current", "--day-load", "2uA", allow_zero=True)
    if design is None:
        night_load = read_night_load(args, v_top)
    else:
        night_load, held_a = day_design.design_loads(args, design, storage, v_top)
        if args.day_load == DEFAULT_DAY_LOAD:
            day_load = held_a  # the lights held off by the dusk detector
    n_days = len(weather) if days is None else days
    window = read_windows(night_info, window, n_days)
    result = simulate_days(
        storage, panel, diode, weather, night_load, window, v_start, days=days, clamp_v=clamp,
        bleed_ohm=bleed, day_load=day_load, stop_at_v=stop_at, leak_level=args.leakage,
        diode_leak=args.diode_leak, weak_light=weak_light(args, night_info, n_days, sky))
    clamped = None
    if result.proposed_clamp_v is not None:
        # The unclamped run charges past the rating; the same run with the proposed clamp
        # says what the storage can really hold.
        clamped = simulate_days(
            storage, panel, diode, weather, night_load, window, v_start, days=days,
            clamp_v=result.proposed_clamp_v, bleed_ohm=bleed, day_load=day_load,
            stop_at_v=stop_at, leak_level=args.leakage, diode_leak=args.diode_leak,
            recovery=False)
    return DayRun(result, night_info, sky, weather, clamped)


def _size_doc(args, design, storage, panel, diode) -> dict:
    from pulsepick.commands import day_design, day_size

    if not args.size:
        raise RequestError("--autonomy goes with --size (the panel and storage for N nights)")
    stop_at = quantity(args.stop_at, "voltage", "--stop-at", "1.8V", allow_zero=True)
    clamp = None if args.clamp is None else quantity(args.clamp, "voltage", "--clamp", "2.5V")
    day_load = quantity(args.day_load, "current", "--day-load", "2uA", allow_zero=True)

    def load_of(v_top: float):
        if design is None:
            return read_night_load(args, v_top)
        return day_design.design_load(args, design, storage, v_top)

    return day_size.run_size(args, storage, panel, diode, load_of, day_load, stop_at, clamp)


def over_charge_json(result: DaysResult, clamped: DaysResult | None) -> dict | None:
    """What the unclamped run counted above the storage's rating, and the clamped run."""
    if clamped is None:
        return None
    c, rated = result.storage.capacitance_f, result.storage.v_rated_v
    return {
        "rated_v": rated,
        "over_charge_c": [max(r.v_max_v - rated, 0.0) * c for r in result.rows],
        "with_proposed_clamp": {
            "clamp_v": clamped.path.clamp_v, "nights_lasted": clamped.nights_lasted,
            "autonomy_nights": clamped.autonomy_nights,
            "runtime_s": [r.runtime_s for r in clamped.rows]},
    }


def over_charge_line(result: DaysResult, clamped: DaysResult | None) -> str | None:
    """A sentence on the over-charge the table counts, and the run with the proposed clamp."""
    if clamped is None:
        return None
    rated = result.storage.v_rated_v
    top = max(r.v_max_v for r in result.rows)
    if top <= rated + 0.005:
        return None
    over = (top - rated) * result.storage.capacitance_f
    light = sum(r.runtime_s for r in result.rows)
    light_c = sum(r.runtime_s for r in clamped.rows)
    return (f"Over-charge: without a clamp the storage reaches {top:.2f} V, "
            f"{_eng(over, 'C')} above its {rated:.2f} V rating; the table counts that charge. "
            f"With the proposed {clamped.path.clamp_v:.1f} V clamp the light runs "
            f"{hours(light_c)} in all instead of {hours(light)}, {clamped.nights_lasted} of "
            f"{len(clamped.rows)} nights last, and the autonomy is "
            f"{clamped.autonomy_nights} night(s).")


# --------------------------------------------------------------------------- output

def _full_at(result: DaysResult, seconds: float | None, row=None) -> str | None:
    if seconds is None:
        return None
    dawn = result.night.dawn_s if row is None or math.isnan(row.dawn_s) else row.dawn_s
    return clock(dawn + seconds)


def _dusk_of(result: DaysResult, row) -> float:
    """The row's own dusk (clock seconds), or the run's window's."""
    return result.night.dusk_s if math.isnan(row.dusk_s) else row.dusk_s


def result_json(result: DaysResult, night_info: dict, sky=None) -> dict:
    """The JSON document of a run of days (plain types; units in the key names).

    ``sky`` (a :class:`pulsepick.commands.sky_options.SkyWeather`) adds the sky model, the
    turbidity and each day's clear-sky index and light on the panel's plane.
    """
    doc = _result_json(result, night_info)
    doc["sky"] = None if sky is None else sky.info()
    for i, day in enumerate(doc["days"]):
        day["clear_sky_index"] = None if sky is None else sky.indices[i]
        day["irradiation_wh_m2"] = None if sky is None else sky.irradiation_wh_m2[i]
    if sky is not None:
        line = sky.sensitivity_line()
        if line is not None:
            doc["warnings"].append(line)
        doc["assumptions"].extend(sky.lines())
    else:
        doc["assumptions"].append(SHAPES_NOTE)
    if night_info.get("night_note"):
        doc["warnings"].append(night_info["night_note"])
    return doc


def _result_json(result: DaysResult, night_info: dict) -> dict:
    s, p, path = result.storage, result.path.panel, result.path
    w = result.night
    rec = result.recovery
    return {
        "command": NAME,
        "version": __version__,
        "storage": {"key": s.key, "name": s.name, "capacitance_f": s.capacitance_f,
                    "v_rated_v": s.v_rated_v, "cells_in_series": s.cells_in_series},
        "panel": {"key": p.key, "name": p.name, "voc_v": p.voc_v, "isc_a": p.isc_a,
                  "cells": p.cells, "n": p.n, "r_s_ohm": p.r_s_ohm, "r_sh_ohm": p.r_sh_ohm,
                  "source": p.source_notes},
        "charge_path": {"diode": path.diode.key, "diode_leak": path.diode_leak,
                        "clamp_v": path.clamp_v,
                        "bleed_ohm": None if math.isinf(path.bleed_ohm) else path.bleed_ohm},
        "night": {"dusk": clock(w.dusk_s), "dawn": clock(w.dawn_s), "night_s": w.night_s,
                  **{k: v for k, v in night_info.items() if k != "night_s"}},
        "night_load": {"label": result.night_load.label,
                       "supply_avg_max_a": float(result.night_load.supply_avg_a.max()),
                       "light_stops_below_v": result.night_load.light_stops_below_v()},
        "day_load_a": float(result.day_load.supply_avg_a.max()),
        "v_start_v": result.v_start_v,
        "v_stop_v": result.v_stop_v,
        "full_v": full_v(result),
        "full_is": full_is(result),
        "leak_level": result.leak_level,
        "days": [
            {"day": r.day, "weather": r.weather, "v_dawn_v": r.v_dawn_v, "v_max_v": r.v_max_v,
             "full": r.full, "time_to_full_s": r.time_to_full_s,
             "full_at": _full_at(result, r.time_to_full_s, r), "charge_in_c": r.charge_in_c,
             "energy_in_j": r.energy_in_j, "charge_clamp_c": r.charge_clamp_c,
             "v_dusk_v": r.v_dusk_v, "v_eq_v": r.v_eq_v, "runtime_s": r.runtime_s,
             "lasted": r.lasted,
             "stops_at": None if r.lasted else clock(_dusk_of(result, r) + r.runtime_s),
             "flashes": r.flashes, "v_next_dawn_v": r.v_next_dawn_v,
             "dawn": clock(r.dawn_s), "dusk": clock(r.dusk_s), "night_s": r.night_s}
            for r in result.rows
        ],
        "nights_lasted": result.nights_lasted,
        "autonomy_nights": result.autonomy_nights,
        "autonomy_capped": result.autonomy_capped,
        "recovery": None if rec is None else {
            "weather": rec.weather, "peak_irradiance_w_m2": rec.peak_irradiance_w_m2,
            "panel_voc_v": rec.panel_voc_v, "diode_drop_v": rec.diode_drop_v,
            "headroom_v": rec.headroom_v, "v_eq_v": rec.v_eq_v,
            "v_dusk_from_empty_v": rec.v_dusk_from_empty_v, "restarts": rec.restarts,
            "never_restarts": rec.never_restarts},
        "v_possible_v": result.v_possible_v,
        "proposed_clamp_v": result.proposed_clamp_v,
        "proposed_clamp_w": result.proposed_clamp_w,
        "clamp_at_isc_w": result.clamp_at_isc_w,
        "assumptions": assumption_lines(result),
        "warnings": list(result.warnings),
        "cautions": list(result.cautions) + list(GENERAL_CAUTIONS),
    }


def _v(x: float) -> str:
    return f"{x:.2f}"


def _eng(x: float, unit: str) -> str:
    """A charge (C) or energy (J) in engineering notation: 9.77 C, 150 mC, 1.14 kC."""
    from pulsepick.units import format_eng

    return format_eng(x, unit)


def full_v(result: DaysResult) -> float:
    """The voltage that counts as full (V): the clamp's, or else the storage's rating."""
    clamp = result.path.clamp_v
    return clamp if clamp is not None else result.storage.v_rated_v


def full_is(result: DaysResult) -> str:
    """What full means in this run: "clamp" or "rated voltage"."""
    return "clamp" if result.path.clamp_v is not None else "rated voltage"


def _full_note(result: DaysResult) -> str:
    """The line under the table that says what "full at" means."""
    if result.path.clamp_v is not None:
        return (f"full at: the time the storage first reaches the clamp voltage "
                f"{full_v(result):.2f} V.")
    text = (f"full at: the time the storage first reaches its rated {full_v(result):.2f} V "
            "(there is no clamp)")
    if any(r.v_max_v > result.storage.v_rated_v + 0.005 for r in result.rows):
        text += "; it keeps charging above the rating, up to the max V shown"
    return text + "."


# Column names of the panel table (data/parts/panels.csv) as words, for the notes shown.
_PANEL_WORDS = {"n": "ideality factor", "r_s": "series resistance", "r_sh": "shunt resistance",
                "voc": "Voc", "isc": "Isc"}


def _panel_notes(notes: str) -> str:
    """The panel's source notes with column names written as words."""
    def words(match: re.Match) -> str:
        names = [_PANEL_WORDS[n] for n in match[0].split()]
        return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]

    text = re.sub(r"\b(?:n|r_sh|r_s)(?:\s+(?:n|r_sh|r_s))*\b", words, notes)
    text = re.sub(r"\b(voc|isc)\b", lambda m: _PANEL_WORDS[m[1]], text)
    return re.sub(r"(and shunt resistance) estimate\b", r"\1: estimates", text)


def assumption_lines(result: DaysResult) -> list[str]:
    """The run's assumptions with the panel and bleed figures in engineering notation."""
    from pulsepick.units import format_eng

    p = result.path.panel
    bleed = result.path.bleed_ohm
    out = []
    for line in result.assumptions:
        if line.startswith(f"panel {p.name}:"):
            line = (f"panel {p.name}: single-diode model; Voc {format_eng(p.voc_v, 'V')} and "
                    f"Isc {format_eng(p.isc_a, 'A')} at 1000 W/m²; {p.cells} cells; ideality "
                    f"factor {p.n:g}, series resistance {format_eng(p.r_s_ohm, 'Ω')}, shunt "
                    f"resistance {format_eng(p.r_sh_ohm, 'Ω')} ({_panel_notes(p.source_notes)})")
        elif line.startswith("the dusk detector's bleed") and math.isfinite(bleed):
            line = f"the dusk detector's bleed {format_eng(bleed, 'Ω')} takes panel current by day"
        out.append(line)
    return out


def render_report(result: DaysResult, night_info: dict, console, sky=None,
                  notes=()) -> None:
    """Print the report: setup, the day-by-day table, verdicts, warnings and cautions."""
    from rich.text import Text

    s, p, path = result.storage, result.path.panel, result.path
    w = result.night
    n_load = result.night_load
    d_load = float(result.day_load.supply_avg_a.max())
    console.print(Text(f"pulsepick day: {len(result.rows)} day(s) on {s.name}", style="bold"))
    setup = [
        ["storage", f"{s.capacitance_f:g} F, rated {s.v_rated_v:g} V; start "
                    f"{result.v_start_v:.2f} V"
                    f" at the first dawn; the light stops at {result.v_stop_v:.2f} V"],
        ["panel", f"{p.name}: Voc {p.voc_v:g} V, Isc {p.isc_a * 1e3:g} mA at 1000 W/m2"],
        ["charge path", f"{path.diode.name}"
                        + (f", clamp {path.clamp_v:.2f} V" if path.clamp_v is not None else
                           ", no clamp")
                        + ("" if math.isinf(path.bleed_ohm) else
                           f", bleed {_ohms(path.bleed_ohm)} across the panel")],
        ["night", f"{hours(w.night_s)}, dusk {clock(w.dusk_s)}, dawn {clock(w.dawn_s)}"
                  + (f" ({night_info['date']}, latitude {night_info['latitude_deg']:g}, "
                     f"{night_info['turn_on']} turn-on)"
                     if night_info.get("given") == "sun" else "") + _nights_range(result)],
        ["loads", f"night {_night_load_text(n_load)}; day {_amps(d_load)}"],
    ]
    console.print(key_value_table(setup))
    console.print()
    rows = []
    for r in result.rows:
        rows.append([
            str(r.day), r.weather, _v(r.v_dawn_v),
            ("at dawn" if r.time_to_full_s == 0 else _full_at(result, r.time_to_full_s, r))
            if r.full else "not full", _v(r.v_max_v), _v(r.v_dusk_v),
            _eng(r.charge_in_c, "C"), _eng(r.energy_in_j, "J"), _eng(r.charge_clamp_c, "C"),
            "all night" if r.lasted else (hours(r.runtime_s) if r.runtime_s > 0 else "no light"),
            _v(r.v_next_dawn_v),
        ])
    table = simple_table(
        "Day by day",
        ["day", "weather", "dawn V", "full at", "max V", "dusk V", "charge in", "energy in",
         "clamp took", "light ran", "next V"],
        rows, justify=["right", "left"] + ["right"] * 9)
    table.padding = (0, 1, 0, 0)  # two spaces between columns: the eleven fit in 100
    console.print(table)
    console.print(_full_note(result))
    console.print(f"Nights lasted: {result.nights_lasted} of {len(result.rows)}.")
    if result.autonomy_nights is not None:
        more = " or more" if result.autonomy_capped else ""
        full_v = path.clamp_v if path.clamp_v is not None else s.v_rated_v
        console.print(f"Days of autonomy: from full ({full_v:.2f} V) with no sun at all, the "
                      f"light lasts {result.autonomy_nights}{more} "
                      f"full night(s).")
    rec = result.recovery
    if rec is not None:
        if rec.never_restarts:
            verdict = (f"never restarts after a dark day: in {rec.weather} light the panel gives "
                       f"at most {rec.panel_voc_v:.2f} V, minus {rec.diode_drop_v:.2f} V for the "
                       f"diode, under the {result.v_stop_v:.2f} V the light needs")
        elif rec.restarts:
            settle = min(rec.v_eq_v, path.clamp_v if path.clamp_v is not None else math.inf)
            verdict = (f"restarts from empty in {rec.weather} light: "
                       f"{rec.v_dusk_from_empty_v:.2f} V "
                       f"at dusk after one such day (it settles towards {settle:.2f} V)")
        else:
            verdict = (f"does not restart from empty in one {rec.weather} day: "
                       f"{rec.v_dusk_from_empty_v:.2f} V at dusk, under {result.v_stop_v:.2f} V"
                       + (f"; in that light it can never pass {rec.v_eq_v:.2f} V (charge = draw)"
                          if rec.v_eq_v <= result.v_stop_v else ""))
        console.print(f"Weak light: {verdict}.")
    if path.clamp_v is not None and result.clamp_at_isc_w is not None:
        peak = max((r.charge_clamp_c for r in result.rows), default=0.0)
        console.print(f"Clamp {path.clamp_v:.2f} V: absorbs up to {_eng(peak, 'C')} a day; at the "
                      f"panel's full-sun Isc it dissipates {result.clamp_at_isc_w * 1e3:.0f} mW "
                      "(size its power rating for that).")
    traps = {r.weather: r.v_eq_v for r in result.rows if r.v_eq_v < result.v_stop_v}
    if traps:
        where = ", ".join(f"{w} days at {v:.2f} V" for w, v in traps.items())
        console.print(f"Equilibrium trap: the charge equals the draw on {where}, under the stop "
                      f"voltage {result.v_stop_v:.2f} V: in that light the storage cannot pass it.")
    if sky is not None:
        totals = sky.irradiation_wh_m2
        console.print(f"Light on the panel: {min(totals) / 1e3:.2f} to {max(totals) / 1e3:.2f} "
                      f"kWh/m² a day (clear sky times each day's index; tilt {sky.site.tilt:g}°, "
                      f"azimuth {sky.site.azimuth:g}°, turbidity {sky.site.turbidity:g}).")
        line = sky.sensitivity_line()
        if line is not None:
            console.print(line)
    for note in notes:
        console.print(note)
    warnings = list(result.warnings)
    if night_info.get("night_note"):
        warnings.append(night_info["night_note"])
    _list(console, "Warnings", warnings)
    _list(console, "Cautions", list(result.cautions) + list(GENERAL_CAUTIONS))
    _list(console, "Assumptions", assumption_lines(result) + ([SHAPES_NOTE] if sky is None else
                                                              sky.lines()))


def _nights_range(result: DaysResult) -> str:
    """How the nights of a run change with the dates ('' when they are all alike)."""
    lengths = [r.night_s for r in result.rows if math.isfinite(r.night_s)]
    if len(lengths) < 2 or hours(min(lengths)) == hours(max(lengths)):
        return ""
    last = result.rows[-1]
    return (f"; each date its own: the last night {hours(last.night_s)}, dusk "
            f"{clock(last.dusk_s)} (nights {hours(min(lengths))} to {hours(max(lengths))})")


def key_value_table(rows: list[list[str]]):
    """Two columns, no header: a name and its value (wraps under the value)."""
    from rich.table import Table

    table = Table.grid(padding=(0, 2))
    table.add_column(no_wrap=True)
    table.add_column()
    for row in rows:
        table.add_row(*row)
    return table


def _list(console, title: str, items) -> None:
    """A titled list whose long items wrap under their own text."""
    from rich.table import Table

    items = list(items)
    if not items:
        return
    console.print(f"\n{title}:")
    table = Table.grid(padding=(0, 1))
    table.add_column(no_wrap=True)
    table.add_column()
    for item in items:
        table.add_row(" -", item)
    console.print(table)


print_list = _list


def _night_load_text(load) -> str:
    """A constant load as its current; a circuit as its label and current range."""
    currents = load.supply_avg_a
    if float(currents.min()) == float(currents.max()):
        return _amps(float(currents.max()))
    volts = load.supply_v
    return (f"{load.label} (average supply current {_amps(float(currents.min()))} to "
            f"{_amps(float(currents.max()))} over storage voltages {float(volts.min()):.2f} V "
            f"to {float(volts.max()):.2f} V)")


def _amps(value: float) -> str:
    from pulsepick.units import format_eng

    return format_eng(value, "A") if value > 0 else "0 A"


def _ohms(value: float) -> str:
    from pulsepick.units import format_eng

    return format_eng(value, "Ω")

