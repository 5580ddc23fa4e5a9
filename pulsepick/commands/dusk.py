"""``pulsepick dusk``: the panel as the light sensor, solved both ways.

``--bleed 240k`` gives the turn-on and turn-off light levels with their hysteresis, the
daytime loss in the bleed resistor and the nightly bias current; ``--dusk-at 10lux`` gives the
E-series bleed resistor for a wanted turn-on level and the levels it really gives.
"""

from __future__ import annotations

import argparse
import math

from pulsepick import __version__
from pulsepick.analysis.cautions import GENERAL_CAUTIONS
from pulsepick.analysis.dusk import DuskResult, Level, bleed_for_dusk, dusk_levels
from pulsepick.commands.day_report import key_value_table, print_list
from pulsepick.commands.night_options import quantity
from pulsepick.commands.panel_options import add_panel_arguments, read_panel
from pulsepick.errors import RequestError
from pulsepick.output.render import dump_json, make_console, simple_table
from pulsepick.parts.diode import get_diode
from pulsepick.parts.logic import FAMILY_KEYS, get_family
from pulsepick.series import SERIES_NAMES

NAME = "dusk"
SUMMARY = "the panel as the dusk sensor: light levels from a bleed, or the bleed for a level"
EXAMPLES = [
    "pulsepick dusk --panel 5v60ma --bleed 240k --family hc --supply 2.5V",
    "pulsepick dusk --panel 5v60ma --dusk-at 10lux --family hc --supply 2.5V --series E12",
    "pulsepick dusk --panel-voc 6V --panel-isc 100mA --dusk-at 20lux --diode si --json",
    "pulsepick dusk examples/garden-path-markers.toml --dusk-at 20lux --panel-rsh 350k",
]


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of ``pulsepick dusk``."""
    parser.add_argument("design", nargs="?", metavar="DESIGN.toml",
                        help="a design file: its panel, charge diode, storage (the gate's supply) "
                             "and chip family (options given here win)")
    what = parser.add_argument_group("solve (one of)")
    what.add_argument("--bleed", metavar="R",
                      help="the bleed resistor across the panel, such as 240k: gives the levels")
    what.add_argument("--dusk-at", metavar="LUX",
                      help="the wanted turn-on level, such as 10lux: gives the resistor")
    gate = parser.add_argument_group("sense gate")
    gate.add_argument("--family", choices=FAMILY_KEYS, default=None,
                      help="logic family of the Schmitt input that watches the panel (default hc)")
    gate.add_argument("--chip", metavar="FILE.toml",
                      help="your measured chip (a profile from 'pulsepick calibrate --save')")
    gate.add_argument("--supply", metavar="V", default=None,
                      help="storage voltage feeding the gate (default 2.5V)")
    gate.add_argument("--series", metavar="E", default="E24",
                      help=f"E-series for the resistor: {', '.join(SERIES_NAMES)} (default E24)")
    add_panel_arguments(parser)
    out = parser.add_argument_group("output")
    out.add_argument("--json", action="store_true", help="write the result as JSON on stdout")


def run(args: argparse.Namespace) -> int:
    """Read the options, solve the detector, print the report or JSON."""
    _apply_design(args)
    family_given = args.family
    if args.family is None:
        args.family = "hc"
    if args.supply is None:
        args.supply = "2.5V"
    if (args.bleed is None) == (args.dusk_at is None):
        raise RequestError("give one of --bleed R (for the light levels) or --dusk-at LUX "
                           "(for the resistor), such as --dusk-at 10lux")
    panel = read_panel(args)
    diode = get_diode(args.diode)
    family = get_family(args.family)
    if args.chip:
        from pulsepick.commands.circuit_options import family_from_profile

        family = family_from_profile(args.chip, family_given)
    supply = quantity(args.supply, "voltage", "--supply", "2.5V")
    series = args.series.strip().upper()
    if series not in SERIES_NAMES:
        raise RequestError(f"--series {args.series!r} is not known; accepted: "
                           f"{', '.join(SERIES_NAMES)}")
    if args.bleed is not None:
        bleed = quantity(args.bleed, "resistance", "--bleed", "240k")
        result = dusk_levels(panel, bleed, family, supply, diode)
    else:
        lux = quantity(args.dusk_at, "illuminance", "--dusk-at", "10lux")
        result = bleed_for_dusk(panel, lux, family, supply, diode, series=series)
    from pulsepick.analysis.dusk import shunt_spread

    spread = shunt_spread(result, given=args.panel_rsh is not None)
    if args.json:
        doc = result_json(result)
        doc["turn_on_shunt_spread"] = shunt_json(spread)
        dump_json(doc)
    else:
        render_report(result, make_console(),
                      shunt=shunt_line(spread, custom=result.panel.key == "custom"))
    return 0


def shunt_json(s) -> dict:
    """The turn-on level over the panel's shunt-resistance spread (JSON)."""
    lo, hi = s.range_lux
    return {"r_sh_ohm": s.r_sh_ohm, "given": s.given,
            "status": "given" if s.given else "estimate",
            "low_r_sh_ohm": s.low_ohm, "high_r_sh_ohm": s.high_ohm,
            "turn_on_low_r_sh_lux": s.on_low_r_lux, "turn_on_high_r_sh_lux": s.on_high_r_lux,
            "turn_on_min_lux": lo, "turn_on_max_lux": hi}


