"""``pulsepick solve``: from a wanted blink to ranked parts lists and a buy list.

Reads the blink (a phrase or flags) and the build's context, runs the solver
(:func:`pulsepick.solve.solve`), verifies and analyses the candidates
(:func:`pulsepick.solve.assess`), and prints the report, the JSON, or writes a buy
list. Imports of the core happen inside ``run`` so ``pulsepick --help`` stays quick.
"""

from __future__ import annotations

import argparse
import math
import re
from typing import Any, NamedTuple

from pulsepick.commands.solve_text import _bullet, _eng, _render_cautions, render_unmet

NAME = "solve"
SUMMARY = "find standard parts for a wanted blink: ranked circuits, spread, drift, buy list"
EXAMPLES = [
    'pulsepick solve "one flash every 3 s"',
    'pulsepick solve "flash every 2.5 s for 40 ms, 5 mA peak" --supply 2.7V..1.8V '
    "--family lvc,timer555",
    'pulsepick solve "20 flashes a minute, 0.1 s long, as bright as a steady 1 mA"',
    'pulsepick solve "every 4 s, 200 mcd" --led white --supply 3.3V',
    "pulsepick solve --every 3s --flash 40ms --peak 5mA --led red --supply 2.7V..1.8V",
    'pulsepick solve "one flash every 3 s" --stock drawer.csv --buylist parts.csv --pick 1',
    'pulsepick solve "one flash every 3 s" --trim --buylist parts.csv',
    'pulsepick solve "one flash every 3 s" --chip chip.toml',
    'pulsepick solve "one flash every 3 s" --cores schmitt-steered --stages direct --json',
    'pulsepick solve "one flash every 3 s" --plot garden.png --report garden.html',
    'pulsepick solve "three lights: every 2.7 s, every 4.1 s, every 6.3 s, 60 ms each" '
    "--spread-out --period-tolerance 10%",
    "pulsepick solve examples/firefly-lantern.toml --buylist lantern-parts.csv",
]

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
    from pulsepick.limits import (
        MAX_BUILDS,
        MAX_LIGHTS,
        MAX_SEED,
        MAX_TOP,
        MIN_BUILDS,
        count_type,
        max_jobs,
    )
    from pulsepick.request import (
        CORE_CHOICES,
        DEFAULT_BUILDS,
        DEFAULT_C_SERIES,
        DEFAULT_CAP_RANGE,
        DEFAULT_FAMILY,
        DEFAULT_LED,
        DEFAULT_R_RANGE,
        DEFAULT_R_SERIES,
        DEFAULT_SEED,
        DEFAULT_SUPPLY,
        DEFAULT_TIMING_CAP,
        DEFAULT_TOP,
        FAMILY_CHOICES,
        STAGE_CHOICES,
        TIMING_CAP_CHOICES,
    )

    parser.add_argument("phrase", nargs="?", metavar="PHRASE", help=_PHRASE_HELP)
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
    ctx = parser.add_argument_group("the build (defaults shown in the report)")
    ctx.add_argument("--supply", metavar="V|FULL..END",
                     help=f"supply, or a range from full to the end of the night such as "
                          f"2.7V..1.8V (default {DEFAULT_SUPPLY})")
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
    from pulsepick.commands.pictures import add_picture_arguments

    add_picture_arguments(parser)


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


class SolveRun(NamedTuple):
    """What a single-light solve computed (before any output)."""

    result: Any  # SolveResult, assessed
    request: Any  # SolveRequest
    plans: Any = None  # trimmer plans with --trim
    picked: bool = False  # --pick was given


def compute(args) -> SolveRun:
    """Check the options, solve and assess one light (several lights: :func:`compute_build`)."""
    from pulsepick.commands.pictures import check_picture_targets
    from pulsepick.errors import RequestError
    from pulsepick.solve import assess, default_jobs, solve

    for flag in ("max_packages", "period_tolerance", "lock_margin", "max_lock_share"):
        if getattr(args, flag) is not None:
            raise RequestError(f"--{flag.replace('_', '-')} applies to several lights (a "
                               "several-lights phrase or a design file)")
    if args.spread_out:
        raise RequestError("--spread-out applies to several lights (a several-lights phrase "
                           "or a design file)")
    check_picture_targets(args, [args.stock], with_buylist=True)
    req = request_from_args(args)
    picked = args.pick is not None
    args.pick = 1 if args.pick is None else args.pick
    jobs = default_jobs() if args.jobs is None else args.jobs
    result = solve(req, jobs=jobs)
    result = assess(result, jobs=jobs)
    plans = None
    if getattr(args, "trim", False):
        from pulsepick.commands.trim_parts import trim_result

        result, plans = trim_result(result, req.r_series)
    return SolveRun(result, req, plans, picked)


def solve_json(run: SolveRun) -> dict:
    """The ``--json`` document of a single-light solve."""
    from pulsepick.export import result_json, solve_cautions

    out = result_json(run.result, solve_cautions(run.request))
    if run.plans is not None:
        from pulsepick.commands.trim_parts import add_trim_json

        add_trim_json(out, run.plans)
    return out


