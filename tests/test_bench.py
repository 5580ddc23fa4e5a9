"""Calibration from a timed test oscillator: closed form, percentile, round trips."""

from __future__ import annotations

import math

import numpy as np
import pytest

from pulsepick.analysis.bench import (
    Timing,
    calibrate,
    closed_form_phases,
    invert_phases,
    limit_percentile,
    oscillator_design,
    recipe,
)
from pulsepick.errors import RequestError
from pulsepick.parts.led import get_led
from pulsepick.parts.logic import get_family

RED = get_led("red")


def _published_phases(vt_plus, vt_minus, rc, vdd):
    # onsemi MC14106B datasheet, Figure 5 (astable multivibrator), ref:onsemi-mc14106b:
    # t_high = RC·ln((V − VT−)/(V − VT+)), t_low = RC·ln(VT+/VT−)
    return (rc * math.log((vdd - vt_minus) / (vdd - vt_plus)),
            rc * math.log(vt_plus / vt_minus))


def test_inversion_recovers_the_published_closed_form():
    # VT+/VT- pairs inside the HC limits at 3 V and 4.5 V (NXP 74HC1G14 Table 7,
    # ref:nxp-74hc1g14; onsemi MC74HC14A, ref:onsemi-mc74hc14a)
    for vdd, vtp, vtm, rc in ((3.0, 1.598, 0.972, 4.84), (4.5, 2.36, 1.53, 2.2),
                              (3.0, 2.1, 0.55, 1.0), (4.5, 1.75, 1.35, 10.0)):
        th, tl = _published_phases(vtp, vtm, rc, vdd)
        got_p, got_m = invert_phases(th, tl, rc, vdd)
        assert float(got_p) == pytest.approx(vtp, rel=1e-12)
        assert float(got_m) == pytest.approx(vtm, rel=1e-12)
        th2, tl2 = closed_form_phases(vtp, vtm, rc, vdd)
        assert float(th2) == pytest.approx(th, rel=1e-12)
        assert float(tl2) == pytest.approx(tl, rel=1e-12)


def test_inversion_hand_value():
    # hand calculation: V = 3 V, VT+ = 2 V, VT- = 1 V, RC = 1 s gives
    # t_high = ln(2/1) = 0.693147 s and t_low = ln(2/1) = 0.693147 s (ref:onsemi-mc14106b)
    vtp, vtm = invert_phases(0.6931471805599453, 0.6931471805599453, 1.0, 3.0)
    assert float(vtp) == pytest.approx(2.0, rel=1e-12)
    assert float(vtm) == pytest.approx(1.0, rel=1e-12)


def test_limit_percentile_follows_the_split_normal():
    # split normal, typ as median, limits at 0.1 % / 99.9 %, truncated (estimate);
    # standard normal CDF values from scipy.stats.norm.cdf
    lo, typ, hi = 1.45, 1.598, 2.15
    assert limit_percentile(typ, lo, typ, hi) == pytest.approx(50.0, abs=1e-9)
    assert limit_percentile(lo, lo, typ, hi) == 0.0
    assert limit_percentile(hi, lo, typ, hi) == 100.0
    assert limit_percentile(1.0, lo, typ, hi) == 0.0
    sigma_lo = (typ - lo) / 3.090232306167813
    # norm.cdf(-1) = 0.15865525393145707
    want = (0.15865525393145707 - 0.001) / 0.998 * 100
    assert limit_percentile(typ - sigma_lo, lo, typ, hi) == pytest.approx(want, rel=1e-9)
    sigma_hi = (hi - typ) / 3.090232306167813
    # norm.cdf(2) = 0.9772498680518208
    want = (0.9772498680518208 - 0.001) / 0.998 * 100
    assert limit_percentile(typ + 2 * sigma_hi, lo, typ, hi) == pytest.approx(want, rel=1e-9)


def _hidden_chip(rng, family: str, vdd: float) -> tuple[float, float]:
    """A chip drawn uniformly inside the datasheet limits (threshold table rows)."""
    t = get_family(family).thresholds(vdd)
    while True:
        vtp = rng.uniform(float(t.vt_plus_min), float(t.vt_plus_max))
        vtm = rng.uniform(float(t.vt_minus_min), float(t.vt_minus_max))
        if float(t.vh_min) <= vtp - vtm <= float(t.vh_max) and vtm < vtp:
            return vtp, vtm


