"""Stage ``transistor``: an NPN low-side switch, so an LED can take tens of milliamperes
from a gate that could not drive it.

The driver feeds the base through RBASE; the emitter is grounded; the LED and its
series resistor RS run from the supply into the collector. While the driver is high the
transistor saturates and the LED current is set by the supply, the LED, RS and the
transistor's VCE(sat); the gate only supplies the base current. While the driver is
low the transistor is off.

The transistor is the Ebers-Moll transport model of ``pulsepick.parts.transistor``
(2N3904 class, ref:onsemi-2n3904). The operating point is solved exactly: for a trial
collector (LED) current the collector voltage follows from the LED law, the
base-emitter voltage from the collector equation in closed form, and the base current
from the model; the base loop (driver, RBASE) then fixes the current (one monotone root,
bisection in ln I, over numpy arrays for the fast engine and in plain ``math`` for the
reference engine).
"""

from __future__ import annotations

import math
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
from pulsepick.circuits.direct import RS_PARAM
from pulsepick.circuits.searchgrid import (
    STAGE_R_MIN_OHM,
    SearchContext,
    StageSearch,
    crossed,
    crossed_neighbours,
)
from pulsepick.parts.transistor import get_transistor
from pulsepick.physconst import K_OVER_Q_V_PER_K

#: The transistor the stage uses (the only row of data/parts/transistors.csv).
PART = "npn-small"
#: Collector-to-base current ratio a hard-saturated switch is designed for (common
#: practice: a forced gain of about 10); it only centres the base resistor search.
FORCED_GAIN = 10.0
#: The lowest forced gain searched (common practice): a base resistor that feeds more
#: than a fifth of the LED's current into the base only loads the gate and the storage.
MIN_FORCED_GAIN = 5.0
#: Base-emitter and collector-emitter drops assumed for the first estimates, V
#: (estimate, inside the data sheet's VBE(sat) and VCE(sat) limits, ref:onsemi-2n3904).
VBE_GUESS_V, VCE_GUESS_V = 0.75, 0.1
_BISECTIONS = 70
_SCALAR_BISECTIONS = 90


def _base_resistor(ctx: SearchContext, forced_gain: float) -> float:
    """The base resistor (ohm) that feeds the aimed LED peak / ``forced_gain`` into the
    base from a high gate output (estimate: VBE_GUESS_V across the base junction)."""
    i_base = ctx.peak_a / forced_gain
    return max((ctx.supply_v - VBE_GUESS_V) / i_base - ctx.rout_high_ohm, STAGE_R_MIN_OHM)


def on_current(tr, led, vdd, v_src, r_base, rs):
    """LED (collector) and base current (A, arrays) with the base fed from ``v_src`` (V)
    through ``r_base`` (ohm) and the LED and ``rs`` (ohm) from ``vdd`` into the collector."""
    nvt, i_s, bf, br = tr.n_vt, tr.i_s_a, tr.bf, tr.br
    k = 1.0 + 1.0 / br
    shape = np.broadcast_shapes(np.shape(vdd), np.shape(v_src), np.shape(r_base), np.shape(rs))
    vdd, v_src, r_base, rs = (np.broadcast_to(np.asarray(x, dtype=float), shape)
                              for x in (vdd, v_src, r_base, rs))
    vc_min = nvt * math.log(k) * (1.0 + 1e-9)
    i_lo = np.full(shape, i_s / br * (1.0 + 1e-6))
    i_hi = np.maximum(np.asarray(led.current(np.maximum(vdd - vc_min, 0.0), r_ext=rs),
                                 dtype=float), i_lo)

    def parts(i):
        vc = vdd - led.voltage(i) - i * rs
        w = np.exp(-np.maximum(vc, vc_min) / nvt)
        u = np.maximum(i / i_s + 1.0 - k, 1e-300) / (1.0 - k * w)
        ib = i_s * ((u - 1.0) / bf + (u * w - 1.0) / br)
        return nvt * np.log(u), ib

    a, b = np.log(i_lo), np.log(i_hi)
    for _ in range(_BISECTIONS):
        m = 0.5 * (a + b)
        vbe, ib = parts(np.exp(m))
        high = (v_src - vbe) / r_base > ib  # the base loop can feed more: current is higher
        a, b = np.where(high, m, a), np.where(high, b, m)
    i = np.exp(0.5 * (a + b))
    _, ib = parts(i)
    off = i_hi <= i_lo
    return np.where(off, 0.0, i), np.where(off, 0.0, ib)