def run(args) -> int:
    """Parse, solve, assess, and print or export."""
    from pulsepick.commands.pictures import solve_pictures
    from pulsepick.render import dump_json, make_console

    if _is_build(args):
        return run_build(args)
    done = compute(args)
    result, req, plans = done.result, done.request, done.plans
    if args.buylist and result.success:
        from pulsepick.export import buylist_text, write_atomic

        write_atomic(args.buylist, buylist_text(result, args.pick), force=args.force)
    if args.json:
        dump_json(solve_json(done))
    else:
        from pulsepick.commands.solve_summary import render_summary

        console = make_console()
        buylist = args.buylist if result.success else None
        if args.detail:
            render_detail(console, result, buylist=buylist, pick=args.pick, only=done.picked)
        else:
            render_summary(console, result, buylist=buylist, pick=args.pick,
                           schematic=args.schematic)
        if plans is not None:
            from pulsepick.commands.trim_parts import render_trim

            render_trim(console, plans)
    solve_pictures(args, result)
    if not result.success:
        _nothing_line(req.describe(), result.explanations)
        return 2
    return 0


def _nothing_line(what: str, explanations) -> None:
    """The one stderr line of a request that gets nothing (the reasons are on stdout)."""
    import sys

    from pulsepick.render import word_hints

    first = word_hints(next(iter(explanations), ""))
    reason = f": {first}" if first else ""
    print(f"pulsepick: error: nothing can be offered for \"{what}\"{reason}",
          file=sys.stderr)


# ============================================================================ the report

def _pct(x) -> str:
    if x is None or not math.isfinite(x):
        return "-"
    return f"{x * 100:+.1f} %"


_FIG_ROWS = (
    ("period_s", "period", "s"),
    ("high_s", "output high", "s"),
    ("low_s", "output low", "s"),
    ("flash_s", "flash (>= 50 % of peak)", "s"),
    ("flash_10pct_s", "flash (>= 10 % of peak)", "s"),
    ("led_peak_a", "LED peak current", "A"),
    ("led_charge_c", "LED charge per flash", "C"),
    ("effective_a", "effective current", "A"),
    ("effective_mcd", "effective intensity", "mcd"),
    ("supply_avg_a", "average supply current", "A"),
)


def _fig_text(key: str, value, unit: str) -> str:
    if unit == "mcd":
        return "-" if value is None or not math.isfinite(value) else f"{value:.3g} mcd"
    return _eng(value, unit)


def render_report(console, result, *, buylist: str | None = None, pick: int = 1,
                  schematics: bool = False) -> None:
    """The terminal report of a solver result (readable at 100 columns, no colour needed);
    ``schematics`` draws each candidate."""
    from pulsepick.export import solve_cautions
    from pulsepick.render import simple_table

    req = result.request
    cautions = solve_cautions(req)
    console.print(f"[bold]pulsepick solve[/bold]: {req.describe()}", highlight=False)
    console.print()
    _render_request(console, req, result)
    if render_unmet(console, result, cautions):
        return
    rows = []
    night = req.supply_end_v is not None
    for c in result.candidates:
        f = c.figures
        label = c.design.topo.label()
        if c.misses:
            label += " ! " + ", ".join(c.misses)
        row = [
            str(c.rank), label, c.design.chip.family,
            *_spread_cells(c, f), _eng(f["flash_s"], "s"),
            _eng(f["led_peak_a"], "A"), _eng(f["supply_avg_a"], "A"),
        ]
        if night:
            row.append({None: "-", True: "yes", False: "NO"}[c.lasts_night])
        rows.append(row + [f"{c.score:.2f}"])
    heads = ["#", "circuit", "chip", "period", "P5..P95", "±10 %", "flash",
             "peak", "supply"] + (["night"] if night else []) + ["score"]
    console.print(simple_table(
        f"Ranked circuits ({result.evaluated:,} evaluated in {result.search_s:.2f} s; lower "
        "score is better; period: the median of the builds)",
        heads, rows, justify=["right", "left", "left"] + ["right"] * (len(heads) - 3)))
    console.print()
    for c in result.candidates:
        _render_candidate(console, req, c)
        if schematics:
            from pulsepick.schematic import schematic_lines

            for line in schematic_lines(c.design, c.parts):
                console.print(f"  {line}", markup=False, highlight=False)
            console.print()
        if c.rank == 1:
            _render_waveform(console, c)
    if buylist:
        console.print(f"Buy list of circuit {pick} written to {buylist}", markup=False)
        console.print()
    _render_cautions(console, cautions)


def _spread_cells(c, f) -> list[str]:
    """The builds' median period, P5..P95 and the share within the yield band; before
    assess() the median chip's period and "-"."""
    med = c.median_period_s
    if med is None or not math.isfinite(med):
        return [_eng(f["period_s"], "s"), "-", "-"]
    lo, hi = _eng(c.p5_period_s, "s"), _eng(c.p95_period_s, "s")
    lo_num, _, lo_unit = lo.partition(" ")
    if lo_unit and hi.endswith(" " + lo_unit):
        lo = lo_num
    return [_eng(med, "s"), f"{lo}..{hi}", f"{c.yield_fraction:.0%}"]


def render_detail(console, result, *, buylist: str | None = None, pick: int = 1,
                  only: bool = False) -> None:
    """The full report (every candidate, or only ``pick`` when ``only``), each with its
    schematic."""
    from dataclasses import replace

    if only and result.success:
        if pick > len(result.candidates):
            from pulsepick.errors import RequestError

            raise RequestError(f"--pick {pick}: there are {len(result.candidates)} circuits; "
                               f"choose 1 to {len(result.candidates)}")
        result = replace(result, candidates=(result.candidates[pick - 1],))
    render_report(console, result, buylist=buylist, pick=pick, schematics=True)


