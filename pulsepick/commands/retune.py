"""``pulsepick retune``: a built blinker, what you measured on it, what to change."""

from __future__ import annotations

import argparse

from pulsepick.analysis.bench import DEFAULT_RESOLUTION_S
from pulsepick.analysis.retune import Measured, retune
from pulsepick.commands.bench_options import EXAMPLE_FLASHES, resolution, timed
from pulsepick.commands.circuit_options import (
    VALUE_OPTIONS,
    add_circuit_arguments,
    design_from_args,
    solver_chip,
)
from pulsepick.errors import RequestError
from pulsepick.units import format_eng, format_rkm

NAME = "retune"
SUMMARY = "from a built blinker's measured period to the one or two parts to change"
EXAMPLES = [
    "pulsepick retune --core schmitt --r 2M2 --c 1u --stage pulse --cp 22u --rs 47 "
    '--supply 3V --want "one flash every 3 s" --measured-period "10 flashes in 39 s"',
    'pulsepick retune --from-solve "one flash every 3 s" --pick 1 --measured-period 3.9s',
    "pulsepick retune --design examples/garden-path-markers.toml --light \"gate\" "
    "--measured-period 3.4s --measured-flash 60ms",
    "pulsepick retune --core timer555 --ra 1M --rb 22k --c 2u2 --stage direct --lit low "
    "--rs 220 --supply 3V --every 1.6s --measured-period 1.75s --json",
    'pulsepick retune --from-solve "one flash every 3 s" --measured-period 3.9s '
    "--stock drawer.csv --buylist new-parts.csv",
]


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_circuit_arguments(parser)
    src = parser.add_argument_group("or the circuit from the solver or a design file")
    src.add_argument("--from-solve", metavar="PHRASE",
                     help="the circuit the solver offers for this blink (with --pick)")
    from pulsepick.limits import MAX_TOP, count_type

    src.add_argument("--pick", type=count_type("--pick", 1, MAX_TOP), default=1, metavar="N",
                     help="which offered circuit was built (default 1)")
    src.add_argument("--design", metavar="FILE.toml", help="a design file (with --light)")
    src.add_argument("--light", metavar="NAME", help="the light of the design file")
    want = parser.add_argument_group("what was wanted (default: what it was solved for)")
    want.add_argument("--want", metavar="PHRASE", help='a blink, e.g. "one flash every 3 s"')
    want.add_argument("--every", metavar="T", help="wanted period, e.g. 3s")
    want.add_argument("--flash", metavar="T", help="wanted flash length, e.g. 40ms")
    m = parser.add_argument_group("what was measured")
    m.add_argument("--measured-period", metavar="T",
                   help='the period, e.g. 3.9s or "10 flashes in 39 s"')
    m.add_argument("--measured-flash", metavar="T", help="the flash length, e.g. 60ms")
    m.add_argument("--measured-supply-current", metavar="A",
                   help="the whole blinker's average draw, e.g. 45uA")
    m.add_argument("--resolution", metavar="T",
                   help=f"stopwatch uncertainty (default {DEFAULT_RESOLUTION_S:g}s)")
    o = parser.add_argument_group("changes and output")
    o.add_argument("--series", default="E24", metavar="E", help="resistor series (default E24)")
    o.add_argument("--cap-series", default="E12", metavar="E",
                   help="capacitor series (default E12)")
    o.add_argument("--stock", metavar="FILE.csv", help="take values from your parts drawer")
    o.add_argument("--top", type=count_type("--top", 1, MAX_TOP), default=5, metavar="N",
                   help=f"changes shown, 1 to {MAX_TOP} (default 5)")
    o.add_argument("--buylist", metavar="FILE.csv", help="write the new parts of change 1")
    o.add_argument("--force", action="store_true", help="replace an existing --buylist file")
    o.add_argument("--json", action="store_true", help="print plain JSON on stdout")


