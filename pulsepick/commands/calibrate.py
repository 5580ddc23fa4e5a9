"""``pulsepick calibrate``: a chip's thresholds from a timed test oscillator."""

from __future__ import annotations

import argparse
import datetime

from pulsepick.analysis.bench import (
    DEFAULT_RESOLUTION_S,
    Timing,
    calibrate,
    oscillator_design,
    recipe,
)
from pulsepick.commands.bench_options import percent, resolution, timed
from pulsepick.errors import RequestError
from pulsepick.parts.logic import FAMILY_KEYS
from pulsepick.units import format_eng, format_rkm, parse_quantity, parse_value

NAME = "calibrate"
SUMMARY = "measure a Schmitt chip's VT+ and VT- by timing a test oscillator"
EXAMPLES = [
    "pulsepick calibrate --recipe --family hc --supply 3V",
    "pulsepick calibrate --recipe --family hc --supply 3V --stock drawer.csv",
    'pulsepick calibrate --r 1M5 --c 4u7 --supply 3V --family hc '
    '--period "10 periods in 61 s" --high 2.6s',
    "pulsepick calibrate --r 1M5 --c 4u7 --supply 3V --family hc --high 2.6s --low 3.5s "
    "--save chip.toml",
    "pulsepick calibrate --r 1M5 --c 4u7 --supply 3V --period 6.1s --duty 43% --json",
]


def add_arguments(parser: argparse.ArgumentParser) -> None:
    g = parser.add_argument_group("the test oscillator")
    g.add_argument("--recipe", action="store_true",
                   help="print a test oscillator to build and how to time it")
    g.add_argument("--stock", metavar="FILE.csv",
                   help="with --recipe: take R and C from your parts drawer")
    g.add_argument("--r", metavar="VALUE", help="timing resistor, e.g. 1M5")
    g.add_argument("--c", metavar="VALUE", help="timing capacitor, e.g. 4u7")
    g.add_argument("--supply", default="3V", metavar="V", help="supply voltage (default 3V)")
    g.add_argument("--family", default="hc", metavar="KEY",
                   help=f"Schmitt family: {', '.join(FAMILY_KEYS)} (default hc)")
    g.add_argument("--led", default="red", metavar="COLOUR", help="LED on the spare gate")
    g.add_argument("--timing-cap", default="film-pet", metavar="KIND",
                   help="capacitor kind of C (sets its usual tolerance; default film-pet)")
    g.add_argument("--r-tol", metavar="PCT", help="R tolerance (default: from its series)")
    g.add_argument("--c-tol", metavar="PCT", help="C tolerance (default: usual for its kind)")
    m = parser.add_argument_group("what you timed (give two)")
    m.add_argument("--high", metavar="T", help="time the LED is lit (timing output high)")
    m.add_argument("--low", metavar="T", help="time the LED is dark")
    m.add_argument("--period", metavar="T", help='one period, or "10 periods in 58 s"')
    m.add_argument("--duty", metavar="PCT", help="lit share of the period, e.g. 43%%")
    m.add_argument("--resolution", metavar="T",
                   help=f"stopwatch uncertainty (default {DEFAULT_RESOLUTION_S:g}s)")
    m.add_argument("--supply-current", metavar="A",
                   help="measured draw of the test oscillator (saved in the profile; it "
                        "replaces the crossing-current estimate)")
    o = parser.add_argument_group("output")
    o.add_argument("--save", metavar="FILE.toml", help="write a chip profile for --chip")
    o.add_argument("--force", action="store_true", help="replace an existing --save file")
    o.add_argument("--json", action="store_true", help="print plain JSON on stdout")


def _led(key: str):
    from pulsepick.parts.led import LED_KEYS, get_led

    if key not in LED_KEYS:
        raise RequestError(f"unknown --led {key!r}; accepted: {', '.join(LED_KEYS)}")
    return get_led(key)


def _family(text: str) -> str:
    key = (text or "").strip().lower()
    if key not in FAMILY_KEYS:
        raise RequestError(f"--family {text!r}: calibrate measures a Schmitt chip; accepted: "
                           f"{', '.join(FAMILY_KEYS)}")
    return key


