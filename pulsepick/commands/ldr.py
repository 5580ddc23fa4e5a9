"""``pulsepick ldr``: a blink rate that follows the light, through a photoresistor.

Takes a circuit (the ``check`` options; the photoresistor takes the place of the timing
resistor R1, or RB on a 555), a photoresistor type, optional fixed clamp resistors, and
prints the period against light from 0.01 to 100 lux at the photoresistor's corners. With
``--period-range 1s..6s`` it first solves the E-series clamp that keeps every corner inside.
"""

from __future__ import annotations

import argparse
import math

NAME = "ldr"
SUMMARY = "blink rate that follows the light: period against lux through a photoresistor"
EXAMPLES = [
    "pulsepick ldr --photoresistor gl5528 --core schmitt --stage pulse --c 2u2 --cp 330u "
    "--rs 100",
    "pulsepick ldr --photoresistor gl5528 --period-range 1s..6s --core schmitt --stage pulse "
    "--c 2u2 --cp 330u --rs 100",
    "pulsepick ldr --r10 15k --gamma 0.6 --dark 1M --series-r 470k --core schmitt "
    "--stage direct --c 1u --rs 330 --json",
    "pulsepick ldr examples/garden-path-markers.toml --light gate --period-range 1s..6s",
]


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick ldr``."""
    from pulsepick.analysis.ldr import CLAMP_MODES
    from pulsepick.commands.circuit_options import add_circuit_arguments
    from pulsepick.parts.photoresistor import photoresistor_keys

    parser.add_argument("design", nargs="?", metavar="DESIGN.toml",
                        help="a design file: the solver's circuit for one of its lights "
                             "(--light) takes the photoresistor")
    parser.add_argument("--light", metavar="NAME",
                        help="which light of the design file (default: the first)")
    g = parser.add_argument_group("the photoresistor (it replaces R1, or RB on a 555)")
    g.add_argument("--photoresistor", metavar="KEY",
                   help=f"type: {', '.join(photoresistor_keys())} (default gl5528)")
    g.add_argument("--r10", metavar="R",
                   help="resistance at 10 lux: your measured value for the type, or with "
                        "--gamma a photoresistor of your own, e.g. 15k")
    g.add_argument("--gamma", type=float, metavar="G",
                   help="gamma = log10(R10/R100) of your own photoresistor, e.g. 0.6")
    g.add_argument("--dark", metavar="R",
                   help="dark resistance of your own photoresistor, e.g. 1M (default: none)")
    g.add_argument("--series-r", metavar="R", help="fixed resistor in series, e.g. 470k")
    g.add_argument("--parallel-r", metavar="R", help="fixed resistor across it, e.g. 4M7")
    g.add_argument("--period-range", metavar="LO..HI",
                   help="keep the period inside these bounds: solve the clamp, e.g. 1s..6s")
    g.add_argument("--clamp", choices=CLAMP_MODES, default="both",
                   help="clamp resistors to solve for (default both)")
    g.add_argument("--lux-range", metavar="LO..HI", default="0.01..100",
                   help="light levels shown, lux (default 0.01..100)")
    from pulsepick.limits import count_type

    g.add_argument("--points", type=count_type("--points", 2, 10_000), default=21,
                   metavar="N",
                   help="light levels in the table, evenly spaced in log, 2 to 10,000 "
                        "(default 21)")
    add_circuit_arguments(parser)
    parser.add_argument("--json", action="store_true", help="print plain JSON on stdout")


def _lux_range(text: str) -> tuple[float, float]:
    from pulsepick.errors import RequestError

    parts = text.replace("lux", "").replace("lx", "").split("..")
    try:
        lo, hi = (float(p) for p in parts)
    except ValueError as err:
        raise RequestError(f"--lux-range {text!r}: give two light levels in lux, such as "
                           "0.01..100") from err
    return lo, hi


def _photoresistor(args):
    from pulsepick.errors import RequestError
    from pulsepick.parts.photoresistor import custom_photoresistor, get_photoresistor
    from pulsepick.units import parse_value

    r10 = None if args.r10 is None else parse_value(args.r10, "ohm")
    if args.gamma is not None:
        if args.photoresistor is not None:
            raise RequestError("--gamma describes a photoresistor of your own; give either "
                               "--photoresistor or --r10 with --gamma")
        if r10 is None:
            raise RequestError("a photoresistor of your own needs --r10 and --gamma, "
                               "e.g. --r10 15k --gamma 0.6")
        dark = math.inf if args.dark is None else parse_value(args.dark, "ohm")
        return custom_photoresistor(r10, args.gamma, dark)
    if args.dark is not None:
        raise RequestError("--dark describes a photoresistor of your own; give it with --r10 "
                           "and --gamma")
    ldr = get_photoresistor(args.photoresistor or "gl5528")
    return ldr if r10 is None else ldr.with_r10(r10)


def run(args) -> int:
    """Build the circuit, solve the clamp if asked, sweep the light, print."""
    from pulsepick.analysis.ldr import LdrNetwork, ldr_rate, solve_clamp, timing_param
    from pulsepick.commands.circuit_options import design_from_args
    from pulsepick.errors import RequestError
    from pulsepick.output.render import dump_json, make_console
    from pulsepick.units import parse_range, parse_value

    ldr = _photoresistor(args)
    if getattr(args, "design", None) is not None:
        design = _design_light(args)
    else:
        from pulsepick.circuits.base import core_names, get_core, value_params

        if args.light is not None:
            raise RequestError("--light names a light of a design file; give the file first")
        core = (args.core or "").strip().lower()
        # an unknown core is refused by design_from_args below; R1 stands in until then
        param = get_core(core).ldr_param if core in core_names() else "r1"
        option = value_params()[param].flag
        if getattr(args, f"value_{param}") is not None:
            raise RequestError(f"the photoresistor takes the place of {param.upper()}: leave "
                               f"out {option} and give a fixed resistor in series with "
                               "--series-r")
        setattr(args, f"value_{param}", "1M")  # a stand-in: the network replaces it
        design = design_from_args(args)
        assert timing_param(design) == param
    lux_range = _lux_range(args.lux_range)
    period_range = None
    if args.period_range is not None:
        period_range = parse_range(args.period_range, "time")
    series = 0.0 if args.series_r is None else parse_value(args.series_r, "ohm")
    parallel = math.inf if args.parallel_r is None else parse_value(args.parallel_r, "ohm")
    clamp = None
    if period_range is not None and args.series_r is None and args.parallel_r is None:
        clamp = solve_clamp(design, ldr, period_range, mode=args.clamp, lux_range=lux_range)
        network = clamp.network
    else:
        network = LdrNetwork(ldr, series_ohm=series, parallel_ohm=parallel)
    result = ldr_rate(design, network, lux_range=lux_range, points=args.points,
                      period_range_s=period_range)
    if args.json:
        dump_json(_json(result, clamp))
    else:
        render(make_console(), result, clamp)
    return 0 if clamp is None or clamp.success else 2


def _design_light(args):
    """The solver's circuit for one light of the design file (``--light``, or the first)."""
    from pulsepick.designfile import build_request, is_design_file, read_design
    from pulsepick.errors import RequestError
    from pulsepick.solve import default_jobs, solve_build

    if not is_design_file(args.design):
        raise RequestError(f"{args.design!r} is not a design file; give a .toml design such "
                           "as examples/garden-path-markers.toml")
    given = [k for k in vars(args) if k.startswith("value_") and getattr(args, k) is not None]
    if given:
        raise RequestError("give the circuit one way: a design file or the circuit values "
                           "(--core, --r, --c ...)")
    design = read_design(args.design)
    names = [li.name for li in design.lights]
    name = names[0] if args.light is None else args.light
    if name not in names:
        raise RequestError(f"--light {args.light!r} is not in {args.design}; accepted: "
                           f"{', '.join(names)}")
    result = solve_build(build_request(design), jobs=default_jobs(), assess_picks=False)
    light = result.lights[names.index(name)]
    if light.pick is None:
        raise RequestError(f"{args.design}: the solver offers nothing for {name}; run "
                           f"'pulsepick solve {args.design}' for the reasons")
    return light.pick.design


