"""``pulsepick check``: forward analysis of a circuit someone built or plans."""

from __future__ import annotations

import math

import numpy as np

from pulsepick.analysis.cautions import LOW_VOLTAGE_ONLY, NOT_A_SAFETY_LIGHT
from pulsepick.analysis.checks import assumptions, circuit_findings, stage_loading_shift
from pulsepick.circuits.base import STATUS_WORDS, Figures
from pulsepick.commands.circuit_options import add_circuit_arguments, design_from_args
from pulsepick.commands.supply_range import refuse_over_range
from pulsepick.commands.pictures import (
    add_picture_arguments,
    announce,
    check_picture_targets,
    check_pictures,
)
from pulsepick.commands.spread_option import add_chip_spread_argument
from pulsepick.commands.wording import FIGURE_ROWS
from pulsepick.design import Design
from pulsepick.output.render import (
    dump_json,
    make_console,
    plot_columns,
    print_wrapped,
    simple_table,
)
from pulsepick.output.textplot import waveform_lines
from pulsepick.units import format_eng, format_rkm

NAME = "check"
SUMMARY = "analyse a blinker circuit: period, flash, LED current, brightness, supply current"
EXAMPLES = [
    "pulsepick check --core schmitt --r 2M2 --c 1u --stage pulse --cp 22u --rs 47 "
    "--family hc --supply 3.0V --led red",
    "pulsepick check --core schmitt --r 2M2 --c 1u --stage pulse --cp 22u --rs 47 "
    "--supply 3.0V --vt-plus 1.6 --vt-minus 0.9 --rout 60 --led-vf 1.9V@20mA --led-n 2 "
    "--led-rs 10",
    "pulsepick check --core schmitt-steered --steer high --r 4M7 --r2 47k --c 1u "
    "--stage direct --rs 100 --supply 2.7V --json",
    "pulsepick check --core timer555 --ra 1M --rb 22k --c 2u2 --stage direct --lit low "
    "--rs 220 --supply 3V --reference",
    "pulsepick check --core schmitt --r 2M2 --c 1u --stage pulse --cp 22u --rs 47 "
    "--plot marker.png --report marker.html",
]


def add_arguments(parser) -> None:
    add_circuit_arguments(parser)
    parser.add_argument("--reference", action="store_true",
                        help="take the figures from the transient reference simulation")
    parser.add_argument("--no-drawing", action="store_true",
                        help="leave out the waveform drawing (saves a short simulation)")
    parser.add_argument("--json", action="store_true", help="print plain JSON on stdout")
    add_chip_spread_argument(parser, " (for the spread of --plot and --report)")
    add_picture_arguments(parser)


def figures_dict(fig: Figures) -> dict:
    """Top-level JSON figures (SI units) with the status and its reason."""
    row = fig.row(None if np.ndim(fig.period_s) == 0 else 0)
    out = {k: (None if not math.isfinite(row[k]) else row[k]) for k in Figures.KEYS}
    out["status"] = STATUS_WORDS[row["status"]]
    return out


#: Above this phase shift from the LED stage's load on the timing gate, the fast
#: engine's first-order coupling is no longer trusted and the reference figures are used.
STRONG_COUPLING = 0.05


def analyse(design: Design, use_reference: bool):
    """Figures, reference result (or None), findings, assumptions and the engine used."""
    engine = "reference" if use_reference else "fast"
    shift = stage_loading_shift(design)
    if not use_reference and shift is not None and abs(shift) > STRONG_COUPLING:
        engine = "reference"  # the fast engine's first-order coupling is not trusted here
        use_reference = True
    ref = design.reference() if use_reference else None
    fig = ref.figures if ref is not None else design.fast()
    status = int(np.ravel(fig.status)[0])
    peak = float(np.ravel(fig.led_peak_a)[0])
    findings = circuit_findings(design, status, peak, with_state=False)
    return fig, ref, findings, assumptions(design), engine


def _verdict(design: Design, fig):
    """The one state and reason of the figures shown (status row, JSON and warnings)."""
    from pulsepick.analysis.verdict import verdict

    return verdict(design, int(np.ravel(fig.status)[0]), float(np.ravel(fig.led_peak_a)[0]))