def crossing_text(result) -> str | None:
    """The crossing-current assumption of the Schmitt candidates, once for the report."""
    texts = [(c.rank, c.crossing_current) for c in result.candidates if c.crossing_current]
    if not texts:
        return None
    ranks = " ".join(f"#{r}" for r, _ in texts)
    if len({t for _, t in texts}) == 1:
        return f"crossing current of the Schmitt gate ({ranks}): {texts[0][1]}"
    # one label and one explanation, the figure of each candidate beside its rank
    parts = [re.match(r"^(ESTIMATE|measured:) (\S+ \S+)(.*)$", t) for _, t in texts]
    if all(parts) and len({(m.group(1), m.group(3)) for m in parts}) == 1:
        figures = ", ".join(f"#{r} {m.group(2)}" for (r, _), m in zip(texts, parts,
                                                                         strict=True))
        return (f"crossing current of the Schmitt gate: {parts[0].group(1)} {figures}"
                f"{parts[0].group(3)}")
    return (f"crossing current of the Schmitt gate ({ranks}): "
            + "; ".join(f"#{r} {t}" for r, t in texts))


def _render_request(console, req, result=None) -> None:
    from pulsepick.analysis.spread import TEMP_RANGE_TEXT
    from pulsepick.render import simple_table
    from pulsepick.units import format_eng

    aims = req.aims()
    words = {"period_s": ("period", "s"), "flash_s": ("flash", "s"),
             "led_peak_a": ("peak current", "A"), "effective_a": ("effective current", "A"),
             "effective_mcd": ("effective intensity", "mcd")}
    rows = []
    for key, (value, stated) in aims.items():
        word, unit = words[key]
        text = f"{value:.3g} mcd" if unit == "mcd" else _eng(value, unit)
        how = "asked" if stated else "assumed (not in the request)"
        if key == "flash_s" and req.flash_shortened:
            how = "assumed: a quarter of the period"
        rows.append([word, text, how])
    d = set(req.defaults)

    def mark(*names: str) -> str:
        return "default" if all(n in d for n in names) else "given"

    supply = f"{req.supply_v:g} V" + (f" full .. {req.supply_end_v:g} V end of night"
                                       if req.supply_end_v is not None else " (steady)")
    rows += [
        ["supply", supply, mark("supply")],
        ["chips", ", ".join(req.families), mark("family")],
        ["LED", f"{req.led.name}", mark("led")],
        ["resistors", f"{req.r_series}, timing {format_eng(req.r_min_ohm, 'Ω')} .. "
                      f"{format_eng(req.r_max_ohm, 'Ω')}", mark("series", "min_r", "max_r")],
        ["capacitors", f"{req.c_series}, {format_eng(req.c_min_f, 'F')} .. "
                       f"{format_eng(req.c_max_f, 'F')}", mark("cap_series", "cap_range")],
        ["timing capacitor", ", ".join(req.timing_caps), mark("timing_cap")],
        ["cores", ", ".join(req.cores), mark("cores")],
        ["stages", ", ".join(req.stages), mark("stages")],
        ["buffer gate", {None: "with and without", True: "always", False: "never"}[req.buffered],
         mark("buffered")],
        ["parts drawer", req.stock.source if req.stock else "any standard value",
         mark("stock")],
        ["spread", f"{req.builds:,} builds, seed {req.seed}, {TEMP_RANGE_TEXT}",
         mark("builds", "seed")],
    ]
    if req.chip_overrides:
        names = {"vt_plus_v": ("VT+", "V"), "vt_minus_v": ("VT-", "V"),
                 "rout_ohm": ("output resistance", "Ω"),
                 "cross_current_a": ("crossing current", "A"), "measured_at_v": ("at", "V")}
        rows.append(["chip measured", ", ".join(
            f"{names.get(k, (k, ''))[0]} {format_eng(v, names.get(k, (k, ''))[1])}"
            for k, v in req.chip_overrides.items() if not isinstance(v, bool)), "given"])
    console.print(simple_table("Request and assumptions", ["", "value", ""], rows))
    crossing = None if result is None else crossing_text(result)
    if crossing:
        _bullet(console, crossing, indent=" ", hang="   ")
    console.print()


def _render_candidate(console, req, c) -> None:
    from pulsepick.render import simple_table

    d = c.design
    console.print(f"[bold]#{c.rank}  {d.topo.label()}[/bold] on {d.chip.family}, "
                  f"{d.supply_v:g} V", highlight=False)
    rows = [[p.ref, p.display, p.code, p.series,
             p.tolerance, p.dielectric or "-", p.rating or "-", p.role] for p in c.parts]
    console.print(simple_table(None, ["ref", "value", "code", "series", "tol", "kind",
                                      "rating", "role"], rows))
    for p in c.parts:
        if p.note:
            _bullet(console, f"{p.ref}: {p.note}", indent="    ", hang="      ")
    aims = req.aims()
    ref = c.reference_figures
    rows = []
    for key, word, unit in _FIG_ROWS:
        aim = aims.get(key)
        aim_text = "-" if aim is None else _fig_text(key, aim[0], unit) + \
            ("" if aim[1] else " *")
        err = c.errors.get(key)
        fast = c.figures.get(key)
        refv = None if ref is None else ref.get(key)
        agree = "-"
        if refv is not None and fast is not None and math.isfinite(refv) and \
                math.isfinite(fast) and fast != 0:
            agree = f"{(refv / fast - 1) * 100:+.2f} %"
        rows.append([word, aim_text, _fig_text(key, fast, unit), _pct(err),
                     _fig_text(key, refv, unit) if ref else "-", agree])
    console.print(simple_table(
        "figures of the median chip at the design supply (* assumed aim)",
        ["", "aim", "fast engine", "error", "reference", "ref vs fast"], rows,
        justify=["left", "right", "right", "right", "right", "right"]))
    if c.reference is not None and not c.reference.success:
        _bullet(console, f"reference run: {c.reference.message}", indent="    ", hang="      ")
    _render_spread(console, c, req.targets.period_s)
    _render_drift(console, c)
    extra = list(c.notes) + list(c.warnings)
    if extra:
        console.print("  warnings and notes:")
        for text in extra:
            _bullet(console, text)
    console.print()


