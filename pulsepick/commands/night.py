"""``pulsepick night``: will the blinker last until dawn on its supercapacitor?

Reads the storage, the start voltage, the night (clock times, a length, or a
place and date) and the circuit (the ``check`` options, or ``--no-circuit`` for a
bare storage budget), runs :func:`pulsepick.analysis.night.simulate_night` and
prints a verdict, the figures over the night, a chart, warnings and cautions.
"""

from __future__ import annotations

import argparse
import math
from dataclasses import replace
from datetime import date, datetime, timedelta
from typing import Any, NamedTuple

import numpy as np
from rich.table import Table as RichTable
from rich.text import Text

from pulsepick import __version__
from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT
from pulsepick.analysis.night import NightResult, simulate_night, simulate_until_stop
from pulsepick.commands import circuit_options, night_size
from pulsepick.commands.day import add_panel_arguments
from pulsepick.commands.night_options import (
    clock_time,
    degrees,
    quantity,
    read_date,
    read_storage,
    supply_grid,
    utc_offset,
)
from pulsepick.commands.pictures import (
    add_picture_arguments,
    announce,
    check_picture_targets,
    night_pictures,
)
from pulsepick.commands.solved_load import one_circuit, solved_load
from pulsepick.commands.wording import duration_text, verdict
from pulsepick.errors import RequestError
from pulsepick.parts.storage import LEAK_LEVELS, STORAGE_KEYS
from pulsepick.output.render import dump_json, make_console, plot_columns, simple_table

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
_MAX_NIGHT_S = 24 * 3600.0  # a night is at most a day long
# the common single-cell rating (Maxwell BCAP0005, CAP-XX HY: ref:maxwell-bcap0005/ref:capxx-hy-10f)
CROSS_CURRENT_EXAMPLE = "--cross-current 15uA"  # option syntax only, not a figure
NO_DUSK_DETECTOR = ("no dusk detector load included (describe it with --dusk-bleed and the "
                    "panel options, or add its bias from pulsepick dusk with --extra-load)")


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


# ---------------------------------------------------------------------------- reading options

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


def _clamp_advice(args, design, storage):
    """The over-voltage advice when the design file or the options name a panel."""
    from pulsepick.commands.design_night import design_clamp

    if design is not None and design.panel is not None:
        return design_clamp(design)
    if args.panel is None and args.panel_voc is None:
        return None
    from pulsepick.analysis.overvoltage import clamp_advice
    from pulsepick.commands.day import read_panel
    from pulsepick.parts.diode import get_diode

    return clamp_advice(storage, read_panel(args), get_diode(args.diode))


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


# ---------------------------------------------------------------------------- solver circuits

_FILE_STORAGE = {"start": "start", "stop_at": "stop_at", "storage_leak": "storage_leak"}
_FILE_NIGHT = ("dusk", "dawn", "night", "latitude", "longitude", "date", "utc_offset")


def _apply_design(args: argparse.Namespace):
    """Fill the storage and night options from a design file (options given win)."""
    if getattr(args, "design", None) is None:
        return None
    from pulsepick.designfile import is_design_file, night_options, read_design, storage_start

    if not is_design_file(args.design):
        raise RequestError(f"{args.design!r} is not a design file; give a .toml design such "
                           "as examples/firefly-lantern.toml (the circuit options describe a "
                           "circuit by hand)")
    one_circuit(args, "a design file")
    design = read_design(args.design)
    s = design.storage
    if s is None:
        raise RequestError(f"{args.design}: no [storage] table; the night needs one, such as "
                           "[storage] with part = \"1f-5v5\" and start = \"4.8V\"")
    if args.storage is None:
        args.storage = s.get("part", s.get("capacitance"))
        if "rated" in s and args.rated is None:
            args.rated = s["rated"]
    for key, attr in _FILE_STORAGE.items():
        if key in s and getattr(args, attr) is None:
            setattr(args, attr, s[key])
    if args.start is None and design.panel is not None and "clamp" in design.panel:
        args.start = storage_start(design)  # held at the clamp by day
    for key, attr in (("leakage", "leakage"), ("charge_age", "charge_age"),
                      ("extra_load", "extra_load")):
        if key in s:
            setattr(args, attr, s[key])
    # a night given by clock or length replaces the file's; a single site option given
    # (such as --date) replaces only that key
    if not any(getattr(args, k) is not None for k in ("dusk", "dawn", "night")):
        for key, value in night_options(design).items():
            if value is not None and getattr(args, key, None) is None:
                setattr(args, key, value)
    return design


