"""Resolve a chip, its parts and a supply into the ``Env`` arrays the engines use.

A ``ChipSpec`` names a logic family (``hc``, ``ahc``, ``lvc``, ``4000n``, ``4000w``) or
the CMOS 555 (``timer555``), optionally with a user's measured thresholds and output
resistance; a ``PartChoice`` names the LED, the capacitor kinds and the diodes.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from pulsepick.circuits.base import Env
from pulsepick.errors import PartError
from pulsepick.hints import hint
from pulsepick.parts.capacitor import get_cap_kind, pick_voltage_rating
from pulsepick.parts.chipprofile import measured_family
from pulsepick.parts.diode import get_diode
from pulsepick.parts.logic import FAMILY_KEYS, custom_family, get_family
from pulsepick.parts.timer import get_timer

TIMER_KEY = "timer555"
CHIP_KEYS = (*FAMILY_KEYS, TIMER_KEY)
#: How the threshold limits are read in spread analyses (pulsepick.analysis.chipspread):
#: the split normal (default), or uniform / triangular for worst-case studies.
CHIP_SPREADS = ("normal", "uniform", "triangle")


@dataclass(frozen=True)
class ChipSpec:
    """Which chip, and what the user measured on their own part (at ``measured_at_v``)."""

    family: str  # a logic family key or "timer555"
    vt_plus_v: float | None = None  # V, measured VT+ at the working supply
    vt_minus_v: float | None = None  # V, measured VT- at the working supply
    rout_ohm: float | None = None  # ohm, measured output resistance (both sides)
    cross_current_a: float | None = None  # A, measured average crossing current
    measured_at_v: float | None = None  # V, the supply the measurements were made at
    follows_family: bool = False  # measured thresholds follow the family's shape in supply
    spread: str = "normal"  # how the threshold limits are read (CHIP_SPREADS)

    def __post_init__(self) -> None:
        if self.family not in CHIP_KEYS:
            raise PartError(f"unknown chip family {self.family!r}; accepted: "
                            f"{', '.join(CHIP_KEYS)}")
        if self.spread not in CHIP_SPREADS:
            raise PartError(f"chip spread {self.spread!r}: accepted {', '.join(CHIP_SPREADS)}")
        measured = (self.vt_plus_v, self.vt_minus_v, self.rout_ohm)
        if self.family == TIMER_KEY and any(x is not None for x in measured):
            raise PartError(f"{hint('vt_plus')}, {hint('vt_minus')} and {hint('rout')} describe "
                            "a Schmitt gate; "
                            "they do not apply to timer555")

    @property
    def is_timer(self) -> bool:
        return self.family == TIMER_KEY

    @property
    def measured(self) -> bool:
        return any(x is not None for x in (self.vt_plus_v, self.vt_minus_v, self.rout_ohm))


@dataclass(frozen=True)
class PartChoice:
    """The LED and the kinds of the other parts."""

    led: Any  # LedModel
    timing_cap: str = "film-pet"  # capacitor kind of C1
    stage_cap: str = "electrolytic"  # capacitor kind of CP / CH
    steer_diode: str = "schottky"
    reset_diode: str = "si"
    fade_diode: str = "schottky"


def chip_model(spec: ChipSpec):
    """The family or timer model, with the user's measurements applied."""
    if spec.is_timer:
        return get_timer(TIMER_KEY)
    family = get_family(spec.family)
    if spec.measured:
        at = spec.measured_at_v
        if at is None:
            raise PartError("measured thresholds need the supply they were measured at")
        if spec.follows_family and spec.vt_plus_v is not None and spec.vt_minus_v is not None:
            family = measured_family(family, at, spec.vt_plus_v, spec.vt_minus_v)
            return custom_family(family, at, rout=spec.rout_ohm)
        family = custom_family(family, at, vt_plus=spec.vt_plus_v, vt_minus=spec.vt_minus_v,
                               rout=spec.rout_ohm)
    return family


def make_env(spec: ChipSpec, parts: PartChoice, vdd, c_timing=None, *, vt_plus=None,
             vt_minus=None, rout_scale=1.0, leak: str = "typ", iq: str = "typ",
             temperature_factor=1.0) -> tuple[Env, Any]:
    """The engines' environment at supply ``vdd`` and whether the chip is powered there.

    ``vt_plus`` / ``vt_minus`` replace the typical thresholds (arrays, for spread
    analyses); ``leak="max"`` takes the guaranteed-maximum input leakage.
    """
    vdd = np.asarray(vdd, dtype=float)
    model = chip_model(spec)
    cap_kind = get_cap_kind(parts.timing_cap)
    if c_timing is None:
        cap_g = 0.0
    else:
        rating = pick_voltage_rating(cap_kind, float(np.max(vdd)))
        cap_g = cap_kind.leak_conductance(np.asarray(c_timing, dtype=float), rating, which="typ")
    if spec.is_timer:
        vtp = model.thr_ratio_typ * vdd if vt_plus is None else vt_plus
        vtm = model.trig_ratio_typ * vdd if vt_minus is None else vt_minus
        env = Env(
            chip_kind="timer", vdd=vdd, vt_plus=vtp, vt_minus=vtm,
            rout_high=model.rout_high_ohm * rout_scale, rout_low=model.rout_low_ohm * rout_scale,
            pin_leak_a=model.leak_a, iq_a=model.supply_current(vdd, which=iq),
            cap_leak_g=cap_g, led=parts.led, r_discharge=model.r_discharge_ohm,
            steer_diode=None, reset_diode=get_diode(parts.reset_diode),
            fade_diode=get_diode(parts.fade_diode),
        )
        return env, model.in_range(vdd)
    th = model.thresholds(vdd)
    env = Env(
        chip_kind="schmitt", vdd=vdd,
        vt_plus=th.vt_plus_typ if vt_plus is None else vt_plus,
        vt_minus=th.vt_minus_typ if vt_minus is None else vt_minus,
        rout_high=model.rout_high(vdd, "typ") * rout_scale,
        rout_low=model.rout_low(vdd, "typ") * rout_scale,
        pin_leak_a=model.leak_typ_a if leak == "typ" else model.leak_max_a,
        iq_a=model.iq_typ_a if iq == "typ" else model.iq_max_a,
        cap_leak_g=cap_g, led=parts.led,
        steer_diode=get_diode(parts.steer_diode), reset_diode=get_diode(parts.reset_diode),
        fade_diode=get_diode(parts.fade_diode),
        cross_current=model.crossing_current,
        cross_override_a=spec.cross_current_a,
    )
    return env, model.in_range(vdd)
