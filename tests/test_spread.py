"""Tolerance spread: Monte Carlo against worst-case corners and a linearised propagation."""

import json
import math

import numpy as np
import pytest

from pulsepick.analysis.spread import (
    SOURCES,
    Z95,
    linearised,
    part_tolerances,
    spread,
    threshold_polygon,
)
from pulsepick.circuits.base import Topology
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.errors import RequestError
from pulsepick.parts.led import get_led


def period_constant(vdd, vt_plus, vt_minus):
    """k in T = k*R*C, rail-to-rail Schmitt RC oscillator (onsemi MC14106B, ref:onsemi-mc14106b)."""
    return math.log((vdd - vt_minus) / (vdd - vt_plus)) + math.log(vt_plus / vt_minus)


def make(core, stage, values, family, supply, *, led="red", timing_cap="film-pet",
         buffered=False, **chip):
    return Design(Topology(core, stage, buffered=buffered), values, ChipSpec(family, **chip),
                  PartChoice(get_led(led), timing_cap=timing_cap), supply)


# Designs of a community garden's path markers (demo values, not reference numbers).
DESIGNS = {
    "schmitt+direct": make("schmitt", "direct", {"r1": 1e6, "c1": 1e-6, "rs": 1e3}, "hc", 4.5),
    "schmitt+pulse": make("schmitt", "pulse", {"r1": 2.2e6, "c1": 1e-6, "cp": 10e-6}, "hc",
                          3.0),
    "timer555+pulse": make("timer555", "pulse",
                           {"ra": 1e4, "rb": 1e6, "c1": 1e-6, "cp": 100e-6}, "timer555", 3.0),
    "timer555+direct": make("timer555", "direct", {"ra": 1e6, "rb": 2.2e4, "c1": 2.2e-6,
                                                   "rs": 220}, "timer555", 3.0),
    "steered+direct": make("schmitt-steered", "direct",
                           {"r1": 4.7e6, "r2": 47e3, "c1": 1e-6, "rs": 100}, "hc", 3.0),
    "4000n+direct": make("schmitt", "direct", {"r1": 4.7e6, "c1": 470e-9, "rs": 2.2e3},
                         "4000n", 5.0, led="green"),
}


def inside(mc, corner, rel=1e-9):
    """MC (min, max) within corner (min, max), up to floating-point noise."""
    return mc[0] >= corner[0] * (1 - rel) and mc[1] <= corner[1] * (1 + rel)


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_corners_enclose_monte_carlo(name):
    res = spread(DESIGNS[name], builds=2000, seed=3)
    assert res.success and res.corner_count > 0
    # corners that stall leave no upper bound on the period, and only they do
    assert (res.corners["period_s"][1] == math.inf) == (res.corner_stalls > 0)
    for key in ("period_s", "flash_s", "led_peak_a", "effective_a", "supply_avg_a"):
        assert inside(res.mc_range[key], res.corners[key]), (key, res.mc_range[key],
                                                             res.corners[key])
        p5, p50, p95 = res.quantiles[key]
        assert res.mc_range[key][0] <= p5 <= p50 <= p95 <= res.mc_range[key][1]


@pytest.mark.parametrize("name", ["schmitt+direct", "timer555+pulse", "schmitt+pulse"])
def test_corners_enclose_monte_carlo_over_a_supply_range(name):
    res = spread(DESIGNS[name], builds=2000, seed=5, supply_range_v=(2.2, 3.0))
    for key in ("period_s", "flash_s"):
        assert inside(res.mc_range[key], res.corners[key]), (key, res.mc_range[key],
                                                             res.corners[key])


def test_hc_threshold_spread_alone_matches_guaranteed_k_range():
    # Timing output unloaded (buffered stage) so the period is the bare RC formula.
    r, c = 1e6, 1e-6
    d = make("schmitt", "direct", {"r1": r, "c1": c, "rs": 1e3}, "hc", 4.5, buffered=True,
             timing_cap="c0g")
    res = spread(d, builds=4000, seed=11, vary=("chip_thresholds",))
    k_lo, k_hi = (x / (r * c) for x in res.corners["period_s"])
    # Guaranteed k at 4.5 V with the hysteresis respected: 0.36-1.43 (common practice,
    # derived from NXP 74HC1G14 Table 7, ref:nxp-74hc1g14): the extremes are
    # VT+ 2.4 / VT- 2.0 (VH 0.4 V at VT- max) and VT+ 2.3 / VT- 0.9 (VH 1.4 V at VT- min).
    k_min = period_constant(4.5, 2.4, 2.0)  # 0.357
    k_max = period_constant(4.5, 2.3, 0.9)  # 1.431
    assert k_min == pytest.approx(0.36, abs=0.005) and k_max == pytest.approx(1.43, abs=0.005)
    assert k_min * 0.995 <= k_lo <= k_min * 1.01  # leakage and output resistance: < 1 %
    assert k_max * 0.99 <= k_hi <= k_max * 1.005
    assert inside(res.mc_range["period_s"], res.corners["period_s"])
    # Limits taken independently would allow VT+ 1.7 / VT- 2.0 (no oscillation at all) and
    # VT+ 3.15 / VT- 0.9 (k = 1.86): the hysteresis window keeps k below 1.43.
    assert k_hi < period_constant(4.5, 3.15, 0.9) * 0.8
    assert res.shares["chip_thresholds"] == pytest.approx(1.0)


