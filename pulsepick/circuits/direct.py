"""Stage ``direct``: a series resistor and the LED on the driving output.

With ``lit="high"`` the LED and RS run from the driver to ground and light while it
is high; with ``lit="low"`` they run from the supply into the driver and light while
it is low. The LED current is the exact solution of the Shockley law with series
resistance against the driver's output resistance (no fixed "Vf").
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from pulsepick.circuits.base import (
    DriverView,
    Env,
    Load,
    Param,
    StageDefaults,
    StageFigures,
    Topology,
    register_stage,
)
from pulsepick.circuits.decay import n_vt
from pulsepick.circuits.searchgrid import (
    STAGE_R_SPAN,
    STAGE_R_SPAN_MIN_OHM,
    SearchContext,
    StageSearch,
    around,
    neighbours,
)

#: LED series resistor option, shared by the stages that have one.
RS_PARAM = dict(option="--rs", help="LED series resistor RS, e.g. 47 or 470R", example="470")


def led_dynamic_resistance(led, i):
    """Incremental resistance dV/dI of an LED at current ``i`` (ohm)."""
    j = led.junction
    return n_vt(j) / (j.i_s + np.asarray(i, dtype=float)) + j.r_s


@dataclass(frozen=True)
class DirectStage(StageDefaults):
    name: str = "direct"
    params: tuple[Param, ...] = (Param("rs", "R", "LED series resistor", **RS_PARAM),)
    lits: tuple[str, ...] = ("high", "low")
    pulsed: bool = False
    steady_load: bool = True
    search: ClassVar[StageSearch] = StageSearch(coarse_keep=2, timing_keep=32, per_decade=3)
    search_rank: int = 2
    #: the driver level that keeps the LED dark, by ``Topology.lit`` (the dusk hold)
    dark_driver: ClassVar[dict[str, str]] = {"high": "low", "low": "high"}

    def label(self, topo):
        return f"{self.name} ({'to ground' if topo.lit == 'high' else 'from supply'})"

    def led_note(self, topo):
        if topo.lit == "low":
            return "anode towards the supply (lit while its driver is low)"
        return "cathode to ground (lit while its driver is high)"

    def search_grid(self, ctx: SearchContext, topo):
        rout = ctx.rout_low_ohm if topo.lit == "low" else ctx.rout_high_ohm
        rs_est = ctx.series_resistor(0.0, rout)
        return {"rs": around(ctx.r_values, rs_est, STAGE_R_SPAN, floor_hi=STAGE_R_SPAN_MIN_OHM)}

    def refine(self, ctx: SearchContext, point):
        return [{"rs": r} for r in neighbours(ctx.r_values, point["rs"]).tolist()]

    def fast(self, v, env: Env, topo: Topology, drv: DriverView, t_on, t_off, state):
        rs = v["rs"]
        if topo.lit == "high":
            i = env.led.current(drv.high_level(), r_ext=drv.r_high + rs)
            t_lit = t_on
        else:
            i = env.led.current(drv.vdd - drv.low_level(), r_ext=drv.r_low + rs)
            t_lit = t_off
        i = np.maximum(i, 0.0)
        t_lit_f = np.where(np.isfinite(t_lit), t_lit, 0.0)
        q = i * t_lit_f
        load = Load(i_ss=i if topo.lit == "high" else -i,
                    r_dyn=rs + led_dynamic_resistance(env.led, i))
        on, off = (load, Load()) if topo.lit == "high" else (Load(), load)
        return StageFigures(i, t_lit_f, t_lit_f, q, q, on, off)

    def ref_init(self, v, env, topo):
        return []

    def ref_currents(self, v, env, topo, vo, xs, driver_high):
        """(current out of the driver, state derivatives, LED current, supply current)."""
        if topo.lit == "high":
            i = env.led_scalar.current(vo, v["rs"]) if vo > 0 else 0.0
            return i, [], i, 0.0
        across = env.vdd - vo
        i = env.led_scalar.current(across, v["rs"]) if across > 0 else 0.0
        return -i, [], i, i

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the stage (nodes: see ``base.SPICE_NODES``)."""
        if topo.lit == "high":
            return (f"RS drv la {v['rs']:.9g}", "VLED la lk 0", "DLED lk 0 DLED")
        return (f"RS vdd la {v['rs']:.9g}", "VLED la lk 0", "DLED lk drv DLED")


register_stage(DirectStage())
