"""``pulsepick bands``: what tighter resistors and capacitors would buy, and what dominates.

For a given circuit (the ``check`` options) or the best circuit the solver finds for a
blink phrase, runs :func:`pulsepick.analysis.spread.tolerance_bands`: the seeded Monte
Carlo period spread with each resistor series (E12/E24/E96) against each timing
capacitor class (electrolytic, X7R, film, C0G), and the share of the spread each source
causes in the design as specified.
"""

from __future__ import annotations

import argparse
import math

from pulsepick.analysis.spread import (
    BAND_CAP_CLASSES,
    BAND_SERIES,
    DEFAULT_BUILDS,
    DEFAULT_TEMP_RANGE_C,
    SOURCE_LABELS,
    SOURCES,
    BandsResult,
    tolerance_bands,
)
from pulsepick.commands.circuit_options import (
    DEFAULT_TIMING_CAP,
    VALUE_OPTIONS,
    add_circuit_arguments,
    design_from_args,
    parts_from_args,
    solver_chip,
)
from pulsepick.commands.pictures import (
    add_picture_arguments,
    announce,
    bands_pictures,
    check_picture_targets,
    oscillating_periods,
)
from pulsepick.commands.wording import CLASS_LABELS
from pulsepick.errors import PulsepickError, RequestError
from pulsepick.output.render import (
    dump_json,
    make_console,
    plot_columns,
    print_wrapped,
    simple_table,
)
from pulsepick.output.textplot import spread_lines
from pulsepick.units import format_eng, format_pct, format_rkm, parse_quantity, parse_range

NAME = "bands"
SUMMARY = "compare tolerance bands: period spread and yield, E12/E24/E96 against capacitor classes"
EXAMPLES = [
    "pulsepick bands --core schmitt --r 1M --c 1u --stage direct --rs 1k --supply 3V",
    "pulsepick bands --core timer555 --ra 10k --rb 1M --c 1u --stage pulse --cp 100u "
    "--supply 3V..2V --builds 5000 --seed 7",
    'pulsepick bands "one flash every 3 s" --supply 2.7V..1.8V --json',
    "pulsepick bands --core schmitt --r 1M --c 1u --stage direct --rs 1k --supply 3V..2.2V "
    "--plot spread.svg --report spread.html",
]

