"""The options of ``pulsepick solve`` and the request they describe.

:func:`add_arguments` declares the options, group by group (the blink, the build, several
lights, output, pictures); :func:`request_from_args` turns them into a
:class:`~pulsepick.request.SolveRequest` (the LED and the measured chip included).
"""

from __future__ import annotations

import argparse

from pulsepick.commands.spread_option import add_chip_spread_argument, chip_spread_choice

_PHRASE_HELP = (
    "the blink as a phrase, e.g. \"one flash every 3 s\". Pieces, separated by commas: "
    "'every 3 s' or '20 flashes a minute' or '20/min' (period); 'for 40 ms' or "
    "'40 ms long' (flash length at half peak); '5 mA peak' (peak LED current); "
    "'as bright as a steady 1 mA' (effective current); '200 mcd' (effective intensity). "
    "A flash of 50 ms and a 5 mA peak are assumed when not given (shown in the report). "
    "Several lights: \"three lights: every 2.7 s, every 4.1 s, every 6.3 s, 60 ms each\". "
    "A design file (DESIGN.toml) holds a whole build."
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick solve``."""
    parser.add_argument("phrase", nargs="?", metavar="PHRASE", help=_PHRASE_HELP)
    _blink_arguments(parser)
    _build_arguments(parser)
    _lights_arguments(parser)
    _output_arguments(parser)
    from pulsepick.commands.pictures_files import add_picture_arguments

    add_picture_arguments(parser)


def _blink_arguments(parser: argparse.ArgumentParser) -> None:
    """The blink as flags."""
    blink = parser.add_argument_group("the blink as flags (instead of, or with, a phrase)")
    blink.add_argument("--every", metavar="T", help="period, e.g. 3s, or a rate, e.g. 20/min")
    blink.add_argument("--flash", metavar="T", help="flash length at half peak, e.g. 40ms")
    bright = blink.add_mutually_exclusive_group()
    bright.add_argument("--peak", metavar="I", help="peak LED current, e.g. 5mA")
    bright.add_argument("--effective", metavar="I",
                        help="effective current: as bright as this steady current, e.g. 1mA")
    bright.add_argument("--intensity", metavar="CD",
                        help="effective intensity, e.g. 200mcd (needs an LED with intensity "
                             "data)")


def _build_arguments(parser: argparse.ArgumentParser) -> None:
    """The build: supply, chips, LED, measured chip, parts ranges, circuits searched."""
    from pulsepick.request import (
        CORE_CHOICES,
        DEFAULT_C_SERIES,
        DEFAULT_CAP_RANGE,
        DEFAULT_FAMILY,
        DEFAULT_LED,
        DEFAULT_R_RANGE,
        DEFAULT_R_SERIES,
        DEFAULT_SUPPLY,
        DEFAULT_TIMING_CAP,
        FAMILY_CHOICES,
        STAGE_CHOICES,
        TIMING_CAP_CHOICES,
    )

    ctx = parser.add_argument_group("the build (defaults shown in the report)")
    ctx.add_argument("--supply", metavar="V|FULL..END",
                     help=f"supply, or a range from full to the end of the night such as "
                          f"2.7V..1.8V (default {DEFAULT_SUPPLY})")
    add_chip_spread_argument(ctx)
    ctx.add_argument("--storage", metavar="KEY|C",
                     help="the storage that feeds the light at night, a part key (such as "
                          "5f-2v7) or a capacitance (such as 1F, rated 2.7 V); with a supply "
                          "range each circuit's night is run from the full supply at dusk "
                          "down to the end one (the night column: lasts, or when it goes dark)")
    ctx.add_argument("--night", metavar="T",
                     help="length of the night for --storage, such as 12.5h (default 12h)")
    ctx.add_argument("--family", metavar="LIST",
                     help=f"chips, a comma list of {', '.join(FAMILY_CHOICES)} "
                          f"(default {DEFAULT_FAMILY})")
    ctx.add_argument("--led", metavar="COLOUR",
                     help=f"LED colour (default {DEFAULT_LED}); or describe your own LED with "
                          "--led-vf")
    ctx.add_argument("--led-vf", metavar="V@I", help="your LED's forward voltage, e.g. 1.9V@20mA")
    ctx.add_argument("--led-n", type=float, metavar="N", help="your LED's ideality factor")
    ctx.add_argument("--led-rs", metavar="OHM", help="your LED's series resistance, e.g. 10")
    ctx.add_argument("--led-mcd", metavar="MCD@I", help="your LED's intensity, e.g. 120@20mA")
    ctx.add_argument("--chip", metavar="FILE.toml",
                     help="your measured chip (a profile from 'pulsepick calibrate --save')")
    ctx.add_argument("--vt-plus", metavar="V", help="VT+ measured on your Schmitt chip at the "
                                                    "(full) supply")
    ctx.add_argument("--vt-minus", metavar="V", help="VT- measured on your Schmitt chip")
    ctx.add_argument("--rout", metavar="OHM", help="output resistance measured on your chip")
    ctx.add_argument("--cross-current", metavar="A",
                     help="measured extra supply current of the oscillating gate, e.g. 15uA; "
                          "replaces the estimate the report labels")
    ctx.add_argument("--series", metavar="E", help=f"resistor series (default {DEFAULT_R_SERIES})")
    ctx.add_argument("--cap-series", metavar="E",
                     help=f"capacitor series (default {DEFAULT_C_SERIES}; electrolytics "
                          "come no finer than E6)")
    ctx.add_argument("--timing-cap", metavar="KIND",
                     help=f"timing capacitor: {', '.join(TIMING_CAP_CHOICES)} "
                          f"(default {DEFAULT_TIMING_CAP})")
    ctx.add_argument("--min-r", metavar="R",
                     help=f"smallest timing resistor (default {DEFAULT_R_RANGE[0]})")
    ctx.add_argument("--max-r", metavar="R",
                     help=f"largest resistor (default {DEFAULT_R_RANGE[1]})")
    ctx.add_argument("--cap-range", metavar="LO..HI",
                     help=f"capacitor values allowed (default {DEFAULT_CAP_RANGE})")
    ctx.add_argument("--buffered", action=argparse.BooleanOptionalAction, default=None,
                     help="drive the LED from a spare gate only (--buffered) or never "
                          "(--no-buffered); default: both are searched")
    ctx.add_argument("--stages", metavar="LIST",
                     help=f"LED stages to search, a comma list of {', '.join(STAGE_CHOICES)} "
                          "(default all)")
    ctx.add_argument("--cores", metavar="LIST",
                     help=f"oscillator cores to search, a comma list of "
                          f"{', '.join(CORE_CHOICES)} (default all)")
    ctx.add_argument("--prefer", metavar="WHAT",
                     help="how the ranking weighs a capacitor's size and cost class: "
                          "figures (not at all), balanced (between otherwise equal "
                          "circuits) or compact (strongly); default balanced")
    ctx.add_argument("--stock", metavar="FILE.csv",
                     help="pick only parts from your drawer: a CSV with columns "
                          "kind,value[,qty][,dielectric], e.g. 'R,4k7,10' or "
                          "'C,100u,2,electrolytic'")


def _lights_arguments(parser: argparse.ArgumentParser) -> None:
    """Several lights: packages, dusk detector, spread-out periods, locking."""
    from pulsepick.limits import MAX_LIGHTS, count_type

    multi = parser.add_argument_group("several lights (a several-lights phrase or a design file)")
    multi.add_argument("--max-packages", type=count_type("--max-packages", 1, MAX_LIGHTS),
                       metavar="N",
                       help="at most this many chip packages (a hex Schmitt package has 6 "
                            "gates; a 555 is one per light)")
    multi.add_argument("--dusk-detector", action=argparse.BooleanOptionalAction, default=None,
                       help="count a gate for the dusk detector (default yes)")
    multi.add_argument("--spread-out", action="store_true", default=None,
                       help="move the periods (within --period-tolerance) so no two lights on "
                            "a package sit near a simple ratio (1:1, 1:2, 2:3, 3:4 ...)")
    multi.add_argument("--period-tolerance", metavar="PCT",
                       help="how far --spread-out may move a period (default 10%%)")
    multi.add_argument("--lock-margin", metavar="PCT",
                       help="a period ratio this close to a simple ratio is at risk of "
                            "locking (default 3%%)")
    multi.add_argument("--max-lock-share", metavar="PCT",
                       help="the build succeeds only when at most this share of builds has a "
                            "pair near a lock (default: no limit, the share is a graded "
                            "warning); over it the build is still printed and the exit "
                            "status is 3")


def _output_arguments(parser: argparse.ArgumentParser) -> None:
    """Output: how many circuits, the builds, JSON, buy list, detail, trimmer, jobs."""
    from pulsepick.limits import MAX_BUILDS, MAX_SEED, MAX_TOP, MIN_BUILDS, count_type, max_jobs
    from pulsepick.request import DEFAULT_BUILDS, DEFAULT_SEED, DEFAULT_TOP

    out = parser.add_argument_group("output")
    out.add_argument("--top", type=count_type("--top", 1, MAX_TOP), metavar="N",
                     help=f"circuits offered, 1 to {MAX_TOP} (default {DEFAULT_TOP})")
    out.add_argument("--builds", type=count_type("--builds", MIN_BUILDS, MAX_BUILDS),
                     metavar="N", help=f"Monte Carlo builds per circuit, {MIN_BUILDS} to "
                                       f"{MAX_BUILDS:,} (default {DEFAULT_BUILDS})")
    out.add_argument("--seed", type=count_type("--seed", 0, MAX_SEED), metavar="S",
                     help=f"seed of the Monte Carlo builds, 0 to {MAX_SEED:,} "
                          f"(default {DEFAULT_SEED})")
    out.add_argument("--json", action="store_true", help="print plain JSON on stdout")
    out.add_argument("--buylist", metavar="FILE.csv",
                     help="write the buy list of one circuit (of the whole build for several "
                          "lights)")
    out.add_argument("--pick", type=count_type("--pick", 1, MAX_TOP), default=None,
                     metavar="N",
                     help="the circuit for --buylist, the short block and --schematic "
                          "(default 1, the best); with --detail, show only this one")
    out.add_argument("--detail", action="store_true",
                     help="the full report of every circuit (or of --pick N): figures from "
                          "both engines, spread, drift, waveform, schematic")
    out.add_argument("--schematic", action="store_true",
                     help="draw the circuit's schematic in plain characters")
    out.add_argument("--trim", action="store_true",
                     help="a fixed resistor + trimmer on the part that sets the period, sized "
                          "from the spread")
    out.add_argument("--force", action="store_true",
                     help="let --buylist, --plot and --report replace a file")
    out.add_argument("--jobs", type=count_type("--jobs", 1), metavar="N",
                     help="worker processes for the search and the checks, 1 to 4 per CPU "
                          f"core, here {max_jobs()} (default: up to 2, as the machine has "
                          "cores)")


def _led(args):
    """The LED: a colour key, or a user-described LED (--led-vf and friends)."""
    from pulsepick.errors import PulsepickError, RequestError
    from pulsepick.parts.led import custom_led
    from pulsepick.units import parse_quantity, parse_value

    custom = [args.led_n, args.led_rs, args.led_mcd]
    if args.led_vf is None:
        if any(x is not None for x in custom):
            raise RequestError("--led-n, --led-rs and --led-mcd describe your own LED: give "
                               "its forward voltage too, e.g. --led-vf 1.9V@20mA")
        return args.led
    if args.led is not None:
        raise RequestError("--led names a colour from our tables and --led-vf describes your "
                           "own LED; give one of them")
    try:
        left, right = args.led_vf.split("@", 1)
        vf, at = parse_quantity(left, "voltage"), parse_quantity(right, "current")
        kwargs = {}
        if args.led_n is not None:
            kwargs["n"] = args.led_n
        if args.led_rs is not None:
            kwargs["r_s"] = parse_value(args.led_rs, "ohm", allow_zero=True)
        if args.led_mcd is not None:
            text = args.led_mcd.strip()
            mcd_text, _, at_text = text.partition("@")
            kwargs["mcd"] = float(mcd_text.lower().replace("mcd", "").strip())
            if at_text:
                kwargs["mcd_at_a"] = parse_quantity(at_text, "current")
        return custom_led(vf, at, **kwargs)
    except ValueError as err:
        if isinstance(err, PulsepickError) and "@" in args.led_vf:
            raise RequestError(f"your LED: {err}") from err
        raise RequestError("--led-vf takes a voltage at a current (e.g. 1.9V@20mA) and "
                           "--led-mcd millicandela at a current (e.g. 120@20mA)") from err


def _chip_overrides(args) -> dict[str, float]:
    from pulsepick.units import parse_quantity, parse_value

    out: dict[str, float] = {}
    if args.vt_plus:
        out["vt_plus_v"] = parse_quantity(args.vt_plus, "voltage", bare_ok=True)
    if args.vt_minus:
        out["vt_minus_v"] = parse_quantity(args.vt_minus, "voltage", bare_ok=True)
    if args.rout:
        out["rout_ohm"] = parse_value(args.rout, "ohm")
    if args.cross_current:
        out["cross_current_a"] = parse_quantity(args.cross_current, "current", allow_zero=True)
    return out


def request_from_args(args):
    """The :class:`~pulsepick.request.SolveRequest` the options describe."""
    from pulsepick.errors import RequestError
    from pulsepick.request import make_request

    overrides = _chip_overrides(args)
    family = args.family
    if getattr(args, "chip", None):
        from pulsepick.commands.circuit_options import profile_overrides

        family, overrides = profile_overrides(args.chip, args.family, overrides)
    req = make_request(
        args.phrase, every=args.every, flash=args.flash, peak=args.peak,
        effective=args.effective, intensity=args.intensity, supply=args.supply,
        family=family, led=_led(args), series=args.series, cap_series=args.cap_series,
        timing_cap=args.timing_cap, max_r=args.max_r, min_r=args.min_r,
        cap_range=args.cap_range, buffered=args.buffered, stages=args.stages,
        cores=args.cores, stock=args.stock, top=args.top, builds=args.builds, seed=args.seed,
        prefer=args.prefer,
        chip_spread=None if args.chip_spread is None else chip_spread_choice(args.chip_spread),
    )
    if overrides:
        from dataclasses import replace

        if ("vt_plus_v" in overrides or "vt_minus_v" in overrides or "rout_ohm" in overrides) \
                and "measured_at_v" not in overrides:
            overrides["measured_at_v"] = req.supply_v
        vtp, vtm = overrides.get("vt_plus_v"), overrides.get("vt_minus_v")
        if vtp is not None and vtm is not None and not vtm < vtp < overrides["measured_at_v"]:
            raise RequestError(f"measured thresholds need VT- < VT+ < supply; got VT- "
                               f"{vtm:g} V, VT+ {vtp:g} V at {req.supply_v:g} V")
        req = replace(req, chip_overrides=overrides)
    return req


def night_plan(args, req):
    """The night each candidate runs through (``--storage``, ``--night``), or None."""
    from pulsepick.commands.night_options import quantity, read_storage
    from pulsepick.errors import RequestError
    from pulsepick.solve.nightcheck import DEFAULT_NIGHT_S, NightPlan

    storage_text, night_text = getattr(args, "storage", None), getattr(args, "night", None)
    if storage_text is None:
        if night_text is not None:
            raise RequestError("--night applies with --storage (the night is run on it)")
        return None
    if req.supply_end_v is None:
        raise RequestError("--storage needs a supply range from dusk to the end of the night, "
                           "such as --supply 2.7V..1.8V")
    storage = read_storage(storage_text, None)
    if req.supply_v > storage.v_rated_v + 1e-9:
        raise RequestError(f"--storage {storage_text}: the full supply {req.supply_v:g} V is "
                           f"above its rating {storage.v_rated_v:g} V; give a part rated for "
                           "it (such as 1f-5v5) or a lower supply")
    night_s = DEFAULT_NIGHT_S
    if night_text is not None:
        night_s = quantity(night_text, "time", "--night", "12.5h")
        if not 0 < night_s <= 24 * 3600:
            raise RequestError(f"--night {night_text!r}: a night lasts more than 0 and at "
                               "most 24 h")
    return NightPlan(storage, req.supply_v, req.supply_end_v, night_s,
                     night_given=night_text is not None)