def _source_words(key: str) -> str:
    """A spread source in plain words ("chip thresholds", not the key)."""
    from pulsepick.analysis.spread import SOURCE_LABELS

    return SOURCE_LABELS.get(key, key.replace("_", " "))


def _render_spread(console, c, target_s: float | None = None) -> None:
    from pulsepick.render import simple_table

    s = c.spread
    if s is None:
        _bullet(console, f"spread estimate (parts only): period ±{c.period_spread * 100:.1f} % "
                         "(one standard deviation)", indent="  ")
        return
    rows = []
    for key, word, unit in (("period_s", "period", "s"), ("flash_s", "flash", "s"),
                            ("led_peak_a", "LED peak", "A"),
                            ("effective_a", "effective current", "A")):
        if key not in s.quantiles:
            continue
        p5, p50, p95 = s.quantiles[key]
        lo, hi = s.corners.get(key, (math.nan, math.nan))
        rows.append([word, _eng(p5, unit), _eng(p50, unit), _eng(p95, unit),
                     f"{_eng(lo, unit)} .. {_eng(hi, unit)}"])
    over = f"{s.builds:,} builds (seed {s.seed}, {s.temp_range_c[0]:g}..{s.temp_range_c[1]:g} °C"
    if s.supply_range_v is not None:
        lo_v, hi_v = s.supply_range_v
        over += f", supply {lo_v:g}..{hi_v:g} V"
    _bullet(console, f"spread over {over}): {s.yield_fraction * 100:.0f} % within "
                     f"±{s.yield_band * 100:.0f} % of the period", indent="", hang="  ")
    console.print(simple_table(None, ["", "P5", "P50", "P95", "corners"], rows,
                               justify=["left", "right", "right", "right", "right"]))
    if s.supply_range_v is not None:
        _bullet(console, "the builds run anywhere in the supply range, so the P50 of the LED "
                         "peak and the currents sits below the nominal figures at the full "
                         "supply", indent="    ", hang="      ")
    shares = sorted(((v, k) for k, v in s.shares.items() if v > 0.005), reverse=True)
    if shares:
        # a no-break space keeps "55 %" on one line when the text wraps
        text = ", ".join(f"{_source_words(k)} {v * 100:.0f}\u00a0%" for v, k in shares)
        _bullet(console, f"period spread comes from: {text}", indent="    ", hang="      ")
    if c.median_note:
        _bullet(console, c.median_note, indent="    ", hang="      ")
    if s.stall_fraction or s.dark_fraction:
        console.print(f"    {s.stall_fraction * 100:.1f} % of builds stall, "
                      f"{s.dark_fraction * 100:.1f} % stay dark", markup=False)
    if c.rank == 1:
        _render_spread_drawing(console, s, target_s)


def _render_spread_drawing(console, s, target_s) -> None:
    """The period of every build as a small histogram (the best circuit only)."""
    from pulsepick.commands.pictures import oscillating_periods
    from pulsepick.textplot import spread_lines

    if not s.samples:
        return
    periods, missing = oscillating_periods(s)
    p5, _, p95 = s.quantiles["period_s"]
    if periods.size == 0 or not (math.isfinite(p5) and math.isfinite(p95)):
        return
    from pulsepick.render import plot_columns

    for line in spread_lines(periods, p5_s=p5, p95_s=p95, target_s=target_s,
                             yield_band=s.yield_band, not_drawn=missing,
                             width=plot_columns(console)):
        console.print(f"  {line}", markup=False, highlight=False)


def _render_drift(console, c) -> None:
    from pulsepick.render import simple_table

    dr = c.drift
    if dr is None:
        return
    rows = []
    for r in dr.rows():
        rows.append([f"{r['supply_v']:.2f} V", _eng(r["period_s"], "s"), _eng(r["flash_s"], "s"),
                     _eng(r["led_peak_a"], "A"), _eng(r["effective_a"], "A"), r["status"]])
    title = (f"through the night: period {dr.period_change_pct:+.1f} % at "
             f"{dr.period_change_to_v:.2f} V")
    console.print(simple_table(title, ["supply", "period", "flash", "peak", "effective",
                                       "status"], rows,
                               justify=["right"] * 5 + ["left"]))
    if dr.dark_below_v is not None:
        console.print(f"    the LED goes dark below {dr.dark_below_v:.2f} V", markup=False)
    if dr.unpowered_below_v is not None:
        console.print(f"    the chip leaves its supply range below {dr.unpowered_below_v:.2f} V",
                      markup=False)


