"""``pulsepick night``: will the blinker last until dawn on its supercapacitor?

Reads the storage, the start voltage, the night (clock times, a length, or a
place and date) and the circuit (the ``check`` options, or ``--no-circuit`` for a
bare storage budget), runs :func:`pulsepick.analysis.night.simulate_night` and
prints a verdict, the figures over the night, a chart, warnings and cautions.
"""

from __future__ import annotations

import argparse
from dataclasses import replace
from typing import Any, NamedTuple

from pulsepick import __version__
from pulsepick.analysis.night import NightResult, simulate_night, simulate_until_stop
from pulsepick.commands import circuit_options, night_size
from pulsepick.commands.night_context import (  # noqa: F401 (kept importable from here)
    CROSS_CURRENT_EXAMPLE,
    NO_DUSK_DETECTOR,
    _apply_design,
    _clamp_advice,
    _dusk_bias,
    crossing_current,
    dusk_detector,
)
from pulsepick.commands.night_options import quantity, read_storage, supply_grid
from pulsepick.commands.night_report import _hm, night_chart, render_report  # noqa: F401
from pulsepick.commands.night_window import NO_NIGHT, _read_night
from pulsepick.commands.panel_options import add_panel_arguments
from pulsepick.commands.pictures import (
    add_picture_arguments,
    announce,
    check_picture_targets,
    night_pictures,
)
from pulsepick.commands.solved_load import solved_load
from pulsepick.errors import RequestError
from pulsepick.output.render import dump_json, make_console
from pulsepick.parts.storage import LEAK_LEVELS, STORAGE_KEYS

NAME = "night"
SUMMARY = "run the storage through a night: when the light stops, or what is left at dawn"
EXAMPLES = [
    "pulsepick night --no-circuit --storage 0.2F --start 2.5V --stop-at 1.8V "
    "--storage-leak 0.2uA --extra-load 10uA",
    "pulsepick night --storage 5f-2v7 --start 2.6V --dusk 18:30 --dawn 07:10 --core schmitt "
    "--r 2M2 --c 1u --stage pulse --cp 22u --rs 47 --family hc",
    "pulsepick night --storage 1f-5v5 --latitude 52.1 --date 2026-12-21 --longitude 5.1 "
    "--utc-offset 1 --core schmitt --r 2M2 --c 1u --stage pulse --cp 22u --rs 47",
    "pulsepick night --no-circuit --storage 0f47-2v7 --night 12.5h --extra-load 8uA --json",
    "pulsepick night --storage 5f-2v7 --start 2.6V --dusk 18:30 --dawn 07:10 --core schmitt "
    "--r 2M2 --c 1u --stage pulse --cp 22u --rs 47 --plot night.png --report night.html",
    'pulsepick night --from-solve "one flash every 3 s" --family lvc --storage 5f-2v7 '
    "--start 2.6V --stop-at 1.8V --night 12h",
    "pulsepick night examples/firefly-lantern.toml",
]

