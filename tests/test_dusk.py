"""Dusk detection with the panel as the sensor, solved both ways."""

import math

import pytest

from pulsepick.analysis.day import ChargePath, operating_point
from pulsepick.analysis.dusk import (
    bleed_for_dusk,
    dusk_levels,
    irradiance_at_threshold,
)
from pulsepick.errors import RequestError
from pulsepick.parts.diode import get_diode
from pulsepick.parts.logic import get_family
from pulsepick.parts.panel import get_panel, irradiance_from_lux
from pulsepick.series import get_series

HC = get_family("hc")


@pytest.mark.parametrize("key", ["2v40ma", "5v60ma", "6v100ma"])
def test_closed_form_level_agrees_with_the_solved_voltage(key):
    # The explicit photocurrent at a threshold against the safeguarded-Newton terminal
    # voltage of the panel with its bleed (two independent ways through the same model).
    panel = get_panel(key)
    for r in (47e3, 470e3, 4.7e6):
        for vt, pushed in ((0.8, 0.0), (1.3, 150e-9)):
            g = irradiance_at_threshold(panel, vt, r, pushed)
            assert math.isfinite(g) and g > 0
            v = panel.voltage_into_resistor(r, g, extra_current_a=pushed)
            assert v == pytest.approx(vt, abs=1e-9)


def test_levels_follow_the_thresholds_and_leakage():
    diode = get_diode("schottky")
    panel = get_panel("5v60ma")
    res = dusk_levels(panel, 240e3, HC, 2.5, diode)
    th = HC.thresholds(2.5)
    assert res.turn_on.threshold_v == pytest.approx(float(th.vt_minus_typ))
    assert res.turn_off.threshold_v == pytest.approx(float(th.vt_plus_typ))
    # at the typical turn-on light the panel node (with the diode's leakage pushed in at
    # the storage-to-threshold voltage) sits exactly at VT-
    leak = float(diode.reverse_current(2.5 - res.turn_on.threshold_v, "typ")) + HC.leak_typ_a
    v = panel.voltage_into_resistor(240e3, res.turn_on.typ_w_m2, extra_current_a=leak)
    assert v == pytest.approx(res.turn_on.threshold_v, abs=1e-9)
    # ordering: turn-off above turn-on; ranges around the typical values
    assert res.turn_off.typ_lux > res.turn_on.typ_lux > 0
    assert res.turn_on.min_lux < res.turn_on.typ_lux < res.turn_on.max_lux
    assert res.turn_off.min_lux < res.turn_off.typ_lux < res.turn_off.max_lux
    assert res.hysteresis_lux == pytest.approx(res.turn_off.typ_lux - res.turn_on.typ_lux)


def test_larger_bleed_turns_on_in_darker_light():
    panel, diode = get_panel("5v60ma"), get_diode("si")
    levels = [dusk_levels(panel, r, HC, 2.5, diode).turn_on.typ_lux
              for r in (100e3, 330e3, 1e6, 3.3e6)]
    assert levels == sorted(levels, reverse=True)


def test_inverse_with_the_exact_resistor_hits_the_wanted_level():
    panel, diode = get_panel("5v60ma"), get_diode("schottky")
    res = bleed_for_dusk(panel, 10.0, HC, 2.5, diode, series="E24")
    # the exact resistor gives exactly 10 lx (the forward solve is an independent check)
    exact = dusk_levels(panel, res.exact_bleed_ohm, HC, 2.5, diode)
    assert exact.turn_on.typ_lux == pytest.approx(10.0, rel=1e-6)
    # the pick is the nearest E24 value, and the report gives the level it really makes
    assert res.bleed_ohm == get_series("E24").nearest(res.exact_bleed_ohm)
    assert get_series("E24").contains(res.bleed_ohm)
    assert res.turn_on.typ_lux == pytest.approx(10.0, rel=0.1)
    assert res.wanted_lux == 10.0 and res.series == "E24"


