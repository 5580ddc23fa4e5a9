"""Several lights: gate counting, simple-ratio lock risk, spread-out periods, one budget."""

import math
from fractions import Fraction

import numpy as np
import pytest

from pulsepick.analysis import multi
from pulsepick.engine.loadcurve import constant_load
from pulsepick.errors import RequestError
from pulsepick.output.render import word_hints


def _near_simple_ratio(lo: float, hi: float, margin: float) -> bool:
    """Independent of multi.clearance: does [lo, hi] (shorter/longer) come within
    ``margin`` of any p/q with 1 <= p <= q <= 4 (the issue's simple ratios)?"""
    for q in range(1, 5):
        for p in range(1, q + 1):
            f = p / q
            if hi >= f / (1 + margin) and lo <= f * (1 + margin):
                return True
    return False


def test_simple_ratios_are_the_six_of_the_issue():
    # 1:4, 1:3, 1:2, 2:3, 3:4, 1:1 (the issue's list: 1:1, 1:2, 2:3, 3:4, ... with q <= 4)
    assert multi.simple_ratios(4) == tuple(Fraction(*x) for x in
                                           [(1, 4), (1, 3), (1, 2), (2, 3), (3, 4), (1, 1)])


def test_clearance_by_hand():
    # ln(0.6) against the 2:3 zone: 0.6 sits ln((2/3)/1.03 / 0.6) = 0.0756 below its edge,
    # and ln(0.6 / (0.5*1.03)) = 0.1528 above the 1:2 zone (hand calculation)
    x = math.log(0.6)
    assert float(multi.clearance(x, x, 0.03)) == pytest.approx(
        math.log((2 / 3) / 1.03 / 0.6), rel=1e-12)
    # the same interval in the other order (longer over shorter) gives the same clearance
    assert float(multi.clearance(-x, -x, 0.03)) == pytest.approx(
        float(multi.clearance(x, x, 0.03)), rel=1e-12)
    # inside a zone: negative
    assert float(multi.clearance(math.log(0.665), math.log(0.665), 0.03)) < 0


def test_lock_risks_nominal_and_band():
    rng = np.random.default_rng(1)
    # 2.7 s and 4.1 s: 0.659, 1.2 % from 2:3 -> near; 2.7 s and 6.3 s: 0.4286 -> clear
    periods = [2.7, 4.1, 6.3]
    samples = [p * (1 + 0.01 * rng.standard_normal(4000)) for p in periods]
    risks = multi.lock_risks(periods, [1, 1, 1], samples, margin=0.03)
    by_pair = {(r.a, r.b): r for r in risks}
    assert by_pair[(0, 1)].nominal_near and by_pair[(0, 1)].nearest == "2:3"
    assert not by_pair[(0, 2)].at_risk
    # a different package: no pair checked
    assert len(multi.lock_risks(periods, [1, 2, 2], samples)) == 1


def test_plan_counts_gates_and_packages():
    uses = [multi.LightUse(f"l{i}", "hc", True) for i in range(4)]
    plan = multi.plan_packages(uses, dusk_detector=True)
    assert (plan.oscillators, plan.buffers, plan.dusk, plan.gates_needed) == (4, 4, 1, 9)
    assert len(plan.packages) == 2 and sum(p.gates_used for p in plan.packages) == 9
    assert all(p.gates_used <= 6 for p in plan.packages)
    text = multi.package_limit_error(plan, 1)
    assert text.startswith("4 lights need 8 gates (4 oscillators, 4 buffers) plus 1 for the "
                           "dusk detector; one 6-gate package holds 6")
    assert multi.package_limit_error(plan, 2) is None
    # a 555 light is a package of its own; families never share a package
    mixed = [multi.LightUse("a", "hc", False), multi.LightUse("b", "lvc", False),
             multi.LightUse("c", "timer555", False)]
    plan = multi.plan_packages(mixed, dusk_detector=False)
    assert [p.family for p in plan.packages] == ["hc", "lvc", "timer555"]


def test_choose_periods_clears_every_pair():
    # three lights asked near 2:3 steps (the issue's example), options every 0.5 % within
    # +/-10 %, bands +/-4 % in log around each pair's nominal ratio
    asked = [2.7, 4.1, 6.3]
    options = [p * np.exp(np.linspace(math.log(1 / 1.1), math.log(1.1), 41)) for p in asked]
    pairs = [(0, 1), (0, 2), (1, 2)]
    offsets = {pr: (-0.04, 0.04) for pr in pairs}
    choice = multi.choose_periods(asked, options, pairs, offsets, margin=0.03, tolerance=0.10)
    assert choice.success
    t = choice.chosen_s
    for i, j in pairs:
        a, b = sorted((t[i], t[j]))
        lo, hi = a / b * math.exp(-0.04), a / b * math.exp(0.04)
        assert not _near_simple_ratio(lo, hi, 0.03)
    for a, c in zip(asked, t, strict=True):
        assert abs(c / a - 1) <= 0.10 + 1e-9


def test_choose_periods_reports_when_impossible():
    asked = [3.0, 3.0]
    options = [np.array([3.0]), np.array([3.0])]
    choice = multi.choose_periods(asked, options, [(0, 1)], {(0, 1): (0.0, 0.0)})
    assert not choice.success and "widen --period-tolerance" in word_hints(choice.message)


def test_golden_periods_avoid_simple_ratios():
    t = multi.golden_periods(2.0, 4)
    for a, b in [(t[i], t[j]) for i in range(4) for j in range(i + 1, 4)]:
        assert not _near_simple_ratio(a / b, a / b, 0.03)


def test_combined_load_adds_currents_and_flash_rates():
    a = constant_load(10e-6, period_s=2.0)
    b = constant_load(30e-6, period_s=3.0)
    both = multi.combined_load_curve([a, b], label="two")
    assert float(both.current_a(2.5)) == pytest.approx(40e-6, rel=1e-12)
    # flashes of both lights together: 1/(1/2 + 1/3) = 1.2 s between flashes
    assert float(both.at(2.5)["period_s"]) == pytest.approx(1.2, rel=1e-12)
    with pytest.raises(RequestError):
        multi.combined_load_curve([])


def test_spread_out_build_lowers_the_lock_share():
    """The spread-out search lowers the share of builds with the pair near a lock, within
    the period tolerance (about 2 s: two solver runs and four lock Monte Carlo runs)."""
    from pulsepick.request import make_build_request, split_lights
    from pulsepick.solve import solve_build

    # 2 s and 4.4 s: ratio 0.4545, its band reaches the 1:2 zone
    breq = make_build_request(split_lights("every 2 s, every 4.4 s, 50 ms each"), family="hc",
                              spread_out=True, top=2)
    result = solve_build(breq, assess_picks=False)
    assert result.risks_before is not None and any(r.band_near for r in result.risks_before)
    before, after = result.lock_share_before.share, result.lock_share.share
    assert before > 0.05 and after < before / 3
    assert result.success and after <= 0.05
    assert result.spread_out.success
    for li in result.lights:
        assert abs(li.pick.figures["period_s"] / li.asked_s - 1) <= breq.period_tolerance
