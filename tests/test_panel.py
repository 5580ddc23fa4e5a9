"""The single-diode panel model: rated points, Voc against irradiance, and pvlib's solution."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pvlib import pvsystem
from pvlib.singlediode import bishop88_i_from_v

from pulsepick.errors import PartError
from pulsepick.parts.panel import (
    LUX_PER_W_M2,
    custom_panel,
    get_panel,
    irradiance_from_lux,
    lux_from_irradiance,
    open_circuit_voltage,
    panel_keys,
    thermal_voltage,
)


@pytest.mark.parametrize("key", panel_keys())
def test_rated_points_are_met(key):
    panel = get_panel(key)
    # The model is built through (0, Isc) and (Voc, 0) at 1000 W/m² (its definition).
    assert panel.current(0.0, 1000.0) == pytest.approx(panel.isc_a, rel=1e-9)
    assert abs(panel.current(panel.voc_v, 1000.0)) < 1e-9 * panel.isc_a
    assert panel.voc(1000.0) == pytest.approx(panel.voc_v, rel=1e-9)


def test_worked_example_voc_0p6734():
    # c-Si cell: Jph = 40 mA/cm², J0 = 1.95e-10 mA/cm², n = 1, T = 300 K -> Voc = 0.6734 V
    # (ref:solar-cell-j0-exercise, computed there with Voc = kT/q ln(Jph/J0 + 1)); 1 cm² of cell.
    voc = open_circuit_voltage(40e-3, 1.95e-13, thermal_voltage(300.0))
    assert voc == pytest.approx(0.6734, abs=0.0001)


def test_worked_example_round_trip_through_a_panel():
    # A one-cell ideal "panel" rated at that Voc and Jsc recovers J0 = 1.95e-10 mA/cm²
    # (ref:solar-cell-j0-exercise) as its saturation current for 1 cm².
    panel = custom_panel(0.67342, 40e-3, 1, n=1.0, r_s_ohm=0.0, r_sh_ohm=math.inf,
                         temperature_k=300.0)
    assert panel.saturation_current_a == pytest.approx(1.95e-13, rel=0.01)


@pytest.mark.parametrize("key", panel_keys())
def test_voc_rises_n_kt_ln10_per_decade_per_cell_ideal(key):
    # Voc2 = Voc1 + n·kT/q·ln(G2/G1) per cell (single-diode model, ref:solar-cell-voc-exercise); it holds
    # without a shunt while Voc >> n·kT/q per cell, checked within 1 % from 1000 to 1 W/m².
    p = get_panel(key)
    ideal = custom_panel(p.voc_v, p.isc_a, p.cells, n=p.n, r_s_ohm=p.r_s_ohm, r_sh_ohm=math.inf)
    expected = p.cells * p.n * thermal_voltage(p.temperature_k) * math.log(10.0)
    for g in (1000.0, 100.0, 10.0):
        step = ideal.voc(g) - ideal.voc(g / 10.0)
        assert step == pytest.approx(expected, rel=0.01)


@pytest.mark.parametrize("key", panel_keys())
def test_voc_per_decade_with_the_shunt_in_bright_light(key):
    # With the table's shunt resistance the per-decade step (ref:solar-cell-voc-exercise) still holds within
    # 1 % between full sun and a tenth of it, where the shunt carries little current.
    p = get_panel(key)
    expected = p.cells * p.n * thermal_voltage(p.temperature_k) * math.log(10.0)
    assert p.voc(1000.0) - p.voc(100.0) == pytest.approx(expected, rel=0.01)


@pytest.mark.parametrize("key", panel_keys())
def test_isc_proportional_to_irradiance(key):
    # Isc ∝ irradiance (ref:solar-cell-voc-exercise); the series resistance bends it by far less than 0.1 %.
    p = get_panel(key)
    for g in (500.0, 100.0, 10.0, 1.0):
        assert p.isc(g) / p.isc(1000.0) == pytest.approx(g / 1000.0, rel=1e-3)


@pytest.mark.parametrize("key", panel_keys())
@pytest.mark.parametrize("irradiance", [1000.0, 200.0, 20.0, 2.0])
def test_iv_curve_matches_pvlib(key, irradiance):
    # pvlib's bishop88 (Newton on its own parametrisation) solves the same single-diode
    # equation; agreement within 1 % of the current (or of 1 % of Isc near Voc).
    p = get_panel(key)
    il = p.photocurrent(irradiance)
    voc = p.voc(irradiance)
    v = np.linspace(0.0, voc, 41)
    ours = p.current(v, irradiance)
    ref = bishop88_i_from_v(v, il, p.saturation_current_a, p.r_s_ohm, p.r_sh_ohm,
                            p.diode_voltage_v, method="newton")
    isc = p.isc(irradiance)
    scale = np.maximum(np.abs(ref), 0.01 * isc)
    assert np.all(np.abs(ours - ref) <= 0.01 * scale)


def test_key_points_match_pvlib_singlediode():
    # pvlib.pvsystem.singlediode gives Isc and Voc of the same parameters (within 1 %).
    p = get_panel("5v60ma")
    for g in (1000.0, 50.0):
        out = pvsystem.singlediode(p.photocurrent(g), p.saturation_current_a, p.r_s_ohm,
                                   p.r_sh_ohm, p.diode_voltage_v)
        assert p.isc(g) == pytest.approx(float(out["i_sc"]), rel=0.01)
        assert p.voc(g) == pytest.approx(float(out["v_oc"]), rel=0.01)


def test_dark_panel_sinks_current():
    p = get_panel("5v60ma")
    assert p.current(1.0, 0.0) < 0
    assert p.voc(0.0) == 0.0


def test_voltage_into_resistor_balances_the_currents():
    p = get_panel("5v60ma")
    for r in (1e3, 1e5, 1e7):
        for g in (0.01, 1.0, 100.0, 1000.0):
            v = p.voltage_into_resistor(r, g)
            # near Voc the current is a small difference of large terms: 1e-9 of Isc
            assert p.current(v, g) == pytest.approx(v / r, rel=1e-7, abs=1e-9 * p.isc(g))
    # no resistor: the open-circuit voltage
    assert p.voltage_into_resistor(math.inf, 10.0) == pytest.approx(p.voc(10.0), rel=1e-9)
    # current pushed in from outside lifts a dark panel: V/R = I_pushed + I_panel(V)
    v = p.voltage_into_resistor(1e6, 0.0, extra_current_a=200e-9)
    assert v / 1e6 == pytest.approx(200e-9 + p.current(v, 0.0), rel=1e-6)


def test_vectorised_current_broadcasts():
    p = get_panel("2v40ma")
    out = p.current(np.array([0.0, 1.0, 2.0]), np.array([[1000.0], [100.0]]))
    assert out.shape == (2, 3)
    assert out[0, 0] == pytest.approx(0.040, rel=1e-9)


@settings(derandomize=True, max_examples=60, deadline=None)
@given(
    voc=st.floats(0.5, 12.0),
    isc=st.floats(1e-3, 0.5),
    g=st.floats(0.01, 1200.0),
)
def test_curve_falls_from_isc_to_zero_at_voc(voc, isc, g):
    p = custom_panel(voc, isc)
    v_oc = p.voc(g)
    v = np.linspace(0.0, v_oc, 25)
    i = p.current(v, g)
    assert np.all(np.diff(i) <= 1e-12 * isc)
    assert abs(i[-1]) <= 1e-6 * p.isc(g) + 1e-15


def test_lux_conversion_is_about_120_lx_per_w_m2():
    # about 1 W/m² ~ 120 lx for daylight (from memory; the module's stated estimate)
    assert LUX_PER_W_M2 == 120.0
    assert irradiance_from_lux(120.0) == pytest.approx(1.0)
    assert lux_from_irradiance(2.0) == pytest.approx(240.0)


def test_unknown_panel_lists_the_keys():
    with pytest.raises(PartError, match="known panels: 2v40ma"):
        get_panel("9v1a")


@pytest.mark.parametrize(
    "kwargs, words",
    [
        ({"voc_v": -5.0, "isc_a": 0.06}, "positive voltage"),
        ({"voc_v": 5.0, "isc_a": 0.0}, "positive current"),
        ({"voc_v": 5.0, "isc_a": 0.06, "cells": 8, "r_sh_ohm": 10.0}, "working cell"),
        ({"voc_v": 5.0, "isc_a": 0.06, "cells": 0}, "whole number"),
    ],
)
def test_impossible_panels_are_refused(kwargs, words):
    with pytest.raises(PartError, match=words):
        custom_panel(**kwargs)


def test_custom_panel_guesses_cells_and_says_so():
    p = custom_panel(6.0, 0.1)
    assert p.cells == 10  # about 0.6 V per cell (the module's estimate)
    assert "estimate" in p.source_notes
