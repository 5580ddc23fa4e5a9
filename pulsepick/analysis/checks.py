"""Design checks: the warnings a builder must see, each with the numbers behind it,
and the assumptions a report must state.

Thresholds for the warnings follow practice: a leakage within a factor of ten of the
charging current at the thresholds is flagged (common practice),
a worst-case leakage-times-R error above half the minimum hysteresis is a thin margin
and above all of it a failure with a worst-case chip (common practice),
and timing resistors above 10 MΩ are marked sensitive to board cleanliness and
humidity (common practice).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from pulsepick.analysis.spread import DEFAULT_TEMP_RANGE_C, TEMP_RANGE_TEXT
from pulsepick.circuits.base import DARK, RUNS, STALLS, Topology, get_core
from pulsepick.design import Design, levels_kw
from pulsepick.engine.environment import chip_model
from pulsepick.hints import hint
from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating
from pulsepick.units import format_eng

LEAK_MARGIN = 10.0  # charging current / leakage below this is flagged (common practice)
#: Worst-case input leakage x R from this share of the minimum hysteresis on is a thin
#: margin (common practice); above the whole of it a worst-case chip may not switch.
PIN_LEAK_MARGIN_SHARE = 0.5
HIGH_R_OHM = 10e6  # above this, board leakage and humidity matter (common practice)
LOW_R_FACTOR = 10.0  # timing R below this many output resistances is set by the chip
LOADING_SHIFT = 0.01  # period shift by the LED stage's load worth telling (1 %)
#: The LED's forward voltage is "close to the supply" when the light goes dark at a supply
#: above this share of the design's (common practice: a quarter of droop is little)
VF_CLOSE_SHARE = 0.75


@dataclass(frozen=True)
class Finding:
    """One warning, with a short code for tests and scripts."""

    code: str
    text: str


def _timing_resistances(design: Design) -> dict[str, float]:
    return get_core(design.topo.core).timing_resistances(design.values)


def charging_currents(design: Design, env) -> tuple[float, float]:
    """The currents (A) that move the timing capacitor as it reaches each threshold.

    Charging as it reaches VT+ and discharging as it reaches VT−, through every path
    that conducts in that phase (the steering branch too); leakage against the
    direction of motion must stay well below these for the oscillator to switch.
    """
    up, down = get_core(design.topo.core).end_currents(design.values, env, design.topo)
    return float(np.ravel(up)[0]), float(np.ravel(down)[0])


def _thresholds_from(design) -> str:
    """Where the thresholds in use come from, in words."""
    chip = design.chip
    if not chip.measured:
        return "datasheet typical at this supply, interpolated"
    if chip.follows_family and chip.measured_at_v != design.supply_v:
        return (f"measured by the user at {chip.measured_at_v:g} V, following the family's "
                "typical shape to this supply (estimate)")
    return "measured by the user"


def assumptions(design: Design) -> dict[str, Any]:
    """What the figures rest on, for every report."""
    env, _ = design.env()
    model = chip_model(design.chip)
    led = design.parts.led
    kind = get_cap_kind(design.parts.timing_cap)
    out: dict[str, Any] = {
        "chip": model.name,
        "supply_v": design.supply_v,
        "vt_plus_v": float(np.ravel(env.vt_plus)[0]),
        "vt_minus_v": float(np.ravel(env.vt_minus)[0]),
        "thresholds_from": _thresholds_from(design),
        "rout_high_ohm": float(np.ravel(env.rout_high)[0]),
        "rout_low_ohm": float(np.ravel(env.rout_low)[0]),
        "led": led.name,
        "led_vf_v_at_test": led.vf_test_v,
        "led_test_current_a": led.i_test_a,
        "led_ideality": led.junction.n,
        "led_series_ohm": led.junction.r_s,
        "led_visible_a": led.visible_a,
        "led_model_from": ("as given by the user" if led.key == "custom"
                           else "estimates; the datasheets give no such figures"),
        "timing_cap_kind": kind.name,
        "effective_intensity_a_s": env.effective_a_s,
        "effective_intensity_method": "Schmidt-Clausen form Ie = Ip*Q/(a*Ip + Q), a = 0.2 s; "
                                      "Blondel-Rey Ie = I*t/(a + t) for a rectangular flash",
    }
    if not design.chip.is_timer:
        if design.chip.cross_current_a is not None:
            how = (" (a measured chip's draw)" if design.chip.follows_family
                   else f" (given with {hint('cross_current')})")
            out["crossing_current"] = (f"measured: {format_eng(design.chip.cross_current_a, 'A')}"
                                       + how)
        else:
            f = design.fast()
            out["crossing_current"] = (
                f"ESTIMATE {format_eng(float(np.ravel(f.extras['crossing_a'])[0]), 'A')} average "
                "(no published figure; square-law model of the input stage; replace it with "
                f"a measured figure via {hint('cross_current')})")
    return out


def pin_leakage_finding(design: Design, env=None) -> Finding | None:
    """The input-leakage warning of a Schmitt design, graded, one line for the design.

    The guaranteed-maximum input leakage over temperature times the largest timing
    resistance is an offset on the capacitor's voltage. Graded against the MINIMUM
    hysteresis at the supply (the datasheet's VH min): above it a worst-case chip may
    never switch ("fails with a worst-case chip"); between half of it and all of it
    the margin is thin ("margin"); below half, nothing is said (common practice).
    """
    if design.chip.is_timer:
        return None
    if env is None:
        env, _ = design.env()
    model = chip_model(design.chip)
    leak_typ = float(np.ravel(env.pin_leak_a)[0])
    leak_max = float(getattr(model, "leak_max_hot_a", getattr(model, "leak_max_a", leak_typ)))
    label, r = max(_timing_resistances(design).items(), key=lambda kv: kv[1])
    if design.chip.measured:
        vh_min = float(np.ravel(env.vt_plus)[0] - np.ravel(env.vt_minus)[0])
        which = "your chip's hysteresis"
    else:
        vh_min = float(np.ravel(model.thresholds(design.supply_v).vh_min)[0])
        which = "the minimum hysteresis"
    err_max = leak_max * r
    if err_max < PIN_LEAK_MARGIN_SHARE * vh_min:
        return None
    word = "fails with a worst-case chip" if err_max > vh_min else "margin"
    beyond = " (more than the supply)" if err_max > design.supply_v else ""
    return Finding(
        "pin-leakage",
        f"{word}: input leakage up to {format_eng(leak_max, 'A')} (guaranteed maximum over "
        f"temperature) x {label} {format_eng(r, 'Ω')} = {format_eng(err_max, 'V')}{beyond} "
        f"against {which} of {format_eng(vh_min, 'V')} at {design.supply_v:g} V; typical "
        f"leakage {format_eng(leak_typ, 'A')} gives {format_eng(leak_typ * r, 'V')}")


def circuit_findings(design: Design, status=None, peak_a: float | None = None,
                     levels: tuple[float, float] | None = None,
                     with_state: bool = True) -> list[Finding]:
    """Every warning that applies to the design, each with its numbers.

    ``status`` and ``peak_a`` are the figures the report shows (default: the fast
    engine's); the state and its reason come from :func:`pulsepick.analysis.verdict.verdict`
    so the warnings never contradict the status row. ``levels`` (VT+, VT- in V) are the
    switching levels the figures were computed with (the solver's median chip).
    ``with_state`` False leaves out the state's own line (a report that prints the
    verdict's reason beside its status row).
    """
    from pulsepick.analysis.verdict import verdict

    out: list[Finding] = []
    kw = levels_kw(levels)
    env, powered = design.env(**kw)
    if status is None or peak_a is None:
        f = design.fast(**kw)
        if status is None:
            status = int(np.ravel(f.status)[0])
        if peak_a is None:
            peak_a = float(np.ravel(f.led_peak_a)[0])
    state = verdict(design, status, peak_a)

    if with_state and state.state not in ("runs", "dark"):
        out.append(Finding(state.state, state.reason or state.state))

    i_up, i_down = charging_currents(design, env)
    out.extend(_timing_resistor_findings(design, env))
    out.extend(_timing_cap_findings(design, env, i_up, status))
    out.extend(_low_r_findings(design, env))
    out.extend(_led_findings(design, state, status, peak_a, with_state))
    out.extend(_stage_loading_findings(design, env))
    return out


def _timing_resistor_findings(design: Design, env) -> list[Finding]:
    """The input-leakage warning and every timing resistor above 10 MΩ."""
    out: list[Finding] = []
    leak = pin_leakage_finding(design, env)
    if leak is not None:
        out.append(leak)
    for label, r in _timing_resistances(design).items():
        if r > HIGH_R_OHM:
            out.append(Finding("high-r",
                               f"{label} {format_eng(r, 'Ω')} is above 10 MΩ: board leakage, "
                               "flux residue and humidity can shift or stop the timing"))
    return out


def _timing_cap_findings(design: Design, env, i_up: float, status) -> list[Finding]:
    """The timing capacitor's leakage against the charging current ``i_up`` (A) at VT+,
    and the warning on its kind (electrolytic, tantalum or class-2 ceramic)."""
    out: list[Finding] = []
    vdd = design.supply_v
    kind = get_cap_kind(design.parts.timing_cap)
    c = design.values["c1"]
    rating = pick_voltage_rating(kind, vdd)
    vtp = float(np.ravel(env.vt_plus)[0])
    # the capacitor's own leakage works against charging only (it helps the discharge)
    for which in ("typ", "max"):
        i_leak = float(np.ravel(kind.leakage_a(c, vtp, rating, which=which))[0])
        if i_leak > 0 and i_up / i_leak < LEAK_MARGIN:
            if i_leak < i_up:
                word = "marginal"
            elif which == "max" or status != STALLS:
                word = "fails with a worst-case capacitor"
            else:
                word = "stalls"
            advice = ("use a film capacitor (far lower leakage)"
                      if kind.key in ("electrolytic", "tantalum")
                      else "use a smaller resistor with a larger capacitor")
            out.append(Finding(
                "cap-leakage",
                f"{word}: {kind.name} leakage {format_eng(i_leak, 'A')} ({which}) at VT+ against "
                f"a charging current of only {format_eng(i_up, 'A')} there (ratio "
                f"{i_up / i_leak:.2g}, want > {LEAK_MARGIN:g}); {advice}"))
            break
    if kind.key == "electrolytic" or kind.key == "tantalum":
        out.append(Finding(
            "timing-cap-kind",
            f"{kind.name} as the timing capacitor: tolerance -{kind.tol_minus_pct:g}/"
            f"+{kind.tol_plus_pct:g} %, leakage and drift set the period; prefer film or C0G"))
    elif kind.class2:
        t_lo, t_hi = DEFAULT_TEMP_RANGE_C
        lo = float(np.ravel(kind.temperature_factor(t_lo, which="min"))[0])
        hi = float(np.ravel(kind.temperature_factor(t_hi, which="max"))[0])
        bias = float(np.ravel(kind.dc_bias_factor(vdd, rating))[0])
        out.append(Finding(
            "timing-cap-kind",
            f"{kind.name} as the timing capacitor: tolerance "
            f"±{kind.tol_plus_pct:g} %, {100 * (lo - 1):+.0f}/{100 * (hi - 1):+.0f} % over "
            f"{TEMP_RANGE_TEXT}, keeps {100 * bias:.0f} % of its value at {vdd:g} V bias, and "
            "ages; "
            "prefer film or C0G"))
    return out


def _low_r_findings(design: Design, env) -> list[Finding]:
    """A timing resistance so low that the gate's output resistance sets the timing."""
    out: list[Finding] = []
    r_min = min(_timing_resistances(design).values())
    r_out = float(np.ravel(env.rout_high)[0])
    if r_min < LOW_R_FACTOR * r_out:
        out.append(Finding(
            "low-r",
            f"timing resistance {format_eng(r_min, 'Ω')} is within {LOW_R_FACTOR:g} x the gate's "
            f"output resistance ({r_out:.0f} Ω): the chip's drive, not the resistor, sets the "
            "timing; use at least a few kΩ"))
    return out


def _led_findings(design: Design, state, status, peak_a: float,
                  with_state: bool) -> list[Finding]:
    """Ratings the LED current exceeds, and the dark LED or the forward voltage too close
    to the supply."""
    from pulsepick.analysis.ratings import rating_excesses
    from pulsepick.analysis.verdict import LATCHED

    out: list[Finding] = []
    vdd = design.supply_v
    led = design.parts.led
    rated_a = state.led_a if state.state == LATCHED else peak_a
    for excess in rating_excesses(design, rated_a if rated_a is not None else 0.0):
        out.append(Finding("rating", excess.text()))
    if status == DARK:
        if with_state:
            out.append(Finding("led-dark", state.reason or "dark"))
    elif status == RUNS:
        v_dark = dark_below(design, above_v=VF_CLOSE_SHARE * vdd)
        vf = float(led.voltage(led.visible_a))
        if v_dark is not None and v_dark > VF_CLOSE_SHARE * vdd:
            out.append(Finding(
                "led-vf",
                f"LED forward voltage is close to the supply: {led.name} needs {vf:.2f} V for "
                f"{format_eng(led.visible_a, 'A')}; the light goes dark below about "
                f"{v_dark:.2f} V supply, so it dims and stops as the storage droops"))
    return out


def _stage_loading_findings(design: Design, env) -> list[Finding]:
    """The LED stage shifting the timing by loading the timing gate's output."""
    out: list[Finding] = []
    shift = stage_loading_shift(design)
    if shift is not None and abs(shift) > LOADING_SHIFT:
        r_out = float(np.ravel(env.rout_high)[0])
        out.append(Finding(
            "stage-loading",
            f"the LED stage loads the timing gate's output and shifts a phase of the timing by "
            f"{100 * shift:+.1f} % (output resistance {r_out:.0f} Ω); "
            f"{hint('buffered', True)} drives it from a spare gate instead"))
    return out


def circuit_warnings(design: Design, levels: tuple[float, float] | None = None,
                     status=None, peak_a: float | None = None) -> list[str]:
    """The warning texts of ``circuit_findings``."""
    return [f.text for f in circuit_findings(design, status, peak_a, levels=levels)]


def dark_below(design: Design, v_floor: float = 0.5, points: int = 121,
               above_v: float | None = None) -> float | None:
    """Supply below which the LED no longer reaches visible current (None: never dark).

    The supplies tried are ``points`` from ``v_floor`` up to the design's supply; with
    ``above_v`` only those above it and the one just below, which gives the same answer
    wherever that answer is above ``above_v`` (and None or one at or below it where not).
    """
    v = np.linspace(v_floor, design.supply_v, points)
    if above_v is not None:
        v = v[max(int(np.searchsorted(v, above_v, side="right")) - 1, 0):]
    f = design.fast(v)
    lit = np.asarray(f.status) == RUNS
    if lit.all():
        return None
    if not lit.any():
        return design.supply_v
    last_dark = np.flatnonzero(~lit).max()
    if last_dark + 1 >= v.size:
        return design.supply_v
    return float(v[last_dark + 1])


def stage_loading_shift(design: Design) -> float | None:
    """Largest relative change of a phase caused by hanging the stage on the timing gate.

    The loaded design against the same timing network with the stage on a spare gate;
    None where the stage never loads the timing gate (buffered, or the 555's own output).
    """
    topo = design.topo
    if topo.buffered or not get_core(topo.core).drives_stage_from_timing_output:
        return None
    buffered = Topology(topo.core, topo.stage, True, topo.lit, topo.steer)
    env, powered = design.env()
    from pulsepick.engine import fast

    a = fast.evaluate(topo, design.values, env, powered)
    b = fast.evaluate(buffered, design.values, env, powered)
    shifts = []
    for key in ("high_s", "low_s"):
        pa, pb = float(np.ravel(getattr(a, key))[0]), float(np.ravel(getattr(b, key))[0])
        if not (np.isfinite(pa) and np.isfinite(pb)) or pb == 0:
            return None
        shifts.append(pa / pb - 1.0)
    return max(shifts, key=abs)
