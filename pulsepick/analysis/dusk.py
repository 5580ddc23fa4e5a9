"""Dusk detection with the panel as the light sensor.

A bleed resistor sits across the panel (after the panel, before the series diode) and one
Schmitt input watches the panel voltage. As the light fades the voltage falls; below VT- the
sense gate's output goes high and enables the oscillators (night); in the morning the voltage
rises past VT+ and they are disabled again (day). The two thresholds give the hysteresis.

At a threshold V the node balances: panel current + current pushed in = V/R, where the
pushed current is the series diode's reverse leakage from the storage (the storage is then
above the panel) plus, in the worst case, the gate's input leakage. The panel's photocurrent
that holds the node at V is explicit in the single-diode model,

    IL = I + I0·(exp((V + I·Rs)/a) - 1) + (V + I·Rs)/Rsh,   I = V/R - I_pushed,

and irradiance is proportional to IL (ref:solar-cell-voc-exercise). Levels are turned into lux at about
120 lx per W/m² (pulsepick.parts.panel; from memory, an estimate at dusk, whose spectrum
differs from full sun).

The inverse, from a wanted turn-on level to the bleed resistor, is explicit too:
R = VT- / (I_panel(VT-, G) + I_pushed), then rounded to the E-series.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from pulsepick.analysis.chargepath import ChargePath, operating_point
from pulsepick.analysis.irradiance import Profile, get_profile, irradiance_at
from pulsepick.errors import RequestError
from pulsepick.parts.diode import DiodeModel
from pulsepick.parts.logic import LogicFamily
from pulsepick.parts.panel import (
    RATED_IRRADIANCE_W_M2,
    PanelModel,
    irradiance_from_lux,
    lux_from_irradiance,
)
from pulsepick.series import get_series

# Daytime loss is integrated over the profile at this step (s).
DAY_LOSS_STEP_S = 300.0
# Warn when the night-time node voltage reaches this share of VT- (estimate of a sensible
# margin for a slowly drifting leakage).
NIGHT_NODE_MARGIN = 0.5
# CMOS inputs take at most about 0.5 V above their supply (absolute maximum ratings, common
# practice, from memory); by day the panel node sits a diode drop above the storage.
INPUT_ABOVE_SUPPLY_V = 0.5
# A resistor in series with the sense input limits the clamp current (common practice).
SENSE_SERIES_OHM = 100e3
# Turn-on levels searched for a wanted level (W/m²): well past full sun.
MAX_LEVEL_W_M2 = 2.0 * RATED_IRRADIANCE_W_M2

GATING_NOTES = (
    "The sense gate's output is high at night and low by day. With a CMOS 555, take "
    "it to RESET (pin 4): held low by day, the timer cannot run.",
    "With a Schmitt RC oscillator, invert it once more (high by day) and hold the oscillator's "
    "timing node high through a small-signal diode: its output stays low and the LED off by "
    "day; at night the diode is reverse biased and its leakage adds to the timing node's.",
    "Use a spare gate of the same package for the sense input, so nothing oscillates by day "
    "and the day load is only the chip's quiescent current.",
)


@dataclass(frozen=True)
class Level:
    """A switching light level: typical and the range over the threshold limits."""

    threshold_v: float  # V, the typical threshold
    typ_w_m2: float  # W/m², nan when never reached
    min_w_m2: float  # W/m², lowest over the limits (nan: never)
    max_w_m2: float  # W/m², highest over the limits (nan: never)

    @property
    def typ_lux(self) -> float:
        """Typical level, lx (estimate from W/m²)."""
        return float(lux_from_irradiance(self.typ_w_m2))

    @property
    def min_lux(self) -> float:
        """Lowest level, lx."""
        return float(lux_from_irradiance(self.min_w_m2))

    @property
    def max_lux(self) -> float:
        """Highest level, lx."""
        return float(lux_from_irradiance(self.max_w_m2))


@dataclass(frozen=True, eq=False)
class DuskResult:
    """The dusk detector with one bleed resistor, carrying its inputs."""

    panel: PanelModel
    family: LogicFamily
    diode: DiodeModel
    supply_v: float  # V, storage voltage feeding the sense gate
    bleed_ohm: float  # Ω, the bleed resistor used
    wanted_lux: float | None  # lx, the wanted turn-on level (inverse solve), else None
    exact_bleed_ohm: float | None  # Ω, the exact resistor for the wanted level, else None
    series: str | None  # E-series used for the pick, else None
    turn_on: Level  # light falls through VT-: oscillators enabled
    turn_off: Level  # light rises through VT+: oscillators disabled
    hysteresis_lux: float  # lx, typical turn-off minus turn-on level
    hysteresis_ratio: float  # turn-off over turn-on level (typical)
    day_panel_v: float  # V, panel voltage in full sun while charging the storage
    day_bleed_a: float  # A, bleed current in full sun
    day_bleed_w: float  # W, bleed dissipation in full sun
    day_loss_c: float  # C (coulomb), charge the bleed takes from the panel over the profile
    day_harvest_c: float  # C, charge into the storage over the same profile (at supply_v)
    loss_profile: str  # the profile used for the daily loss
    night_bias_typ_a: float  # A, drawn from the storage at night (diode leakage), typical
    night_bias_max_a: float  # A, the same with the diode's maximum leakage
    night_node_typ_v: float  # V, sense node at night with typical leakage
    night_node_max_v: float  # V, sense node at night with maximum leakage (and input leakage)
    crossing_a: float  # A, estimated crossing current of the sense gate between thresholds
    notes: tuple[str, ...]  # assumptions
    gating: tuple[str, ...]  # how the oscillators are gated off by day
    warnings: tuple[str, ...]


def _check(supply_v: float, bleed_ohm: float | None) -> None:
    problems = []
    if not (isinstance(supply_v, (int, float)) and math.isfinite(supply_v) and supply_v > 0):
        problems.append(f"supply {supply_v!r} V must be a voltage above 0, such as 2.5V")
    if bleed_ohm is not None and not (bleed_ohm > 0):
        problems.append(f"bleed resistor {bleed_ohm!r} ohm must be above 0, such as 100k")
    if problems:
        raise RequestError("dusk detector: " + "; ".join(problems))


def irradiance_at_threshold(panel: PanelModel, threshold_v: float, bleed_ohm: float,
                            pushed_a: float = 0.0) -> float:
    """Irradiance (W/m²) at which the panel with its bleed sits at ``threshold_v`` (V).

    ``pushed_a`` (A) is current pushed into the node from outside (diode reverse leakage).
    Returns nan when no light level gives that voltage (the pushed current holds the node
    above it even in the dark).
    """
    a = panel.diode_voltage_v
    g_sh = 0.0 if math.isinf(panel.r_sh_ohm) else 1.0 / panel.r_sh_ohm
    g_b = 0.0 if math.isinf(bleed_ohm) else 1.0 / bleed_ohm
    i_t = threshold_v * g_b - pushed_a  # panel terminal current needed (A)
    vj = threshold_v + i_t * panel.r_s_ohm
    il = i_t + panel.saturation_current_a * math.expm1(min(vj / a, 700.0)) + vj * g_sh
    if not il > 0:
        return math.nan
    return il / panel.photocurrent(1.0)


def _leak(diode: DiodeModel, supply_v: float, node_v: float, which: str) -> float:
    return float(diode.reverse_current(max(supply_v - node_v, 0.0), which))


def _level(panel, diode, family, supply_v, bleed_ohm, vt_typ, vt_lo, vt_hi) -> Level:
    typ = irradiance_at_threshold(panel, vt_typ, bleed_ohm,
                                  _leak(diode, supply_v, vt_typ, "typ") + family.leak_typ_a)
    lo = irradiance_at_threshold(panel, vt_lo, bleed_ohm,
                                 _leak(diode, supply_v, vt_lo, "max") + family.leak_max_a)
    hi = irradiance_at_threshold(panel, vt_hi, bleed_ohm, _leak(diode, supply_v, vt_hi, "typ"))
    return Level(threshold_v=vt_typ, typ_w_m2=typ, min_w_m2=lo, max_w_m2=hi)


def _night_node(panel: PanelModel, diode: DiodeModel, supply_v: float, bleed_ohm: float,
                which: str, extra_a: float) -> tuple[float, float]:
    """Sense-node voltage (V) and diode leakage (A) in the dark (fixed point, a few passes)."""
    v = 0.0
    leak = 0.0
    for _ in range(30):
        leak = _leak(diode, supply_v, v, which)
        v_new = float(panel.voltage_into_resistor(bleed_ohm, 0.0, extra_current_a=leak + extra_a))
        if abs(v_new - v) < 1e-9:
            v = v_new
            break
        v = v_new
    return v, _leak(diode, supply_v, v, which)


def dusk_levels(panel: PanelModel, bleed_ohm: float, family: LogicFamily, supply_v: float,
                diode: DiodeModel, *, profile: Profile | None = None) -> DuskResult:
    """Turn-on and turn-off light levels, losses and bias for a bleed resistor.

    Parameters
    ----------
    panel : the panel (also the light sensor).
    bleed_ohm : the resistor across the panel (Ω); ``inf`` for none.
    family : the logic family of the sense gate (its thresholds at ``supply_v``).
    supply_v : the storage voltage feeding the gate (V).
    diode : the series charging diode (its reverse leakage feeds the node at night).
    profile : daylight for the daily bleed loss (default: the clear demo profile).
    """
    _check(supply_v, bleed_ohm)
    th = family.thresholds(supply_v)
    vtm = (float(th.vt_minus_typ), float(th.vt_minus_min), float(th.vt_minus_max))
    vtp = (float(th.vt_plus_typ), float(th.vt_plus_min), float(th.vt_plus_max))
    on = _level(panel, diode, family, supply_v, bleed_ohm, *vtm)
    off = _level(panel, diode, family, supply_v, bleed_ohm, *vtp)
    hyst_lux = off.typ_lux - on.typ_lux
    ratio = off.typ_w_m2 / on.typ_w_m2 if on.typ_w_m2 > 0 else math.nan

    path = ChargePath(panel=panel, diode=diode, bleed_ohm=bleed_ohm)
    sun = operating_point(path, RATED_IRRADIANCE_W_M2, supply_v)
    prof = profile if profile is not None else get_profile("clear")
    day_loss, day_harvest = _day_loss(path, prof, supply_v)

    node_typ, bias_typ = _night_node(panel, diode, supply_v, bleed_ohm, "typ", 0.0)
    node_max, bias_max = _night_node(panel, diode, supply_v, bleed_ohm, "max", family.leak_max_a)
    crossing = float(family.crossing_current(0.5 * (vtm[0] + vtp[0]), supply_v))

    notes = _dusk_notes(family, supply_v, vtm, vtp, prof)
    warnings = _dusk_warnings(panel, family, supply_v, vtm, on, off, hyst_lux, sun, node_typ,
                              node_max, bias_max)

    return DuskResult(
        panel=panel, family=family, diode=diode, supply_v=float(supply_v),
        bleed_ohm=float(bleed_ohm), wanted_lux=None, exact_bleed_ohm=None, series=None,
        turn_on=on, turn_off=off, hysteresis_lux=hyst_lux, hysteresis_ratio=ratio,
        day_panel_v=sun.panel_v, day_bleed_a=sun.bleed_a, day_bleed_w=sun.panel_v * sun.bleed_a,
        day_loss_c=day_loss, day_harvest_c=day_harvest, loss_profile=prof.name,
        night_bias_typ_a=bias_typ, night_bias_max_a=bias_max, night_node_typ_v=node_typ,
        night_node_max_v=node_max, crossing_a=crossing, notes=tuple(notes),
        gating=GATING_NOTES, warnings=tuple(warnings),
    )


def _day_loss(path: ChargePath, prof: Profile, supply_v: float) -> tuple[float, float]:
    """Charge (C) the bleed takes from the panel and charge into the storage over the day."""
    t = np.arange(0.0, 86400.0 + 1e-9, DAY_LOSS_STEP_S)
    g = irradiance_at(prof, t)
    bleed = np.zeros_like(t)
    harvest = np.zeros_like(t)
    for i, gi in enumerate(g):
        if gi > 0:
            op = operating_point(path, float(gi), supply_v)
            bleed[i], harvest[i] = op.bleed_a, max(op.charge_a, 0.0)
    day_loss = float(np.sum(0.5 * (bleed[1:] + bleed[:-1])) * DAY_LOSS_STEP_S)
    day_harvest = float(np.sum(0.5 * (harvest[1:] + harvest[:-1])) * DAY_LOSS_STEP_S)
    return day_loss, day_harvest


def _dusk_notes(family: LogicFamily, supply_v: float, vtm, vtp, prof: Profile) -> list[str]:
    """What the dusk levels took for granted, one line each."""
    return [
        f"thresholds of the {family.name} at {supply_v:.2f} V: VT- {vtm[0]:.2f} V "
        f"({vtm[1]:.2f}..{vtm[2]:.2f}), VT+ {vtp[0]:.2f} V ({vtp[1]:.2f}..{vtp[2]:.2f})",
        "levels in lux use about 120 lx per W/m2 (from memory; dusk light is bluer than sun, "
        "so treat lux levels as estimates)",
        "ranges: the lowest level pairs the lowest threshold with the diode's and the input's "
        "maximum leakage; the highest pairs the highest threshold with typical leakage",
        f"daily bleed loss over the {prof.name} profile with the storage at {supply_v:.2f} V",
        "the thresholds follow the storage voltage: as it sags overnight the morning turn-off "
        "level moves too",
    ]


def _dusk_warnings(panel: PanelModel, family: LogicFamily, supply_v: float, vtm, on: Level,
                   off: Level, hyst_lux: float, sun, node_typ: float, node_max: float,
                   bias_max: float) -> list[str]:
    """What to watch with this bleed: range, night leakage, input clamp, feedback."""
    warnings = []
    if not bool(family.in_range(supply_v)):
        warnings.append(f"supply {supply_v:.2f} V is outside the {family.name}'s recommended "
                        f"range {family.vdd_min_v:g}..{family.vdd_max_v:g} V")
    if math.isnan(on.typ_w_m2):
        warnings.append(
            f"the light never turns on: at night the diode's leakage holds the sense node at "
            f"{node_typ:.2f} V, above VT- {vtm[0]:.2f} V; use a smaller bleed resistor")
    elif node_max >= NIGHT_NODE_MARGIN * vtm[1]:
        warnings.append(
            f"at night the diode's maximum leakage ({bias_max * 1e9:.0f} nA) lifts the sense node "
            f"to {node_max:.2f} V, against VT- as low as {vtm[1]:.2f} V: the light may not turn "
            "on with a leaky part or when warm; use a smaller bleed or a low-leakage silicon diode")
    if sun.panel_v - supply_v > INPUT_ABOVE_SUPPLY_V:
        warnings.append(
            f"by day the panel node sits at {sun.panel_v:.2f} V, {sun.panel_v - supply_v:.2f} V "
            f"above the gate's supply: its input clamp diode conducts; put about "
            f"{SENSE_SERIES_OHM / 1e3:.0f} kohm in series with the sense input")
    if not math.isnan(off.typ_w_m2) and off.typ_w_m2 > panel_max_level(panel):
        warnings.append("the turn-off level is above full sun: the light would never turn off")
    if math.isfinite(hyst_lux):
        warnings.append(
            f"optical feedback: if the light's own glow adds more than about {hyst_lux:.3g} lx at "
            f"the panel (the hysteresis, {on.typ_lux:.3g} to {off.typ_lux:.3g} lx), it turns "
            "itself off at dusk and flickers; shade the panel from the LED or point the LED away")
    return warnings


def panel_max_level(panel: PanelModel) -> float:
    """The brightest light considered (W/m²): a little above full sun."""
    return 1.2 * RATED_IRRADIANCE_W_M2


def bleed_for_dusk(panel: PanelModel, dusk_lux: float, family: LogicFamily, supply_v: float,
                   diode: DiodeModel, *, series: str = "E24",
                   profile: Profile | None = None) -> DuskResult:
    """The bleed resistor that turns the light on at ``dusk_lux`` (lx), rounded to a series.

    Raises
    ------
    RequestError
        When the panel cannot reach the sense gate's VT- at that light even with no bleed:
        the message names the lowest level this panel can signal.
    """
    _check(supply_v, None)
    if not (isinstance(dusk_lux, (int, float)) and math.isfinite(dusk_lux) and dusk_lux > 0):
        raise RequestError(f"dusk level {dusk_lux!r} lx must be above 0, such as 10lux")
    g = float(irradiance_from_lux(dusk_lux))
    if g > MAX_LEVEL_W_M2:
        raise RequestError(f"dusk level {dusk_lux:g} lx is brighter than full sun; "
                           "accepted: a dusk level such as 10lux (full sun is about 120000 lx)")
    vt = float(family.thresholds(supply_v).vt_minus_typ)
    pushed = _leak(diode, supply_v, vt, "typ") + family.leak_typ_a
    i_panel = float(panel.current(vt, g))
    if not i_panel + pushed > 0:
        lowest = irradiance_at_threshold(panel, vt, math.inf, 0.0)
        raise RequestError(
            f"the panel cannot signal dusk at {dusk_lux:g} lx: even with no bleed resistor its "
            f"voltage there stays under VT- {vt:.2f} V; accepted: a turn-on level of "
            f"{float(lux_from_irradiance(lowest)):.3g} lx or more with this panel")
    exact = vt / (i_panel + pushed)
    picked = float(get_series(series).nearest(exact, rounding="nearest"))
    result = dusk_levels(panel, picked, family, supply_v, diode, profile=profile)
    return replace(result, wanted_lux=float(dusk_lux), exact_bleed_ohm=exact,
                   series=series.upper())


# A small panel's shunt resistance is rarely published; the estimate (DEFAULT_R_SH_FACTOR ×
# Voc/Isc, pulsepick.parts.panel) may be off tenfold either way (estimate).
RSH_SPREAD = (0.1, 10.0)


@dataclass(frozen=True)
class ShuntSpread:
    """The turn-on level over the panel's shunt-resistance spread."""

    r_sh_ohm: float  # Ω, the shunt resistance used
    given: bool  # the user gave it (no spread then)
    low_ohm: float  # Ω, the low end of the spread
    high_ohm: float  # Ω, the high end
    on_low_r_lux: float  # lx, typical turn-on level with the low shunt resistance
    on_high_r_lux: float  # lx, with the high shunt resistance
    on_typ_lux: float  # lx, with the shunt resistance used

    @property
    def range_lux(self) -> tuple[float, float]:
        """(lowest, highest) typical turn-on level over the spread (lx)."""
        values = [v for v in (self.on_low_r_lux, self.on_high_r_lux, self.on_typ_lux)
                  if math.isfinite(v)]
        return (min(values), max(values)) if values else (math.nan, math.nan)


def shunt_spread(result: DuskResult, given: bool = False) -> ShuntSpread:
    """The typical turn-on level of ``result``'s bleed with the panel's shunt resistance at
    the ends of its spread (×0.1 and ×10, estimate); no spread when ``given``."""
    panel = result.panel
    th = result.family.thresholds(result.supply_v)
    vt = float(th.vt_minus_typ)
    pushed = _leak(result.diode, result.supply_v, vt, "typ") + result.family.leak_typ_a

    def level(r_sh: float) -> float:
        p = replace(panel, r_sh_ohm=r_sh)
        return float(lux_from_irradiance(
            irradiance_at_threshold(p, vt, result.bleed_ohm, pushed)))

    r = panel.r_sh_ohm
    lo, hi = (r, r) if given or math.isinf(r) else (r * RSH_SPREAD[0], r * RSH_SPREAD[1])
    return ShuntSpread(r_sh_ohm=r, given=given, low_ohm=lo, high_ohm=hi,
                       on_low_r_lux=level(lo), on_high_r_lux=level(hi),
                       on_typ_lux=result.turn_on.typ_lux)
