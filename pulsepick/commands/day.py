"""``pulsepick day``: charge the storage from the panel, and run days and nights in turn.

Reads the storage, the panel, the charge path (diode, clamp, dusk-detector bleed), the
weather (words or an hourly irradiance file), the night and the loads; runs
:func:`pulsepick.analysis.day.simulate_days` and prints a day-by-day table, the days of
autonomy, whether the system restarts from empty in weak light, warnings and cautions.
"""

from __future__ import annotations

import argparse
import math
from datetime import date
from typing import Any, NamedTuple

from pulsepick import __version__
from pulsepick.analysis.cautions import GENERAL_CAUTIONS
from pulsepick.analysis.day import MAX_DAYS, DaysResult, simulate_days
from pulsepick.analysis.irradiance import WEATHER_WORDS, get_profile
from pulsepick.commands import circuit_options, sky_options
from pulsepick.commands.day_options import (  # noqa: F401 (kept importable from here)
    DEFAULT_NIGHT,
    _circuit_given,
    _days,
    _weather,
    read_night,
    read_night_load,
    read_windows,
    weak_light,
)
from pulsepick.commands.day_report import (  # noqa: F401 (kept importable from here)
    SHAPES_NOTE,
    _dusk_of,
    _eng,
    _full_at,
    assumption_lines,
    clock,
    full_is,
    full_v,
    hours,
    key_value_table,
    print_list,
    render_report,
)
from pulsepick.commands.night_options import quantity, read_storage
from pulsepick.commands.panel_options import add_panel_arguments, read_panel
from pulsepick.errors import RequestError
from pulsepick.output.render import dump_json, make_console
from pulsepick.parts.diode import get_diode
from pulsepick.parts.storage import LEAK_LEVELS, STORAGE_KEYS

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
DEFAULT_STOP = "1.8V"
#: The day load when none is given (a design file with a dusk detector: its held draw).
DEFAULT_DAY_LOAD = "0A"


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
