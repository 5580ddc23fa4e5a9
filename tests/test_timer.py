"""CMOS 555-class timer model."""

import math

import numpy as np
import pytest

from pulsepick.errors import PartError
from pulsepick.parts.timer import TIMER_KEYS, get_timer


def test_typical_ratios_give_the_ln2_form():
    t = get_timer()
    assert TIMER_KEYS == ("timer555",) and t.key == "timer555"
    # t_high = ln2*(RA+RB)*C and t_low = ln2*RB*C with the 1/3..2/3 swing (ref:maplin-555-notes, ref:ti-lmc555)
    high = math.log((1 - t.trig_ratio_typ) / (1 - t.thr_ratio_typ))
    low = math.log(t.thr_ratio_typ / t.trig_ratio_typ)
    assert high == pytest.approx(math.log(2), rel=1e-12)
    assert low == pytest.approx(math.log(2), rel=1e-12)
    # f*(RA + 2RB)*C = 1/ln2 = 1.443 (ref:maplin-555-notes)
    assert 1 / low == pytest.approx(1.443, abs=1e-3)


def test_ratio_limits():
    t = get_timer()
    # ICM7555: threshold 0.63-0.67 VDD, trigger 0.29-0.34 VDD (ref:philips-icm7555)
    assert (t.thr_ratio_min, t.thr_ratio_max) == (0.63, 0.67)
    assert (t.trig_ratio_min, t.trig_ratio_max) == (0.29, 0.34)


def test_supply_current():
    t = get_timer()
    # LMC555: 100 uA typ / 250 uA max at 5 V; 50/150 at 1.5 V; 150/400 at 12 V (ref:ti-lmc555)
    assert float(t.supply_current(5.0)) == pytest.approx(100e-6)
    assert float(t.supply_current(5.0, "max")) == pytest.approx(250e-6)
    got = t.supply_current(np.array([1.5, 12.0]))
    np.testing.assert_allclose(got, [50e-6, 150e-6])
    # interpolated between the published points, monotonic over the supply range
    v = np.linspace(0.0, 15.0, 151)
    i = t.supply_current(v, "max")
    assert i[0] == 0.0 and np.all(np.diff(i) > 0)
    assert 50e-6 < float(t.supply_current(3.0)) < 100e-6


def test_supply_range():
    t = get_timer()
    # LMC555 guaranteed from 1.5 V (ref:ti-lmc555)
    assert t.vdd_min_v == 1.5
    assert t.in_range(np.array([1.4, 1.5, 15.0, 16.0])).tolist() == [False, True, True, False]


def test_unknown_key():
    with pytest.raises(PartError, match="timer555"):
        get_timer("ne555")
    with pytest.raises(PartError, match="typ, max"):
        get_timer().supply_current(5.0, "worst")