def _circuit(args):
    """``(design, targets or None)`` from the check options, the solver or a design file."""
    given = [opt for name, opt in VALUE_OPTIONS.items()
             if getattr(args, f"value_{name}") is not None]
    ways = [w for w, on in (("the circuit values", bool(given)),
                            ("--from-solve", args.from_solve is not None),
                            ("--design", args.design is not None)) if on]
    if len(ways) != 1:
        raise RequestError("give the built circuit one way: the circuit values (--core, --r, "
                           "--c ...), --from-solve PHRASE with --pick N, or --design FILE "
                           "with --light NAME")
    if given:
        return design_from_args(args), None
    from pulsepick.solve import default_jobs

    if args.pick < 1:
        raise RequestError(f"--pick {args.pick}: give a circuit number of at least 1")
    if args.from_solve is not None:
        from pulsepick.request import make_request
        from pulsepick.solve import solve

        family, measured = solver_chip(args)
        req = make_request(args.from_solve, supply=args.supply, family=family,
                           led=args.led, chip_overrides=measured)
        result = solve(req, jobs=default_jobs())
        if args.pick > len(result.candidates):
            raise RequestError(f"--pick {args.pick}: the solver offers "
                               f"{len(result.candidates)} circuits for {args.from_solve!r}")
        return result.candidates[args.pick - 1].design, req.targets
    from pulsepick.designfile import build_request, read_design
    from pulsepick.solve import solve_build

    design = read_design(args.design)
    names = [li.name for li in design.lights]
    if args.light not in names:
        raise RequestError(f"--light {args.light!r}: the design file's lights are "
                           f"{', '.join(repr(n) for n in names)}")
    built = solve_build(build_request(design), jobs=default_jobs(), assess_picks=False)
    light = next(li for li in built.lights if li.name == args.light)
    if light.pick is None:
        raise RequestError(f"{args.design}: the solver offers nothing for {args.light!r}")
    req = next(lr.request for lr in built.request.lights if lr.name == args.light)
    return light.pick.design, req.targets


def _wanted(args, solved) -> tuple[float, float | None]:
    from pulsepick.request import merge_targets

    if args.want or args.every or args.flash:
        t = merge_targets(args.want, {"every": args.every, "flash": args.flash})
        return t.period_s, t.flash_s
    if solved is None:
        raise RequestError("say what was wanted: --want \"one flash every 3 s\" or --every 3s "
                           "(a circuit from --from-solve or --design defaults to its request)")
    return solved.period_s, solved.flash_s


def measured_from_args(args) -> Measured:
    from pulsepick.units import parse_quantity

    if args.measured_period is None:
        raise RequestError('give what you timed: --measured-period 3.9s or "10 flashes in '
                           '39 s"')
    res = resolution(args.resolution, DEFAULT_RESOLUTION_S)
    period, n = timed(args.measured_period, "--measured-period", EXAMPLE_FLASHES)
    flash = flash_u = None
    if args.measured_flash:
        flash, k = timed(args.measured_flash, "--measured-flash", "60ms")
        flash_u = min(res / k, 0.5 * flash)  # a short flash is timed on camera frames
    current = None
    if args.measured_supply_current:
        current = parse_quantity(args.measured_supply_current, "current")
    return Measured(period_s=period, period_unc_s=res / n, flash_s=flash,
                    flash_unc_s=flash_u or 0.0, supply_current_a=current)


def run(args) -> int:
    from pulsepick.output.render import dump_json, make_console

    if args.top < 1:
        raise RequestError(f"--top {args.top}: give at least 1")
    measured = measured_from_args(args)
    stock = None
    if args.stock:
        from pulsepick.request import read_stock

        stock = read_stock(args.stock)
    from pulsepick.series import SERIES_NAMES

    for opt, name in (("--series", args.series), ("--cap-series", args.cap_series)):
        if name.strip().upper() not in SERIES_NAMES:
            raise RequestError(f"{opt} {name!r}: accepted: {', '.join(SERIES_NAMES)}")
    if args.buylist:
        from pulsepick.output.export import check_outputs

        check_outputs([("--buylist", args.buylist)], [args.stock, args.design],
                      force=args.force)
    design, solved = _circuit(args)
    period, flash = _wanted(args, solved)
    result = retune(design, measured, period, want_flash_s=flash,
                    r_series=args.series.strip().upper(),
                    c_series=args.cap_series.strip().upper(), stock=stock, top=args.top)
    if args.buylist and result.changes:
        from pulsepick.output.export import write_atomic

        write_atomic(args.buylist, buylist_text(result), force=args.force)
    if args.json:
        dump_json(result_json(result))
    else:
        render(make_console(), result, args.buylist)
    return 0 if result.changes else 2