def test_threshold_polygon_respects_hysteresis():
    # NXP 74HC1G14 at 4.5 V (ref:nxp-74hc1g14): VT+ 1.7-3.15, VT- 0.9-2.0, VH 0.4-1.4 V.
    pts = threshold_polygon(1.7, 3.15, 0.9, 2.0, 0.4, 1.4)
    h = pts[:, 0] - pts[:, 1]
    assert np.all(h >= 0.4 - 1e-12) and np.all(h <= 1.4 + 1e-12)
    assert pts[:, 0].min() == pytest.approx(1.7) and pts[:, 0].max() == pytest.approx(3.15)
    assert pts[:, 1].min() == pytest.approx(0.9) and pts[:, 1].max() == pytest.approx(2.0)
    # a measured chip collapses the region to one point
    one = threshold_polygon(1.6, 1.6, 0.95, 0.95, 0.65, 0.65)
    assert one.shape == (1, 2)


def test_timer_ratio_corners_match_the_astable_formula():
    # t = (RA+RB)C ln((1-trig)/(1-thr)) + RB C ln(thr/trig) (ref:maplin-555-notes with real levels;
    # ratio limits 0.63-0.67 and 0.29-0.34 of VDD, Philips ICM7555, ref:philips-icm7555). RA is large
    # enough that its current into the discharge switch barely lifts the discharge floor.
    ra, rb, c = 1e4, 1e6, 1e-6
    d = make("timer555", "direct", {"ra": ra, "rb": rb, "c1": c, "rs": 1e3}, "timer555", 5.0,
             timing_cap="c0g")
    res = spread(d, builds=2000, seed=2, vary=("chip_thresholds",))

    def period(thr, trig):
        return (ra + rb) * c * math.log((1 - trig) / (1 - thr)) + rb * c * math.log(thr / trig)

    lo, hi = res.corners["period_s"]
    assert lo == pytest.approx(period(0.63, 0.34), rel=0.003)
    assert hi == pytest.approx(period(0.67, 0.29), rel=0.003)
    assert inside(res.mc_range["period_s"], res.corners["period_s"])


# Small spreads: E96 (1 %) resistors, a 2 % C0G capacitor, a chip measured by its builder.
SMALL = make("schmitt", "direct", {"r1": 4.75e6, "c1": 100e-9, "rs": 1e3}, "hc", 3.0,
             timing_cap="c0g", vt_plus_v=1.6, vt_minus_v=0.95, rout_ohm=60.0,
             measured_at_v=3.0)
SMALL_555 = make("timer555", "pulse", {"ra": 1e4, "rb": 1.02e6, "c1": 1e-6, "cp": 100e-6},
                 "timer555", 3.0, timing_cap="c0g")


@pytest.mark.parametrize("design, vary", [
    (SMALL, None),
    (SMALL_555, ("resistors", "capacitors", "temperature")),
])
def test_monte_carlo_agrees_with_linearised_propagation(design, vary):
    kwargs = {"resistor_tol_pct": 1.0, "cap_tol": 2.0, "vary": vary}
    lin = linearised(design, **kwargs)
    mc = spread(design, builds=100_000, seed=7, corners=False, **kwargs)
    p5, p50, p95 = mc.quantiles["period_s"]
    half = Z95 * lin.sigma["period_s"]
    # Stated tolerance: 3 % of the half-width. A sum of a few uniform inputs is close to,
    # not exactly, normal (one uniform alone would be off by 5 %), and the quantiles of
    # 100,000 builds carry about 1 % sampling error.
    assert abs(p5 - lin.p5()) <= 0.03 * half
    assert abs(p95 - lin.p95()) <= 0.03 * half
    assert abs(p50 - lin.centre["period_s"]) <= 0.03 * half
    assert np.std(mc.samples["period_s"]) == pytest.approx(lin.sigma["period_s"], rel=0.02)
    # the one-at-a-time variance shares agree with the sensitivities' shares
    for s in SOURCES:
        assert mc.shares[s] == pytest.approx(lin.shares[s], abs=0.05), s