def timing_from_args(args) -> Timing:
    """The two measured phases from the given pair of figures."""
    res = resolution(args.resolution, DEFAULT_RESOLUTION_S)
    given = [k for k in ("high", "low", "period", "duty") if getattr(args, k) is not None]
    pairs = ({"high", "low"}, {"period", "high"}, {"period", "low"}, {"period", "duty"})
    if set(given) not in pairs:
        got = ", ".join("--" + g for g in given) or "none"
        raise RequestError("give two timed figures: --high T --low T, --period T --high T, "
                           f"or --period T --duty PCT (got {got})")
    high = low = None
    if args.high:
        high, n = timed(args.high, "--high", "2.6s")
        high_u = res / n
    if args.low:
        low, n = timed(args.low, "--low", "3.5s")
        low_u = res / n
    if args.period:
        period, n = timed(args.period, "--period")
        per_u = res / n
        if args.duty:
            high = period * percent(args.duty, "--duty")
            high_u = res
        if high is not None and low is None:
            low, low_u = period - high, per_u + high_u
        elif low is not None and high is None:
            high, high_u = period - low, per_u + low_u
        if not (high > 0 and low > 0):
            raise RequestError(f"the lit time must be shorter than the period ({period:g} s); "
                               "check --period and --high/--low/--duty")
    how = f"stopwatch resolution {res:g} s; lit {high:g} ± {high_u:.3g} s, dark {low:g} ± " \
          f"{low_u:.3g} s"
    return Timing(high_s=high, low_s=low, high_unc_s=high_u, low_unc_s=low_u, how=how)


def _tolerances(args, design) -> tuple[float, tuple[float, float]]:
    from pulsepick.analysis.spread import part_tolerances

    tols = {t.name: t for t in part_tolerances(design)}
    r_name = next(t for t in tols.values() if t.kind == "R" and t.name != "rs").name
    c_name = next(t for t in tols.values() if t.kind == "C").name
    r_tol = percent(args.r_tol, "--r-tol") * 100 if args.r_tol else tols[r_name].tol_plus_pct
    if args.c_tol:
        c = percent(args.c_tol, "--c-tol") * 100
        c_tol = (c, c)
    else:
        c_tol = (tols[c_name].tol_minus_pct, tols[c_name].tol_plus_pct)
    return r_tol, c_tol


def run(args) -> int:
    from pulsepick.output.render import dump_json, make_console

    family = _family(args.family)
    supply = parse_quantity(args.supply, "voltage", bare_ok=True)
    led = _led(args.led)
    if args.recipe:
        return _run_recipe(args, family, supply, led)
    missing = [o for o, v in (("--r", args.r), ("--c", args.c)) if v is None]
    if missing:
        raise RequestError(f"give the test oscillator's {' and '.join(missing)} (e.g. --r 1M5 "
                           "--c 4u7), or --recipe for one to build")
    r = parse_value(args.r, unit="ohm")
    c = parse_value(args.c, unit="F")
    design = oscillator_design(family, r, c, supply, led, timing_cap=args.timing_cap)
    timing = timing_from_args(args)
    r_tol, c_tol = _tolerances(args, design)
    current = None
    if args.supply_current:
        current = parse_quantity(args.supply_current, "current")
    if args.save:
        from pulsepick.output.export import check_target

        check_target(args.save, args.force, "--save")
    cal = calibrate(design, timing, r_tol_pct=r_tol, c_tol_pct=c_tol)
    if args.save:
        from pulsepick.output.export import write_atomic
        from pulsepick.parts.chipprofile import ChipProfile, profile_text

        profile = ChipProfile(family=family, supply_v=supply, vt_plus_v=round(cal.vt_plus_v, 4),
                              vt_minus_v=round(cal.vt_minus_v, 4), supply_current_a=current,
                              source="measured", date=datetime.date.today().isoformat())
        write_atomic(args.save, profile_text(profile), force=args.force)
    if args.json:
        dump_json(calibration_json(cal, family, supply, current, args.save))
        return 0
    render(make_console(), cal, family, supply, args.save)
    return 0


def calibration_json(cal, family: str, supply: float, current, saved) -> dict:
    return {
        "vt_plus_v": cal.vt_plus_v,
        "vt_minus_v": cal.vt_minus_v,
        "vt_plus_range_v": list(cal.vt_plus_range_v),
        "vt_minus_range_v": list(cal.vt_minus_range_v),
        "vt_plus_percentile": cal.vt_plus_pct,
        "vt_minus_percentile": cal.vt_minus_pct,
        "limits_v": {k: dict(zip(("min", "typ", "max"), v, strict=True))
                     for k, v in cal.limits_v.items()},
        "supply_v": supply,
        "family": family,
        "supply_current_a": current,
        "saved": saved,
        "assumptions": cal.assumptions,
        "warnings": list(cal.warnings),
    }


def _ordinal_pct(p: float) -> str:
    return f"P{p:.0f}" if 0.5 <= p <= 99.5 else ("below P1" if p < 0.5 else "above P99")


