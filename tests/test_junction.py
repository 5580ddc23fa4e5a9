"""Junction model: explicit voltage, exact Lambert-W current, conductance, fitting."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from pulsepick.errors import PartError
from pulsepick.parts.junction import THERMAL_VOLTAGE_300K, Junction, thermal_voltage

# Junctions spanning a silicon diode, a Schottky-like part and an InGaN LED
# (parameters are test inputs, not part data).
JUNCTIONS = [
    Junction(i_s=2.52e-9, n=1.752, r_s=0.568),
    Junction(i_s=7e-8, n=1.18, r_s=0.0),
    Junction(i_s=8e-20, n=3.0, r_s=5.0),
    Junction(i_s=1e-30, n=1.5, r_s=20.0, temperature_k=330.0),
]


def test_thermal_voltage_at_300k():
    # kT/q = 25.85 mV at 300 K (ref:codata-2018)
    assert THERMAL_VOLTAGE_300K == pytest.approx(25.85e-3, abs=0.01e-3)
    # 59.5-59.6 mV per decade for n = 1 (ref:ideality-factor-glossary)
    assert math.log(10) * thermal_voltage(300.0) == pytest.approx(59.55e-3, abs=0.1e-3)


@pytest.mark.parametrize("junction", JUNCTIONS)
def test_current_inverts_voltage(junction):
    i = np.logspace(-12, 0, 400)
    back = junction.current(junction.voltage(i))
    np.testing.assert_allclose(back, i, rtol=1e-9)


@pytest.mark.parametrize("junction", JUNCTIONS)
def test_external_resistance_matches_brentq(junction):
    a = junction.n_vt
    for v in (0.05, 0.3, 1.0, 3.0, 12.0):
        for r_ext in (0.0, 10.0, 4.7e3, 1e6):
            r = junction.r_s + r_ext

            def f(i, v=v, r=r):
                return junction.i_s * math.expm1((v - i * r) / a) - i

            hi = v / r if r > 0 else junction.i_s * math.expm1(min(v / a, 700))
            expected = brentq(f, 0.0, hi * (1 + 1e-12) + 1e-30, xtol=1e-300, rtol=1e-14)
            got = junction.current(v, r_ext)
            assert got == pytest.approx(expected, rel=1e-9, abs=1e-25)


def test_vectorised_over_v_and_r_ext():
    j = JUNCTIONS[0]
    v = np.linspace(0.1, 5.0, 7)
    r = np.array([[0.0], [100.0], [1e5]])
    got = j.current(v, r)
    assert got.shape == (3, 7)
    for row, r_ext in enumerate(r[:, 0]):
        for col, vv in enumerate(v):
            assert got[row, col] == pytest.approx(j.current(float(vv), float(r_ext)), rel=1e-12)


def test_no_warnings_at_extremes():
    # warnings are errors in the test run; these must stay finite and quiet
    for j in JUNCTIONS:
        v = np.array([-100.0, -1.0, 0.0, 1e-9, 10.0, 100.0])
        for r_ext in (0.0, 1e-3, 1.0, 1e9):
            i = j.current(v, r_ext)
            assert np.all(np.isfinite(i))
            g = j.conductance(v, r_ext)
            assert np.all(np.isfinite(g)) and np.all(g >= 0)


def test_reverse_current_is_small():
    j = JUNCTIONS[0]
    # no breakdown: the reverse current saturates at -i_s
    assert j.current(-5.0) == pytest.approx(-j.i_s, rel=1e-12)
    assert j.current(-5.0, 1e3) == pytest.approx(-j.i_s, rel=1e-6)
    assert j.current(0.0) == pytest.approx(0.0, abs=1e-30)


def test_conductance_is_derivative():
    j = JUNCTIONS[2]
    for v in (2.0, 2.6, 3.2):
        for r_ext in (0.0, 100.0):
            h = 1e-6
            numeric = (j.current(v + h, r_ext) - j.current(v - h, r_ext)) / (2 * h)
            assert j.conductance(v, r_ext) == pytest.approx(numeric, rel=1e-5)


def test_from_point_and_two_points():
    j = Junction.from_point(1.7, 10e-3, n=1.5, r_s=2.0)
    assert j.voltage(10e-3) == pytest.approx(1.7, abs=1e-12)
    # BAT54 typical points, 0.22 V at 0.1 mA and 0.29 V at 1 mA (ref:bat54)
    fit = Junction.from_two_points((0.22, 1e-4), (0.29, 1e-3))
    assert fit.voltage(1e-4) == pytest.approx(0.22, abs=1e-9)
    assert fit.voltage(1e-3) == pytest.approx(0.29, abs=1e-9)
    assert 1.0 < fit.n < 1.3


def test_impossible_parameters_refused():
    with pytest.raises(PartError, match="ideality"):
        Junction(i_s=1e-12, n=20.0, r_s=0.0)
    with pytest.raises(PartError, match="saturation"):
        Junction(i_s=0.0, n=1.0, r_s=0.0)
    with pytest.raises(PartError, match="series resistance"):
        Junction.from_point(1.0, 1e-3, n=2.0, r_s=2000.0)
    with pytest.raises(PartError):
        JUNCTIONS[0].current(1.0, r_ext=-10.0)
    with pytest.raises(PartError, match="rise"):
        Junction.from_two_points((0.3, 1e-4), (0.29, 1e-3))


@settings(derandomize=True, max_examples=200, deadline=None)
@given(
    log_is=st.floats(-40.0, -6.0),
    n=st.floats(0.8, 5.0),
    r_s=st.floats(0.0, 50.0),
    r_ext=st.floats(0.0, 1e7),
    log_i=st.floats(-12.0, 0.0),
)
def test_round_trip_property(log_is, n, r_s, r_ext, log_i):
    # any junction: the exact current at the voltage that drives i through R gives i back
    j = Junction(i_s=10.0**log_is, n=n, r_s=r_s)
    i = 10.0**log_i
    v = j.voltage(i) + i * r_ext
    assert j.current(v, r_ext) == pytest.approx(i, rel=1e-9)


def test_real_lambert_w_matches_scipy():
    # scipy.special.lambertw (a general-purpose reference library), principal branch
    from scipy.special import lambertw

    from pulsepick.parts.junction import lambert_w_of_exp

    y = np.linspace(-60.0, -30.01, 4001)  # W(e^y) = e^y to this precision
    np.testing.assert_allclose(lambert_w_of_exp(y), lambertw(np.exp(y)).real, rtol=1e-13)
    y = np.linspace(-30.0, 19.9, 40001)  # Newton's steps from ln(1 + e^y)
    np.testing.assert_allclose(lambert_w_of_exp(y), lambertw(np.exp(y)).real, rtol=1e-14)
    y = np.linspace(20.0, 700.0, 4001)  # the log form, where exp(y) is still a float
    np.testing.assert_allclose(lambert_w_of_exp(y), lambertw(np.exp(y)).real, rtol=1e-14)
    big = np.geomspace(20.0, 1e6, 500)  # W(e^y) + ln W(e^y) = y where exp would overflow
    w = lambert_w_of_exp(big)
    np.testing.assert_allclose(w + np.log(w), big, rtol=1e-15)


@pytest.mark.parametrize("junction", JUNCTIONS)
def test_the_reference_engines_scalar_solver_matches_brentq(junction):
    # the reference engine's own Newton solver, started cold and warm from the previous
    # answer above and below the root, against scipy.optimize.brentq on the same equation
    from pulsepick.engine.reference import ScalarShockley

    solver = ScalarShockley(junction)
    a = junction.n_vt
    for v in (0.05, 0.3, 1.0, 3.0, 12.0, 1.0, 0.3, 3.0):
        for r_ext in (0.0, 10.0, 4.7e3, 1e6, 10.0):
            r = junction.r_s + r_ext

            def f(i, v=v, r=r):
                return junction.i_s * math.expm1((v - i * r) / a) - i

            hi = v / r if r > 0 else junction.i_s * math.expm1(min(v / a, 700))
            expected = brentq(f, 0.0, hi * (1 + 1e-12) + 1e-30, xtol=1e-300, rtol=1e-14)
            assert solver.current(v, r_ext) == pytest.approx(expected, rel=1e-12, abs=1e-25)
