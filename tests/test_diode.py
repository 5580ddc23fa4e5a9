"""Diode models against their datasheet points."""

import numpy as np
import pytest

from pulsepick.errors import PartError
from pulsepick.parts.diode import DIODE_KEYS, get_diode


def test_keys():
    assert DIODE_KEYS == ("si", "schottky")
    for key in DIODE_KEYS:
        assert get_diode(key).key == key


def test_bat54_forward_voltage_within_datasheet():
    d = get_diode("schottky")
    # BAT54: VF <= 0.24 V at 0.1 mA and <= 0.32 V at 1 mA (ref:bat54)
    assert d.voltage(0.1e-3) <= 0.24
    assert d.voltage(1e-3) <= 0.32
    # typical 0.22 V at 0.1 mA and 0.29 V at 1 mA (ref:bat54), fitted exactly
    assert d.voltage(0.1e-3) == pytest.approx(0.22, abs=1e-3)
    assert d.voltage(1e-3) == pytest.approx(0.29, abs=1e-3)
    # 10 mA: 0.35 typ / 0.40 max; 30 mA: 0.41 typ / 0.5 max (ref:bat54)
    assert 0.34 <= d.voltage(10e-3) <= 0.40
    assert d.voltage(30e-3) == pytest.approx(0.41, abs=2e-3)


def test_1n4148_forward_voltage_within_datasheet():
    d = get_diode("si")
    # 1N4148: VF <= 1.0 V at 10 mA (ref:1n4148)
    assert d.voltage(10e-3) <= 1.0
    # 1N4448W: VF <= 0.72 V at 5 mA (ref:1n4148, PanJit); same die class
    assert d.voltage(5e-3) <= 0.72
    # and the model inverts
    assert d.current(d.voltage(1e-3)) == pytest.approx(1e-3, rel=1e-9)


def test_leakage_figures():
    s = get_diode("schottky")
    # BAT54 IR 0.5 typ / 2.0 max uA at 25 V (ref:bat54)
    assert s.reverse_current(25.0) == pytest.approx(0.5e-6, rel=1e-9)
    assert s.reverse_current(25.0, "max") == pytest.approx(2.0e-6, rel=1e-9)
    si = get_diode("si")
    # 1N4148 25 nA max at 20 V (ref:1n4148)
    assert si.reverse_current(20.0, "max") == pytest.approx(25e-9, rel=1e-9)
    # lower at lower voltage, zero at zero, vectorised
    v = np.array([0.0, 1.0, 2.7, 25.0])
    i = s.reverse_current(v)
    assert i[0] == 0.0 and np.all(np.diff(i) > 0)
    # the Schottky leaks more than the silicon diode at the same voltage
    assert s.reverse_current(2.7) > 10 * si.reverse_current(2.7)


def test_unknown_key_lists_accepted():
    with pytest.raises(PartError, match="si, schottky"):
        get_diode("zener")
    with pytest.raises(PartError, match="typ, max"):
        get_diode("si").reverse_current(1.0, "worst")