def render(console, cal, family: str, supply: float, saved) -> None:
    from pulsepick.output.render import print_wrapped

    d = cal.design
    values = "  ".join(f"{'R' if k.startswith('r') else 'C'} "
                       f"{format_rkm(v, 'R' if k.startswith('r') else 'C')}"
                       for k, v in list(d.values.items())[:2])
    console.print(f"[bold]Chip thresholds[/bold]: {family} at {supply:g} V "
                  f"(test oscillator {values})")
    for key, word, value, rng, pct in (
            ("vt_plus", "VT+", cal.vt_plus_v, cal.vt_plus_range_v, cal.vt_plus_pct),
            ("vt_minus", "VT-", cal.vt_minus_v, cal.vt_minus_range_v, cal.vt_minus_pct)):
        lo, typ, hi = cal.limits_v[key]
        console.print(f"  {word}  {value:.3f} V  (range {rng[0]:.3f} .. {rng[1]:.3f} V)",
                      markup=False)
        console.print(f"       {_ordinal_pct(pct)} of the datasheet spread (limits {lo:g} .. "
                      f"{hi:g} V, typical {typ:g} V)", markup=False)
    console.print("Assumptions:")
    print_wrapped(console, f"{cal.timing.how}; R ±{cal.r_tol_pct:g} %, C "
                  f"-{cal.c_tol_pct[0]:g}/+{cal.c_tol_pct[1]:g} %; the range covers every "
                  "corner of these")
    print_wrapped(console, "percentile: " + cal.assumptions["spread_model"])
    if cal.c_tol_pct[1] > 2.0:
        print_wrapped(console, "C's tolerance sets most of the range: measure C with a meter "
                      "and give its value with --c-tol 1% to narrow it")
    for w in cal.warnings:
        print_wrapped(console, "warning: " + w)
    if saved:
        console.print(f"Saved the chip profile to {saved}; use it with --chip {saved}",
                      markup=False)


def _run_recipe(args, family: str, supply: float, led) -> int:
    from pulsepick.analysis.cautions import LOW_VOLTAGE_ONLY
    from pulsepick.output.render import dump_json, make_console, print_wrapped

    rs = cs = None
    if args.stock:
        from pulsepick.request import read_stock

        stock = read_stock(args.stock)
        rs = list(stock.resistors())
        cs = [v for v, _ in stock.capacitors((args.timing_cap,))]
    rec = recipe(family, supply, led, resistors=rs, capacitors=cs)
    cmd = (f"pulsepick calibrate --r {format_rkm(rec.r_ohm, 'R')} --c "
           f"{format_rkm(rec.c_f, 'C')} --supply {supply:g}V --family {family} "
           f"--period \"10 periods in {10 * rec.period_s:.0f} s\" --high {rec.high_s:.1f}s")
    if args.json:
        dump_json({"r_ohm": rec.r_ohm, "c_f": rec.c_f, "supply_v": supply, "family": family,
                   "expected": {"period_s": rec.period_s, "high_s": rec.high_s,
                                "low_s": rec.low_s},
                   "from_stock": rec.from_stock, "then": cmd})
        return 0
    console = make_console()
    where = "from your drawer" if rec.from_stock else "standard E6 values"
    console.print(f"[bold]Test oscillator[/bold] for a {family} chip at {supply:g} V ({where})")
    lines = [
        f"R  {format_eng(rec.r_ohm, 'Ω')} ({format_rkm(rec.r_ohm, 'R')}) from gate 1's "
        "output to its input",
        f"C  {format_eng(rec.c_f, 'F')} ({format_rkm(rec.c_f, 'C')}, {args.timing_cap}) from "
        "gate 1's input to ground",
        "gate 2's input to gate 1's output; the LED with 1 kΩ in series from the supply to "
        "gate 2's output (it lights while gate 1's output is high)",
        "every unused input to ground; 100 nF across the chip's supply pins",
        f"with a typical chip: period {rec.period_s:.1f} s, lit {rec.high_s:.1f} s, dark "
        f"{rec.low_s:.1f} s",
    ]
    for line in lines:
        print_wrapped(console, line)
    console.print("How to time it:")
    for line in (
        "let it run a minute first; start the stopwatch as the LED lights and stop it as it "
        "lights for the 11th time: that is 10 periods",
        "then time the lit phase 3-5 times and take the middle figure (a phone camera recording "
        "timed frame by frame is better)",
        "then run, with your figures (one line, to copy and paste):",
    ):
        print_wrapped(console, line)
    # a command to copy is never wrapped, whatever the terminal's width
    console.print(f"    {cmd}", soft_wrap=True, markup=False, highlight=False)
    print_wrapped(console, LOW_VOLTAGE_ONLY, indent="", hang="  ")
    return 0