TURN_ON_CHOICES = ("civil", "sunset")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick night``."""
    from pulsepick.limits import MAX_TOP, count_type

    circuit_options.add_circuit_arguments(parser)
    parser.set_defaults(supply=None)  # None: not given (the solver then takes the storage's)
    parser.add_argument("design", nargs="?", metavar="DESIGN.toml",
                        help="a design file: every light's load, the storage and the night "
                             "from the file (options given here override its storage and night)")
    solver = parser.add_argument_group("the circuit from the solver")
    solver.add_argument("--from-solve", metavar="PHRASE",
                        help="solve this blink (e.g. \"one flash every 3 s\") and run the night "
                             "with the solver's pick; --family and --led apply, --supply "
                             "defaults to the storage's start..stop-at")
    solver.add_argument("--pick", type=count_type("--pick", 1, MAX_TOP), default=1,
                        metavar="N",
                        help="which of the solver's circuits (default 1, the best)")
    store = parser.add_argument_group("storage")
    store.add_argument(
        "--storage", metavar="KEY|C",
        help=f"a storage part ({', '.join(STORAGE_KEYS)}) or a capacitance such as 0.22F",
    )
    store.add_argument("--rated", metavar="V",
                       help="rated voltage of a storage given as a capacitance (default 2.7V)")
    store.add_argument("--start", metavar="V",
                       help="storage voltage at dusk (default: the storage's rated voltage)")
    store.add_argument("--stop-at", metavar="V",
                       help="stop when the storage falls to this voltage (the circuit's own stop "
                            "voltage applies too)")
    store.add_argument("--storage-leak", metavar="I",
                       help="a fixed storage leakage current, replacing the leakage model")
    store.add_argument("--leakage", choices=LEAK_LEVELS, default="settled",
                       help="leakage model level: settled (typical after days at voltage, "
                            "the default) or max (datasheet maximum)")
    store.add_argument("--charge-age", metavar="T", default="6h",
                       help="time from full charge to dusk (default 6h; leakage falls with it)")
    dusk = parser.add_argument_group(
        "dusk detector (the panel as the light sensor; see pulsepick dusk)")
    dusk.add_argument("--dusk-bleed", metavar="OHM",
                      help="bleed resistor across the panel, such as 220k: its night-time bias "
                           "joins the loads (needs --panel or --panel-voc/--panel-isc)")
    add_panel_arguments(parser)
    store.add_argument("--extra-load", metavar="I", default="0A",
                       help="a fixed extra current drawn all night, such as 10uA")
    night = parser.add_argument_group("the night (one of: --dusk/--dawn, --night, --latitude)")
    night.add_argument("--dusk", metavar="HH:MM", help="clock time the light turns on")
    night.add_argument("--dawn", metavar="HH:MM",
                       help="clock time of dawn (before dusk means the next morning)")
    night.add_argument("--night", metavar="T", help="length of the night, such as 12.5h")
    night.add_argument("--latitude", metavar="DEG",
                       help="latitude in degrees, north positive; needs --date")
    night.add_argument("--longitude", metavar="DEG", help="longitude in degrees, east positive")
    night.add_argument("--date", metavar="YYYY-MM-DD", help="the date of the evening")
    night.add_argument("--utc-offset", metavar="H", help="local clock offset from UTC in hours")
    night.add_argument("--turn-on", choices=TURN_ON_CHOICES, default="civil",
                       help="the light turns on at civil dusk (default) or at sunset")
    night_size.add_size_arguments(parser)
    out = parser.add_argument_group("output")
    out.add_argument("--no-circuit", action="store_true",
                     help="a bare storage budget: no circuit, only leakage and --extra-load")
    out.add_argument("--json", action="store_true", help="write the result as JSON on stdout")
    add_picture_arguments(parser)


# ---------------------------------------------------------------------------- run

class NightRun(NamedTuple):
    """What ``night`` computed: the night run, or with ``--size`` the sizing."""

    result: Any  # NightResult, or the sizing with --size
    night: dict | None  # the night window
    context: dict  # crossing current, dusk detector, storage notes (empty with --size)
    designs: list  # (light name or None, Design) of the circuits in the load
    dates: Any = None  # the dates of --date-range/--year (with --size)
    sized: bool = False  # True: ``result`` is the sizing


def run(args: argparse.Namespace) -> int:
    """Read the options, simulate the night, print the report or JSON."""
    out = compute(args)
    if out.sized:
        if args.json:
            dump_json(night_size.size_json(out.result, out.night, out.dates))
        else:
            night_size.render_size(out.result, make_console(), out.dates)
        return 0
    result, night, context, designs = out.result, out.night, out.context, out.designs
    if args.json:
        dump_json(result_json(result, night, context))
    else:
        render_report(result, night, make_console(), context)
    only = designs[0][1] if len(designs) == 1 else None
    announce(args, night_pictures(args, result, night, only))
    return 0


def compute(args: argparse.Namespace) -> NightRun:
    """The night (or with ``--size`` the sizing) the options describe."""
    design = _apply_design(args)
    storage = read_storage(args.storage, args.rated)
    dates = night_size.apply_date_range(args)
    night = _read_night(args)
    check_picture_targets(args, [args.design, getattr(args, "stock", None)])
    if night is None and not (args.no_circuit and args.stop_at is not None):
        raise RequestError(NO_NIGHT)
    v_start = (storage.v_rated_v if args.start is None
               else quantity(args.start, "voltage", "--start", "2.5V"))
    stop_at = (None if args.stop_at is None
               else quantity(args.stop_at, "voltage", "--stop-at", "1.8V", allow_zero=True))
    if stop_at is not None and stop_at >= v_start:
        raise RequestError(
            f"--stop-at {args.stop_at} is not below the start voltage {v_start:g} V; "
            "give a stop voltage under the start"
        )
    leak = (None if args.storage_leak is None
            else quantity(args.storage_leak, "current", "--storage-leak", "0.2uA",
                           allow_zero=True))
    extra = quantity(args.extra_load, "current", "--extra-load", "10uA", allow_zero=True)
    charge_age = quantity(args.charge_age, "time", "--charge-age", "6h", allow_zero=True)

    load, designs = None, []
    if design is not None or args.from_solve is not None:
        load, designs = solved_load(args, design, storage, v_start, stop_at)
    elif not args.no_circuit:
        if getattr(args, "supply", "") is None:
            args.supply = "3.0V"  # the check options' default supply
        from pulsepick.design import load_curve

        one = circuit_options.design_from_args(args)
        load = load_curve(one, supply_grid(max(v_start, storage.v_rated_v)))
        designs = [(None, one)]

    dusk_bias = _dusk_bias(args, designs, v_start)
    extra_all = extra + (dusk_bias["bias_a"] if dusk_bias else 0.0)
    hold_note = None
    if design is not None and design.build.get("dusk_detector", True):
        # the dusk holds' diodes leak at night (pulsepick.analysis.gating)
        from pulsepick.analysis.gating import night_leak_a

        hold_leak = night_leak_a([d.topo for _, d in designs], v_start)
        extra_all += hold_leak
        hold_note = (f"dusk holds: the hold diodes' reverse leakage, {hold_leak * 1e9:.0f} nA "
                     "together (typical, an estimate), is drawn all night")
    options = {"extra_load_a": extra_all, "storage_leak_a": leak, "t_since_charge_s": charge_age,
               "leak_level": args.leakage}
    if args.size:
        sized = night_size.run_size(args, storage, v_start, stop_at, load, night or {},
                                    options, dates)
        return NightRun(sized, night, {}, designs, dates, sized=True)
    if night is None:
        # A budget check by hand: run until the stop voltage, however long that takes.
        night = {"dusk": None, "duration_s": None, "given": "none"}
        result = simulate_until_stop(storage, v_start, load, stop_at_v=stop_at, **options)
    else:
        result = simulate_night(storage, v_start, night["duration_s"], load, stop_at_v=stop_at,
                                dusk=night["dusk"], **options)
    context = {
        "crossing_current": crossing_current(designs, v_start, load),
        "dusk_detector": dusk_detector(design, extra, dusk_bias),
        "rated_default": storage.key == "custom" and args.rated is None,
    }
    result = replace(result, assumptions=result.assumptions + tuple(
        entry["note"] for entry in (context["crossing_current"], context["dusk_detector"])
        if entry is not None) + ((hold_note,) if hold_note else ()))
    advice = _clamp_advice(args, design, storage)
    if advice is not None and advice.cautions:
        result = replace(result, cautions=advice.cautions + result.cautions)
    if night.get("note"):
        result = replace(result, warnings=(*result.warnings, night["note"]))
    return NightRun(result, night, context, designs)


# ---------------------------------------------------------------------------- output

OPEN_ENDED_NOTE = ("no night given: the run goes on until the stop voltage, so there is no "
                   "dusk, midnight or dawn; the figures hold only the start of the run")


def result_json(result: NightResult, night: dict, context: dict | None = None) -> dict:
    """The JSON document of a night run (plain types; units in the key names).

    A run with no night (``night["given"] == "none"``) has ``dusk`` and ``dawn`` null,
    a ``note`` saying why, and one entry in ``figures``, labelled ``"start"``: entries
    for a midnight or a dawn that does not exist are left out. ``context`` carries
    what the command knows beyond the simulation: ``crossing_current`` (None when no
    Schmitt circuit is in the run), ``dusk_detector`` and ``rated_default``.
    """
    context = context or {}
    s = result.storage
    shares = result.shares()
    open_ended = night["given"] == "none"
    return {
        "command": NAME,
        "version": __version__,
        "night": {
            "dusk": _hm(night["dusk"]),
            "dawn": None if open_ended else result.dawn_clock,
            "duration_s": night["duration_s"],
            "given": night["given"],
            **{k: night[k] for k in ("latitude_deg", "longitude_deg", "utc_offset_h", "date",
                                     "turn_on") if k in night},
            **({"note": OPEN_ENDED_NOTE} if open_ended else {}),
        },
        "storage": {
            "key": s.key, "name": s.name, "capacitance_f": s.capacitance_f,
            "capacitance_used_f": result.capacitance_f,
            "tol_minus_pct": s.tol_minus_pct, "tol_plus_pct": s.tol_plus_pct,
            "v_rated_v": s.v_rated_v, "v_rated_default": bool(context.get("rated_default")),
            "v_surge_v": s.v_surge_v, "esr_ohm": s.esr_ohm,
            "leak_max_a": s.leak_max_a, "leak_settled_a": s.leak_settled_a,
            "cells_in_series": s.cells_in_series, "balanced": s.balanced,
            "source_notes": list(s.source_notes),
        },
        "circuit": None if result.load is None else result.load.label,
        "crossing_current": _public(context.get("crossing_current")),
        "dusk_detector": _public(context.get("dusk_detector")),
        "runtime_s": result.runtime_s,
        "lasts_the_night": result.lasts_the_night,
        "stops_at": result.stops_at,
        "stop_reason": result.stop_reason,
        "v_start_v": result.v_start_v,
        "v_stop_v": result.v_stop_v,
        "light_stop_v": result.light_stop_v,
        "v_end_v": result.v_end_v,
        "flashes": result.flashes,
        "usable_energy_fraction": result.usable_energy_fraction,
        "energy_used_j": result.energy_used_j,
        "extra_load_a": result.extra_load_a,
        "storage_leak_a": result.storage_leak_a,
        "leak_level": result.leak_level,
        "t_since_charge_s": result.t_since_charge_s,
        "drain": {
            "circuit_c": result.charge_circuit_c,
            "storage_leakage_c": result.charge_leak_c,
            "extra_load_c": result.charge_extra_c,
            "shares": shares,
        },
        "figures": [
            {
                "label": p.label, "t_s": p.t_s, "clock": p.clock, "v_v": p.v_v, "lit": p.lit,
                "supply_avg_a": p.supply_avg_a, "period_s": p.period_s, "flash_s": p.flash_s,
                "led_peak_a": p.led_peak_a, "effective_a": p.effective_a,
                "effective_cd": p.effective_cd,
            }
            for p in result.figures
        ],
        "timeline": {
            "t_s": result.timeline.t_s, "v_v": result.timeline.v_v,
            "effective_a": result.timeline.effective_a,
            "effective_cd": result.timeline.effective_cd,
        },
        "solver": {"success": result.success, "message": result.message},
        "assumptions": list(result.assumptions),
        "warnings": list(result.warnings),
        "cautions": list(result.cautions),
    }


def _public(entry: dict | None) -> dict | None:
    """A context entry for the JSON (without the report-only keys)."""
    if entry is None:
        return None
    return {k: v for k, v in entry.items() if k != "top"}
