"""Core ``schmitt``: one Schmitt inverter, R1 from output to input, C1 from input to ground.

While the output is high, C1 charges from VT- to VT+ through R1; while it is low,
C1 discharges from VT+ to VT-. With a rail-to-rail output and no leakage:

    t_high = R1·C1·ln((V − VT−)/(V − VT+)),   t_low = R1·C1·ln(VT+/VT−)

(onsemi MC14106B datasheet, astable multivibrator figure; ref:onsemi-mc14106b). Here the
output is a Thevenin source (the gate's output resistance, shifted by the LED stage
when the stage hangs on this same output), and the capacitor's leakage and the
input pin's leakage are included exactly in the first-order solution.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from pulsepick.circuits.base import (
    RUNS,
    STALLS,
    TIMING_CAP,
    CoreDefaults,
    CoreSearch,
    Drive,
    Env,
    Param,
    PhaseTimes,
    Topology,
    register_core,
)
from pulsepick.circuits.rc import exp_trajectory_mean, impulse_shift, phase_time, relax


def linear_phase(c, r, drive: Drive, env: Env, v_from, v_to, rising: bool):
    """One linear RC phase of a Schmitt core: returns ``(t, ok, v_inf, tau, v_start)``."""
    g = 1.0 / (r + drive.r_th)
    v_inf, tau = relax(c, g, drive.v_th, env.cap_leak_g, env.pin_leak_a)
    v_start = v_from + impulse_shift(drive.r_out, drive.q_imp, drive.s_imp, drive.t_imp,
                                     g, c, tau)
    t, ok = phase_time(v_start, v_to, v_inf, tau, rising)
    return t, ok, v_inf, tau, v_start


def crossing_charge(env: Env, v_start, v_inf, tau, t):
    """Charge (C) of the chip's crossing current while its input follows the phase."""
    if env.cross_current is None or env.cross_override_a is not None:
        return 0.0
    vdd = env.vdd
    return exp_trajectory_mean(v_start, v_inf, tau, t, lambda v: env.cross_current(v, vdd))


def timing_supply_charge(c, env: Env, t_high):
    """Charge per period the timing network draws from the supply (through the output).

    The capacitor is charged from the supply by C·(VT+ − VT−) each period and dumped to
    ground; the leakage during the high phase also comes from the supply.
    """
    v_mid = 0.5 * (env.vt_plus + env.vt_minus)
    t = np.where(np.isfinite(t_high), t_high, 0.0)
    return c * (env.vt_plus - env.vt_minus) + (env.cap_leak_g * v_mid + env.pin_leak_a) * t


@dataclass(frozen=True)
class SchmittCore(CoreDefaults):
    name: str = "schmitt"
    chip_kind: str = "schmitt"
    params: tuple[Param, ...] = (
        Param("r1", "R", "timing resistor", option="--r",
              help="timing resistor R1 (schmitt cores), e.g. 2M2",
              example="2M2"),
        TIMING_CAP,
    )
    default_family: str = "hc"
    ldr_param: str = "r1"
    search: ClassVar[CoreSearch] = CoreSearch(1, "one-resistor", slow_phase_core="schmitt")

    def end_currents(self, v, env, topo):
        """(charging at VT+, discharging at VT-), A: R1 from the unloaded output."""
        return (env.vdd - env.vt_plus) / v["r1"], env.vt_minus / v["r1"]

    def held_resistance(self, v, topo, output):
        """Resistance (ohm) from the output to a timing node held at the other rail."""
        return float(v["r1"])

    def timing_resistances(self, v):
        return {"R1": v["r1"]}

    def phase_times(self, v, env: Env, topo: Topology, high: Drive, low: Drive,
                    with_cross: bool = True) -> PhaseTimes:
        r, c = v["r1"], v["c1"]
        th, ok_h, vi_h, tau_h, vs_h = linear_phase(c, r, high, env, env.vt_minus,
                                                   env.vt_plus, True)
        tl, ok_l, vi_l, tau_l, vs_l = linear_phase(c, r, low, env, env.vt_plus,
                                                   env.vt_minus, False)
        status = np.where(ok_h & ok_l, RUNS, STALLS)
        i0_h = (high.v_th - env.vt_minus) / (r + high.r_th)
        i0_l = (low.v_th - env.vt_plus) / (r + low.r_th)
        q_cross = 0.0
        if with_cross:
            q_cross = (crossing_charge(env, vs_h, vi_h, tau_h, th)
                       + crossing_charge(env, vs_l, vi_l, tau_l, tl))
        return PhaseTimes(th, tl, status, timing_supply_charge(c, env, th), q_cross, i0_h, i0_l)

    def ref_currents(self, v, env, topo, vo, vc, high):
        """Reference engine: (current into C1, current out of the output node, supply)."""
        i_r = (vo - vc) / v["r1"]
        return i_r - env.cap_leak_g * vc - env.pin_leak_a, i_r, 0.0

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the timing network (nodes: see ``base.SPICE_NODES``)."""
        return (f"R1 out tim {v['r1']:.9g}",)


register_core(SchmittCore())