_BAR_WIDTH = 30
_SUPPLY_DEFAULT = "3.0V"
_TEMPS_DEFAULT = f"{DEFAULT_TEMP_RANGE_C[0]:g}..{DEFAULT_TEMP_RANGE_C[1]:g} C"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick bands``."""
    parser.add_argument("phrase", nargs="?", metavar="BLINK",
                        help='a wanted blink such as "one flash every 3 s": the solver\'s best '
                             "circuit is analysed (otherwise give the circuit options)")
    add_circuit_arguments(parser, supply_default=_SUPPLY_DEFAULT)
    g = parser.add_argument_group("spread")
    from pulsepick.limits import MAX_BUILDS, MAX_SEED, MIN_BUILDS, count_type

    g.add_argument("--builds", type=count_type("--builds", MIN_BUILDS, MAX_BUILDS),
                   default=DEFAULT_BUILDS, metavar="N",
                   help=f"Monte Carlo builds per cell, {MIN_BUILDS} to {MAX_BUILDS:,} "
                        f"(default {DEFAULT_BUILDS:,})")
    g.add_argument("--seed", type=count_type("--seed", 0, MAX_SEED), default=0, metavar="S",
                   help=f"seed of the random builds, 0 to {MAX_SEED:,} (default 0)")
    g.add_argument("--temps", default=_TEMPS_DEFAULT, metavar="LO..HI",
                   help=f"ambient temperature range in °C, e.g. -20..50 (default "
                        f"{_TEMPS_DEFAULT})")
    g.add_argument("--target", metavar="T",
                   help="period the yield is counted against (default: the blink's period, "
                        "or the circuit's nominal period)")
    g.add_argument("--within", default="10%", metavar="PCT",
                   help="a build is good within this much of the target period (default 10%%)")
    parser.add_argument("--json", action="store_true", help="print plain JSON on stdout")
    add_picture_arguments(parser)


# ---------------------------------------------------------------------------- reading options

def _supply(text: str) -> tuple[float, float | None]:
    """Full supply and end-of-night supply (None) from ``3V`` or ``2.7V..1.8V``."""
    if ".." in text or "\u2026" in text:
        try:
            full, end = parse_range(text, "voltage")
        except PulsepickError as err:
            raise RequestError(f"--supply {text!r}: {err}") from err
        if not end < full:
            raise RequestError(f"--supply {text!r}: write a range from full down to the end of "
                               "the night, such as 2.7V..1.8V")
        return full, end
    try:
        return parse_quantity(text, "voltage", bare_ok=True), None
    except PulsepickError as err:
        raise RequestError(f"--supply {text!r}: {err} (such as 3V or 2.7V..1.8V)") from err


def _temps(text: str) -> tuple[float, float]:
    import re

    if re.fullmatch(r"\s*[-+]?[\d.]+\s*\.\.\s*[-+]?[\d.]+\s*", text):
        text = f"{text.strip()} C"  # bare numbers, as the help writes them: degrees Celsius
    try:
        lo, hi = parse_range(text, "temperature")
    except PulsepickError as err:
        raise RequestError(f"--temps {text!r}: {err}") from err
    if not lo < hi:
        raise RequestError(f"--temps {text!r}: the range must run from cold to warm, "
                           f"such as {_TEMPS_DEFAULT}")
    return lo, hi


def _within(text: str) -> float:
    s = text.strip().rstrip("%").strip()
    try:
        pct = float(s)
    except ValueError:
        pct = math.nan
    if not (math.isfinite(pct) and 0 < pct < 100):
        raise RequestError(f"--within {text!r}: give a percentage between 0 and 100, such as 10%")
    return pct / 100.0


def _design_from_phrase(args, supply_text: str):
    """The solver's best circuit for the blink phrase, its target period and end supply."""
    given = [opt for name, opt in VALUE_OPTIONS.items()
             if getattr(args, f"value_{name}") is not None]
    if given:
        raise RequestError(f"give either a blink phrase or a circuit ({', '.join(given)}), "
                           "not both")
    from pulsepick.request import make_request
    from pulsepick.solve import solve

    full, _ = _supply(supply_text)
    _, parts = parts_from_args(args, full)
    timing_cap = None if args.timing_cap == DEFAULT_TIMING_CAP else args.timing_cap
    family, measured = solver_chip(args)
    req = make_request(args.phrase, supply=supply_text, family=family, led=parts.led,
                       timing_cap=timing_cap, top=1, builds=args.builds, seed=args.seed,
                       chip_overrides=measured)
    result = solve(req)
    if not result.candidates:
        why = "; ".join(result.explanations) or result.message or "no circuit found"
        raise RequestError(f"no circuit for {args.phrase!r}: {why}")
    return result.candidates[0].design, req.targets.period_s, req.supply_end_v


def _analyse(args) -> BandsResult:
    full, end = _supply(args.supply)
    if args.phrase is not None:
        design, target, end = _design_from_phrase(args, args.supply)
    else:
        ns = argparse.Namespace(**vars(args))
        ns.supply = f"{full!r}V"
        design = design_from_args(ns)
        target = None
    if args.target is not None:
        try:
            target = parse_quantity(args.target, "time")
        except PulsepickError as err:
            raise RequestError(f"--target {args.target!r}: {err}") from err
    supply_range = None if end is None else (end, design.supply_v)
    return tolerance_bands(design, builds=args.builds, seed=args.seed, target_period_s=target,
                           temp_range_c=_temps(args.temps), supply_range_v=supply_range,
                           yield_band=_within(args.within))


# ---------------------------------------------------------------------------- output

def bands_json(result: BandsResult) -> dict:
    """The ``--json`` document of a bands analysis."""
    out = result.as_dict()
    out["dominant_source_label"] = SOURCE_LABELS[result.dominant_source()]
    out["advice"] = _advice(result)
    out["design"] = {"circuit": result.design.topo.label(), "chip": result.design.chip.family,
                     "led": result.design.parts.led.key,
                     "timing_cap": result.design.parts.timing_cap,
                     "supply_v": result.design.supply_v,
                     "values": dict(result.design.values)}
    return out


