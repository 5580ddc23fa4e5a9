"""One status and one reason for a design: runs, stalls, latched, dark or out of range.

Every report takes its status row AND its stall/latch/dark warning from
:func:`verdict`, so the two can never disagree. The reason names the real cause:

``latched``
    The LED stage pulls the timing gate's output across the gate's own threshold: with
    the output high and loaded, the output sits below VT+, so the timing capacitor can
    never reach VT+ (or, low and loaded from the supply, above VT-). The oscillator
    stops in that phase with the LED held on (or off), drawing a steady current.
``stalls``
    Leakage (the timing capacitor's, at its typical figure) takes the whole current that
    should move the timing capacitor to a threshold.
``dark``
    The LED never reaches a visible current: the supply is below the LED's turn-on, or
    the resistors hold the peak below it.
``out-of-range``
    The supply is outside the chip's range.

The loaded output level of a direct LED stage is the node where the gate's output
resistance (the engines' model) meets the LED's diode law through RS (Kirchhoff's
current law, solved by bisection).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pulsepick.circuits.base import (
    DARK,
    RUNS,
    STALLS,
    STATUS_WORDS,
    UNPOWERED,
    Topology,
    get_core,
    get_stage,
)
from pulsepick.engine.environment import chip_model
from pulsepick.hints import hint
from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating
from pulsepick.units import format_eng

LATCHED = "latched"
_BISECT_STEPS = 60


@dataclass(frozen=True)
class Verdict:
    """The design's state and why (SI units)."""

    state: str  # "runs", "stalls", "latched", "dark", "out-of-range"
    reason: str | None  # None when it runs
    led_on: bool | None = None  # latched: the LED held lit (True) or dark (False)
    led_a: float | None = None  # A, latched: the steady LED current
    output_v: float | None = None  # V, latched: where the loaded output sits

    def as_dict(self) -> dict:
        return {"state": self.state, "reason": self.reason, "led_on": self.led_on,
                "led_a": self.led_a, "output_v": self.output_v}


def _scalar(x) -> float:
    return float(np.ravel(x)[0])


def _solve_node(f, lo: float, hi: float) -> float:
    """Root of the decreasing function ``f`` on [lo, hi] by bisection."""
    for _ in range(_BISECT_STEPS):
        mid = 0.5 * (lo + hi)
        if f(mid) > 0:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def loaded_output(design, env) -> tuple[float | None, float | None]:
    """(high level, low level) in V of the timing gate's output with an LED and RS on it.

    None for a side the LED does not load (or when the stage does not draw the LED's
    steady current through the timing gate's output).
    """
    topo = design.topo
    stage = get_stage(topo.stage)
    if (topo.buffered or not get_core(topo.core).drives_stage_from_timing_output
            or not (stage.steady_load and stage.gate_carries_led)):
        return None, None
    led = design.parts.led
    rs = float(design.values.get("rs", 0.0))
    vdd = _scalar(env.vdd)
    if topo.lit == "high":
        r_hi = _scalar(env.rout_high)

        def f(v):  # current from the output resistance less the LED's, at node v
            return (vdd - v) / r_hi - float(np.ravel(led.current(v, r_ext=rs))[0])

        return _solve_node(f, 0.0, vdd), None
    r_lo = _scalar(env.rout_low)

    def g(v):
        return float(np.ravel(led.current(vdd - v, r_ext=rs))[0]) - v / r_lo

    return None, _solve_node(g, 0.0, vdd)


def _latch(design, env) -> Verdict | None:
    high, low = loaded_output(design, env)
    vtp, vtm = _scalar(env.vt_plus), _scalar(env.vt_minus)
    led = design.parts.led
    rs = float(design.values.get("rs", 0.0))
    vdd = _scalar(env.vdd)
    if high is not None and high <= vtp:
        i = float(np.ravel(led.current(high, r_ext=rs))[0])
        return Verdict(
            LATCHED,
            f"latched with the output high and the LED on at {format_eng(i, 'A')}: the LED "
            f"load pulls the gate's output down to {high:.2f} V, below its own VT+ "
            f"{vtp:.2f} V, so C1 never reaches VT+ and the oscillation stops; a larger RS or "
            f"a buffer gate ({hint('buffered', True)}) frees it", True, i, high)
    if low is not None and low >= vtm:
        i = float(np.ravel(led.current(vdd - low, r_ext=rs))[0])
        return Verdict(
            LATCHED,
            f"latched with the output low and the LED on at {format_eng(i, 'A')}: the LED "
            f"load pulls the gate's output up to {low:.2f} V, above its own VT- {vtm:.2f} V, "
            "so C1 never falls to VT- and the oscillation stops; a larger RS or a buffer "
            f"gate ({hint('buffered', True)}) frees it", True, i, low)
    return None


