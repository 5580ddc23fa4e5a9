"""LED colour models against their datasheet points."""

import math

import numpy as np
import pytest

from pulsepick.errors import PartError
from pulsepick.parts.led import LED_KEYS, custom_led, get_led

# (key, typical VF in V, at A, source)
TEST_POINTS = [
    ("red", 1.7, 10e-3),  # 5 mm catalogue table (ref:led-5mm-catalogue)
    ("bright-red", 2.0, 10e-3),  # ref:led-5mm-catalogue
    ("amber", 2.2, 50e-3),  # Broadcom HSMx-A46x (ref:broadcom-hsmx-a46x)
    ("yellow", 2.1, 10e-3),  # ref:led-5mm-catalogue (test current assumed as for its red rows)
    ("green-gap", 2.2, 10e-3),  # ref:led-5mm-catalogue (same assumption)
    ("green", 3.2, 20e-3),  # typical 5 mm InGaN, 3.0-3.4 V (ref:ingan-5mm-typical, from memory)
    ("blue", 3.2, 20e-3),  # ref:ingan-5mm-typical (from memory)
    ("white", 3.2, 20e-3),  # Cree LC513FWH1 (ref:cree-lc513fwh1)
]


def test_keys():
    assert tuple(k for k, _, _ in TEST_POINTS) == LED_KEYS


@pytest.mark.parametrize(("key", "vf", "at"), TEST_POINTS)
def test_voltage_at_test_point(key, vf, at):
    led = get_led(key)
    assert (led.vf_test_v, led.i_test_a) == (vf, at)
    assert led.voltage(at) == pytest.approx(vf, abs=1e-9)
    assert led.current(vf) == pytest.approx(at, rel=1e-9)
    assert led.vf_max_v is not None  # every LED in our table has a maximum VF
    assert led.vf_max_v > vf


# VF at 20 mA against a published typical: (key, low, high, source)
VF_AT_20MA = [
    # 1.7 V typ at 10 mA and 2.1 V max (ref:led-5mm-catalogue): 20 mA sits between them
    ("red", 1.7, 2.1),
    ("bright-red", 2.0, 2.5),  # 2.0 typ at 10 mA / 2.5 V max (ref:led-5mm-catalogue)
    ("yellow", 2.1, 2.5),  # 2.1 typ at 10 mA / 2.5 V max (ref:led-5mm-catalogue)
    ("green-gap", 2.2, 2.5),  # 2.2 typ at 10 mA / 2.5 V max (ref:led-5mm-catalogue)
    # 2.2 V typ at 50 mA, 1.9 V min (Broadcom HSMx-A46x, ref:broadcom-hsmx-a46x)
    ("amber", 1.9, 2.2),
    ("green", 3.0, 3.4),  # typical 5 mm InGaN green (ref:ingan-5mm-typical, from memory)
    ("blue", 3.0, 3.4),  # typical 5 mm InGaN blue (ref:ingan-5mm-typical, from memory)
    ("white", 3.0, 3.4),  # 3.2 V typ (ref:cree-lc513fwh1); 3.0 V typ (ref:rnd-135-00123)
]


@pytest.mark.parametrize(("key", "low", "high"), VF_AT_20MA)
def test_vf_at_20ma_against_published_typical(key, low, high):
    assert low <= float(get_led(key).voltage(20e-3)) <= high


def test_white_and_blue_share_the_chip():
    # a white LED is a blue InGaN chip under phosphor (ref:ingan-5mm-typical): through the same
    # resistor from the same supply they draw the same current within 5 %
    white, blue = get_led("white"), get_led("blue")
    for r in (100.0, 1000.0, 10e3):
        assert float(white.current(5.0, r_ext=r)) == pytest.approx(
            float(blue.current(5.0, r_ext=r)), rel=0.05)


def test_white_needs_more_than_2v7():
    # "a white LED takes more than 2.7 V to light" (common practice)
    white = get_led("white")
    assert white.voltage(20e-3) > 2.7
    assert white.current(2.7) < 1e-3


def test_low_current_voltages_look_like_real_parts():
    # model estimates, checked against the rough targets the table was chosen for:
    # red about 1.6 V at 1 mA; white 2.6-2.8 V at 0.1 mA; blue slightly above 2.3 V at 0.2 uA
    # (common practice, a builder's measurement)
    assert 1.55 <= get_led("red").voltage(1e-3) <= 1.7
    assert 2.6 <= get_led("white").voltage(0.1e-3) <= 2.8
    assert 2.3 <= get_led("blue").voltage(0.2e-6) <= 2.4