def run(args) -> int:
    check_picture_targets(args)
    result = _analyse(args)
    if args.json:
        dump_json(bands_json(result))
        announce(args, bands_pictures(args, result, tuple(_advice(result))))
        return 0
    render(make_console(), result)
    announce(args, bands_pictures(args, result, tuple(_advice(result))))
    return 0


_pct = format_pct


def _values_line(design) -> str:
    parts = []
    for name, value in design.values.items():
        if value == 0:
            continue
        kind = "R" if name.startswith("r") else "C"
        unit = "Ω" if kind == "R" else "F"
        parts.append(f"{name.upper()} {format_eng(value, unit)} ({format_rkm(value, kind)})")
    return ", ".join(parts)


def _current_parts(result: BandsResult) -> str:
    tol = {t.name: t for t in result.current.tolerances}
    r = sorted({(t.tol_minus_pct, t.tol_plus_pct) for t in tol.values() if t.kind == "R"})
    r_text = "/".join(f"{a:g} %" if a == b else f"-{a:g}/+{b:g} %" for a, b in r) or "none"
    c1 = tol["c1"]
    c_text = (f"{c1.tol_minus_pct:g} %" if c1.tol_minus_pct == c1.tol_plus_pct
              else f"-{c1.tol_minus_pct:g}/+{c1.tol_plus_pct:g} %")
    return f"resistors {r_text}, C1 {c1.cap_kind} {c_text}"


def render(console, result: BandsResult) -> None:
    """The report: the band table, the floor, the share table and what tighter parts buy."""
    d = result.design
    console.print(f"[bold]pulsepick bands[/bold]  {d.label()}")
    print_wrapped(console, f"values: {_values_line(d)}")
    supply = (f"supply {d.supply_v:g} V" if result.supply_range_v is None else
              f"supply {result.supply_range_v[1]:g} V down to {result.supply_range_v[0]:g} V")
    lo, hi = result.temp_range_c
    print_wrapped(console, f"{supply}; ambient {lo:g}..{hi:g} °C; {result.builds:,} builds per "
                  f"cell, seed {result.seed}")
    print_wrapped(console, f"yield: the share of builds that light up within "
                  f"±{result.yield_band * 100:g} % of {format_eng(result.target_period_s, 's')}")
    console.print()

    head = ["resistors \\ C1"] + [f"{CLASS_LABELS[c]} {p:g} %" for c, p in BAND_CAP_CLASSES]
    rows = []
    unusual = False
    for series in BAND_SERIES:
        tol = result.cell(series, BAND_CAP_CLASSES[0][0]).resistor_tol_pct
        row = [f"{series} {tol:g} %"]
        for cls, _ in BAND_CAP_CLASSES:
            c = result.cell(series, cls)
            mark = "" if c.cap_value_usual else "*"
            unusual |= not c.cap_value_usual
            row.append(f"{c.width_pct:.0f} % / {_pct(c.yield_fraction)}{mark}")
        rows.append(row)
    console.print(simple_table("Period spread: P5-P95 width as % of the median / yield",
                               head, rows, ["left"] + ["right"] * len(BAND_CAP_CLASSES)))
    if unusual:
        print_wrapped(console, f"* C1 = {format_eng(d.values['c1'], 'F')} is outside the usual "
                      "value range of that kind (shown for comparison only)")
    cur, ideal = result.current, result.ideal_parts
    print_wrapped(console, f"as specified ({_current_parts(result)}): width "
                  f"{cur.width_pct():.0f} %, yield {_pct(cur.yield_fraction)}")
    print_wrapped(console, f"exact resistors and capacitors (chip, temperature and supply only): "
                  f"width {ideal.width_pct():.0f} %, yield {_pct(ideal.yield_fraction)}")
    c_lo, c_hi = cur.corners.get("period_s", (math.nan, math.nan))
    p5, p50, p95 = cur.quantiles["period_s"]
    hi_text = "stalls" if c_hi == math.inf else format_eng(c_hi, "s")
    print_wrapped(console, f"period as specified: P5 {format_eng(p5, 's')}, P50 "
                  f"{format_eng(p50, 's')}, P95 {format_eng(p95, 's')}; worst-case corners "
                  f"{format_eng(c_lo, 's')} to {hi_text}")
    console.print()
    periods, not_drawn = oscillating_periods(cur)
    console.print("[bold]period over the builds, as specified[/bold]")
    for line in spread_lines(periods, p5_s=p5, p95_s=p95, target_s=result.target_period_s,
                             yield_band=result.yield_band, not_drawn=not_drawn,
                             width=plot_columns(console)):
        console.print(line, markup=False, highlight=False)
    console.print()

    rows = []
    for s in sorted(SOURCES, key=lambda k: -cur.shares.get(k, 0.0)):
        share = cur.shares.get(s, 0.0)
        bar = "#" * round(share * _BAR_WIDTH)
        rows.append([SOURCE_LABELS[s], _pct(share, 1), bar])
    console.print(simple_table("Where the period spread comes from (as specified)",
                               ["source", "share of variance", ""], rows,
                               ["left", "right", "left"]))
    console.print("[bold]what tighter parts buy[/bold]")
    for line in _advice(result):
        print_wrapped(console, line, indent="  - ", hang="    ")


