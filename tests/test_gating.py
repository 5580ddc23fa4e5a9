"""Dusk gating: the detector holds the oscillators off by day and lets them run at night."""

import math
from pathlib import Path

import numpy as np
import pytest

from pulsepick.analysis.gating import build_gating, detector_gates, light_hold
from pulsepick.circuits import dusk_hold
from pulsepick.circuits.base import Topology, core_names, get_core, get_stage, stage_names
from pulsepick.circuits.dusk_hold import dark_driver_level, hold_kind
from pulsepick.engine.gated import simulate_gated
from pulsepick.parts.diode import get_diode
from pulsepick.request import make_request
from pulsepick.solve import solve

# The panel voltage at the sense input over one evening and morning (estimate: linear
# ramps between a day level of 2.0 V and a dark 0 V, fast enough to keep the run short).
DAY_V, RAMP_V_PER_S = 2.0, 2.0
DUSK_AT, DAWN_AT, END = 2.0, 6.0, 9.0


def _sense(t: float) -> float:
    if t < DUSK_AT:
        return DAY_V
    if t < DAWN_AT:
        return max(0.0, DAY_V - (t - DUSK_AT) * RAMP_V_PER_S)
    return min(DAY_V, (t - DAWN_AT) * RAMP_V_PER_S)


@pytest.fixture(scope="module")
def designs():
    """Circuits of one light at 2.7 V on LVC, one per hold arrangement."""
    req = make_request("one flash every 0.5 s, 30 ms long", family="lvc", supply="2.7V",
                       top=8)
    found = {}
    for c in solve(req).candidates:
        found.setdefault(hold_kind(c.design.topo), c.design)
    assert {"hold-low", "hold-high"} <= set(found)
    return found


def test_dark_levels_follow_the_stage():
    assert dark_driver_level(Topology("schmitt", "direct", lit="high")) == "low"
    assert dark_driver_level(Topology("schmitt", "direct", lit="low")) == "high"
    assert dark_driver_level(Topology("schmitt", "pulse")) == "either"
    # a buffer inverts: the oscillator's own output must then be at the other level
    assert hold_kind(Topology("schmitt", "direct", lit="high")) == "hold-high"
    assert hold_kind(Topology("schmitt", "direct", lit="high", buffered=True)) == "hold-low"
    assert hold_kind(Topology("schmitt", "pulse")) == "hold-low"
    assert hold_kind(Topology("timer555", "direct")) == "reset"
    assert detector_gates([Topology("schmitt", "pulse")]) == 1
    assert detector_gates([Topology("schmitt", "pulse"),
                           Topology("schmitt", "fade")]) == 2
    # a steered core with a stage dark at either level: held where its diode is off
    assert hold_kind(Topology("schmitt-steered", "pulse", steer="high")) == "hold-high"
    assert hold_kind(Topology("schmitt-steered", "pulse", steer="low")) == "hold-low"
    assert dark_driver_level(Topology("schmitt", "fade", lit="low")) == "low"  # one wiring


def test_every_stage_and_core_declares_how_it_is_held():
    for name in stage_names():
        levels = get_stage(name).dark_driver
        assert set(get_stage(name).lits) <= set(levels)
        assert set(levels.values()) <= {"high", "low", "either"}
    assert {n: get_core(n).dusk_hold for n in core_names()} == {
        "schmitt": "diode", "schmitt-steered": "diode", "timer555": "reset"}
    source = Path(dusk_hold.__file__).read_text(encoding="utf-8")
    assert [n for n in (*stage_names(), *core_names()) if f'"{n}"' in source] == []


@pytest.mark.parametrize("kind", ["hold-low", "hold-high"])
def test_reference_lights_stop_by_day_and_run_at_night(designs, kind):
    """The reference engine with the detector and hold diode: no switching and no LED
    charge while the panel sees day, switching at the free-running period at night."""
    design = designs[kind]
    env, _ = design.env()
    vals = design.working_values(env)
    run = simulate_gated(design.topo, vals, env, _sense, END, kind=kind,
                         diode=get_diode("schottky"))
    assert run.success
    vtp, vtm = float(np.asarray(env.vt_plus).reshape(-1)[0]), float(
        np.asarray(env.vt_minus).reshape(-1)[0])
    # the detector switches where the linear ramp crosses its thresholds (closed form)
    (night_at,) = run.night_s
    (day_at,) = run.day_s
    assert night_at == pytest.approx(DUSK_AT + (DAY_V - vtm) / RAMP_V_PER_S, abs=1e-6)
    assert day_at == pytest.approx(DAWN_AT + vtp / RAMP_V_PER_S, abs=1e-6)
    # by day (before dusk, and after dawn once the output has settled at its held level)
    assert run.edges_between(0.0, night_at) <= 1
    assert run.edges_between(day_at, END) <= 1
    assert run.led_charge_between(day_at, END) <= 1e-9
    # at night it runs at its own period (the free-running reference engine's), the first
    # cycle longer as it starts from the held node
    period = design.reference().figures.period_s
    edges = run.edges_between(night_at, day_at)
    expect = 2.0 * (day_at - night_at) / period
    assert expect - 4 <= edges <= expect + 1
    assert run.led_charge_between(night_at, day_at) > 0


def test_held_current_is_the_timing_resistor_current(designs):
    """By day the held node sits a diode drop from a rail and the timing resistor carries
    about (V - Vf)/R (Ohm's law); the hold keeps the node beyond its threshold limit."""
    design = designs["hold-low"]
    hold = light_hold(design, 0, 1.8, 2.7)
    assert hold.holds and hold.node_v < hold.limit_v
    r = design.values["r1"]
    if design.topo.core == "schmitt-steered" and design.topo.steer == "high":
        r = r * design.values["r2"] / (r + design.values["r2"])
    # Schottky drop at microamperes: 0.1..0.25 V (BAT54 class, ref:bat54, 0.22 V at 0.1 mA)
    assert (2.7 - 0.25) / r < hold.held_a < (2.7 - 0.05) / r
    gating = build_gating([designs["hold-low"], designs["hold-high"]], 1.8, 2.7)
    assert gating.detector_gates == 2
    assert gating.held_a == pytest.approx(sum(h.held_a for h in gating.holds), rel=1e-12)
    assert not math.isnan(gating.held_end_a)