def _render_waveform(console, c) -> None:
    """One period of the best circuit, drawn from its reference run (when available)."""
    import numpy as np

    from pulsepick import textplot
    from pulsepick.render import plot_columns

    ref = c.reference
    if ref is None or not ref.trace:
        return
    env, _ = c.design.env()
    high = ref.figures.row().get("high_s")
    console.print(f"  one period of #{c.rank} (reference simulation)")
    for line in textplot.waveform_lines(ref.trace["t_s"], ref.trace["vc_v"], ref.trace["led_a"],
                                        vt_plus=float(np.ravel(env.vt_plus)[0]),
                                        vt_minus=float(np.ravel(env.vt_minus)[0]),
                                        high_s=high if high and math.isfinite(high) else None,
                                        width=plot_columns(console)):
        console.print(f"  {line}", markup=False)
    console.print()


# ============================================================================ several lights

def _is_build(args) -> bool:
    from pulsepick.designfile import is_design_file
    from pulsepick.request import split_lights

    return is_design_file(args.phrase) or (args.phrase is not None
                                           and split_lights(args.phrase) is not None)


def _build_context(args) -> dict:
    """Options given on the command line that apply to every light."""
    out = {"supply": args.supply, "family": args.family, "series": args.series,
           "cap_series": args.cap_series, "timing_cap": args.timing_cap, "max_r": args.max_r,
           "min_r": args.min_r, "cap_range": args.cap_range, "buffered": args.buffered,
           "stages": args.stages, "cores": args.cores, "stock": args.stock, "top": args.top,
           "builds": args.builds, "seed": args.seed}
    led = _led(args)
    if led is not None:
        out["led"] = led
    return out


def build_request_from_args(args):
    """The :class:`~pulsepick.request.BuildRequest` of a several-lights phrase or a file.

    Returns ``(build request, design file or None)``.
    """
    from pulsepick.designfile import build_request, is_design_file, read_design
    from pulsepick.errors import RequestError
    from pulsepick.request import make_build_request, split_lights

    given = [f"--{k}" for k in ("every", "flash", "peak", "effective", "intensity")
             if getattr(args, k) is not None]
    if given:
        raise RequestError(f"{', '.join(given)} set one light's blink; with several lights "
                           "put the blink in the phrase or the design file")
    if _chip_overrides(args):
        raise RequestError("--vt-plus, --vt-minus, --rout and --cross-current describe one "
                           "chip; they apply to a single light")
    if getattr(args, "trim", False):
        raise RequestError("--trim sizes one light's trimmer; run 'pulsepick solve' on one "
                           "light's phrase with --trim")
    context = _build_context(args)
    if getattr(args, "chip", None):
        import os

        context["chip"] = os.path.abspath(args.chip)
    if is_design_file(args.phrase):
        design = read_design(args.phrase)
        overrides = {k: v for k, v in context.items() if v is not None}
        for key in ("max_packages", "period_tolerance", "lock_margin", "max_lock_share"):
            if getattr(args, key) is not None:
                overrides[key] = getattr(args, key)
        if args.spread_out:
            overrides["spread_out"] = True
        if args.dusk_detector is not None:
            overrides["dusk_detector"] = args.dusk_detector
        return build_request(design, **overrides), design
    phrases = split_lights(args.phrase)
    if context.get("chip"):
        from pulsepick.commands.circuit_options import profile_overrides

        context["family"], context["chip_overrides"] = profile_overrides(
            context.pop("chip"), context.get("family"), {})
    return make_build_request(
        phrases, max_packages=args.max_packages,
        dusk_detector=True if args.dusk_detector is None else args.dusk_detector,
        lock_margin=args.lock_margin, spread_out=bool(args.spread_out),
        period_tolerance=args.period_tolerance, source=args.phrase,
        max_lock_share=args.max_lock_share,
        **{k: v for k, v in context.items() if v is not None}), None


class BuildRun(NamedTuple):
    """What a several-lights solve computed (before any output)."""

    result: Any  # BuildResult
    request: Any  # BuildRequest
    design: Any  # the design file, or None for a phrase
    extras: dict  # storage, panel, charge diode, clamp for the buy list
    night: Any  # the design file's night, or None
    advice: Any  # the clamp advice, or None
    offered: bool  # every light has a circuit and the package plan exists


def compute_build(args) -> BuildRun:
    """Check the options and solve several lights (a phrase or a design file)."""
    from pulsepick.commands.pictures import check_picture_targets
    from pulsepick.designfile import is_design_file
    from pulsepick.errors import RequestError  # noqa: F401 (used below in main's code)
    from pulsepick.solve import default_jobs, solve_build

    design_path = args.phrase if is_design_file(args.phrase) else None
    check_picture_targets(args, [args.stock, design_path], with_buylist=True)
    breq, design = build_request_from_args(args)
    if design is not None and design.stock_path:
        check_picture_targets(args, [design.stock_path], with_buylist=True)
    jobs = default_jobs() if args.jobs is None else args.jobs
    extras = _build_extras(design)
    from pulsepick.commands.design_night import design_clamp, design_night

    night = None if design is None else design_night(design)
    advice = design_clamp(design)
    if advice is not None and advice.proposed_clamp_v is not None:
        extras["clamp_v"] = advice.proposed_clamp_v
        extras["clamp_w"] = advice.proposed_clamp_w
    elif advice is not None and advice.clamp_v is not None and advice.clamp_needed:
        # the file's own clamp is a part of the build: it goes in the buy list too
        extras["clamp_v"] = advice.clamp_v
        extras["clamp_w"] = advice.clamp_v * advice.isc_a
    result = solve_build(breq, jobs=jobs)
    offered = all(li.pick is not None for li in result.lights) and result.plan is not None
    return BuildRun(result, breq, design, extras, night, advice, offered)