def crossing_current(designs, v_start_v: float, load) -> dict | None:
    """The crossing current of each Schmitt input at the start voltage, or None.

    ``designs`` is a list of (light name or None, Design). The circuit's average supply
    current includes the current the Schmitt input draws while its input crosses the
    thresholds: an estimate (no published figure; square-law model of the input stage,
    as :func:`pulsepick.analysis.checks.assumptions` says) unless ``--cross-current``
    gives a measured one. Returns the JSON entry, with the assumption line as ``note``.
    """
    from pulsepick.units import format_eng

    schmitt = [(name, d) for name, d in designs if not d.chip.is_timer]
    if not schmitt:
        return None
    lights = [{"light": name,
               "crossing_current_a": float(np.ravel(d.fast(v_start_v).extras["crossing_a"])[0]),
               "estimate": d.chip.cross_current_a is None}
              for name, d in schmitt]
    estimate = any(li["estimate"] for li in lights)
    total = sum(li["crossing_current_a"] for li in lights)
    circuit = float(load.current_a(v_start_v)) if load is not None else math.nan
    if len(lights) == 1 or not estimate:  # a measured figure is one per gate
        what = ("the Schmitt input's crossing current" if len(lights) == 1
                else "each Schmitt input's crossing current")
        value = format_eng(lights[0]["crossing_current_a"], "A")
    else:
        what = "each Schmitt input's crossing current"
        value = ", ".join(f"{li['light']} {format_eng(li['crossing_current_a'], 'A')}"
                          for li in lights)
    share = (f"{total / circuit:.0%} of the circuit's {format_eng(circuit, 'A')} there; "
             if circuit > 0 else "")
    if estimate:
        note = (f"the circuit's supply current includes {what}, an ESTIMATE of {value} average "
                f"at the start voltage {v_start_v:.2f} V ({share}no published figure; "
                "square-law model of the input stage); give a measured figure per gate with "
                f"{CROSS_CURRENT_EXAMPLE}")
    else:
        note = (f"the circuit's supply current includes {what}, measured: {value} per gate "
                "(given with --cross-current)")
    return {"estimate": estimate, "at_v": v_start_v, "total_a": total, "lights": lights,
            "override": "--cross-current", "note": note}


def _dusk_bias(args, designs, v_start_v: float) -> dict | None:
    """The dusk detector's night-time bias when ``--dusk-bleed`` describes one.

    The panel is dark, so the bleed resistor and the sense input sit near 0 V; what the
    detector draws from the storage at night is the charging diode's reverse leakage
    through the bleed (``pulsepick.analysis.dusk``), typical figure.
    """
    if args.dusk_bleed is None:
        return None
    from pulsepick.analysis.dusk import dusk_levels
    from pulsepick.commands.day import read_panel
    from pulsepick.parts.diode import get_diode
    from pulsepick.parts.logic import get_family
    from pulsepick.units import parse_value

    bleed = parse_value(args.dusk_bleed, unit="ohm")
    schmitt = [d for _, d in designs if not d.chip.is_timer]
    family = get_family(schmitt[0].chip.family if schmitt else "hc")
    result = dusk_levels(read_panel(args), bleed, family, v_start_v, get_diode(args.diode))
    return {"bleed_ohm": bleed, "bias_a": float(result.night_bias_typ_a),
            "bias_max_a": float(result.night_bias_max_a), "family": family.key}


