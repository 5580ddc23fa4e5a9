"""The chip spread: typical value as the median, published limits as the 0.1 %/99.9 % points.

Reading datasheet limits as far tails and the typical value as the median is common
practice in tolerance analysis. Threshold figures: HC at 3 V, VT+ 1.45 / 1.598 / 2.15 V and
VT- 0.5 / 0.972 / 1.4 V min / typ / max, VH 0.25..1.65 V (data/parts/logic_thresholds.csv:
onsemi MC74HC14A limits, ref:onsemi-mc74hc14a; typical from NXP 74HC1G14, ref:nxp-74hc1g14).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, stats

from pulsepick.analysis.chipspread import (
    Z_TAIL,
    draw_fractions,
    draw_thresholds,
    split_normal_cdf,
    split_normal_fraction,
    split_normal_pdf,
    split_normal_var,
    threshold_limits,
    threshold_percentile,
)
from pulsepick.analysis.median import median_levels, median_shift
from pulsepick.engine.environment import ChipSpec


def test_tail_quantile_is_scipys():
    # scipy.stats.norm.ppf(0.999)
    assert Z_TAIL == pytest.approx(stats.norm.ppf(0.999), rel=1e-12)


def test_normal_cdf_and_its_inverse_are_scipys():
    # scipy.special.ndtr / ndtri (a general-purpose reference library)
    from scipy import special

    from pulsepick.analysis.chipspread import _ndtr, _ndtri

    p = np.array([1e-3, 0.01, 0.2, 0.5, 0.77, 0.999])
    assert _ndtri(p) == pytest.approx(special.ndtri(p), rel=1e-12, abs=1e-14)
    z = np.linspace(-4.0, 4.0, 17)
    assert _ndtr(z) == pytest.approx(special.ndtr(z), rel=1e-12, abs=1e-15)


def test_median_is_the_typical_value_and_limits_are_the_tails():
    t = (1.598 - 1.45) / (2.15 - 1.45)  # HC VT+ at 3 V: typical 21 % of the way up
    assert float(split_normal_fraction(0.5, t)) == pytest.approx(t, abs=1e-12)
    assert float(split_normal_fraction(0.0, t)) == pytest.approx(0.0, abs=1e-12)
    assert float(split_normal_fraction(1.0, t)) == pytest.approx(1.0, abs=1e-12)
    # the untruncated split normal puts the limits at 0.1 % and 99.9 %
    lo, hi = threshold_percentile("hc", 3.0, 1.45, 1.4)
    assert lo == pytest.approx(0.1, rel=1e-6)
    assert hi == pytest.approx(99.9, rel=1e-6)
    assert threshold_percentile("hc", 3.0, 1.598, 0.972) == pytest.approx((50.0, 50.0))


def test_cdf_inverts_the_quantile_and_pdf_integrates_to_one():
    u = np.linspace(0.01, 0.99, 9)
    for t in (0.21, 0.5, 0.9):
        assert split_normal_cdf(split_normal_fraction(u, t), t) == pytest.approx(u, abs=1e-9)
    for t in (0.21, 0.5, 0.9):
        total = integrate.quad(lambda x: float(split_normal_pdf(x, t)), 0, 1, points=[t])[0]
        assert total == pytest.approx(1.0, abs=1e-6)


def test_closed_form_variance_matches_quadrature():
    lo, typ, hi = 1.45, 1.598, 2.15
    t = (typ - lo) / (hi - lo)

    def moment(k):
        return integrate.quad(lambda x: float(split_normal_pdf(x, t)) * x**k, 0, 1,
                              points=[t])[0]

    var_q = (moment(2) - moment(1) ** 2) * (hi - lo) ** 2
    assert split_normal_var(lo, typ, hi) == pytest.approx(var_q, rel=1e-5)


def test_draws_keep_the_hysteresis_window_and_the_median():
    vtp, vtm = draw_thresholds(ChipSpec("hc"), 3.0, 20000, np.random.default_rng(1))
    h = vtp - vtm
    assert h.min() >= 0.25 - 1e-9 and h.max() <= 1.65 + 1e-9
    assert vtp.min() >= 1.45 and vtp.max() <= 2.15
    # the window cuts little, so the medians stay near the typical values (1.598 / 0.972 V)
    assert np.median(vtp) == pytest.approx(1.598, abs=0.02)
    assert np.median(vtm) == pytest.approx(0.972, abs=0.02)
    # the old triangle put 79 % of VT+ above typical; the split normal about half
    assert 0.45 < np.mean(vtp > 1.598) < 0.6


def test_median_chip_of_hc_is_slower_than_typical():
    # the steered core with a fast low phase: the charging phase sets the period
    shift = median_shift(ChipSpec("hc"), 3.0, 2.95, 0.05)
    assert 0.03 < shift < 0.10
    vtp, vtm = median_levels(ChipSpec("hc"), 3.0, 2.95, 0.05)
    assert 1.45 <= vtp <= 2.15 and 0.5 <= vtm <= 1.4
    # a measured chip has no spread: its own levels
    measured = ChipSpec("hc", vt_plus_v=1.7, vt_minus_v=1.0, measured_at_v=3.0)
    assert median_levels(measured, 3.0, 2.95, 0.05) == pytest.approx((1.7, 1.0))


def test_median_levels_over_a_supply_range_match_the_draws():
    # LVC from 2.7 V down to 1.8 V: the VT+/VT- ratio grows as the supply falls, so the
    # median build over the range blinks slower than the median chip at 2.7 V
    from pulsepick.analysis.median import _Weights, _scalar_limits, range_ratio

    chip = ChipSpec("lvc")
    lim = _scalar_limits(chip, 2.7)
    weights = _Weights(2.7, lim[1], lim[4], 0.04, 2.96)
    vtp, vtm = median_levels(chip, 2.7, 0.04, 2.96, 1.8)
    aimed = float(weights.rel(2.7, vtp, vtm))
    # the same distribution drawn at random: supply uniform, chip at each supply
    rng = np.random.default_rng(3)
    vdd = rng.uniform(1.8, 2.7, 100_000)
    limits = threshold_limits(chip, vdd)
    a, b = draw_fractions(*limits, rng)
    drawn = weights.rel(vdd, limits[0] + a * (limits[2] - limits[0]),
                        limits[3] + b * (limits[5] - limits[3]))
    assert aimed == pytest.approx(float(np.median(drawn)), rel=0.002)
    ratio = range_ratio(chip, 2.7, 1.8, 0.04, 2.96)
    assert 1.02 < ratio < 1.08
    assert aimed == pytest.approx((1 + median_shift(chip, 2.7, 0.04, 2.96)) * ratio, rel=1e-9)
    # a steady supply keeps the full supply's own median chip
    assert range_ratio(chip, 2.7, None, 0.04, 2.96) == 1.0
    # a measured chip whose levels follow the family's shape in supply: VT- kept, VT+
    # moved up to the range's median; levels taken in proportion to the supply: unmoved
    shaped = ChipSpec("lvc", vt_plus_v=1.6, vt_minus_v=0.9, measured_at_v=2.7,
                      follows_family=True)
    mp, mm = median_levels(shaped, 2.7, 0.04, 2.96, 1.8)
    assert mm == pytest.approx(0.9) and 1.61 < mp < 1.75
    plain = ChipSpec("lvc", vt_plus_v=1.6, vt_minus_v=0.9, measured_at_v=2.7)
    assert median_levels(plain, 2.7, 0.04, 2.96, 1.8) == pytest.approx((1.6, 0.9))


def test_uniform_and_triangle_readings_move_the_median_to_the_middle():
    # HC at 3 V: typical VT+ 1.598 V sits near its 1.45 V minimum (limits up to 2.15 V,
    # ref:onsemi-mc74hc14a). Read as the split normal the median chip is the typical one;
    # uniform puts the median mid-way (1.8 V), the triangle between the two
    from dataclasses import replace

    from pulsepick.analysis.chipspread import spread_fraction, spread_pdf, threshold_var
    from pulsepick.analysis.spread import spread
    from pulsepick.circuits.base import Topology
    from pulsepick.design import Design
    from pulsepick.engine.environment import PartChoice
    from pulsepick.parts.led import get_led

    medians = {}
    for shape in ("normal", "uniform", "triangle"):
        vtp, _ = draw_thresholds(ChipSpec("hc", spread=shape), 3.0, 20000,
                                 np.random.default_rng(1))
        medians[shape] = float(np.median(vtp))
    assert medians["normal"] == pytest.approx(1.598, abs=0.01)
    assert medians["uniform"] == pytest.approx(1.80, abs=0.015)
    # triangle with its peak at t = 0.211 of the limits: median 1 - sqrt(0.5 (1 - t))
    t = (1.598 - 1.45) / 0.7
    assert medians["triangle"] == pytest.approx(1.45 + 0.7 * (1 - np.sqrt(0.5 * (1 - t))),
                                                abs=0.015)
    # the inverse CDFs and densities agree: F(F^-1(u)) = u by quadrature of the density
    for shape in ("uniform", "triangle"):
        for u in (0.1, 0.5, 0.9):
            x = float(spread_fraction(u, t, shape))
            area = integrate.quad(lambda y: float(spread_pdf(y, t, shape)), 0.0, x,
                                  points=[t])[0]
            assert area == pytest.approx(u, abs=1e-6)
    # variances: handbook formulas, wider than the split normal
    assert threshold_var(1.45, 1.598, 2.15, "uniform") == pytest.approx(0.7**2 / 12)
    assert (threshold_var(1.45, 1.598, 2.15, "normal")
            < threshold_var(1.45, 1.598, 2.15, "triangle")
            < threshold_var(1.45, 1.598, 2.15, "uniform"))
    # a fixed circuit: the builds' median period and width grow in the same order
    design = Design(Topology("schmitt", "pulse"), {"r1": 2.2e6, "c1": 1e-6, "cp": 22e-6,
                                                   "rs": 47}, ChipSpec("hc"),
                    PartChoice(led=get_led("red")), 3.0)
    got = {}
    for shape in ("normal", "uniform", "triangle"):
        s = spread(replace(design, chip=ChipSpec("hc", spread=shape)), builds=2000, seed=0,
                   shares=False, corners=False)
        got[shape] = (s.quantiles["period_s"][1], s.width_pct())
        assert s.as_dict()["chip_spread"] == shape
    assert got["normal"][0] < got["triangle"][0] < got["uniform"][0]
    assert got["normal"][1] < got["triangle"][1] < got["uniform"][1]
    assert got["uniform"][0] / got["normal"][0] > 1.15
    # and the solver's median chip follows the reading
    assert (median_shift(ChipSpec("hc"), 3.0)
            < median_shift(ChipSpec("hc", spread="triangle"), 3.0)
            < median_shift(ChipSpec("hc", spread="uniform"), 3.0))