def test_seed_reproducible_and_different():
    d = DESIGNS["schmitt+pulse"]
    a = spread(d, builds=500, seed=42)
    b = spread(d, builds=500, seed=42)
    c = spread(d, builds=500, seed=43)
    assert a.seed == 42 and c.seed == 43
    for key in ("period_s", "flash_s", "led_peak_a"):
        assert np.array_equal(a.samples[key], b.samples[key])
        assert not np.array_equal(a.samples[key], c.samples[key])
    assert a.quantiles == b.quantiles and a.shares == b.shares
    assert a.quantiles["period_s"] != c.quantiles["period_s"]


def test_shares_and_yield():
    d = DESIGNS["schmitt+direct"]
    res = spread(d, builds=2000, seed=1)
    assert sum(res.shares.values()) == pytest.approx(1.0)
    # the HC thresholds dominate a 5 % resistor and a 10 % film capacitor
    assert res.shares["chip_thresholds"] > 0.8
    assert res.shares["supply"] == 0.0  # no supply range given
    assert 0.0 < res.yield_fraction < 1.0
    assert res.target_period_s == pytest.approx(res.nominal["period_s"])
    far = spread(d, builds=500, seed=1, target_period_s=10 * res.nominal["period_s"])
    assert far.yield_fraction == 0.0
    fixed = spread(d, builds=50, seed=1, vary=())
    assert fixed.yield_fraction == 1.0
    assert fixed.quantiles["period_s"] == pytest.approx((res.nominal["period_s"],) * 3)
    json.dumps(res.as_dict(), allow_nan=True)


def test_stalls_and_dark_fractions():
    # a 555 at 1.6 V driving a white LED (VF 3.2 V typ, Cree, ref:cree-lc513fwh1) never lights it
    d = make("timer555", "direct", {"ra": 1e4, "rb": 1e6, "c1": 1e-6, "rs": 100}, "timer555",
             1.6, led="white")
    res = spread(d, builds=300, seed=0)
    assert res.dark_fraction == 1.0 and res.yield_fraction == 0.0


def test_tolerances_inferred_and_given():
    d = DESIGNS["timer555+direct"]
    tols = {t.name: t for t in part_tolerances(d)}
    # 1 M, 22 k, 220 are E24 values: taken as 5 % parts (E24, ref:e-series-tolerances)
    assert tols["ra"].tol_plus_pct == 5.0 and tols["rs"].tol_minus_pct == 5.0
    assert tols["c1"].tol_plus_pct == 10.0  # polyester film, usual 10 % (capacitor table)
    e96 = make("schmitt", "direct", {"r1": 4.75e6, "c1": 1e-6, "rs": 1e3}, "hc", 3.0)
    assert {t.name: t.tol_plus_pct for t in part_tolerances(e96)}["r1"] == 1.0  # E96 1 %
    given = part_tolerances(d, resistor_tol_pct={"ra": 1.0}, cap_tol=(20, 80))
    g = {t.name: t for t in given}
    assert g["ra"].tol_plus_pct == 1.0 and g["rb"].tol_plus_pct == 5.0
    assert (g["c1"].tol_minus_pct, g["c1"].tol_plus_pct) == (20.0, 80.0)
    with pytest.raises(RequestError, match="r9"):
        part_tolerances(d, resistor_tol_pct={"r9": 1.0})
    with pytest.raises(RequestError):
        part_tolerances(d, cap_tol=(120, 5))


@pytest.mark.parametrize("kwargs", [
    {"builds": 1}, {"builds": 2.5}, {"seed": -1}, {"yield_band": 0.0},
    {"temp_range_c": (math.nan, 20)}, {"supply_range_v": (0.0, 3.0)},
    {"target_period_s": -1.0}, {"vary": ("moon",)},
])
def test_bad_arguments(kwargs):
    with pytest.raises(RequestError):
        spread(DESIGNS["schmitt+direct"], **kwargs)


@pytest.mark.parametrize("name", ["timer555+direct", "schmitt+direct"])
def test_chip_draw_moments_agree_with_linearised(name):
    # The rejection-sampled chip draws against the quadrature moments the linearised
    # propagation uses: the period's standard deviation agrees within 3 % even for the
    # wide HC window, where the quantiles are visibly non-normal.
    d = DESIGNS[name]
    lin = linearised(d, vary=("chip_thresholds",))
    mc = spread(d, builds=50_000, seed=9, vary=("chip_thresholds",), corners=False,
                shares=False)
    s = mc.samples["period_s"]
    assert np.std(s) == pytest.approx(lin.sigma["period_s"], rel=0.03)
    assert abs(np.mean(s) - lin.centre["period_s"]) <= 0.05 * Z95 * lin.sigma["period_s"]