def shunt_line(s, custom: bool = False) -> str:
    """The turn-on range over the shunt-resistance spread, in words."""
    if s.given:
        return (f"Panel shunt resistance {_eng(s.r_sh_ohm, 'Ω')} (given): the turn-on level "
                f"above uses it.")
    lo, hi = s.range_lux
    how = " (5000 × Voc/Isc)" if custom else ""
    return (f"Panel shunt resistance {_eng(s.r_sh_ohm, 'Ω')} is an estimate{how}; "
            f"from {_eng(s.low_ohm, 'Ω')} to {_eng(s.high_ohm, 'Ω')} the typical turn-on moves "
            f"from {_lux(s.on_low_r_lux)} to {_lux(s.on_high_r_lux)} (range {_lux(lo)} .. "
            f"{_lux(hi)}, estimate); measure the panel and give --panel-rsh to narrow it.")


def _apply_design(args: argparse.Namespace) -> None:
    """Fill the panel, diode, supply and family from a design file (options given win)."""
    if getattr(args, "design", None) is None:
        return
    from pulsepick.designfile import is_design_file, read_design, storage_part

    if not is_design_file(args.design):
        raise RequestError(f"{args.design!r} is not a design file; give a .toml design such "
                           "as examples/garden-path-markers.toml")
    design = read_design(args.design)
    p = design.panel
    if p is None and args.panel is None and args.panel_voc is None:
        raise RequestError(f"{args.design}: no [panel] table; the dusk detector needs the "
                           "panel, such as [panel] with part = \"5v60ma\"")
    if p is not None and args.panel is None and args.panel_voc is None:
        if "part" in p:
            args.panel = p["part"]
        else:
            args.panel_voc, args.panel_isc = p["voc"], p["isc"]
            if "cells" in p:
                args.panel_cells = str(p["cells"])
        if "diode" in p:
            args.diode = str(p["diode"]).strip().lower()
    if args.supply is None and design.storage is not None:
        start = design.storage.get("start")
        args.supply = str(start) if start is not None else f"{storage_part(design).v_rated_v:g}V"
    if args.family is None:
        families = [f.strip().lower() for f in str(design.build.get("family", "")).split(",")]
        schmitt = [f for f in families if f in FAMILY_KEYS]
        if schmitt:
            args.family = schmitt[0]


def _level_json(level: Level) -> dict:
    return {"threshold_v": level.threshold_v, "typ_lux": level.typ_lux, "min_lux": level.min_lux,
            "max_lux": level.max_lux, "typ_w_m2": level.typ_w_m2, "min_w_m2": level.min_w_m2,
            "max_w_m2": level.max_w_m2}