def result_json(r) -> dict:
    inf = r.inferred
    return {
        "circuit": r.design.topo.label(),
        "values": {f"{k}_{'ohm' if k.startswith('r') else 'f'}": v
                   for k, v in r.design.values.items()},
        "wanted": {"period_s": r.want_period_s, "flash_s": r.want_flash_s},
        "measured": {"period_s": r.measured.period_s, "period_unc_s": r.measured.period_unc_s,
                     "flash_s": r.measured.flash_s,
                     "supply_current_a": r.measured.supply_current_a},
        "inferred": {"vt_plus_v": inf.vt_plus_v, "vt_minus_v": inf.vt_minus_v,
                     "which": inf.which, "c1_scale": inf.c_scale,
                     "cross_current_a": inf.cross_current_a, "text": inf.text},
        "predicted_now": r.predicted_now,
        "changes": [{
            "rank": c.rank, "kind": c.kind,
            "values": {f"{k}_{'ohm' if k.startswith('r') else 'f'}": v
                       for k, v in c.values.items()},
            "parts": list(c.parts),
            "predicted": c.predicted,
            "period_range_s": list(c.period_range_s),
            "note": c.note,
        } for c in r.changes],
        "notes": list(r.notes),
    }


def new_part_lines(change) -> tuple:
    """``PartLine`` of each new part of a change (for the buy list)."""
    from pulsepick.partslist import PartLine
    from pulsepick.series import which_series

    lines = []
    for ref, kind, value, role in change.new_parts:
        is_r = kind in ("R", "RV")
        series = "" if kind == "RV" else next(iter(which_series(value)), "")
        lines.append(PartLine(
            ref=ref, kind="trimmer" if kind == "RV" else ("resistor" if is_r else "capacitor"),
            value=value, unit="ohm" if is_r else "F",
            display=format_eng(value, "Ω" if is_r else "F"),
            code=format_rkm(value, "R" if is_r else "C"), series=series, tolerance="",
            tolerance_pct=None, dielectric="", rating="", role=role,
            note=change.note))
    return tuple(lines)


def buylist_text(result) -> str:
    """The buy list of change 1's new parts, in the buy-list format of
    :mod:`pulsepick.output.export` (BOM, header first, provenance columns, safe cells)."""
    from pulsepick import __version__
    from pulsepick.output.export import part_rows, today, write_buylist_csv

    c = result.changes[0]
    provenance = {
        "made_by": f"pulsepick {__version__}",
        "request": f"retune: the new parts of change 1; wanted period "
                   f"{result.want_period_s:g} s",
        "seed": "", "builds": "",
        "circuit": result.design.label(),
        "date": today(),
    }
    return write_buylist_csv(part_rows(new_part_lines(c)), provenance)


def render(console, r, buylist) -> None:
    from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT
    from pulsepick.output.render import print_wrapped, simple_table

    now = r.predicted_now
    console.print(f"[bold]Retune[/bold] {r.design.label()} at {r.design.supply_v:g} V")
    console.print(f"  wanted: period {r.want_period_s:g} s"
                  + (f", flash {format_eng(r.want_flash_s, 's')}" if r.want_flash_s else "")
                  + f"; measured: period {r.measured.period_s:.3g} ± "
                    f"{r.measured.period_unc_s:.2g} s"
                  + (f", flash {format_eng(r.measured.flash_s, 's')}"
                     if r.measured.flash_s else ""), markup=False)
    print_wrapped(console, "inferred: " + r.inferred.text)
    for note in r.notes:
        print_wrapped(console, note)
    rows = []
    for c in r.changes:
        lo, hi = c.period_range_s
        rows.append([str(c.rank), "; ".join(c.parts),
                     f"{c.predicted['period_s']:.3f} s ({c.error:+.1%})",
                     f"{lo:.2f}..{hi:.2f} s", format_eng(c.predicted["flash_s"], "s"),
                     format_eng(c.predicted["led_peak_a"], "A")])
    console.print(simple_table(
        f"Changes (now: period {now['period_s']:.3f} s with the inferred chip)",
        ["#", "change", "period", "range", "flash", "peak"], rows))
    for c in r.changes:
        if c.note:
            print_wrapped(console, f"#{c.rank}: {c.note}")
            break
    if not r.changes:
        print_wrapped(console, "no change of one or two parts reaches the wanted period; "
                      "check the circuit values and the measurement")
    if buylist and r.changes:
        console.print(f"Wrote the new parts of change 1 to {buylist}", markup=False)
    print_wrapped(console, NOT_A_SAFETY_LIGHT, indent="", hang="  ")
