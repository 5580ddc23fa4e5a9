"""Seeded random realistic circuits for the engine agreement tests."""

from __future__ import annotations

import numpy as np

from pulsepick.circuits.base import Topology, stage_names
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.parts.led import get_led

# (family, supply range V) kept inside each family's datasheet range
FAMILIES = (("hc", 2.0, 5.5), ("ahc", 2.0, 5.5), ("lvc", 1.8, 5.0), ("4000n", 3.0, 9.0),
            ("4000w", 3.0, 9.0), ("timer555", 2.0, 9.0))
LEDS = ("red", "bright-red", "amber", "green", "white")
#: The stages of the first agreement run (its seeded sample stays as it was); stages
#: registered later are drawn by a run of their own (``LATER_STAGES``).
FIRST_STAGES = ("direct", "pulse", "fade")
LATER_STAGES = tuple(s for s in stage_names() if s not in FIRST_STAGES)


def _log(rng, lo, hi):
    return float(10 ** rng.uniform(np.log10(lo), np.log10(hi)))


def random_design(rng: np.random.Generator, stages: tuple[str, ...] = FIRST_STAGES) -> Design:
    family, v_lo, v_hi = FAMILIES[rng.integers(len(FAMILIES))]
    supply = float(rng.uniform(v_lo, v_hi))
    stage = stages[rng.integers(len(stages))]
    tau = _log(rng, 0.1, 5.0)  # s: blink periods of a tenth of a second to several seconds
    if family == "timer555":
        core = "timer555"
        values = {"ra": _log(rng, 10e3, 2e6), "rb": _log(rng, 10e3, 1e6)}
        values["c1"] = tau / (values["ra"] + 2 * values["rb"])
        buffered = False
    else:
        core = ("schmitt", "schmitt-steered")[rng.integers(2)]
        values = {"r1": _log(rng, 100e3, 10e6)}
        if core == "schmitt-steered":
            values["r2"] = values["r1"] * _log(rng, 0.005, 0.1)
        values["c1"] = tau / values["r1"]
        buffered = bool(rng.integers(2))
    if stage == "direct":
        values["rs"] = _log(rng, 100.0, 4.7e3)
    elif stage == "pulse":
        values["cp"] = _log(rng, 1e-6, 47e-6)
        values["rs"] = float(rng.choice([0.0, _log(rng, 10.0, 220.0)]))
    elif stage == "fade":
        values["rs"] = _log(rng, 47.0, 1e3)
        values["ch"] = _log(rng, 10e-6, 220e-6)
    else:  # transistor: 20-100 mA LEDs, base resistors for forced gains of about 3 to 100
        values["rs"] = _log(rng, 10.0, 220.0)
        values["rbase"] = _log(rng, 300.0, 47e3)
    topo = Topology(core=core, stage=stage, buffered=buffered,
                    lit=("high", "low")[rng.integers(2)] if stage == "direct" else "high",
                    steer=("high", "low")[rng.integers(2)])
    led = get_led(LEDS[rng.integers(len(LEDS))])
    return Design(topo=topo, values=values, chip=ChipSpec(family), parts=PartChoice(led=led),
                  supply_v=supply)
