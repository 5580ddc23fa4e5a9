"""Capacitor kinds: temperature, DC bias, leakage, ratings."""

import numpy as np
import pytest

from pulsepick.errors import PartError
from pulsepick.parts.capacitor import CAP_KIND_KEYS, get_cap_kind, pick_voltage_rating


def test_keys():
    assert CAP_KIND_KEYS == (
        "c0g", "film-pet", "film-pp", "x7r", "x5r", "y5v", "electrolytic", "tantalum"
    )
    for key in CAP_KIND_KEYS:
        kind = get_cap_kind(key)
        assert kind.key == key and kind.source_notes
        assert kind.series_default in ("E3", "E6", "E12", "E24")


def test_electrolytic_leakage_limit():
    e = get_cap_kind("electrolytic")
    # max(0.01*C[uF]*V[V] uA, 3 uA): 2200 uF / 35 V -> 770 uA; 10 uF / 10 V -> 3 uA
    # (ref:electrolytic-leakage-spec, ref:chemicon-leakage-faq)
    assert float(e.leakage_a(2200e-6, 35.0, 35.0, "max")) == pytest.approx(770e-6)
    assert float(e.leakage_a(10e-6, 10.0, 10.0, "max")) == pytest.approx(3e-6)
    # typical settled leakage far lower ("lower by double digits", ref:chemicon-leakage-faq)
    assert float(e.leakage_a(2200e-6, 35.0, 35.0)) < 770e-6 / 10
    # linear in the applied voltage below rated; vectorised
    got = e.leakage_a(np.array([2200e-6, 10e-6]), 17.5, np.array([35.0, 10.0]), "max")
    np.testing.assert_allclose(got, [385e-6, 5.25e-6])
    assert float(e.leak_conductance(2200e-6, 35.0, "max")) == pytest.approx(770e-6 / 35.0)


def test_insulation_leakage_is_tiny():
    c0g = get_cap_kind("c0g")
    x7r = get_cap_kind("x7r")
    # R_ins*C >= 500 s (from-memory table figure): 1 uF at 5 V -> at most 10 nA, far below the
    # 3 uA electrolytic floor (ref:electrolytic-leakage-spec)
    assert float(x7r.leakage_a(1e-6, 5.0, 50.0, "max")) == pytest.approx(10e-9)
    assert float(get_cap_kind("electrolytic").leakage_a(1e-6, 5.0, 50.0, "max")) > 10 * 10e-9
    assert float(c0g.leakage_a(10e-9, 5.0, 50.0, "max")) < 1e-9
    assert float(x7r.leakage_a(1e-6, 5.0, 50.0)) < float(x7r.leakage_a(1e-6, 5.0, 50.0, "max"))


def test_x7r_within_band():
    x7r = get_cap_kind("x7r")
    t = np.linspace(-55.0, 125.0, 181)
    # X7R: within +/-15 % over -55..125 C (ref:holystone-mlcc)
    for which in ("typ", "min", "max"):
        f = x7r.temperature_factor(t, which)
        assert np.all(f >= 0.85 - 1e-12) and np.all(f <= 1.15 + 1e-12)
    assert float(x7r.temperature_factor(25.0)) == 1.0
    # the typical curve is not the worst case
    assert np.all(np.abs(x7r.temperature_factor(t) - 1) < 0.15)


def test_y5v_within_band():
    y5v = get_cap_kind("y5v")
    t = np.linspace(-30.0, 85.0, 116)
    # Y5V: within +22/-82 % over -30..85 C (ref:holystone-mlcc)
    for which in ("typ", "min", "max"):
        f = y5v.temperature_factor(t, which)
        assert np.all(f >= 0.18 - 1e-12) and np.all(f <= 1.22 + 1e-12)


def test_c0g_within_30ppm():
    c0g = get_cap_kind("c0g")
    t = np.linspace(-55.0, 125.0, 37)
    # C0G: 0 +/- 30 ppm/K (ref:tdk-tempchar-faq)
    bound = 30e-6 * np.abs(t - 25.0)
    for which in ("typ", "min", "max"):
        dev = c0g.temperature_factor(t, which) - 1.0
        assert np.all(np.abs(dev) <= bound + 1e-15)
    np.testing.assert_allclose(c0g.temperature_factor(t, "max") - 1.0, bound, atol=1e-15)


def test_film_tempco_sign():
    # PET about +400 ppm/K, PP about -200 ppm/K (from memory)
    assert float(get_cap_kind("film-pet").temperature_factor(35.0)) == pytest.approx(1.004)
    assert float(get_cap_kind("film-pp").temperature_factor(35.0)) == pytest.approx(0.998)


def test_dc_bias():
    x5r = get_cap_kind("x5r")
    # 4.7 uF 25 V X5R keeps about 15 % at rated 25 V (ref:maxim-an5527)
    assert float(x5r.dc_bias_factor(25.0, 25.0)) == pytest.approx(0.15)
    v = np.array([0.0, 5.0, 12.5, 25.0, 40.0])
    keep = x5r.dc_bias_factor(v, 25.0)
    assert keep[0] == 1.0 and np.all(np.diff(keep) <= 0) and keep[-1] == keep[-2]
    # no DC-bias effect for C0G, film and electrolytics (ref:maxim-an5527; section 7)
    for key in ("c0g", "film-pet", "film-pp", "electrolytic"):
        np.testing.assert_array_equal(get_cap_kind(key).dc_bias_factor(v, 50.0), 1.0)


def test_aging_rates():
    # Holy Stone: C0G 0; X7R/X5R 1-4 %/decade-hour; Y5V 6-10 % (ref:holystone-mlcc)
    assert get_cap_kind("c0g").aging_pct_per_decade == 0
    assert 1 <= get_cap_kind("x7r").aging_pct_per_decade <= 4
    assert 6 <= get_cap_kind("y5v").aging_pct_per_decade <= 10


def test_pick_voltage_rating():
    # 1.5x margin (common practice)
    assert pick_voltage_rating("electrolytic", 2.7) == 6.3
    assert pick_voltage_rating(get_cap_kind("electrolytic"), 5.0) == 10.0
    assert pick_voltage_rating("c0g", 5.0) == 50.0
    with pytest.raises(PartError, match=r"usual ratings are 6\.3, 10"):
        pick_voltage_rating("x5r", 40.0)


def test_unknown_kind_and_levels():
    with pytest.raises(PartError, match="c0g, film-pet"):
        get_cap_kind("mica")
    with pytest.raises(PartError, match="typ, min, max"):
        get_cap_kind("x7r").temperature_factor(0.0, "worst")
    with pytest.raises(PartError, match="typ, max"):
        get_cap_kind("x7r").leakage_a(1e-6, 1.0, 50.0, "min")