RESOLUTION_S = 0.2


@pytest.mark.slow
def test_calibrate_round_trip_through_the_reference_engine():
    rng = np.random.default_rng(20261202)
    families = (("hc", 2.0, 6.0), ("lvc", 1.8, 5.5), ("ahc", 3.0, 5.5))
    e6_r = (1.5e6, 2.2e6, 3.3e6, 4.7e6)  # E6 values (IEC 60063, ref:iec-60063)
    e6_c = (1.5e-6, 2.2e-6, 3.3e-6, 4.7e-6)
    checked = 0
    for _ in range(30):
        fam, lo, hi = families[rng.integers(len(families))]
        vdd = float(rng.uniform(lo, hi))
        d = oscillator_design(fam, float(rng.choice(e6_r)), float(rng.choice(e6_c)), vdd, RED)
        vtp, vtm = _hidden_chip(rng, fam, vdd)
        ref = d.reference(vt_plus=vtp, vt_minus=vtm)
        assert ref.success
        f = ref.figures.row()
        # the stopwatch: 10 periods and the lit time, each rounded to the resolution
        period = round(10 * f["period_s"] / RESOLUTION_S) * RESOLUTION_S / 10
        high = round(f["flash_s"] / RESOLUTION_S) * RESOLUTION_S
        if min(high, period - high) < 1.0:
            continue  # the recipe keeps both phases over 1 s
        timing = Timing(high_s=high, low_s=period - high, high_unc_s=RESOLUTION_S,
                        low_unc_s=RESOLUTION_S + RESOLUTION_S / 10, how="round trip")
        # exact parts: the range comes from the timing resolution alone
        cal = calibrate(d, timing, r_tol_pct=0.0, c_tol_pct=(0.0, 0.0))
        assert cal.vt_plus_range_v[0] <= vtp <= cal.vt_plus_range_v[1]
        assert cal.vt_minus_range_v[0] <= vtm <= cal.vt_minus_range_v[1]
        # the range is honest but not empty or vast
        assert 0 < cal.vt_plus_range_v[1] - cal.vt_plus_range_v[0] < 0.25 * vdd
        checked += 1
    assert checked >= 20


def test_calibrate_recovers_a_typical_chip_from_its_own_figures():
    # the fast engine's phases of a typical HC chip at 3 V (NXP/onsemi rows,
    # ref:nxp-74hc1g14, ref:onsemi-mc74hc14a) invert back to that chip
    d = oscillator_design("hc", 1.5e6, 4.7e-6, 3.0, RED)
    f = d.fast().row(0)
    cal = calibrate(d, Timing(f["high_s"], f["low_s"], 0.02, 0.02, "exact"))
    assert cal.vt_plus_v == pytest.approx(1.598, abs=1e-4)
    assert cal.vt_minus_v == pytest.approx(0.972, abs=1e-4)
    assert cal.vt_plus_pct == pytest.approx(50.0, abs=0.5)
    assert cal.warnings == ()


def test_impossible_timings_are_refused_in_one_line():
    with pytest.raises(RequestError, match="not longer than its uncertainty"):
        Timing(0.1, 3.0, 0.2, 0.2, "x")
    with pytest.raises(RequestError, match="above 0 s"):
        Timing(-1.0, 3.0, 0.2, 0.2, "x")


def test_recipe_is_timeable_by_eye():
    rec = recipe("hc", 3.0, RED)
    assert 4.0 <= rec.period_s <= 10.0
    assert min(rec.high_s, rec.low_s) >= 1.0
    # from a drawer: only its values are used
    rec2 = recipe("lvc", 3.3, RED, resistors=[1e6, 2.2e6], capacitors=[2.2e-6])
    assert rec2.r_ohm in (1e6, 2.2e6) and rec2.c_f == 2.2e-6
    assert 4.0 <= rec2.period_s <= 10.0
    with pytest.raises(RequestError, match="no R and C"):
        recipe("hc", 3.0, RED, resistors=[100e3], capacitors=[100e-9])