def dusk_detector(design_file, extra_load_a: float, bias: dict | None = None) -> dict:
    """What the run includes of a dusk detector (the JSON entry; the assumption as ``note``).

    With ``--dusk-bleed`` (and the panel options) the detector's night-time bias is in
    the run; otherwise the note says it is not, and that ``--dusk-bleed`` or
    ``pulsepick dusk`` gives it. A design file's ``dusk_detector`` counts a gate for it.
    """
    from pulsepick.units import format_eng

    if bias is not None:
        note = (f"dusk detector: bleed {format_eng(bias['bleed_ohm'], 'Ω')} across the panel; "
                f"its night-time bias {format_eng(bias['bias_a'], 'A')} (typical; up to "
                f"{format_eng(bias['bias_max_a'], 'A')} with the diode's maximum leakage) is "
                "drawn all night")
        return {"in_design_file": bool(design_file is not None), "bias_included": True,
                "bias_a": bias["bias_a"], "top": None, "note": note}
    in_file = bool(design_file is not None and design_file.build.get("dusk_detector", True))
    note = NO_DUSK_DETECTOR
    if extra_load_a > 0:
        note = note.replace("included", f"included beyond the extra load of "
                                        f"{format_eng(extra_load_a, 'A')}", 1)
    top = None
    if in_file:
        top = ("counted as a gate in the design file; its night-time bias is not in this run "
               "(pulsepick dusk computes it; add it with --extra-load)")
    return {"in_design_file": in_file, "bias_included": False, "bias_a": None, "top": top,
            "note": note}


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


def _hm(moment: datetime | None) -> str | None:
    return None if moment is None else moment.strftime("%H:%M")


def _eng(value: float | None, unit: str) -> str:
    from pulsepick.units import format_eng

    if value is None or not math.isfinite(value):
        return "-"
    return format_eng(value, unit)


def _bullets(console, title: str, items, mark: str) -> None:
    """A titled list with hanging indents (wraps cleanly at 100 columns)."""
    console.print(Text(title, style="bold"))
    grid = RichTable.grid(padding=(0, 1))
    grid.add_column(width=3, justify="right")
    grid.add_column(ratio=1)
    for item in items:
        grid.add_row(mark, Text(item))
    console.print(grid)
    console.print()


