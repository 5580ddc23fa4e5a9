"""Which gate of each hex package does what, with the pins of the standard 14-pin package.

A hex Schmitt inverter in the standard 14-pin package (74HC14, 74AHC14, 74LVC14A,
CD40106B: the usual pinout, common practice) has its six gates on pins 1/2, 3/4, 5/6, 9/8,
11/10 and 13/12 (input/output), ground on pin 7 and the supply on pin 14. Gates are given
out in that order: the dusk detector's sense gate and its hold inverter first, then each
light's oscillator and its buffer. An unused gate's input is tied to ground (never left
open on CMOS, common practice) and its output left open.
"""

from __future__ import annotations

from dataclasses import dataclass

#: (input pin, output pin) of gates 1..6 of a standard 14-pin hex inverter (common practice).
HEX_GATE_PINS = ((1, 2), (3, 4), (5, 6), (9, 8), (11, 10), (13, 12))
GROUND_PIN = 7
SUPPLY_PIN = 14


@dataclass(frozen=True)
class GateUse:
    """One gate of one package."""

    package: int  # package number (U1 = 1)
    gate: int  # 1..6
    in_pin: int
    out_pin: int
    role: str  # "dusk detector", "light 1: oscillator", "unused", ...
    light: int | None  # light index, None for the detector or an unused gate


def package_map(plan, names, topos=None) -> tuple[GateUse, ...]:
    """Every gate of every hex package of ``plan`` (a 555 package has none).

    ``topos``: each light's topology (its ``buffered`` flag decides the buffer gate); by
    default the plan's counts are trusted and buffers follow their oscillators.
    """
    out = []
    for pkg in plan.packages:
        if pkg.is_timer:
            continue
        roles: list[tuple[str, int | None]] = []
        if pkg.dusk:
            roles.append(("dusk detector: sense input from the panel", None))
            if plan.dusk > 1:
                roles.append(("dusk detector: hold inverter (high by day)", None))
        for i in pkg.lights:
            roles.append((f"{names[i]}: oscillator (timing R and C on the input)", i))
            if topos is not None and topos[i].buffered:
                roles.append((f"{names[i]}: buffer driving the LED stage", i))
        for k, (pin_in, pin_out) in enumerate(HEX_GATE_PINS):
            role, light = roles[k] if k < len(roles) else (
                f"unused: input pin {pin_in} tied to ground (pin {GROUND_PIN}), output open",
                None)
            out.append(GateUse(pkg.number, k + 1, pin_in, pin_out, role, light))
    return tuple(out)


__all__ = ["GROUND_PIN", "HEX_GATE_PINS", "SUPPLY_PIN", "GateUse", "package_map"]