def result_json(r: DuskResult) -> dict:
    """The JSON document of a dusk-detector solution (units in the key names)."""
    return {
        "command": NAME,
        "version": __version__,
        "panel": {"key": r.panel.key, "name": r.panel.name, "voc_v": r.panel.voc_v,
                  "isc_a": r.panel.isc_a, "cells": r.panel.cells},
        "family": r.family.key,
        "diode": r.diode.key,
        "supply_v": r.supply_v,
        "wanted_lux": r.wanted_lux,
        "exact_bleed_ohm": r.exact_bleed_ohm,
        "series": r.series,
        "bleed_ohm": r.bleed_ohm,
        "turn_on": _level_json(r.turn_on),
        "turn_off": _level_json(r.turn_off),
        "hysteresis_lux": r.hysteresis_lux,
        "hysteresis_ratio": r.hysteresis_ratio,
        "day_panel_v": r.day_panel_v,
        "day_bleed_a": r.day_bleed_a,
        "day_bleed_w": r.day_bleed_w,
        "day_loss_c": r.day_loss_c,
        "day_harvest_c": r.day_harvest_c,
        "loss_profile": r.loss_profile,
        "night_bias_typ_a": r.night_bias_typ_a,
        "night_bias_max_a": r.night_bias_max_a,
        "night_node_typ_v": r.night_node_typ_v,
        "night_node_max_v": r.night_node_max_v,
        "crossing_a": r.crossing_a,
        "gating": list(r.gating),
        "notes": list(r.notes),
        "warnings": list(r.warnings),
        "cautions": list(GENERAL_CAUTIONS),
    }


def _eng(value: float, unit: str) -> str:
    from pulsepick.units import format_figure

    return format_figure(value, unit)


def _lux(value: float) -> str:
    return "never" if not math.isfinite(value) else f"{value:.3g} lx"


def render_report(r: DuskResult, console, shunt: str | None = None) -> None:
    """Print the levels (with the ``shunt`` line on their spread under the table), the
    losses, the gating, warnings and cautions."""
    from rich.text import Text

    console.print(Text(f"pulsepick dusk: {r.panel.name} as the light sensor, "
                       f"{r.family.name} at {r.supply_v:.2f} V", style="bold"))
    setup = []
    if r.wanted_lux is not None:
        setup.append(["wanted", f"turn on at {r.wanted_lux:g} lx"])
        setup.append(["bleed", f"{_eng(r.bleed_ohm, 'Ω')} ({r.series}; exact "
                               f"{_eng(r.exact_bleed_ohm or math.nan, 'Ω')})"])
    else:
        setup.append(["bleed", _eng(r.bleed_ohm, "Ω")])
    setup.append(["diode", r.diode.name])
    console.print(key_value_table(setup))
    console.print()
    rows = [
        ["turns on (night)", f"falls below VT- {r.turn_on.threshold_v:.2f} V",
         _lux(r.turn_on.typ_lux), f"{_lux(r.turn_on.min_lux)} .. {_lux(r.turn_on.max_lux)}"],
        ["turns off (day)", f"rises above VT+ {r.turn_off.threshold_v:.2f} V",
         _lux(r.turn_off.typ_lux), f"{_lux(r.turn_off.min_lux)} .. {_lux(r.turn_off.max_lux)}"],
    ]
    console.print(simple_table("Light levels", ["", "panel voltage", "typical", "range"], rows,
                               justify=["left", "left", "right", "right"]))
    if shunt:
        console.print(shunt)
    if math.isfinite(r.hysteresis_lux):
        console.print(f"Hysteresis: {r.hysteresis_lux:.3g} lx (turn-off {r.hysteresis_ratio:.2f} "
                      "times the turn-on level).")
    share = r.day_loss_c / r.day_harvest_c if r.day_harvest_c > 0 else math.nan
    console.print(
        f"By day: in full sun the panel sits at {r.day_panel_v:.2f} V; the bleed takes "
        f"{_eng(r.day_bleed_a, 'A')} ({_eng(r.day_bleed_w, 'W')}), {r.day_loss_c:.3g} C over a "
        f"{r.loss_profile} day"
        + (f" ({share:.2%} of the harvest)." if math.isfinite(share) else "."))
    console.print(
        f"At night: the diode's reverse leakage, {_eng(r.night_bias_typ_a, 'A')} typical "
        f"({_eng(r.night_bias_max_a, 'A')} max), flows from the storage through the bleed; "
        f"the sense node sits at {r.night_node_typ_v:.3f} V ({r.night_node_max_v:.3f} V max).")
    console.print(
        f"While the light passes between the thresholds at dusk and dawn the sense gate draws "
        f"about {_eng(r.crossing_a, 'A')} crossing current (estimate).")
    print_list(console, "Gating", r.gating)
    print_list(console, "Warnings", r.warnings)
    print_list(console, "Cautions", GENERAL_CAUTIONS)
    print_list(console, "Notes", r.notes)
