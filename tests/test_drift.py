"""Supply-droop drift: figures from full supply to the end of the night."""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from pulsepick.analysis.drift import drift, supply_grid
from pulsepick.circuits.base import DARK, RUNS, UNPOWERED, Topology
from pulsepick.design import Design
from pulsepick.engine.environment import ChipSpec, PartChoice
from pulsepick.errors import RequestError
from pulsepick.parts.led import get_led
from pulsepick.parts.logic import get_family

R1, C1 = 1e6, 1e-6  # ohm, F (demo values)


def hc_marker(led="green-gap", rs=1e3):
    """A path marker: HC Schmitt oscillator, LED on a spare gate (timing output unloaded)."""
    return Design(Topology("schmitt", "direct", buffered=True), {"r1": R1, "c1": C1, "rs": rs},
                  ChipSpec("hc"), PartChoice(get_led(led), timing_cap="c0g"), 3.0)


def test_default_grid_every_tenth_of_a_volt():
    g = supply_grid(3.0, 1.8)
    assert g.size == 13 and g[0] == 3.0 and g[-1] == 1.8
    assert np.allclose(np.diff(g), -0.1)
    g2 = supply_grid(2.75, 1.8)  # the end is added after the last whole step
    assert g2[-1] == 1.8 and g2[-2] == pytest.approx(1.85)
    assert supply_grid(3.0, 2.0, 3).tolist() == [3.0, 2.5, 2.0]
    assert supply_grid(3.0, 2.0, [2.0, 3.0, 2.4]).tolist() == [3.0, 2.4, 2.0]


def test_hc_period_grows_as_supply_falls():
    res = drift(hc_marker(), 3.0, 1.8)
    powered = res.status != UNPOWERED
    assert powered[:11].all() and not powered[11:].any()  # 1.9 and 1.8 V below HC's 2.0 V
    k = res.period_s / (R1 * C1)
    assert np.all(np.diff(k[powered]) > 0)  # period rises at every step down
    # k = 1.028 at 2.0 V (derived from ref:onsemi-mc14106b with the NXP 74HC1G14 typical thresholds, ref:nxp-74hc1g14)
    i2 = int(np.argmin(abs(res.supply_v - 2.0)))
    assert k[i2] == pytest.approx(1.028, rel=0.01)
    # k at 3.0 V from the typical thresholds the table interpolates there (1.598 / 0.972 V,
    # NXP typ interpolated between 2.0 and 4.5 V, ref:nxp-74hc1g14): 0.866
    assert k[0] == pytest.approx(math.log(2.028 / 1.402) + math.log(1.598 / 0.972), rel=0.01)
    assert res.period_change_to_v == pytest.approx(2.0)
    assert res.period_change_pct == pytest.approx((k[i2] / k[0] - 1) * 100)


def test_hc_period_change_from_4v5_to_2v():
    res = drift(hc_marker(led="red"), 4.5, 2.0)
    k = res.period_s / (R1 * C1)
    # 74HC k 0.761 at 4.5 V and 1.028 at 2.0 V (derived from ref:onsemi-mc14106b and ref:nxp-74hc1g14):
    # the period grows about 35 % (common practice)
    assert k[0] == pytest.approx(0.761, rel=0.01)
    assert k[-1] == pytest.approx(1.028, rel=0.01)
    assert res.period_change_pct == pytest.approx(35.0, abs=2.0)
    assert res.unpowered_below_v is None  # 2.0 V is still inside HC's 2-6 V


