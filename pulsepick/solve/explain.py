"""Why a request cannot be met: prechecks before the search, and the explanations and
figure texts when it falls short.
"""

from __future__ import annotations

import math

import numpy as np

from pulsepick.circuits.base import get_stage
from pulsepick.hints import hint
from pulsepick.request import SolveRequest
from pulsepick.solve.score import (
    FLICKER_FUSION_HZ,
    LEAK_MARGIN,
    SEPARATE_FLASHES_MAX_HZ,
    SIGMA,
    led_current_limit,
    peak_needed,
)
from pulsepick.solve.space import _chip, _stage_wanted
from pulsepick.solve.texts import FIGURE_WORDS, figure_text, time_text
from pulsepick.solve.types import Candidate


def _prechecks(req: SolveRequest) -> tuple[list[str], bool]:
    """Explanations known before searching; True when nothing can light at all."""
    from pulsepick.parts.led import LED_KEYS, get_led
    from pulsepick.units import format_eng

    notes: list[str] = []
    t = req.targets
    rate = 1.0 / t.period_s
    if rate >= FLICKER_FUSION_HZ:
        notes.append(
            f"A period of {time_text(t.period_s)} ({format_eng(rate, 'Hz')}) is faster than "
            f"the eye can follow: above a few tens of hertz (flicker fusion, common practice) "
            "the LED looks steadily lit at its average brightness, not blinking. Flashes read "
            f"as separate below about {SEPARATE_FLASHES_MAX_HZ:g} a second (a period above "
            f"{1 / SEPARATE_FLASHES_MAX_HZ:g} s).")
    elif rate > SEPARATE_FLASHES_MAX_HZ:
        notes.append(
            f"A period of {time_text(t.period_s)} ({format_eng(rate, 'Hz')}) is seen as a "
            f"flicker rather than separate flashes: those need fewer than about "
            f"{SEPARATE_FLASHES_MAX_HZ:g} a second (a period above "
            f"{1 / SEPARATE_FLASHES_MAX_HZ:g} s; common practice).")
    if req.flash_shortened:
        from pulsepick.request import ASSUMED_FLASH_S

        notes.append(
            f"No flash length was asked for, and the usual assumption of "
            f"{time_text(ASSUMED_FLASH_S)} does not fit in a period of {time_text(t.period_s)}: "
            f"a flash of {time_text(req.flash_s)} ({req.flash_s / t.period_s:.0%} of the "
            "period) is aimed at instead.")
    if t.flash_s is not None and t.flash_s >= t.period_s:
        notes.append(
            f"A flash of {time_text(t.flash_s)} cannot last longer than the period of "
            f"{time_text(t.period_s)}: the light would never go off. The circuits below "
            "keep the LED lit for as much of each period as they can; a steady light needs "
            "no oscillator at all.")
    led = req.led
    need_v = float(led.voltage(led.visible_a))
    best_i = float(led.current(req.supply_v))
    nothing = best_i < led.visible_a
    if nothing:
        lighter = [k for k in LED_KEYS
                   if float(get_led(k).voltage(get_led(k).visible_a)) < 0.9 * req.supply_v]
        notes.append(
            f"The {led.name} LED needs about {need_v:.2f} V to show (at "
            f"{format_eng(led.visible_a, 'A')}); at {req.supply_v:.2f} V it gets "
            + (f"at most {format_eng(best_i, 'A')}" if best_i >= 1e-9 else
               "practically no current (under 1 nA)")
            + " even with no resistor, so no circuit on this supply "
            "can light it. "
            + (f"LEDs that light here: {', '.join(lighter)}." if lighter else
               "None of the LEDs in our tables lights at this supply."))
    elif req.supply_end_v is not None and float(led.current(req.supply_end_v)) < led.visible_a:
        notes.append(
            f"The {led.name} LED needs about {need_v:.2f} V to show: it goes dark before the "
            f"supply falls to {req.supply_end_v:.2f} V at the end of the night.")
    return notes, nothing


def _drive_limit_a(req: SolveRequest) -> float:
    """The most current a chip output can push through the LED with no series resistor
    at the design supply (A), over the families searched that run at this supply."""
    from pulsepick.engine.environment import PartChoice, chip_model, make_env

    best = 0.0
    for family in req.families:
        chip = _chip(req, family)
        if not bool(chip_model(chip).in_range(req.supply_v)):
            continue
        env, _ = make_env(chip, PartChoice(led=req.led), req.supply_v)
        for rout in (env.rout_high, env.rout_low):
            i = float(np.ravel(req.led.current(req.supply_v, r_ext=float(np.ravel(rout)[0])))[0])
            best = max(best, i)
    return best


