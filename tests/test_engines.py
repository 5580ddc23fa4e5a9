"""The two engines against closed forms and against each other."""

from __future__ import annotations

import math

import numpy as np
import pytest
from engine_cases import FIRST_STAGES, LATER_STAGES, random_design

from pulsepick.analysis.checks import stage_loading_shift
from pulsepick.circuits.base import (
    RUNS,
    STALLS,
    Env,
    Figures,
    Topology,
    core_names,
    stage_names,
)
from pulsepick.engine import fast
from pulsepick.parts.diode import get_diode
from pulsepick.parts.led import get_led
from pulsepick.parts.logic import get_family


def ideal_env(vdd, vt_plus, vt_minus, **kw):
    """A rail-to-rail, leak-free chip: the assumptions of the textbook formulas."""
    base = dict(chip_kind="schmitt", vdd=vdd, vt_plus=vt_plus, vt_minus=vt_minus, rout_high=0.0,
                rout_low=0.0, pin_leak_a=0.0, iq_a=0.0, cap_leak_g=0.0, led=get_led("red"),
                steer_diode=get_diode("schottky"), reset_diode=get_diode("si"),
                fade_diode=get_diode("schottky"))
    base.update(kw)
    return Env(**base)


def test_bare_schmitt_matches_the_astable_formula():
    # T = RC[ln((V-VT-)/(V-VT+)) + ln(VT+/VT-)]: onsemi MC14106B astable figure (ref:onsemi-mc14106b)
    rng = np.random.default_rng(3)
    r = 10 ** rng.uniform(3, 7, 1000)
    c = 10 ** rng.uniform(-9, -5, 1000)
    v, vtp, vtm = 3.0, 1.76, 1.04
    th, tl, st = fast.periods(Topology("schmitt", "direct"), {"r1": r, "c1": c},
                              ideal_env(v, vtp, vtm))
    expected = r * c * (math.log((v - vtm) / (v - vtp)) + math.log(vtp / vtm))
    np.testing.assert_allclose(th + tl, expected, rtol=1e-12)
    assert np.all(st == RUNS)


def test_hc_at_4v5_gives_about_0_76_rc():
    # typical VT+ 2.36 V, VT- 1.53 V at 4.5 V (NXP 74HC1G14 Table 7, ref:nxp-74hc1g14) give
    # T = 0.761 RC (derived with the MC14106B formula, ref:onsemi-mc14106b)
    th = get_family("hc").thresholds(4.5)
    t_h, t_l, _ = fast.periods(Topology("schmitt", "direct"), {"r1": 1e6, "c1": 1e-6},
                               ideal_env(4.5, th.vt_plus_typ, th.vt_minus_typ))
    assert float((t_h + t_l)[0]) / 1.0 == pytest.approx(0.76, abs=0.01)


def test_timer555_ideal_levels_give_ln2_forms():
    # t_high = ln2 (RA+RB) C, t_low = ln2 RB C (ref:maplin-555-notes)
    env = ideal_env(5.0, 5.0 * 2 / 3, 5.0 / 3, chip_kind="timer", r_discharge=0.0)
    ra, rb, c = 100e3, 47e3, 2.2e-6
    t_h, t_l, st = fast.periods(Topology("timer555", "direct"), {"ra": ra, "rb": rb, "c1": c}, env)
    assert float(t_h[0]) == pytest.approx(math.log(2) * (ra + rb) * c, rel=1e-12)
    assert float(t_l[0]) == pytest.approx(math.log(2) * rb * c, rel=1e-12)
    assert int(st[0]) == RUNS


def test_leakage_beyond_the_charging_current_stalls():
    # the capacitor can never reach VT+ when the pin draws more than (V - VT+)/R
    env = ideal_env(3.0, 1.7, 1.0, pin_leak_a=2e-6)
    _, _, st = fast.periods(Topology("schmitt", "direct"), {"r1": 1e6, "c1": 1e-6}, env)
    assert int(st[0]) == STALLS


#: Designs whose LED stage shifts the period by more than this when hung on the timing
#: gate are outside the fast engine's first-order coupling; reports warn about them and
#: take the reference engine's figures instead.
MAX_LOADING_SHIFT = 0.10
TIMING_TOL = 0.01  # period and high time, relative (the agreement bound)
LED_TOL = 0.03  # LED peak, flash lengths, charge, effective current, supply current


def _compare(design):
    a = design.fast().row(0)
    b = design.reference().figures.row()
    problems = []
    if a["status"] != b["status"]:
        return [("status", a["status"], b["status"])]
    if a["status"] == STALLS:
        return []
    for key in ("period_s", "high_s", "low_s"):
        if abs(a[key] / b[key] - 1) > TIMING_TOL:
            problems.append((key, a[key], b[key]))
    if a["status"] == RUNS:
        for key in ("led_peak_a", "flash_s", "flash_10pct_s", "led_charge_c", "effective_a",
                    "supply_avg_a"):
            if abs(a[key] / b[key] - 1) > LED_TOL:
                problems.append((key, a[key], b[key]))
    return problems


@pytest.mark.slow
def test_fast_and_reference_agree_on_random_circuits():
    rng = np.random.default_rng(20261201)
    compared, kinds, failures = 0, set(), []
    while compared < 200:
        design = random_design(rng)
        shift = stage_loading_shift(design)
        if shift is not None and abs(shift) > MAX_LOADING_SHIFT:
            continue
        compared += 1
        kinds.add((design.topo.core, design.topo.stage, design.topo.buffered))
        problems = _compare(design)
        if problems:
            failures.append((design.topo.label(), design.chip.family, design.parts.led.key,
                             round(design.supply_v, 2), design.values, problems))
    assert not failures, "\n".join(map(str, failures))
    assert {k[1] for k in kinds} == set(FIRST_STAGES)
    assert {k[2] for k in kinds} == {True, False}
    assert {k[0] for k in kinds} == set(core_names())


def _agreement(seed: int, count: int, stages: tuple[str, ...]):
    rng = np.random.default_rng(seed)
    compared, kinds, failures = 0, set(), []
    while compared < count:
        design = random_design(rng, stages)
        shift = stage_loading_shift(design)
        if shift is not None and abs(shift) > MAX_LOADING_SHIFT:
            continue
        compared += 1
        kinds.add((design.topo.core, design.topo.stage, design.topo.buffered))
        problems = _compare(design)
        if problems:
            failures.append((design.topo.label(), design.chip.family, design.parts.led.key,
                             round(design.supply_v, 2), design.values, problems))
    return kinds, failures


@pytest.mark.slow
def test_fast_and_reference_agree_on_random_circuits_of_later_stages():
    # every stage registered after the first run's three, on every core, both drives
    assert set(FIRST_STAGES) | set(LATER_STAGES) == set(stage_names())
    assert LATER_STAGES
    kinds, failures = _agreement(20261202, 60, LATER_STAGES)
    assert not failures, "\n".join(map(str, failures))
    assert {k[1] for k in kinds} == set(LATER_STAGES)
    assert {k[2] for k in kinds} == {True, False}
    assert {k[0] for k in kinds} == set(core_names())


def test_figures_keys_are_the_published_set():
    assert Figures.KEYS == ("period_s", "high_s", "low_s", "led_peak_a", "flash_s",
                            "flash_10pct_s", "led_charge_c", "effective_a", "effective_mcd",
                            "supply_avg_a")