def _json(result, clamp) -> dict:
    from pulsepick import __version__

    net = result.network
    return {
        "command": NAME,
        "version": __version__,
        "circuit": result.design.label(),
        "replaces": result.param,
        "photoresistor": {
            "key": net.ldr.key, "name": net.ldr.name, "r10_min_ohm": net.ldr.r10_min_ohm,
            "r10_max_ohm": net.ldr.r10_max_ohm, "r10_typ_ohm": net.ldr.r10_typ_ohm,
            "gamma": net.ldr.gamma, "gamma_tol": net.ldr.gamma_tol,
            "dark_min_ohm": net.ldr.dark_min_ohm, "source": net.ldr.source,
        },
        "series_ohm": net.series_ohm,
        "parallel_ohm": None if math.isinf(net.parallel_ohm) else net.parallel_ohm,
        "period_range_s": None if result.period_range_s is None else list(result.period_range_s),
        "within_range": result.within_range,
        "clamp": None if clamp is None else {
            "success": clamp.success, "message": clamp.message, "mode": clamp.mode,
            "series": clamp.series, "r_needed_ohm": list(clamp.r_needed_ohm),
            "span": clamp.span},
        "levels": result.rows(),
        "notes": list(result.notes),
        "warnings": list(result.warnings),
    }