def _current_explanation(req: SolveRequest, aims, running: list[Candidate]) -> str | None:
    """Why a stated brightness is out of reach: the peak it needs against the LED's
    rating and the chip output's drive, both named; None when it is within them."""
    from pulsepick.units import format_eng

    b = req.targets.brightness
    if b is None:
        return None
    need = peak_needed(req)
    limits = [led_current_limit(req.led, stage) for stage in req.stages]
    limit, limit_words = max(limits, key=lambda x: x[0])
    # a stage whose LED current does not pass through the gate lifts the drive limit
    through_gate = all(get_stage(s).gate_carries_led for s in req.stages
                       if _stage_wanted(req, s))
    drive = _drive_limit_a(req) if through_gate else math.inf
    cap = min(limit, drive)
    if not need > cap * math.exp(SIGMA):
        return None
    led, flash = req.led, req.flash_s
    blondel = "effective = peak x t/(0.2 s + t), Blondel-Rey"
    if b[0] == "peak_a":
        text = f"The peak current wanted is {format_eng(need, 'A')}"
        key = "led_peak_a"
    elif b[0] == "effective_a":
        text = (f"As bright as a steady {format_eng(b[1], 'A')} with a {time_text(flash)} "
                f"flash needs a peak LED current of about {format_eng(need, 'A')} ({blondel})")
        key = "effective_a"
    else:
        text = (f"An effective intensity of {b[1] * 1e3:.3g} mcd with a {time_text(flash)} "
                f"flash needs a peak of about {format_eng(need, 'A')} from the {led.name} LED "
                f"({led.mcd_per_a * 1e-3:.3g} mcd per mA; {blondel})")
        key = "effective_mcd"
    text += f"; the LED is held to {limit_words}"
    if math.isfinite(drive):
        text += (f", and the chip outputs drive at most {format_eng(drive, 'A')} into it "
                 f"at {req.supply_v:.2f} V with no series resistor")
    if drive < limit:
        text += (f" (it needs {float(led.voltage(need)):.2f} V for {format_eng(need, 'A')}): "
                 "the chip's drive at this supply is the limit; a higher supply, an LED of "
                 "lower forward voltage or a transistor driver would be needed.")
    else:
        text += (": the LED's rating is the limit; a brighter LED, several LEDs or a part "
                 "rated for more current would be needed.")
    if running:
        got = running[0].figures[key]
        target = aims[key][0]
        text += (f" The nearest circuit gives {figure_text(key, got)} "
                 f"({got / target - 1:+.0%}).")
    return text


def _explain(req: SolveRequest, aims, seen, running: list[Candidate]) -> list[str]:
    """Explain each stated aim that the best circuit misses by more than 10 %."""
    out = []
    if not running:
        return out
    current = _current_explanation(req, aims, running)
    if current is not None:
        out.append(current)
    best = running[0]
    for key, (target, stated) in aims.items():
        if not stated or (current is not None and key in ("led_peak_a", "effective_a",
                                                          "effective_mcd")):
            continue
        got = best.figures[key]
        if not (np.isfinite(got) and got > 0):
            continue
        if abs(math.log(got / target)) <= SIGMA:
            continue
        word = FIGURE_WORDS[key]
        span = seen.get(key)
        if key == "period_s":
            spans = [x for x in (seen.get("timing_period_s"), seen.get("period_s")) if x]
            span = [min(x[0] for x in spans), max(x[1] for x in spans)] if spans else None
        if key == "period_s" and span and target > span[1] * 1.1:
            out.append(_period_too_long(req, target, got, span[1],
                                        seen.get("timing_period_leaky_s")))
            continue
        text = (f"The {word} wanted is {figure_text(key, target)}; the nearest "
                f"circuit gives {figure_text(key, got)} ({got / target - 1:+.0%}).")
        if span:
            lo, hi = span
            if target > hi * 1.1:
                text += f" Nothing searched goes above {figure_text(key, hi)}"
                text += _why_high(req, key)
            elif target < lo / 1.1:
                text += f" Nothing searched goes below {figure_text(key, lo)}"
                text += _why_low(req, key)
        out.append(text)
    return out


def _period_too_long(req: SolveRequest, target: float, got: float, longest: float,
                     leaky: list[float] | None) -> str:
    """The period is beyond reach: by leakage, or by the value ranges allowed."""
    from pulsepick.units import format_eng

    ranges = (f"resistors up to {format_eng(req.r_max_ohm, 'Ω')} and capacitors up to "
              f"{format_eng(req.c_max_f, 'F')}")
    head = (f"The period wanted is {time_text(target)}; the nearest circuit gives "
            f"{time_text(got)} ({got / target - 1:+.0%}).")
    if leaky and leaky[1] > longest * 1.05:
        return (f"Period beyond what leakage allows: {head[0].lower()}{head[1:]} The "
                f"longest period found with the current charging the timing capacitor at "
                f"VT+ (and discharging it at VT-) at least {LEAK_MARGIN:g} times the "
                f"capacitor's typical leakage there is {time_text(longest)} (common "
                "practice: with less margin a leakier part slows or stalls it). Circuits "
                f"reaching up to {time_text(leaky[1])} with {ranges} were left out for that "
                "reason; a longer period needs a counter stage dividing a shorter one.")
    return (f"{head} Nothing searched goes above {time_text(longest)} with {ranges}: a "
            f"larger {hint('max_r')} or {hint('cap_range')}, or a counter stage, would be needed.")


def _why_high(req: SolveRequest, key: str) -> str:
    from pulsepick.units import format_eng

    if key == "period_s":
        return (f": with resistors up to {format_eng(req.r_max_ohm, 'Ω')} and capacitors up "
                f"to {format_eng(req.c_max_f, 'F')} no longer period was found (a larger "
                f"{hint('max_r')} or {hint('cap_range')}, or a counter stage, would be needed).")
    if key in ("led_peak_a", "effective_a", "effective_mcd"):
        return (f": the LED's own resistance and the chip's output resistance at "
                f"{req.supply_v:.2f} V limit the current (a brighter LED colour, a higher "
                "supply or a transistor driver would be needed).")
    if key == "flash_s":
        return ": the flash cannot outlast its lit phase."
    return "."


def _why_low(req: SolveRequest, key: str) -> str:
    if key == "period_s":
        return ": smaller resistors or capacitors than the allowed ranges would be needed."
    if key == "flash_s":
        return ": the steering and flash parts cannot make it shorter within the ranges."
    return "."


