"""Circuit-simulator netlists of the reference circuits, built from our own Env.

Each case below is one circuit (core, stage, values, chip, LED, supply). ``netlist(case)``
writes it for a general-purpose SPICE simulator (ngspice): the timing network and the LED
stage come from the circuit modules' own ``spice`` lines; this file supplies the parts a
simulator has no model for, with the same numbers our engines use (``Design.env``):

- the Schmitt gate (and the 555's comparators and flip-flop) as a voltage-controlled
  switch with hysteresis on the timing node (on above VT+, off below VT-) that sets a
  state node, and two switches that tie the output to the supply through the gate's
  high-side output resistance or to ground through its low-side one;
- a spare gate (buffered stages) as a second such inverter on the timing output;
- the input-pin leakage as a current source and the timing capacitor's leakage as a
  resistor on the timing node;
- every junction (LED, diodes) as the simulator's diode with our saturation current,
  ideality and series resistance, the ideality scaled so that n·kT/q matches ours at the
  simulator's 27 C.

Not modelled (they do not move the period or the LED peak): the chip's quiescent and
crossing currents. Different on purpose: the simulator's diode passes its saturation
current in reverse; our engines leave a reverse-biased steering diode open. The steered
cases use a timing resistor low enough (tens of kilohms) that this stays under a tenth
of a percent of the timing current.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from pulsepick.circuits.base import Topology, get_core, get_stage
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led

HERE = Path(__file__).parent
NETLISTS = HERE / "netlists"
OUTPUTS = HERE / "outputs.csv"
#: The simulator's circuit temperature, K (27 C, its default nominal temperature).
SIM_T_K = 300.15
#: Simulated length in periods and largest time step as a fraction of the period and of
#: the flash (the last full period is measured; the stage capacitors settle within a few
#: periods; a short flash needs fine steps to catch its peak right after the edge).
PERIODS, STEP_FRACTION, FLASH_STEP_FRACTION = 10, 1 / 4000, 1 / 300

# name: (core, stage, options, values, chip family, LED, supply V)
CASES = {
    "schmitt-hc-direct": ("schmitt", "direct", {}, {"r1": 1e6, "c1": 1e-6, "rs": 1e3},
                          "hc", "red", 3.0),
    "schmitt-lvc-direct-low": ("schmitt", "direct", {"lit": "low"},
                               {"r1": 2.2e6, "c1": 470e-9, "rs": 2.2e3}, "lvc", "green", 3.3),
    "schmitt-4000n-pulse": ("schmitt", "pulse", {}, {"r1": 1e6, "c1": 2.2e-6, "cp": 4.7e-6,
                                                     "rs": 47.0}, "4000n", "red", 5.0),
    "schmitt-hc-fade": ("schmitt", "fade", {}, {"r1": 1.5e6, "c1": 1e-6, "rs": 220.0,
                                                "ch": 47e-6}, "hc", "amber", 4.5),
    "steered-high-hc-pulse": ("schmitt-steered", "pulse", {"steer": "high"},
                              {"r1": 47e3, "r2": 4.7e3, "c1": 4.7e-6, "cp": 4.7e-6, "rs": 0.0},
                              "hc", "red", 3.0),
    "steered-low-ahc-direct": ("schmitt-steered", "direct", {"steer": "low"},
                               {"r1": 47e3, "r2": 2.2e3, "c1": 10e-6, "rs": 470.0},
                               "ahc", "red", 3.3),
    "schmitt-hc-direct-buffered": ("schmitt", "direct", {"buffered": True},
                                   {"r1": 680e3, "c1": 1e-6, "rs": 150.0}, "hc", "red", 3.0),
    "schmitt-4000w-fade-buffered": ("schmitt", "fade", {"buffered": True},
                                    {"r1": 1e6, "c1": 1e-6, "rs": 470.0, "ch": 100e-6},
                                    "4000w", "white", 6.0),
    "steered-lvc-pulse-buffered": ("schmitt-steered", "pulse", {"buffered": True,
                                                                "steer": "low"},
                                   {"r1": 68e3, "r2": 2.2e3, "c1": 10e-6, "cp": 22e-6,
                                    "rs": 22.0}, "lvc", "amber", 2.5),
    "timer555-direct": ("timer555", "direct", {}, {"ra": 1e6, "rb": 47e3, "c1": 1e-6,
                                                   "rs": 330.0}, "timer555", "red", 5.0),
    "timer555-pulse": ("timer555", "pulse", {}, {"ra": 470e3, "rb": 470e3, "c1": 1e-6,
                                                 "cp": 10e-6, "rs": 10.0},
                       "timer555", "bright-red", 3.0),
    "timer555-fade": ("timer555", "fade", {}, {"ra": 220e3, "rb": 1e6, "c1": 470e-9,
                                               "rs": 1e3, "ch": 220e-6}, "timer555", "green",
                      9.0),
    "schmitt-hc-transistor": ("schmitt", "transistor", {}, {"r1": 1e6, "c1": 1e-6, "rs": 22.0,
                                                            "rbase": 2.2e3}, "hc", "amber", 3.0),
    "timer555-transistor": ("timer555", "transistor", {}, {"ra": 1e6, "rb": 100e3, "c1": 1e-6,
                                                           "rs": 47.0, "rbase": 4.7e3},
                            "timer555", "white", 5.0),
}


def design(name: str) -> Design:
    core, stage, opts, values, family, led, supply = CASES[name]
    return Design(topo=Topology(core=core, stage=stage, **opts), values=dict(values),
                  chip=ChipSpec(family), parts=PartChoice(led=get_led(led)), supply_v=supply)


def _f(x) -> float:
    return float(np.asarray(x, dtype=float).reshape(-1)[0])


def _diode_model(name: str, model) -> str:
    j = model.junction
    n_sim = j.n * j.temperature_k / SIM_T_K
    return f".model {name} D(IS={j.i_s:.9g} N={n_sim:.9g} RS={j.r_s:.9g})"


def _inverter(prefix: str, inp: str, out: str, vdd: float, st: str, stn: str) -> list[str]:
    """A Schmitt inverter: state node ``st`` high while ``out`` is high, ``stn`` inverse."""
    return [f"R{prefix}ST vdd {st} 1e6", f"S{prefix}HYS {st} 0 {inp} 0 SWHYS",
            f"B{prefix}STN {stn} 0 V={vdd:.9g}-V({st})",
            f"S{prefix}OH vdd {out} {st} 0 SWOH", f"S{prefix}OL {out} 0 {stn} 0 SWOL"]


def netlist(name: str) -> str:
    """The netlist text of case ``name`` (deterministic: committed and compared)."""
    d = design(name)
    env, _ = d.env()
    values = d.working_values(env)
    topo = d.topo
    vdd, vtp, vtm = _f(env.vdd), _f(env.vt_plus), _f(env.vt_minus)
    fig = d.fast()
    period = _f(fig.period_s)
    step = min(period * STEP_FRACTION, _f(fig.flash_s) * FLASH_STEP_FRACTION)
    core, stage = get_core(topo.core), get_stage(topo.stage)
    gate = "CMOS 555 (comparators and flip-flop)" if core.chip_kind == "timer" else \
        "Schmitt inverter"
    lines = [f"* pulsepick reference circuit {name}: {topo.label()}, chip {d.chip.family}, "
             f"LED {d.parts.led.key}, supply {vdd:g} V",
             f"* {gate}: hysteresis switch VT+ {vtp:.6g} V, VT- {vtm:.6g} V; output "
             f"resistance high {_f(env.rout_high):.6g} ohm, low {_f(env.rout_low):.6g} ohm",
             "* input-pin leakage: current source ILEAK; timing capacitor leakage: RLEAK",
             "* LED and diodes: the simulator's diode with our IS, N, RS (N scaled to 27 C)",
             "* not modelled: quiescent and crossing currents (they move neither the period",
             "* nor the LED peak); see tests/reference/netlist.py",
             f"VDD vdd 0 DC {vdd:.9g}",
             f"C1 tim 0 {values['c1']:.9g}",
             f"ILEAK tim 0 DC {_f(env.pin_leak_a):.9g}"]
    if _f(env.cap_leak_g) > 0:
        lines.append(f"RLEAK tim 0 {1 / _f(env.cap_leak_g):.9g}")
    lines += _inverter("G", "tim", "out", vdd, "stp", "stn")
    if topo.buffered:
        lines += _inverter("B", "out", "drv", vdd, "bstp", "bstn")
    else:
        lines.append("VDRV out drv 0")
    lines += list(core.spice(values, env, topo))
    lines += list(stage.spice(values, env, topo))
    lines += [
        f".model SWHYS SW(VT={0.5 * (vtp + vtm):.9g} VH={0.5 * (vtp - vtm):.9g} RON=1 "
        "ROFF=1e12)",
        f".model SWOH SW(VT={0.5 * vdd:.9g} VH=0 RON={_f(env.rout_high):.9g} ROFF=1e12)",
        f".model SWOL SW(VT={0.5 * vdd:.9g} VH=0 RON={_f(env.rout_low):.9g} ROFF=1e12)",
        _diode_model("DLED", env.led),
    ]
    if core.chip_kind == "timer":
        lines.append(f".model SWDIS SW(VT={0.5 * vdd:.9g} VH=0 "
                     f"RON={_f(env.r_discharge):.9g} ROFF=1e12)")
    for model_name, attr in (("DSTEER", "steer_diode"), ("DRESET", "reset_diode"),
                             ("DFADE", "fade_diode")):
        if getattr(env, attr) is not None:
            lines.append(_diode_model(model_name, getattr(env, attr)))
    stop = PERIODS * period
    lines += [f".options TEMP={SIM_T_K - 273.15:g} TNOM={SIM_T_K - 273.15:g}",
              f".ic v(tim)={0.99 * vtm:.9g}",
              ".control",
              "set wr_singlescale",
              "set wr_vecnames",
              f"tran {step:.6g} {stop:.6g} 0 {step:.6g} uic",
              "wrdata {OUT} v(out) i(VLED)",
              "quit",
              ".endc",
              ".end", ""]
    return "\n".join(lines)