def build_doc(run: BuildRun) -> dict:
    """The ``--json`` document of a several-lights solve."""
    night, advice = run.night, run.advice
    doc = build_json(run.result, **run.extras)
    doc["night"] = None if night is None else {
        "night_s": night.night_s, "given": night.given, "text": night.text,
        "note": night.note}
    if advice is not None:
        doc["clamp"] = {"v_possible_v": advice.v_possible_v, "v_rated_v": advice.v_rated_v,
                        "over": advice.over, "proposed_clamp_v": advice.proposed_clamp_v,
                        "proposed_clamp_w": advice.proposed_clamp_w}
        doc["cautions"] = list(advice.cautions) + doc["cautions"]
    return doc


def run_build(args) -> int:
    """Solve several lights, print the build report or JSON, write one buy list."""
    from pulsepick.render import dump_json, make_console

    done = compute_build(args)
    result, breq, extras, offered = done.result, done.request, done.extras, done.offered
    if args.buylist and offered:
        from pulsepick.export import write_atomic

        write_atomic(args.buylist, build_buylist_text(result, **extras), force=args.force)
    if args.json:
        dump_json(build_doc(done))
    else:
        render_build(make_console(), result, buylist=args.buylist if offered else None,
                     storage="storage" in extras, night=done.night,
                     cautions=() if done.advice is None else done.advice.cautions)
    if not offered:
        _nothing_line(breq.describe(), list(result.warnings) or [result.message])
        return 2
    from pulsepick.buildreport import build_pictures
    from pulsepick.commands.pictures import announce

    announce(args, build_pictures(args, result, build_lines(result, **extras), done.design))
    # offered, but over the lock share the request limits (--max-lock-share)
    return 0 if result.success else 3


def _build_extras(design) -> dict:
    """Storage, panel and charge diode of a design file, for the buy list."""
    from pulsepick.designfile import panel_part, storage_part

    if design is None:
        return {}
    out = {}
    if design.storage is not None:
        out["storage"] = storage_part(design)
    if design.panel is not None:
        out["panel"] = panel_part(design)
        diode = str(design.panel.get("diode", "schottky")).strip().lower()
        from pulsepick.errors import RequestError
        from pulsepick.parts.diode import DIODE_KEYS

        if diode not in DIODE_KEYS:
            raise RequestError(f"{design.path}: [panel] diode {diode!r} unknown; accepted: "
                               f"{', '.join(DIODE_KEYS)}")
        out["charge_diode"] = diode
    return out


def build_lines(result, *, storage=None, panel=None, charge_diode=None, clamp_v=None,
                clamp_w=None) -> tuple:
    """Every part of the build (``PartLine`` tuple), with the dusk holds' diodes, a
    decoupling capacitor per package and, when the panel can exceed the storage's rating,
    the proposed clamp."""
    from pulsepick.analysis.gating import hold_part_lines
    from pulsepick.analysis.multi import build_part_lines
    from pulsepick.partslist import charge_path_lines

    names = [li.name for li in result.lights]
    from pulsepick.packing import rate_part_lines

    holds = () if result.gating is None else hold_part_lines(result.gating, names)
    rates = result.rates or {}
    own = [rate_part_lines(rates[i], li.pick.parts) if i in rates else li.pick.parts
           for i, li in enumerate(result.lights)]
    lines = build_part_lines(names, own, result.plan, storage=storage, panel=panel,
                             charge_diode=charge_diode, hold_lines=holds)
    return lines + charge_path_lines(lines, result.plan, clamp_v=clamp_v, clamp_w=clamp_w)


def build_buylist_text(result, **extras) -> str:
    """One buy list (CSV) for the whole build, identical parts summed across the lights
    (see :func:`pulsepick.export.build_buylist_text`)."""
    from pulsepick import export

    return export.build_buylist_text(result, build_lines(result, **extras))


def _risk_json(names, r) -> dict:
    return {"lights": [names[r.a], names[r.b]], "ratio": r.ratio,
            "band_p5": r.band[0], "band_p95": r.band[1], "nearest": r.nearest,
            "nominal_near": r.nominal_near, "band_near": r.band_near,
            "clearance": r.clearance, "at_risk": r.at_risk}


def _rate_text(lr) -> str:
    """One paragraph: the photoresistor network and the period it gives against light."""
    import math

    net, rate = lr.clamp.network, lr.rate
    per, lux = rate.period_s["typ"], rate.lux
    clamps = [f"{_eng(net.series_ohm, 'Ω')} in series" if net.series_ohm > 0 else "",
              f"{_eng(net.parallel_ohm, 'Ω')} across it" if math.isfinite(net.parallel_ohm)
              else ""]
    clamps = [c for c in clamps if c]
    return (f"{net.ldr.name} in place of the timing resistor"
            + (f", with {' and '.join(clamps)}" if clamps else "")
            + f": typical period {_eng(float(per[0]), 's')} at {lux[0]:g} lx, "
            f"{_eng(float(per[-1]), 's')} at {lux[-1]:g} lx"
            + ("" if rate.within_range is None else
               "; every corner within " if rate.within_range else "; not every corner within ")
            + (f"{_eng(rate.period_range_s[0], 's')}..{_eng(rate.period_range_s[1], 's')}"
               if rate.period_range_s else ""))