def test_led_goes_dark_where_its_forward_voltage_meets_the_supply():
    d = hc_marker(led="green-gap", rs=1e3)
    res = drift(d, 3.0, 1.8)
    led, fam = get_led("green-gap"), get_family("hc")
    i_vis = led.visible_a

    def margin(v):  # supply minus what the LED, RS and the gate's output drop need
        return v - float(led.voltage(i_vis)) - i_vis * (1e3 + float(fam.rout_high(v, "typ")))

    v_dark = brentq(margin, 1.0, 3.0, xtol=1e-12)
    # green GaP LED: VF 2.2 V typ at 10 mA (5 mm catalogue table, ref:led-5mm-catalogue); at its
    # visible current it needs about 1.94 V, plus about 0.24 V across RS and the gate
    assert 2.1 < v_dark < 2.3
    assert res.lit_at_full
    assert res.dark_below_v == pytest.approx(v_dark, abs=2e-3)
    # the chip leaves its range below 2.0 V (HC 2-6 V, NXP 74HC1G14, ref:nxp-74hc1g14)
    assert res.unpowered_below_v == pytest.approx(2.0, abs=1e-6)
    st = res.status
    v = res.supply_v
    assert np.all(st[v > v_dark] == RUNS)
    assert np.all(st[(v < v_dark) & (v >= 2.0)] == DARK)
    assert np.all(st[v < 2.0] == UNPOWERED)


def test_dark_from_the_start_and_lit_throughout():
    dim = drift(hc_marker(led="green-gap", rs=100e3), 3.0, 2.0)
    assert not dim.lit_at_full and dim.dark_below_v is None
    bright = drift(hc_marker(led="red", rs=1e3), 3.0, 2.0)
    # red LED: about 1.5 V at its visible current (model through VF 1.7 V at 10 mA, ref:led-5mm-catalogue)
    assert bright.lit_at_full and bright.dark_below_v is None


def test_timer_period_barely_moves_with_supply():
    # CMOS 555 astable: "frequency independent of supply" (LMC555, ref:ti-lmc555)
    d = Design(Topology("timer555", "direct"), {"ra": 1e4, "rb": 1e6, "c1": 1e-6, "rs": 1e3},
               ChipSpec("timer555"), PartChoice(get_led("red"), timing_cap="c0g"), 5.0)
    res = drift(d, 5.0, 2.0)
    assert abs(res.period_change_pct) < 2.0
    assert res.rows()[0]["status"] == "runs" and len(res.rows()) == 31


@pytest.mark.parametrize("args", [(2.0, 3.0), (3.0, 3.0), (3.0, -1.0), (math.nan, 2.0),
                                  (3.0, 2.0, 1), (3.0, 2.0, [2.5]), (3.0, 2.0, "x")])
def test_bad_input(args):
    with pytest.raises(RequestError):
        drift(hc_marker(), *args)


def test_a_solved_candidates_drift_follows_the_chip_its_figures_show():
    # the solver aims at the median chip (its levels at the design supply); the drift
    # table starts from the same figures and follows that chip down the supply
    from pulsepick.analysis.chipspread import same_chip_levels, threshold_limits
    from pulsepick.request import make_request
    from pulsepick.solve import assess, solve

    req = make_request("one flash every 3 s, 40 ms long", supply="2.7V..1.8V", family="lvc",
                       cores="schmitt-steered", stages="direct", buffered=True, top=1)
    c = assess(solve(req)).candidates[0]
    assert c.aim_levels_v is not None and c.drift is not None
    vtp, vtm = c.aim_levels_v
    shown = c.design.fast(vt_plus=vtp, vt_minus=vtm)
    assert c.drift.period_s[0] == pytest.approx(float(np.ravel(shown.period_s)[0]), rel=1e-9)
    # the chip keeps its place between typical and limit at every supply
    p, m = same_chip_levels(c.design.chip, 2.7, vtp, vtm, [2.7, 1.8])
    assert p[0] == pytest.approx(vtp) and m[0] == pytest.approx(vtm)
    lo, typ, hi = (float(np.ravel(x)[0]) for x in threshold_limits(c.design.chip, 1.8)[:3])
    lo0, typ0, hi0 = (float(np.ravel(x)[0]) for x in threshold_limits(c.design.chip, 2.7)[:3])
    share = (vtp - typ0) / ((hi0 - typ0) if vtp >= typ0 else (typ0 - lo0))
    assert (p[1] - typ) / ((hi - typ) if p[1] >= typ else (typ - lo)) == pytest.approx(share)