def run(args) -> int:
    design = design_from_args(args)
    refuse_over_range(design)
    check_picture_targets(args)
    fig, ref, findings, assumed, engine = analyse(design, args.reference)
    figures = figures_dict(fig)
    state = _verdict(design, fig)
    figures["status"] = state.state
    if state.led_a is not None:  # latched: the steady current it draws instead
        figures.update(led_peak_a=state.led_a, effective_a=state.led_a,
                       supply_avg_a=state.led_a, high_s=None, low_s=None, flash_s=None,
                       flash_10pct_s=None, led_charge_c=None, effective_mcd=None)
    reason = state.reason
    if args.json:
        doc = check_json(design, figures, reason, findings, assumed, engine)
        doc["status"] = state.as_dict()
        dump_json(doc)
        announce(args, check_pictures(args, design, figures, reason, findings, assumed, ref,
                                      engine))
        return 0
    console = make_console()
    render_report(console, design, figures, reason, findings, assumed, engine=engine)
    if not args.no_drawing:
        ref = ref if ref is not None else design.reference()
        _render_waveform(console, design, ref, state.state)
    _render_cautions(console)
    announce(args, check_pictures(args, design, figures, reason, findings, assumed, ref, engine))
    return 0


def check_json(design: Design, figures: dict, reason, findings, assumed, engine: str) -> dict:
    """The ``--json`` document of a check."""
    out = dict(figures)
    out["status"] = {"state": figures["status"], "reason": reason}
    out["assumptions"] = {**assumed, "engine": engine,
                          "circuit": design.topo.label(),
                          "values": {k: v for k, v in design.values.items()}}
    out["warnings"] = [f.text for f in findings]
    return out


def values_line(design: Design) -> str:
    parts = []
    for name, value in design.values.items():
        if value == 0:
            continue
        unit, kind = ("Ω", "R") if name.startswith("r") else ("F", "C")
        parts.append(f"{name.upper()} {format_eng(value, unit)} ({format_rkm(value, kind)})")
    return ", ".join(parts)


def render_report(console, design: Design, figures: dict, reason, findings, assumed,
                  engine: str) -> None:
    console.print(f"[bold]pulsepick check[/bold]  {design.label()}")
    console.print(f"  values: {values_line(design)}")
    console.print(f"  supply {design.supply_v:g} V, figures from the {engine} engine")
    rows = []
    for key, label, unit in FIGURE_ROWS:
        v = figures[key]
        text = "-" if v is None else (format_eng(v, unit) if unit != "mcd" else f"{v:.3g} mcd")
        rows.append([label, text])
    rows.append(["status", figures["status"]])
    console.print(simple_table(None, ["figure", "value"], rows, ["left", "right"]))
    if reason:
        print_wrapped(console, f"status {figures['status']}: {reason}")
    console.print("[bold]assumptions[/bold]")
    thr = (f"VT+ {assumed['vt_plus_v']:.3g} V, VT- {assumed['vt_minus_v']:.3g} V "
           f"({assumed['thresholds_from']}); output {assumed['rout_high_ohm']:.0f} Ω high / "
           f"{assumed['rout_low_ohm']:.0f} Ω low")
    print_wrapped(console, f"chip: {assumed['chip']}; {thr}")
    print_wrapped(console, f"LED: {assumed['led']}, {assumed['led_vf_v_at_test']:.3g} V at "
                  f"{format_eng(assumed['led_test_current_a'], 'A')} (datasheet); n = "
                  f"{assumed['led_ideality']:.3g}, RS = {assumed['led_series_ohm']:.3g} Ω and "
                  f"visible from {format_eng(assumed['led_visible_a'], 'A')} "
                  f"({assumed['led_model_from']})")
    print_wrapped(console, f"timing capacitor: {assumed['timing_cap_kind']}")
    if "crossing_current" in assumed and figures["status"] == "latched":
        # the input rests between its thresholds, where the input stage draws the most
        print_wrapped(console, "crossing current: not estimated while latched (the input "
                      "rests between its thresholds, where the input stage draws the most; "
                      "measure the supply current)")
    elif "crossing_current" in assumed:
        print_wrapped(console, f"crossing current: {assumed['crossing_current']}")
    print_wrapped(console, f"effective intensity: {assumed['effective_intensity_method']}")
    if findings:
        console.print("[bold]warnings[/bold]")
        for f in findings:
            print_wrapped(console, f.text, indent="  ! ", hang="    ")


def _render_waveform(console, design: Design, ref, state: str) -> None:
    if not ref.trace:
        why = "it is latched" if state == "latched" else "the oscillator stalls"
        console.print(f"[bold]one period[/bold]  (none: {why})")
        return
    env, _ = design.env()
    console.print("[bold]one period[/bold] (reference simulation)")
    for line in waveform_lines(ref.trace["t_s"], ref.trace["vc_v"], ref.trace["led_a"],
                               vt_plus=float(np.ravel(env.vt_plus)[0]),
                               vt_minus=float(np.ravel(env.vt_minus)[0]),
                               high_s=float(ref.figures.row()["high_s"]),
                               width=plot_columns(console)):
        console.print(line, markup=False)


def _render_cautions(console) -> None:
    console.print("[bold]cautions[/bold]")
    for text in (NOT_A_SAFETY_LIGHT, LOW_VOLTAGE_ONLY):
        print_wrapped(console, text, indent="  - ", hang="    ")