def _rate_json(names, lr) -> dict:
    """A photoresistor light (pulsepick.packing.LightRate) as plain data."""
    net, rate = lr.clamp.network, lr.rate
    per = rate.period_s["typ"]
    return {"light": names[lr.light], "photoresistor": lr.key,
            "series_ohm": net.series_ohm,
            "parallel_ohm": None if net.parallel_ohm == float("inf") else net.parallel_ohm,
            "lux": [float(x) for x in rate.lux], "period_typ_s": [float(x) for x in per],
            "period_range_s": list(rate.period_range_s or ()),
            "within_range": rate.within_range}


def _gating_json(names, gating) -> dict | None:
    """The dusk gating (pulsepick.analysis.gating.BuildGating) as plain data."""
    if gating is None:
        return None
    return {"arrangement": gating.arrangement, "detector_gates": gating.detector_gates,
            "hold_diode": gating.diode, "held_supply_a": gating.held_a,
            "held_supply_end_a": gating.held_end_a,
            "lights": [{"name": names[h.light], "hold": h.kind, "held_supply_a": h.held_a,
                        "held_supply_end_a": h.held_end_a, "node_v": h.node_v,
                        "limit_v": h.limit_v, "holds": h.holds} for h in gating.holds]}


def _share_json(names, share) -> dict | None:
    """The lock share (pulsepick.analysis.lock.LockShare) as plain data."""
    if share is None:
        return None
    return {"lock_share": share.share, "stderr": share.stderr, "builds": share.builds,
            "seed": share.seed, "margin": share.margin, "max_q": share.max_q,
            "packages": [{"ref": f"U{g}", "lock_share": v}
                         for g, v in sorted(share.packages.items())],
            "pairs": [{"lights": [names[p.a], names[p.b]], "package": f"U{p.package}",
                       "lock_share": p.share, "nearest": p.nearest} for p in share.pairs]}


def _lock_grade(share: float) -> str:
    from pulsepick.analysis.lock import lock_grade

    return lock_grade(share)


def build_json(result, **extras) -> dict:
    """The whole build as plain JSON data."""
    from pulsepick import __version__
    from pulsepick.export import candidate_json, solve_cautions
    from pulsepick.render import word_hints

    breq = result.request
    names = [li.name for li in result.lights]
    plan = result.plan
    out = {
        "pulsepick": __version__,
        "build": breq.describe(),
        "success": result.success,
        "message": result.message,
        "lock_margin": breq.lock_margin,
        "spread_out": breq.spread_out,
        "period_tolerance": breq.period_tolerance,
        "max_packages": breq.max_packages,
        "lights": [{
            "name": li.name, "request": lr.request.to_dict(), "asked_period_s": li.asked_s,
            "moved": li.moved,
            "circuit": None if li.pick is None else candidate_json(li.pick),
            "explanations": list(li.result.explanations),
        } for li, lr in zip(result.lights, breq.lights, strict=True)],
        "packages": None if plan is None else [
            {"ref": f"U{p.number}", "family": p.family, "gates_used": p.gates_used,
             "lights": [names[i] for i in p.lights], "dusk_detector": p.dusk}
            for p in plan.packages],
        "gates": None if plan is None else {
            "oscillators": plan.oscillators, "buffers": plan.buffers, "dusk": plan.dusk,
            "needed": plan.gates_needed, "timers": plan.timers, "count": plan.describe()},
        "lock_risks": [_risk_json(names, r) for r in result.risks],
        "lock_share": _share_json(names, result.lock_share),
        "lock_grade": None if result.lock_share is None else
        _lock_grade(result.lock_share.share),
        "max_lock_share": breq.max_lock_share,
        "lock_share_before_spread_out": _share_json(names, result.lock_share_before),
        "lock_remedies": [{"action": r.action, "lock_share": r.share,
                           "option": word_hints(r.option) if r.option else ""}
                          for r in result.remedies],
        "lock_risks_before_spread_out": None if result.risks_before is None else
        [_risk_json(names, r) for r in result.risks_before],
        "total_supply_avg_a": result.total_supply_a,
        "dusk_gating": _gating_json(names, result.gating),
        "light_rates": [_rate_json(names, r) for r in (result.rates or {}).values()],
        "warnings": list(result.warnings),
        "cautions": list(solve_cautions(breq, storage="storage" in extras)),
    }
    if plan is not None and all(li.pick is not None for li in result.lights):
        out["parts"] = [p.to_dict() for p in build_lines(result, **extras)]
    return out