def render_report(result: NightResult, night: dict, console,
                  context: dict | None = None) -> None:
    """The terminal report: verdict, night, storage, drains, figures, chart, cautions.

    ``context`` is the command's extra knowledge (see :func:`result_json`).
    """
    context = context or {}
    open_ended = night["given"] == "none"
    good = result.lasts_the_night
    console.print(Text(f"night: {verdict(result, open_ended)}",
                       style="bold green" if good else "bold red"))
    console.print()

    if open_ended:
        window = "none given: the run goes on until the stop voltage"
    elif night["dusk"] is not None:
        window = (f"{_hm(night['dusk'])} to {result.dawn_clock}, "
                  f"{duration_text(result.duration_s)}")
    else:
        window = duration_text(result.duration_s)
    if night["given"] == "sun":
        turn_on = "civil dusk" if night["turn_on"] == "civil" else "sunset"
        place = f"{abs(night['latitude_deg']):g}° {'N' if night['latitude_deg'] >= 0 else 'S'}"
        window += f" (light on at {turn_on}, {place}, evening of {night['date']})"
    s = result.storage
    band = result.load.lit_band_v() if result.load is not None else None
    if not math.isfinite(result.v_stop_v) and band is not None:
        stop = f"over the circuit's supply range (lit {band[0]:.2f} V to {band[1]:.2f} V)"
    elif not math.isfinite(result.v_stop_v):
        stop = "not lit at any supply of the circuit's curve"
    elif result.v_stop_v > 0:
        stop = f"stop {result.v_stop_v:.2f} V"
    else:
        stop = "no stop voltage"
    rows = [
        ["night", window],
        ["storage", f"{s.name}: {_eng(result.capacitance_f, 'F')}, rated {s.v_rated_v:.2f} V"
                    + (" (default)" if context.get("rated_default") else "")
                    + f", ESR {_eng(s.esr_ohm, 'Ω')}"],
        ["voltage", f"start {result.v_start_v:.2f} V, {stop}, end {result.v_end_v:.2f} V"],
        ["energy", f"{_eng(result.energy_used_j, 'J')} used, usable energy fraction "
                   f"{result.usable_energy_fraction:.3f}"],
        ["circuit", result.load.label if result.load is not None else "none (bare budget)"],
    ]
    if result.load is not None and any(math.isfinite(p.period_s) for p in result.figures):
        rows.append(["flashes", f"{result.flashes:,.0f} over {duration_text(result.runtime_s)}"])
    shares = result.shares()
    drains = []
    for label, key, charge in (("circuit", "circuit", result.charge_circuit_c),
                               ("storage leakage", "storage_leakage", result.charge_leak_c),
                               ("extra load", "extra_load", result.charge_extra_c)):
        if (key == "circuit" and result.load is None) or (key == "extra_load" and not charge):
            continue
        share = shares[key]
        drains.append(f"{label} {_eng(charge, 'C')}"
                      + (f" ({share:.0%})" if math.isfinite(share) else ""))
    rows.append(["drain", ", ".join(drains)])
    dusk_entry = context.get("dusk_detector") or {}
    if dusk_entry.get("top"):
        rows.append(["dusk detector", dusk_entry["top"]])
    facts = RichTable.grid(padding=(0, 2))
    facts.add_column(style="bold")
    facts.add_column(ratio=1)
    for label, text in rows:
        facts.add_row(label, Text(text))
    console.print(facts)
    console.print()

    if result.load is not None:
        fig_rows = []
        for p in result.figures:
            when = p.clock or duration_text(p.t_s)
            if p.lit:
                fig_rows.append([p.label, when, f"{p.v_v:.2f} V", _eng(p.period_s, "s"),
                                 _eng(p.flash_s, "s"), _eng(p.led_peak_a, "A"),
                                 _eng(p.effective_a, "A"), _eng(p.effective_cd, "cd")])
            else:
                fig_rows.append([p.label, when, "-", "off", "", "", "", ""])
        heads = ["", "time", "storage", "period", "flash", "LED peak", "effective",
                 "intensity"]
        justify = ["left"] * 2 + ["right"] * 6
        if not any(p.lit and math.isfinite(p.effective_cd) for p in result.figures):
            # no LED intensity data: the column would be "-" on every row
            heads, justify, fig_rows = heads[:-1], justify[:-1], [r[:-1] for r in fig_rows]
        console.print(simple_table("Over the night", heads, fig_rows, justify=justify))
        console.print()

    for line in night_chart(result, night["dusk"], plot_columns(console, _LABEL + 12)):
        console.print(Text(line))
    console.print()

    if result.warnings:
        _bullets(console, "Warnings", result.warnings, "!")
    _bullets(console, "Assumptions", result.assumptions, "-")
    cautions = list(result.cautions)
    if NOT_A_SAFETY_LIGHT not in cautions:
        cautions.append(NOT_A_SAFETY_LIGHT)
    _bullets(console, "Cautions", cautions, "*")


# ---------------------------------------------------------------------------- chart

CHART_COLUMNS = 72  # plot columns; with the labels the chart fits in 100
_VOLT_ROWS = 8
_LIGHT_ROWS = 4
_LABEL = 11  # width of the row labels