def _stall_reason(design, env) -> str:
    up, down = get_core(design.topo.core).end_currents(design.values, env, design.topo)
    i_up, i_down = float(np.ravel(up)[0]), float(np.ravel(down)[0])
    kind = get_cap_kind(design.parts.timing_cap)
    vtp = _scalar(env.vt_plus)
    rating = pick_voltage_rating(kind, design.supply_v)
    leak = _scalar(kind.leakage_a(design.values["c1"], vtp, rating, which="typ"))
    topo = design.topo
    if not topo.buffered and get_core(topo.core).drives_stage_from_timing_output:
        from pulsepick.engine import fast

        alone = Topology(topo.core, topo.stage, True, topo.lit, topo.steer)
        env2, powered = design.env()
        if int(_scalar(fast.evaluate(alone, design.working_values(env2), env2,
                                     powered).status)) == RUNS:
            return ("stalls: the LED stage's load holds the timing gate's output short of "
                    f"the threshold; a buffer gate ({hint('buffered', True)}) or a larger RS "
                    "frees it")
    if leak > 0 and leak >= 0.5 * i_up:
        return (f"stalls: the {kind.name} timing capacitor's typical leakage "
                f"{format_eng(leak, 'A')} at VT+ takes the charging current of "
                f"{format_eng(i_up, 'A')}; use a film capacitor or a smaller resistor")
    least = format_eng(min(i_up, i_down), "A")
    return (f"stalls: the current that moves C1 at a threshold ({least}) is lost to "
            "leakage; use a smaller resistor with a larger capacitor")


def _dark_reason(design, peak_a: float) -> str:
    led = design.parts.led
    vdd = design.supply_v
    vf = float(np.ravel(led.voltage(led.visible_a))[0])
    if float(np.ravel(led.current(vdd))[0]) < led.visible_a:
        return (f"dark: the supply {vdd:g} V is below the {led.name} LED's turn-on: it needs "
                f"{vf:.2f} V for a visible current ({format_eng(led.visible_a, 'A')})")
    return (f"dark: the LED peaks at {format_eng(peak_a, 'A')}, below the "
            f"{format_eng(led.visible_a, 'A')} visible current ({led.name} at {vdd:g} V); "
            "use a smaller RS")


def verdict(design, status=None, peak_a: float | None = None) -> Verdict:
    """The state of ``design`` and its one reason.

    ``status`` (int code) and ``peak_a`` (A) are the figures a report shows (for example
    from the reference engine); by default the fast engine's at the design supply.
    """
    if status is None or peak_a is None:
        f = design.fast()
        status = _scalar(f.status) if status is None else status
        peak_a = _scalar(f.led_peak_a) if peak_a is None else peak_a
    status = int(status)
    env, _ = design.env()
    if status == RUNS:
        return Verdict(STATUS_WORDS[RUNS], None)
    if status == UNPOWERED:
        model = chip_model(design.chip)
        return Verdict(STATUS_WORDS[UNPOWERED],
                       f"out of range: the supply {design.supply_v:g} V is outside "
                       f"{model.name}'s {model.vdd_min_v:g}..{model.vdd_max_v:g} V")
    if status == DARK:
        return Verdict(STATUS_WORDS[DARK], _dark_reason(design, peak_a))
    if status == STALLS:
        latched = _latch(design, env)
        if latched is not None:
            return latched
        return Verdict(STATUS_WORDS[STALLS], _stall_reason(design, env))
    return Verdict(STATUS_WORDS.get(status, "unknown"), None)
