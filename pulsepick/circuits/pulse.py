"""Stage ``pulse``: coupling capacitor CP, optional series resistor RS, LED to ground,
and a reset diode (anode to ground, cathode at the LED side of CP).

Each rising edge of the driver pushes the LED side of CP up: the LED flashes while
CP charges, the current decaying as CP's voltage rises; the charge per flash is
bounded by CP·(swing). While the driver is low the reset diode discharges CP
again, down to a small residual (the diode's drop at its final, tiny current).

Both decays are closed forms (``pulsepick.circuits.decay``); the residual at the
rising edge and the voltage at the falling edge are found by a short fixed-point
iteration to the periodic steady state.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from pulsepick.circuits.base import (
    DriverView,
    Env,
    ExtraPart,
    Load,
    Param,
    StageDefaults,
    StageFigures,
    Topology,
    register_stage,
)
from pulsepick.circuits.decay import decay_end_current, decay_time, n_vt
from pulsepick.circuits.direct import RS_PARAM
from pulsepick.circuits.searchgrid import (
    STAGE_DROP_V,
    SearchContext,
    StageSearch,
    crossed,
    neighbours,
)

LN2 = np.log(2.0)
#: Starting guess for the residual voltage on CP at the rising edge (V): a silicon
#: diode's drop at sub-microampere currents (estimate; the iteration refines it).
_RESIDUAL_GUESS_V = 0.3
_INNER_PASSES = 3


@dataclass(frozen=True)
class PulseStage(StageDefaults):
    name: str = "pulse"
    params: tuple[Param, ...] = (
        Param("cp", "C", "flash coupling capacitor", option="--cp",
              help="pulse stage coupling capacitor CP, e.g. 22u",
              example="22u"),
        Param("rs", "R", "LED series resistor", optional=True, default=0.0, **RS_PARAM),
    )
    n_states: int = 1
    pulsed: bool = True
    steady_load: bool = False
    search: ClassVar[StageSearch] = StageSearch(coarse_keep=2, timing_keep=16, per_decade=3)
    search_rank: int = 1
    #: dark with its driver at either level (the coupling capacitor passes no steady current)
    dark_driver: ClassVar[dict[str, str]] = {"high": "either"}

    extras: ClassVar[tuple[ExtraPart, ...]] = (ExtraPart(
        "diode", "reset diode for the flash capacitor",
        "anode to ground, cathode to the LED side of the flash capacitor",
        choice="reset_diode"),)

    def led_note(self, topo):
        return "cathode to ground, anode to the flash capacitor"

    def search_grid(self, ctx: SearchContext, topo):
        rs_est, rs = ctx.series_grid(self.search.per_decade, STAGE_DROP_V)
        led, peak = ctx.led, ctx.peak_a
        r_total = rs_est + ctx.rout_high_ohm + n_vt(led.junction) / peak + \
            float(led.junction.r_s)
        c_est = ctx.flash_s / (LN2 * r_total)
        return crossed("cp", ctx.capacitor_grid(c_est, self.search.per_decade), "rs",
                       np.concatenate([[0.0], rs]))

    def refine(self, ctx: SearchContext, point):
        r0 = point["rs"]
        rs = [0.0] if r0 == 0 else neighbours(ctx.r_values, r0).tolist()
        return [{"cp": c, "rs": r} for c in neighbours(ctx.c_values, point["cp"]).tolist()
                for r in rs]

    def fast(self, v, env: Env, topo: Topology, drv: DriverView, t_on, t_off, state):
        cp, rs = v["cp"], v["rs"]
        led, dio = env.led, env.reset_diode
        r_flash = drv.r_high + rs  # outside the LED's own series resistance
        r_reset = drv.r_low
        t_on_f = np.where(np.isfinite(t_on), t_on, 1e9)
        t_off_f = np.where(np.isfinite(t_off), t_off, 1e9)
        swing = drv.high_level(at_edge=True) - drv.low_level(at_edge=True)
        residual = _RESIDUAL_GUESS_V if state is None else state
        for _ in range(_INNER_PASSES):
            across = np.maximum(swing - residual, 0.0)
            i_pk = np.maximum(led.current(across, r_ext=r_flash), 1e-30)
            i_end = decay_end_current(led.junction, r_flash + led.junction.r_s, cp, i_pk, t_on_f)
            v_end = swing - (led.voltage(i_end) + i_end * r_flash)  # CP voltage at falling edge
            id_1 = np.maximum(dio.junction.current(np.maximum(v_end, 0.0), r_ext=r_reset), 1e-30)
            id_end = decay_end_current(dio.junction, r_reset + dio.junction.r_s, cp, id_1,
                                       t_off_f)
            residual = np.where(v_end > 0, dio.voltage(id_end) + id_end * r_reset, v_end)
        q = np.maximum(cp * (v_end - residual), 0.0)
        r_t = r_flash + led.junction.r_s
        t50 = np.minimum(decay_time(led.junction, r_t, cp, i_pk, 0.5 * i_pk), t_on_f)
        t10 = np.minimum(decay_time(led.junction, r_t, cp, i_pk, 0.1 * i_pk), t_on_f)
        t50 = np.where(i_end >= 0.5 * i_pk, t_on_f, t50)
        t10 = np.where(i_end >= 0.1 * i_pk, t_on_f, t10)
        # the decays as exponentials of matching half-life, truncated by the phase
        tau_flash = decay_time(led.junction, r_t, cp, i_pk, 0.5 * i_pk) / LN2
        r_t_reset = r_reset + dio.junction.r_s
        tau_reset = decay_time(dio.junction, r_t_reset, cp, id_1, 0.5 * id_1) / LN2
        on = Load(i_ss=0.0, r_dyn=np.inf, q_imp=q, s_imp=tau_flash, t_imp=t_on_f)
        off = Load(i_ss=0.0, r_dyn=np.inf, q_imp=-q, s_imp=tau_reset, t_imp=t_off_f)
        return StageFigures(i_pk, t50, t10, q, q, on, off, state=residual)

    def ref_init(self, v, env, topo):
        return [_RESIDUAL_GUESS_V]

    def ref_currents(self, v, env, topo, vo, xs, driver_high):
        """(current out of the driver, d(v_cp)/dt, LED current, supply current)."""
        node = vo - xs[0]  # LED side of CP
        i_led = env.led_scalar.current(node, v["rs"]) if node > 0 else 0.0
        i_dio = env.reset_scalar.current(-node, 0.0) if node < 0 else 0.0
        i_cp = i_led - i_dio
        return i_cp, [i_cp / v["cp"]], i_led, 0.0

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the stage (nodes: see ``base.SPICE_NODES``)."""
        rs = max(v["rs"], 1e-6)  # a zero resistor as a micro-ohm (the simulator needs R > 0)
        return (f"CP drv pn {v['cp']:.9g}", f"RS pn la {rs:.9g}", "VLED la lk 0",
                "DLED lk 0 DLED", "DRST 0 pn DRESET")


register_stage(PulseStage())
