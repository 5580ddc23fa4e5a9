"""Currents against ratings: the LED's maximum current and the gate's absolute maximum pin currents.

The LED's rating comes from ``data/parts/leds.csv`` (maximum continuous forward
current; our tables give no pulsed rating, so a short flash is held to the continuous
one too). The gate's come from ``data/parts/logic_ratings.csv``: the DC output current
per pin and the current through the package's VCC or GND pin. The LED current of every
stage flows through the output pin that drives it (the timing gate's, or a spare
gate's when buffered) and through the package's VCC or GND pin; the charging current of
a fade stage's hold capacitor can only add to it, so the LED peak is a lower bound on
the pin current there (estimate).

A figure over a rating is reported with the part, the figure, the limit and its
source, and a fix: a larger series resistor (its value computed for the limit), a
buffer gate, or a transistor.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass

import numpy as np

from pulsepick.hints import hint
from pulsepick.tables import load_table
from pulsepick.units import format_eng

_TABLE = "parts/logic_ratings.csv"


@dataclass(frozen=True)
class GateRatings:
    """Absolute maximum pin currents of a family (A; None where not in our sources)."""

    family: str
    out_pin_max_a: float | None  # A, DC output current per pin
    in_pin_max_a: float | None  # A, DC input current per pin
    supply_pin_max_a: float | None  # A, VCC or GND pin of the package
    source: str


@dataclass(frozen=True)
class RatingExcess:
    """One current over its rating."""

    part: str  # "LED1 standard red ...", "U1 output pin", ...
    what: str  # "LED peak current", "output pin current", ...
    figure_a: float  # A
    limit_a: float  # A
    source: str  # where the limit comes from
    fix: str

    def text(self) -> str:
        return (f"over a rating: {self.part}: {self.what} {format_eng(self.figure_a, 'A')} "
                f"against {format_eng(self.limit_a, 'A')} ({self.source}); {self.fix}")


def _cite(source: str) -> str:
    """The short citation of a table row for a reader: the document a published figure
    comes from (the row's words before its first colon, without asides), else how the
    figure is known."""
    if re.search(r"ref:[a-z0-9.-]+", source):
        return re.sub(r"\s*\([^)]*\)", "", source.split(":", 1)[0]).strip()
    return "from memory" if "from memory" in source else source


def _opt(value: object) -> float | None:
    if value is None or value == "":
        return None
    return float(value)


@functools.cache
def gate_ratings(family: str) -> GateRatings | None:
    """The family's absolute maximum pin currents, or None when not in our sources."""
    for row in load_table(_TABLE).rows:
        if row["family"] == family:
            return GateRatings(family, _opt(row["out_pin_max_a"]), _opt(row["in_pin_max_a"]),
                               _opt(row["supply_pin_max_a"]), str(row["source"]))
    return None


def _rs_for(design, led_a: float, limit_a: float) -> float | None:
    """Series resistance (ohm) that brings the LED current from ``led_a`` down to the limit.

    The drive voltage is the supply less the LED's voltage at the limit; the circuit's
    other resistance (output, LED series) is what the present current implies.
    """
    led = design.parts.led
    v_drive = design.supply_v - float(np.ravel(led.voltage(limit_a))[0])
    rs = float(design.values.get("rs", 0.0))
    if v_drive <= 0 or led_a <= 0:
        return None
    return rs + v_drive * (1.0 / limit_a - 1.0 / led_a)


def _e24_rs_within(design, rs_estimate: float, limit_a: float) -> float:
    """The smallest E24 series resistor (IEC 60063) from ``rs_estimate`` up that keeps the
    design's LED peak within ``limit_a`` by the fast engine (a few steps at most)."""
    from dataclasses import replace

    from pulsepick.series import get_series

    e24 = get_series("E24")
    r = float(e24.nearest(rs_estimate, rounding="up"))
    for _ in range(4):
        peak = replace(design, values={**design.values, "rs": r}).fast().row(0)["led_peak_a"]
        if not peak > limit_a:
            break
        r = float(e24.nearest(r * 1.01, rounding="up"))
    return r


def rating_excesses(design, led_peak_a: float, *, fixes: bool = True
                    ) -> list[RatingExcess]:
    """Every current of ``design`` over a rating, at an LED peak of ``led_peak_a`` (A).

    ``fixes`` False leaves the fix texts out (they run the fast engine to pick the E24
    resistor): for a yes/no answer such as :func:`over_rating`.
    """
    if not (isinstance(led_peak_a, float | int) and math.isfinite(led_peak_a)
            and led_peak_a > 0):
        return []
    out: list[RatingExcess] = []
    led = design.parts.led

    def fix_text(limit: float) -> str:
        if not fixes:
            return ""
        rs = _rs_for(design, led_peak_a, limit)
        if rs is None or "rs" not in design.values:
            first = "a larger RS"
        else:  # the next E24 value up (IEC 60063)
            e24 = _e24_rs_within(design, rs, limit)
            first = (f"a larger RS ({format_eng(e24, 'Ω')} or more, E24, for "
                     f"{format_eng(limit, 'A')})")
        return f"fix: {first}, or drive the LED through a transistor"

    if led.i_max_a is not None and led_peak_a > led.i_max_a:
        out.append(RatingExcess(
            f"LED1 {led.name}", "peak current", led_peak_a, float(led.i_max_a),
            "its maximum continuous current in our LED table; no pulsed rating is in our "
            "tables", fix_text(float(led.i_max_a))))
    gr = gate_ratings(design.chip.family)
    if gr is not None:
        out += _pin_excesses(design, gr, led_peak_a, fix_text)
    return out


def _pin_excesses(design, gr: GateRatings, led_peak_a: float, led_fix) -> list[RatingExcess]:
    """The gate's pins over their ratings: the current the stage draws from its driver
    (the LED's peak, or a switch's base drive) through the output pin and the package's
    VCC or GND pin."""
    from pulsepick.circuits.base import get_stage

    stage = get_stage(design.topo.stage)
    if stage.gate_carries_led:
        pin_a, what, fix_text = led_peak_a, "the LED's peak", led_fix
    else:
        env, _ = design.env()
        pin_a = stage.driver_peak_a(design.values, env, design.topo, led_peak_a)
        what = "the drive of the LED's switch"
        r_out = float(np.ravel(env.rout_high)[0])

        def fix_text(limit: float) -> str:
            name = stage.drive_param
            r_now = float(design.values[name])
            # the drive is nearly a fixed voltage across the resistor and the output's
            r_new = (r_now + r_out) * pin_a / limit - r_out
            return (f"fix: a larger {name.upper()} (about {format_eng(r_new, 'Ω')} or more "
                    f"for {format_eng(limit, 'A')})")

    if not (math.isfinite(pin_a) and pin_a > 0):
        return []
    out = []
    pin = "spare gate's output pin" if design.topo.buffered else "timing gate's output pin"
    if gr.out_pin_max_a is not None and pin_a > gr.out_pin_max_a:
        fix = fix_text(gr.out_pin_max_a)
        if fix and not design.topo.buffered and stage.gate_carries_led:
            fix += (f"; a buffer gate ({hint('buffered', True)}) moves the load off the "
                    "timing gate")
        out.append(RatingExcess(f"U1 {pin}", f"output current ({what})", pin_a,
                                gr.out_pin_max_a,
                                f"{gr.family.upper()} absolute maximum per pin, "
                                f"{_cite(gr.source)}",
                                fix))
    if gr.supply_pin_max_a is not None and pin_a > gr.supply_pin_max_a:
        out.append(RatingExcess("U1 VCC/GND pin", f"package supply current ({what})",
                                pin_a, gr.supply_pin_max_a,
                                f"{gr.family.upper()} absolute maximum for the VCC or "
                                f"GND pin, {_cite(gr.source)}",
                                fix_text(gr.supply_pin_max_a)))
    return out


def over_rating(design, led_peak_a: float) -> bool:
    """True when any current of ``design`` is over a rating."""
    return bool(rating_excesses(design, led_peak_a, fixes=False))
