"""Core ``timer555``: CMOS 555-class astable with RA, RB and C1.

C1 charges through RA + RB from the supply until the threshold comparator trips
(about 2/3 of the supply), then discharges through RB into the discharge switch
until the trigger comparator trips (about 1/3). With ideal 1/3 and 2/3 levels:

    t_high = ln2·(RA + RB)·C,   t_low = ln2·RB·C

(ref:maplin-555-notes; the switch resistance adds to RB, TLC555-Q1 datasheet, ref:ti-tlc555-q1). Here the
actual threshold and trigger levels (with their spread), the discharge switch
resistance, the current RA wastes into the switch during the low phase, and the
capacitor and pin leakage are included. The output pin is separate from the timing
network, so the LED stage does not shift the timing.
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
from pulsepick.circuits.rc import phase_time, relax


@dataclass(frozen=True)
class Timer555Core(CoreDefaults):
    name: str = "timer555"
    chip_kind: str = "timer"
    params: tuple[Param, ...] = (
        Param("ra", "R", "timing resistor from the supply", option="--ra",
              help="555 timing resistor RA, e.g. 1M",
              example="1M"),
        Param("rb", "R", "timing resistor to the capacitor", option="--rb",
              help="555 timing resistor RB, e.g. 22k",
              example="22k"),
        TIMING_CAP,
    )
    drives_stage_from_timing_output: bool = False
    default_family: str = "timer555"
    bufferable: bool = False
    ldr_param: str = "rb"
    search: ClassVar[CoreSearch] = CoreSearch(2, "two-resistor", slow_phase_core="timer555")
    dusk_hold: str = "reset"  # held still by day through its RESET pin

    def end_currents(self, v, env, topo):
        """(charging at VT+, discharging at VT-), A.

        Charging through RA + RB from the supply; discharging through RB into the
        discharge node, which RA feeds and the switch holds near ground (its Thevenin
        source, as in ``phase_times``).
        """
        ra, rb, rdis = v["ra"], v["rb"], env.r_discharge
        v_d0 = env.vdd * rdis / (ra + rdis)
        r_d = ra * rdis / (ra + rdis)
        return (env.vdd - env.vt_plus) / (ra + rb), (env.vt_minus - v_d0) / (rb + r_d)

    def held_resistance(self, v, topo, output):
        """Not defined: a 555 is held by its RESET pin, not at its timing node."""
        return float("nan")

    def timing_resistances(self, v):
        return {"RA+RB": v["ra"] + v["rb"], "RB": v["rb"]}

    def phase_times(self, v, env: Env, topo: Topology, high: Drive, low: Drive,
                    with_cross: bool = True) -> PhaseTimes:
        ra, rb, c = v["ra"], v["rb"], v["c1"]
        vdd, rdis = env.vdd, env.r_discharge
        g_h = 1.0 / (ra + rb)
        vi_h, tau_h = relax(c, g_h, vdd, env.cap_leak_g, env.pin_leak_a)
        th, ok_h = phase_time(env.vt_minus, env.vt_plus, vi_h, tau_h, True)
        # discharge node: RA from the supply, the switch to ground -> Thevenin source
        v_d0 = vdd * rdis / (ra + rdis)
        r_d = ra * rdis / (ra + rdis)
        g_l = 1.0 / (rb + r_d)
        vi_l, tau_l = relax(c, g_l, v_d0, env.cap_leak_g, env.pin_leak_a)
        tl, ok_l = phase_time(env.vt_plus, env.vt_minus, vi_l, tau_l, False)
        status = np.where(ok_h & ok_l, RUNS, STALLS)
        # supply charge: C·ΔV while charging, plus RA's current into the switch while low
        tl_f = np.where(np.isfinite(tl), tl, 0.0)
        with np.errstate(invalid="ignore", divide="ignore"):
            frac = np.where(tl_f > 0, tau_l / np.maximum(tl_f, 1e-300)
                            * (1 - np.exp(-tl_f / tau_l)), 1.0)
        vc_mean_low = vi_l + (env.vt_plus - vi_l) * frac
        with np.errstate(divide="ignore"):
            g_dis = np.where(rdis > 0, 1.0 / np.maximum(rdis, 1e-300), np.inf)
        g_sum = 1 / ra + 1 / rb + np.minimum(g_dis, 1e300)
        v_node = np.where(np.isinf(g_dis), 0.0, (vdd / ra + vc_mean_low / rb) / g_sum)
        th_f = np.where(np.isfinite(th), th, 0.0)
        q_supply = (c * (env.vt_plus - env.vt_minus)
                    + env.cap_leak_g * 0.5 * (env.vt_plus + env.vt_minus) * th_f
                    + (vdd - v_node) / ra * tl_f)
        return PhaseTimes(th, tl, status, q_supply, 0.0)

    def ref_currents(self, v, env, topo, vo, vc, high):
        """Reference engine: (current into C1, current out of the output pin, supply)."""
        ra, rb = v["ra"], v["rb"]
        if high:
            i = (env.vdd - vc) / (ra + rb)
            return i - env.cap_leak_g * vc - env.pin_leak_a, 0.0, i
        g_sum = 1 / ra + 1 / rb + 1 / env.r_discharge
        v_node = (env.vdd / ra + vc / rb) / g_sum
        i_c = (v_node - vc) / rb
        return i_c - env.cap_leak_g * vc - env.pin_leak_a, 0.0, (env.vdd - v_node) / ra

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the timing network (nodes: see ``base.SPICE_NODES``):
        the discharge switch conducts while the output is low."""
        return (f"RA vdd dis {v['ra']:.9g}", f"RB dis tim {v['rb']:.9g}",
                "SDIS dis 0 stn 0 SWDIS")


register_core(Timer555Core())