def _on_current_scalar(tr, junction, vdd: float, v_src: float, r_base: float, rs: float
                       ) -> tuple[float, float]:
    """Scalar twin of :func:`on_current` for the reference engine (plain ``math``, its
    own bracket) on the same monotone base-loop residual."""
    nvt, i_s, bf, br = tr.n_vt, tr.i_s_a, tr.bf, tr.br
    k = 1.0 + 1.0 / br
    vc_min = nvt * math.log(k)
    led_nvt = junction.n * K_OVER_Q_V_PER_K * junction.temperature_k

    def residual(x: float) -> tuple[float, float]:
        i = math.exp(x)
        vc = vdd - (led_nvt * math.log1p(i / junction.i_s) + i * junction.r_s) - i * rs
        if vc <= vc_min:
            return -math.inf, 0.0
        w = math.exp(-vc / nvt)
        u = (i / i_s + 1.0 - k) / (1.0 - k * w)
        if u <= 0:
            return math.inf, 0.0
        ib = i_s * ((u - 1.0) / bf + (u * w - 1.0) / br)
        return (v_src - nvt * math.log(u)) / r_base - ib, ib

    # bracket: just above the reverse floor, and a current the supply cannot push through
    # the LED and RS (the collector would go below ground: the residual is -inf there)
    a = math.log(i_s / br * (1.0 + 1e-6))
    b = math.log(max(vdd / max(rs + junction.r_s, 1e-3), 2.0 * math.exp(a)))
    if not residual(a)[0] > 0:
        return 0.0, 0.0
    # plain bisection: near full saturation the root sits a hair below the pole of the
    # residual, where secant steps would stall
    for _ in range(_SCALAR_BISECTIONS):
        m = 0.5 * (a + b)
        if residual(m)[0] > 0:
            a = m
        else:
            b = m
    i, ib = math.exp(a), residual(a)[1]
    return i, ib


@dataclass(frozen=True)
class TransistorStage(StageDefaults):
    name: str = "transistor"
    params: tuple[Param, ...] = (
        Param("rs", "R", "LED series resistor", **RS_PARAM),
        Param("rbase", "R", "base resistor of the LED switch", option="--rbase",
              help="transistor stage base resistor RBASE, e.g. 2k2", example="2k2"),
    )
    pulsed: bool = False
    gate_carries_led: bool = False  # the LED current comes from the supply, not the gate
    steady_load: bool = True
    search: ClassVar[StageSearch] = StageSearch(coarse_keep=2, timing_keep=16, per_decade=3)
    search_rank: int = 1
    #: A gate drives an LED of up to about 20 mA itself; the switch earns its two parts
    #: above that (design choice; the stage takes 20-100 mA LEDs).
    search_from_peak_a: float = 20e-3
    drive_param: str = "rbase"  # the base resistor sets the current the gate sources
    #: dark with its driver low (no base current: the transistor is off)
    dark_driver: ClassVar[dict[str, str]] = {"high": "low"}

    extras: ClassVar[tuple[ExtraPart, ...]] = (ExtraPart(
        "transistor", "low-side switch for the LED",
        "emitter to ground, collector to the LED's cathode, base to the base resistor",
        key=PART),)

    def led_note(self, topo):
        return "anode through the series resistor to the supply, cathode to the collector"

    def fast(self, v, env: Env, topo: Topology, drv: DriverView, t_on, t_off, state):
        tr = get_transistor(PART)
        i, ib = on_current(tr, env.led, drv.vdd, drv.high_level(), drv.r_high + v["rbase"],
                           v["rs"])
        t_on_f = np.where(np.isfinite(t_on), t_on, 0.0)
        q = i * t_on_f
        load = Load(i_ss=ib, r_dyn=v["rbase"] + tr.n_vt / np.maximum(ib, 1e-30))
        return StageFigures(i, t_on_f, t_on_f, q, q + ib * t_on_f, load, Load())

    def driver_peak_a(self, v, env, topo, led_peak_a):
        """The base current (A) the driving gate sources while high: the LED's current
        flows through the transistor, not the gate. With a small base resistor it can
        exceed the gate's pin rating on its own."""
        _, ib = on_current(get_transistor(PART), env.led, env.vdd, env.vdd,
                           env.rout_high + v["rbase"], v["rs"])
        return float(np.ravel(ib)[0])

    def ref_init(self, v, env, topo):
        return []

    def ref_currents(self, v, env, topo, vo, xs, driver_high):
        """(current out of the driver, state derivatives, LED current, supply current)."""
        i, ib = _on_current_scalar(get_transistor(PART), env.led.junction, env.vdd, vo,
                                   v["rbase"], v["rs"])
        return ib, [], i, i

    def search_grid(self, ctx: SearchContext, topo):
        _, rs = ctx.series_grid(self.search.per_decade, VCE_GUESS_V, rout_ohm=0.0)
        rb = ctx.resistor_grid(_base_resistor(ctx, FORCED_GAIN), self.search.per_decade)
        rb = rb[rb >= _base_resistor(ctx, MIN_FORCED_GAIN)]
        return crossed("rbase", rb, "rs", rs)

    def refine(self, ctx: SearchContext, point):
        floor = _base_resistor(ctx, MIN_FORCED_GAIN)
        return [p for p in crossed_neighbours(point, "rbase", ctx.r_values, "rs", ctx.r_values)
                if p["rbase"] >= floor or p["rbase"] >= point["rbase"]]

    def spice(self, v, env, topo):
        """Circuit-simulator lines of the stage (nodes: see ``base.SPICE_NODES``): the
        simulator's bipolar model with the transport parameters and nothing else."""
        tr = get_transistor(PART)
        n_sim = tr.n * tr.temperature_k / 300.15
        return (f"RS vdd la {v['rs']:.9g}", "VLED la lk 0", "DLED lk col DLED",
                f"RBASE drv bq {v['rbase']:.9g}", "Q1 col bq 0 QDRV",
                f".model QDRV NPN(IS={tr.i_s_a:.9g} BF={tr.bf:.9g} BR={tr.br:.9g} "
                f"NF={n_sim:.9g} NR={n_sim:.9g})")


register_stage(TransistorStage())