def render(console, result, clamp) -> None:
    """The terminal report."""
    from pulsepick.output.render import print_wrapped, simple_table
    from pulsepick.units import format_figure as eng

    net = result.network
    console.print(f"[bold]pulsepick ldr[/bold]: {net.ldr.name} in place of "
                  f"{result.param.upper()}, {result.design.label()}", highlight=False)
    console.print()
    if clamp is not None:
        lo, hi = clamp.period_range_s
        console.print(f"Clamp for {eng(lo, 's')}..{eng(hi, 's')}: {clamp.message}",
                      markup=False)
        if clamp.success:
            console.print(f"  timing resistance must stay within {eng(clamp.r_needed_ohm[0], 'Ω')}"
                          f"..{eng(clamp.r_needed_ohm[1], 'Ω')}", markup=False)
    parts = [f"series {eng(net.series_ohm, 'Ω')}" if net.series_ohm > 0 else "no series resistor",
             f"parallel {eng(net.parallel_ohm, 'Ω')}" if math.isfinite(net.parallel_ohm)
             else "no parallel resistor"]
    console.print(f"Network: {net.ldr.key} with {', '.join(parts)}", markup=False)
    console.print()
    rows = []
    for i, e in enumerate(result.lux):
        rows.append([f"{e:.3g}", eng(result.resistance_ohm['typ'][i], 'Ω'),
                     eng(result.period_s['low'][i], 's'), eng(result.period_s['typ'][i], 's'),
                     eng(result.period_s['high'][i], 's'), eng(result.flash_s[i], 's'),
                     eng(result.supply_avg_a[i], 'A')])
    console.print(simple_table(
        "Period against light (photoresistor corners low / typical / high)",
        ["lux", "R typ", "period low", "period typ", "period high", "flash", "supply"],
        rows, justify=["right"] * 7))
    console.print()
    if result.warnings:
        console.print("[bold]Warnings[/bold]")
        for w in result.warnings:
            print_wrapped(console, f"! {w}")
        console.print()
    console.print("[bold]Assumptions[/bold]")
    for n in result.notes:
        print_wrapped(console, f"- {n}")