def test_intensity_at_test_current():
    # 5 mcd and 80 mcd at 10 mA (ref:led-5mm-catalogue); 4000 mcd typ at 20 mA (ref:cree-lc513fwh1)
    assert float(get_led("red").intensity_cd(10e-3)) == pytest.approx(5e-3)
    assert float(get_led("bright-red").intensity_cd(10e-3)) == pytest.approx(80e-3)
    assert float(get_led("white").intensity_cd(20e-3)) == pytest.approx(4.0)
    # proportional to current (ref:avago-hlma-sh05 axis), vectorised, 0 at negative current
    got = get_led("white").intensity_cd(np.array([-1e-3, 0.0, 10e-3]))
    np.testing.assert_allclose(got, [0.0, 0.0, 2.0])
    # unknown intensity is NaN, shaped like the input
    blue = get_led("blue").intensity_cd(np.array([1e-3, 2e-3]))
    assert blue.shape == (2,) and np.all(np.isnan(blue))


def test_vectorised_current_with_resistor():
    led = get_led("red")
    v = np.linspace(1.5, 3.0, 5)
    i = led.current(v, r_ext=np.array([[100.0], [1000.0]]))
    assert i.shape == (2, 5) and np.all(np.diff(i, axis=1) > 0)


def test_custom_led():
    led = custom_led(2.0, 20e-3, n=2.0, r_s=10.0, mcd=120.0, mcd_at_a=20e-3)
    assert led.key == "custom"
    assert led.voltage(20e-3) == pytest.approx(2.0, abs=1e-9)
    assert float(led.intensity_cd(10e-3)) == pytest.approx(0.060)
    plain = custom_led(3.0, 20e-3)
    assert plain.mcd_per_a is None and math.isnan(float(plain.intensity_cd(1e-3)))


def test_custom_led_refuses_impossible():
    with pytest.raises(PartError):
        custom_led(2.0, 20e-3, r_s=200.0)  # 4 V across RS alone
    with pytest.raises(PartError):
        custom_led(-2.0, 20e-3)
    with pytest.raises(PartError):
        custom_led(2.0, 20e-3, mcd=-5.0)


# Maximum continuous current: the datasheet test current where a row has one, a lower bound on
# the rating (ref:cree-lc513fwh1 white 20 mA, ref:broadcom-hsmx-a46x amber 50 mA); the other
# rows are marked "from memory" in the table and only checked for that mark and for covering
# their test current.
DATASHEET_I_MAX = {"amber": 50e-3, "white": 20e-3}


RECALLED_I_MAX = tuple(k for k in LED_KEYS if k not in DATASHEET_I_MAX)


def test_every_led_has_a_maximum_current_from_one_place_or_the_other():
    assert set(DATASHEET_I_MAX) <= set(LED_KEYS) and len(RECALLED_I_MAX) > 0


@pytest.mark.parametrize("key", sorted(DATASHEET_I_MAX))
def test_table_maximum_current_from_datasheets(key):
    led = get_led(key)
    assert led.i_max_a is not None and led.i_max_a >= led.i_test_a
    assert led.i_max_a == pytest.approx(DATASHEET_I_MAX[key])
    assert "lower bound" in " ".join(led.source_notes)


@pytest.mark.parametrize("key", RECALLED_I_MAX)
def test_table_maximum_current_from_memory(key):
    led = get_led(key)
    assert led.i_max_a is not None and led.i_max_a >= led.i_test_a
    notes = " ".join(led.source_notes)
    assert "i_max_a" in notes and "from memory" in notes


def test_custom_led_maximum_current():
    assert custom_led(2.0, 20e-3).i_max_a is None  # unknown unless given
    led = custom_led(2.0, 20e-3, i_max_a=0.025)
    assert led.i_max_a == 0.025
    assert any("maximum continuous current 0.025 A (user value)" in n for n in led.source_notes)
    for bad in (0.0, -0.02, math.nan, math.inf):
        with pytest.raises(PartError, match="maximum current"):
            custom_led(2.0, 20e-3, i_max_a=bad)


def test_unknown_colour_lists_keys():
    with pytest.raises(PartError, match="red, bright-red, amber"):
        get_led("infrared")