def test_unreachable_dusk_level_names_the_lowest_possible():
    panel = get_panel("5v60ma")
    with pytest.raises(RequestError, match=r"cannot signal dusk at 0.5 lx.*lx or more"):
        bleed_for_dusk(panel, 0.5, HC, 2.5, get_diode("schottky"))
    with pytest.raises(RequestError, match="brighter than full sun"):
        bleed_for_dusk(panel, 500000.0, HC, 2.5, get_diode("schottky"))
    with pytest.raises(RequestError, match="above 0"):
        bleed_for_dusk(panel, 0.0, HC, 2.5, get_diode("schottky"))


def test_daytime_loss_and_night_bias():
    panel, diode = get_panel("5v60ma"), get_diode("schottky")
    res = dusk_levels(panel, 240e3, HC, 2.5, diode)
    # full sun: the panel node is the storage plus the diode drop at the charging current;
    # the bleed takes V/R and dissipates V²/R (Ohm's law)
    op = operating_point(ChargePath(panel, diode, bleed_ohm=240e3), 1000.0, 2.5)
    assert res.day_panel_v == pytest.approx(op.panel_v)
    assert res.day_bleed_a == pytest.approx(op.panel_v / 240e3, rel=1e-9)
    assert res.day_bleed_w == pytest.approx(op.panel_v**2 / 240e3, rel=1e-9)
    # over a day the loss is the bleed current times the daylight time, roughly:
    # ~12 µA for about 11 h of light (hand estimate, within a factor of 1.5)
    assert 0.3 < res.day_loss_c < 0.7
    assert 0 < res.day_loss_c / res.day_harvest_c < 0.01
    # at night the storage feeds the diode's reverse leakage at (supply - node)
    assert res.night_bias_typ_a == pytest.approx(
        float(diode.reverse_current(2.5 - res.night_node_typ_v, "typ")), rel=1e-6)
    assert res.night_bias_max_a > res.night_bias_typ_a
    # the dark panel is about its shunt resistance at tens of mV: V = I (R || Rsh) (Ohm's law)
    r_par = 1.0 / (1.0 / 240e3 + 1.0 / panel.r_sh_ohm)
    assert res.night_node_typ_v == pytest.approx(res.night_bias_typ_a * r_par, rel=0.02)


def test_leaky_diode_with_a_huge_bleed_never_turns_on():
    # 2 µA max leakage into 10 MΩ would hold the node far above VT-: warned, not hidden.
    res = dusk_levels(get_panel("5v60ma"), 100e6, HC, 2.5, get_diode("schottky"))
    assert math.isnan(res.turn_on.typ_lux) or any("leakage" in w for w in res.warnings)
    assert any("never turns on" in w or "may not turn on" in w for w in res.warnings)


def test_warnings_name_optical_feedback_and_gating():
    res = dusk_levels(get_panel("5v60ma"), 240e3, HC, 2.5, get_diode("si"))
    assert any("optical feedback" in w and "lx" in w for w in res.warnings)
    assert any("RESET" in g for g in res.gating)
    assert any("timing node" in g for g in res.gating)


def test_silicon_diode_lifts_the_daytime_node_past_the_input_limit():
    res = dusk_levels(get_panel("6v100ma"), 240e3, HC, 2.5, get_diode("si"))
    # the case must lift the node: a 6 V panel in full sun is well over 0.5 V above 2.5 V
    assert res.day_panel_v - 2.5 > 0.5
    assert any("in series with the sense input" in w for w in res.warnings)


def test_levels_scale_with_the_lux_estimate():
    res = dusk_levels(get_panel("3v20ma"), 1e6, HC, 3.0, get_diode("si"))
    assert res.turn_on.typ_lux == pytest.approx(res.turn_on.typ_w_m2 * 120.0)
    assert irradiance_from_lux(res.turn_on.typ_lux) == pytest.approx(res.turn_on.typ_w_m2)


def test_bad_inputs():
    with pytest.raises(RequestError, match="supply"):
        dusk_levels(get_panel("5v60ma"), 240e3, HC, 0.0, get_diode("si"))
    with pytest.raises(RequestError, match="bleed resistor"):
        dusk_levels(get_panel("5v60ma"), 0.0, HC, 2.5, get_diode("si"))
