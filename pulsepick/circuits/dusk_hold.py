"""Element ``dusk_hold``: the dusk detector holding a Schmitt oscillator off by day.

The dusk detector is one Schmitt gate watching the panel (``pulsepick.analysis.dusk``):
its output is low by day and high at night. Two arrangements of the trade hold an RC
oscillator still with it, each through one small diode per light into the oscillator's
timing node (common practice):

``hold-low``
    Diode from the timing capacitor (anode) to the detector's output (cathode). By day
    the detector pulls the capacitor down to a diode drop, below VT-, and the oscillator's
    output sits high. At night the detector's output is high and the diode is reverse
    biased. No gate besides the detector's.
``hold-high``
    One more gate inverts the detector (high by day); a diode from that output (anode)
    to the timing capacitor (cathode) holds the capacitor a diode drop below the supply,
    above VT+, and the oscillator's output sits low. One gate more for the whole build.

Which one a light takes follows from the level that keeps its LED dark, which each stage
declares (its ``dark_driver``): a stage lit while its driver is high needs the driver low,
one lit while the driver is low needs it high, and a capacitor-coupled flash is dark at
either level; a buffer inverts once more. ``hold-low`` is taken wherever it keeps the LED
dark (it needs no extra gate), except for a steered core (its ``hold_off_steer``), which is
held at the level where its steering diode is off (held at the other, its fast-phase
resistor would carry current all day). A timer core (its ``dusk_hold`` is ``"reset"``)
takes the detector's output on its RESET pin instead (held low by day, the timer cannot
run; no diode).

By day the held oscillator still draws a steady current: the capacitor sits at one end
and the output at the other rail, so the timing resistor carries (supply - diode drop)/R.
At night the diode's reverse leakage adds to the timing node's (the data table's leakage).

This module holds the element's own equations (the current the diode takes out of the
timing node, the dark level of each stage); ``pulsepick.engine.gated`` integrates them with
a core and a stage, and ``pulsepick.analysis.gating`` sizes a build's holds.
"""

from __future__ import annotations

from typing import Literal

from pulsepick.circuits.base import get_core, get_stage

HoldKind = Literal["hold-low", "hold-high", "reset"]
HOLD_KINDS = ("hold-low", "hold-high", "reset")
#: Diode used for the holds: a small Schottky, whose low drop holds the node well clear of
#: VT- at the bottom of a low supply (data/parts/diodes.csv).
HOLD_DIODE = "schottky"


def dark_driver_level(topo) -> Literal["high", "low", "either"]:
    """The level of the LED stage's driver that keeps the LED dark (the stage's
    ``dark_driver``)."""
    levels = get_stage(topo.stage).dark_driver
    # a stage wired one way only (a single entry) ignores ``lit``
    return levels.get(topo.lit, next(iter(levels.values())))


def hold_kind(topo) -> HoldKind:
    """The hold a light takes (see the module doc)."""
    core = get_core(topo.core)
    if core.dusk_hold == "reset":
        return "reset"
    level = dark_driver_level(topo)
    if level == "either":
        # a steered core held at its steered level would pass its fast-phase resistor's
        # current all day: hold it at the other level
        if core.hold_off_steer:
            return "hold-high" if topo.steer == "high" else "hold-low"
        return "hold-low"
    osc_dark = level if not topo.buffered else ("low" if level == "high" else "high")
    return "hold-low" if osc_dark == "high" else "hold-high"


def detector_line(day: bool, kind: HoldKind) -> bool:
    """True when the line feeding the hold diode is high (``day``: the detector sees day)."""
    detector_high = not day  # the sense gate's output: low by day, high at night
    return detector_high if kind != "hold-high" else not detector_high


def hold_current(kind: HoldKind, vc: float, line_v: float, diode, r_line: float) -> float:
    """Current (A) the hold diode takes OUT of the timing node at node voltage ``vc`` (V).

    ``line_v`` (V) is the detector line's source voltage and ``r_line`` (ohm) its output
    resistance; ``diode.current(v, r_ext)`` is the forward current of the diode plus a
    series resistance with ``v`` across both (reverse bias: zero).
    """
    if kind == "hold-low":
        return diode.current(vc - line_v, r_line)
    if kind == "hold-high":
        return -diode.current(line_v - vc, r_line)
    return 0.0


__all__ = ["HOLD_DIODE", "HOLD_KINDS", "HoldKind", "dark_driver_level", "detector_line",
           "hold_current", "hold_kind"]