def render_build(console, result, *, buylist: str | None = None, storage: bool = False,
                 night=None, cautions=()) -> None:
    """The terminal report of a several-lights build (readable at 100 columns).

    ``storage``: the build names a storage part (the supercapacitor caution applies).
    ``night``: the design file's night (:class:`pulsepick.commands.design_night.DesignNight`).
    ``cautions``: cautions of the charge path (over-voltage and the proposed clamp).
    """
    from pulsepick.export import solve_cautions
    from pulsepick.render import print_wrapped, simple_table

    breq = result.request
    names = [li.name for li in result.lights]
    console.print(f"[bold]pulsepick solve[/bold]: {breq.describe()}", highlight=False)
    console.print()
    rows = []
    for li in result.lights:
        c = li.pick
        if c is None:
            rows.append([li.name, _eng(li.asked_s, "s"), "nothing offered", "", "", "", "",
                         ""])
            continue
        f = c.figures
        rows.append([li.name, _eng(li.asked_s, "s"), c.design.topo.label(),
                     c.design.chip.family, _eng(f["period_s"], "s")
                     + (" *" if li.moved else ""), _eng(f["flash_s"], "s"),
                     _eng(f["led_peak_a"], "A"), _eng(f["supply_avg_a"], "A")])
    console.print(simple_table(
        "Lights" + (" (* period moved by --spread-out)" if any(li.moved for li in
                                                              result.lights) else ""),
        ["light", "asked", "circuit", "chip", "period", "flash", "peak", "supply"], rows,
        justify=["left", "right", "left", "left", "right", "right", "right", "right"]))
    console.print()
    if result.plan is None:
        console.print(f"[bold]{result.message}[/bold]", highlight=False)
        for w in result.warnings:
            print_wrapped(console, w, indent="  - ", hang="    ")
        console.print()
        _render_cautions(console, tuple(cautions) + tuple(solve_cautions(breq, storage=storage)))
        return
    plan = result.plan
    console.print("[bold]Packages[/bold]")
    print_wrapped(console, f"{plan.describe()}: {len(plan.packages)} package"
                           f"{'s' if len(plan.packages) != 1 else ''}")
    for p in plan.packages:
        who = ", ".join(names[i] for i in p.lights) or "-"
        extra = " + dusk detector" if p.dusk else ""
        print_wrapped(console, f"U{p.number} {p.family}: {p.gates_used} gate"
                               f"{'s' if p.gates_used != 1 else ''} ({who}{extra})")
    console.print()
    if result.risks:
        share = result.lock_share
        rows = []
        for r in result.risks:
            band = "-" if r.band[0] != r.band[0] else f"{r.band[0]:.3f}..{r.band[1]:.3f}"
            ps = share.pair(r.a, r.b) if share is not None else None
            rows.append([f"{names[r.a]} / {names[r.b]}", f"{r.ratio:.3f}", band,
                         ps.nearest if ps is not None and ps.share > 0 else r.nearest,
                         f"{ps.share:.1%}" if ps is not None else "-"])
        console.print(simple_table(
            f"Lock risk: share of builds with a pair within {breq.lock_margin:.0%} of p:q, "
            "q <= 4",
            ["pair", "ratio", "P5..P95", "nearest", "lock share"], rows,
            justify=["left", "right", "right", "right", "right"]))
        if share is not None:
            per_pkg = ", ".join(f"U{g} {v:.1%}" for g, v in sorted(share.packages.items()))
            print_wrapped(console, f"any pair near a lock: {share.share:.1%} of "
                                   f"{share.builds:,} builds (seed {share.seed}; {per_pkg}); "
                                   "each light's own parts vary, the package's thresholds, "
                                   "supply and temperature are shared")
        console.print()
    if result.spread_out is not None:
        so = result.spread_out
        console.print("[bold]Spread-out periods[/bold] (* in the table of lights)")
        print_wrapped(console, so.message)
        console.print()
    if result.gating is not None:
        g = result.gating
        console.print(f"[bold]Dusk gating[/bold] ({g.detector_gates} gate"
                      f"{'s' if g.detector_gates != 1 else ''})", highlight=False)
        print_wrapped(console, g.arrangement)
        console.print()
    console.print("[bold]Energy budget[/bold]")
    night_s = 12 * 3600 if night is None else night.night_s
    night_c = _eng(result.total_supply_a * night_s, "C")
    night_words = "a 12 h night" if night is None else f"the {night.text}"
    held = ("" if result.gating is None else
            f"; held by day {_eng(result.gating.held_a, 'A')} besides the chips' quiescent "
            "current")
    print_wrapped(console, f"all lights draw {_eng(result.total_supply_a, 'A')} on average at "
                           f"the design supply ({night_c} over {night_words}){held}; "
                           "'pulsepick night' runs the storage")
    if night is not None and night.note:
        print_wrapped(console, night.note)
    console.print()
    # the summary screen ends with the warnings and the verdict; then one screen per light
    if result.warnings:
        console.print("[bold]Warnings[/bold]")
        for w in result.warnings:
            print_wrapped(console, w, indent="  ! ", hang="    ")
        console.print()
    console.print(f"[bold]{result.message}[/bold]", highlight=False)
    console.print()
    rates = result.rates or {}
    for i, li in enumerate(result.lights):
        c = li.pick
        console.print(f"[bold]{li.name}[/bold]: {c.design.topo.label()} on "
                      f"{c.design.chip.family}, {c.design.supply_v:g} V", highlight=False)
        own = c.parts
        if i in rates:
            from pulsepick.packing import rate_part_lines

            own = rate_part_lines(rates[i], c.parts)
        prow = [[p.ref, p.display, p.code, p.tolerance, p.dielectric or "-", p.role]
                for p in own if p.kind != "chip"]
        console.print(simple_table(None, ["ref", "value", "code", "tol", "kind", "role"], prow))
        if i in rates:
            print_wrapped(console, "rate set by the light: " + _rate_text(rates[i]),
                          indent="  * ", hang="    ")
        for w in list(c.notes) + list(c.warnings):
            print_wrapped(console, w, indent="  - ", hang="    ")
        console.print()
    if buylist:
        console.print(f"Buy list of the whole build written to {buylist}", markup=False)
        console.print()
    _render_cautions(console, tuple(cautions) + tuple(solve_cautions(breq, storage=storage)))