def night_chart(result: NightResult, dusk: datetime | None,
                cols: int = CHART_COLUMNS) -> list[str]:
    """A plain-character chart of the storage voltage and the light over the night,
    ``cols`` plot columns wide."""
    tl = result.timeline
    t_cols = np.linspace(0.0, result.duration_s, cols)
    runtime = result.duration_s if result.lasts_the_night else result.runtime_s
    on = t_cols <= runtime + 1e-9
    finite = np.isfinite(tl.v_v)
    v_cols = np.full(cols, math.nan)
    if finite.sum() >= 2:
        v_cols[on] = np.interp(t_cols[on], tl.t_s[finite], tl.v_v[finite])
    else:
        v_cols[0] = result.v_start_v
    has_stop = 0 < result.v_stop_v < math.inf
    v_hi = result.v_start_v
    v_lo = float(np.nanmin(v_cols))
    if has_stop:
        v_lo = min(v_lo, result.v_stop_v)
    if not v_hi - v_lo > 1e-3:
        v_lo = v_hi - 0.1
    pad = 0.04 * (v_hi - v_lo)
    v_lo, v_hi = v_lo - pad, v_hi + pad

    def row_of(v: float) -> int:
        frac = (v - v_lo) / (v_hi - v_lo)
        return round((1 - frac) * (_VOLT_ROWS - 1))

    grid = [[" "] * cols for _ in range(_VOLT_ROWS)]
    stop_row = row_of(result.v_stop_v) if has_stop else -1
    if has_stop:
        for j in range(0, cols, 2):
            grid[stop_row][j] = "-"
    for j in range(cols):
        if math.isfinite(v_cols[j]):
            grid[row_of(v_cols[j])][j] = "*"
    if not result.lasts_the_night:
        j_stop = int(min(cols - 1, round(runtime / result.duration_s * (cols - 1))))
        grid[stop_row if has_stop else _VOLT_ROWS - 1][j_stop] = "X"

    title = "Storage voltage" + (" and light" if result.load is not None else "")
    lines = [title + (" over the night" if dusk is not None or result.lasts_the_night
                      else " over the run")]
    for i, row in enumerate(grid):
        label = ""
        if i in (0, _VOLT_ROWS - 1, (_VOLT_ROWS - 1) // 2):
            label = f"{v_hi - (v_hi - v_lo) * i / (_VOLT_ROWS - 1):.2f} V"
        if i == stop_row:
            label = f"stop {result.v_stop_v:.2f}"
        lines.append(f"{label:>{_LABEL}} |{''.join(row)}".rstrip())

    light = _light_columns(result, v_cols)
    if light is not None:
        values, unit = light
        top = float(np.nanmax(values))
        lines.append(f"{'':>{_LABEL}} |")
        levels = np.where(np.isfinite(values), values / top, 0.0)
        for i in range(_LIGHT_ROWS):
            threshold = (_LIGHT_ROWS - i - 0.5) / _LIGHT_ROWS
            bar = "".join("#" if lv >= threshold else " " for lv in levels)
            label = _eng(top, unit) if i == 0 else ("light" if i == 1 else "")
            lines.append(f"{label:>{_LABEL}} |{bar}".rstrip())
    lines.append(f"{'':>{_LABEL}} +{_axis(cols)}")
    lines.append(" " * (_LABEL + 1) + _axis_labels(result.duration_s, dusk, cols))
    legend = ["* storage voltage"]
    if has_stop:
        legend.append("- - stop voltage")
    if not result.lasts_the_night:
        legend.append("X the light stops" if result.load is not None else "X stop")
    if light is not None:
        legend.append("# effective brightness")
    lines.append(" " * (_LABEL + 1) + ", ".join(legend))
    return lines


def _light_columns(result: NightResult, v_cols):
    """Effective intensity (cd) or effective current (A) along the chart, or None."""
    load = result.load
    if load is None:
        return None
    ok = np.isfinite(v_cols)
    for table, unit in ((load.effective_cd, "cd"), (load.effective_a, "A")):
        values = np.full(len(v_cols), math.nan)
        values[ok] = np.interp(v_cols[ok], load.supply_v, table)
        if np.any(np.isfinite(values)) and np.nanmax(values) > 0:
            return values, unit
    return None


def _tick_columns(cols: int, ticks: int = 5) -> list[int]:
    return [round(k * (cols - 1) / (ticks - 1)) for k in range(ticks)]


def _axis(cols: int) -> str:
    chars = ["-"] * cols
    for j in _tick_columns(cols)[1:]:
        chars[j] = "+"
    return "".join(chars)


def _axis_labels(duration_s: float, dusk: datetime | None, cols: int) -> str:
    width = cols + 6
    out = [" "] * width
    ticks = _tick_columns(cols)
    for k, j in enumerate(ticks):
        t = duration_s * k / (len(ticks) - 1)
        if dusk is not None:
            text = (dusk + timedelta(seconds=round(t / 60) * 60)).strftime("%H:%M")
        else:
            text = f"{t / 3600:.3g} h"
        start = max(0, min(j - len(text) // 2, width - len(text)))
        out[start:start + len(text)] = text
    return "".join(out).rstrip()