def _period_part(design) -> str:
    """The resistor that sets most of the period, named as on the board.

    555 astable: t = ln2·(RA + 2·RB)·C (ref:maplin-555-notes), so RA when RA > 2·RB, else RB.
    Schmitt cores: R1, the timing resistor.
    """
    if design.chip.is_timer:
        ra, rb = design.values.get("ra", 0.0), design.values.get("rb", 0.0)
        return "RA" if ra > 2.0 * rb else "RB"
    return "R1"


def _best_pair_line(result: BandsResult, best) -> str:
    """What the narrowest cell buys, leaving out a change that rounds to nothing."""
    cur = result.current
    best_c1 = f"{CLASS_LABELS[best.cap_class]} {best.cap_tol_pct:g} %"
    pair = f"the best pair here, {best.resistor_series} resistors with a {best_c1} C1,"
    w_now, w_best = f"{cur.width_pct():.0f} %", f"{best.width_pct:.0f} %"
    y_now, y_best = _pct(cur.yield_fraction), _pct(best.yield_fraction)
    width = (f"narrows the width from {w_now} to {w_best}" if w_best != w_now
             else f"leaves the width at {w_now}")
    if y_best != y_now:
        return f"{pair} {width} and moves the yield from {y_now} to {y_best}"
    if w_best == w_now:
        return f"{pair} gains nothing: width {w_now}, yield {y_now}"
    return f"{pair} {width}, with no gain in yield ({y_now})"


def _advice(result: BandsResult) -> list[str]:
    cur, ideal = result.current, result.ideal_parts
    best = min(result.cells, key=lambda c: c.width_pct if math.isfinite(c.width_pct) else 1e9)
    lines = [
        _best_pair_line(result, best),
        f"no choice of resistor or capacitor gets below about {ideal.width_pct():.0f} %: that is "
        "what the chip, temperature and supply leave",
    ]
    top = result.dominant_source()
    share = cur.shares.get(top, 0.0)
    parts_share = cur.shares.get("resistors", 0.0) + cur.shares.get("capacitors", 0.0)
    chip_share = cur.shares.get("chip_thresholds", 0.0)
    part = _period_part(result.design)
    if chip_share >= 0.5:
        # the chip is then the largest source: one line says so and what to do
        fix = (f"trim {part} on the built circuit" if result.design.chip.is_timer else
               f"measure your chip and give --vt-plus/--vt-minus, or trim {part} on the built "
               "circuit")
        lines.append(f"the largest source is the chip's thresholds, with {_pct(chip_share)} of "
                     f"the period's variance: tighter parts buy little; {fix}")
        return lines
    lines.append(f"the largest source is {SOURCE_LABELS[top]}, with {_pct(share)} of the "
                 "period's variance")
    if parts_share >= 0.5:
        lines.append(f"resistors and capacitors cause {_pct(parts_share)} of it: tighter parts "
                     "pay off here, the timing capacitor first when its share is the larger")
    elif cur.shares.get("supply", 0.0) >= 0.5:
        lines.append("the droop of the supply over the night moves the period more than the "
                     "parts do: a steadier supply buys more than tighter parts")
    return lines
