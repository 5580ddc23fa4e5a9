"""Lock share as a graded risk, the trimmer remedy, and a photoresistor light at night."""

import math
from dataclasses import replace
from types import SimpleNamespace

import numpy as np
import pytest

from pulsepick.analysis.lock import LOCK_GRADES, lock_grade, lock_share
from pulsepick.analysis.locktrim import TRIM_SETTING_RESOLUTION, trimmed_share
from pulsepick.errors import RequestError
from pulsepick.packing import NIGHT_LUX, build_verdict, night_designs
from pulsepick.output.render import word_hints
from pulsepick.request import make_build_request, make_request
from pulsepick.solve import solve, solve_build


def test_lock_grades():
    # the grade bounds are design choices (LOCK_GRADES): 1 %, 5 %, 20 %
    assert [g for _, g in LOCK_GRADES] == ["none", "slight", "low", "moderate", "high"]
    assert [lock_grade(s) for s in (0.0, 0.004, 0.01, 0.03, 0.063, 0.2, 0.43, 1.0)] == [
        "none", "slight", "slight", "low", "moderate", "moderate", "high", "high"]


def _breq(limit=None):
    return SimpleNamespace(max_lock_share=limit)


def test_a_lock_share_is_a_warning_unless_a_limit_is_asked():
    share = SimpleNamespace(share=0.063)
    ok, text = build_verdict(_breq(), 3, 1, share, spread=True)
    assert ok
    assert text == ("3 lights on 1 package; periods spread out; lock risk moderate: 6.3% of "
                    "builds have a pair near a lock")
    ok, text = build_verdict(_breq(0.05), 3, 1, share, spread=False)
    assert not ok
    assert word_hints(text).endswith("lock risk moderate: 6.3% of builds have a pair near a "
                                     "lock, above the 5.0% limit asked (--max-lock-share)")
    ok, text = build_verdict(_breq(0.10), 2, 2, SimpleNamespace(share=0.0), spread=False)
    assert ok
    assert text == ("2 lights on 2 packages; no build has a pair near a lock, within the "
                    "10.0% limit asked")


def test_max_lock_share_is_parsed_and_checked():
    phrases = ["every 2 s for 50 ms", "every 3 s for 50 ms"]
    assert make_build_request(phrases, max_lock_share="5%").max_lock_share == \
        pytest.approx(0.05)
    assert make_build_request(phrases, max_lock_share="0").max_lock_share == 0.0
    assert make_build_request(phrases).max_lock_share is None
    with pytest.raises(RequestError, match="--max-lock-share 'lots'"):
        make_build_request(phrases, max_lock_share="lots")
    with pytest.raises(RequestError, match="night light level"):
        make_build_request(phrases, night_lux=-1.0)


@pytest.fixture(scope="module")
def design():
    req = make_request("one flash every 2 s, 50 ms long", family="lvc", supply="2.7V", top=1)
    return solve(req).candidates[0].design


def test_trimmed_lights_keep_their_set_ratio(design):
    """Two copies of one circuit trimmed to the same period sit on 1:1 in nearly every
    build; a pair set to 0.62 (7 % from 2:3, the nearest simple ratio) never comes near
    one. Untrimmed, both pairs spread over the ratios."""
    faster = replace(design, values={**design.values, "c1": design.values["c1"] * 0.62})
    ratio = float(faster.fast().period_s[0] / design.fast().period_s[0])
    assert 0.58 < ratio < 0.66
    got = {}
    for other, expect in ((design, 1.0), (faster, 0.0)):
        base = lock_share([design, other], [1, 1], builds=600, seed=4,
                          supply_range_v=(2.2, 2.7))
        res, trims = trimmed_share([design, other], [1, 1], base, [True, True],
                                   ["E24", "E24"])
        assert all(t is not None for t in trims)
        assert 0.05 < base.share < 0.95
        assert res.share == pytest.approx(expect, abs=0.05)
        got[expect] = (base, res, trims)
    base, res, trims = got[1.0]
    t = trims[0]
    assert t.step_log == pytest.approx(
        t.sensitivity * TRIM_SETTING_RESOLUTION * t.trimmer_ohm / design.values[t.param],
        rel=0.1)
    # the ratio keeps two independent setting errors, each uniform over one step: their
    # standard deviation sqrt(s1^2 + s2^2)/sqrt(12) (uniform distribution, common
    # practice) is a floor under it; what the night moves afterwards is mostly shared
    ratio = np.asarray(res.log_dev[0]) - np.asarray(res.log_dev[1])
    ratio_base = np.asarray(base.log_dev[0]) - np.asarray(base.log_dev[1])
    ok = np.isfinite(ratio) & np.isfinite(ratio_base)
    floor = math.hypot(trims[0].step_log, trims[1].step_log) / math.sqrt(12)
    assert np.std(ratio[ok]) >= 0.9 * floor
    assert np.std(ratio[ok]) < 0.3 * np.std(ratio_base[ok])
    # the trimmer reaches the P5..P95 builds: fixed below, fixed + trimmer above the
    # nominal value with the setting near mid-travel (pulsepick.analysis.trim)
    r0 = design.values[t.param]
    assert t.fixed_ohm < r0 < t.fixed_ohm + t.trimmer_ohm


def test_photoresistor_light_runs_at_the_night_light_level():
    """The lock share and the night's draw take the photoresistor network at the night's
    light level: series + (photoresistor || parallel clamp) (resistors in series and
    parallel, common practice) with R(E) = R10·(E/10 lux)^-gamma (ref:token-ldr-notes)."""
    from pulsepick.analysis.ldr import timing_param
    from pulsepick.parts.photoresistor import get_photoresistor

    breq = make_build_request(["every 2 s for 50 ms", "every 3 s for 50 ms"],
                              photoresistors=(None, "gl5528"), family="lvc",
                              supply="2.7V", top=1)
    res = solve_build(breq, assess_picks=False)
    assert res.night_designs[0] is res.lights[0].pick.design
    net = res.rates[1].clamp.network
    ldr = get_photoresistor("gl5528")
    # typical GL5528: R10 = (10 + 20) / 2 kohm, gamma 0.6, in parallel with its minimum
    # dark resistance 1 Mohm (the data table's row)
    r_pow = ldr.r10_typ_ohm * (NIGHT_LUX / 10.0) ** -ldr.gamma
    r_ldr = 1.0 / (1.0 / r_pow + 1.0 / ldr.dark_min_ohm)
    par = net.parallel_ohm
    expect = net.series_ohm + (r_ldr if math.isinf(par) else 1.0 / (1.0 / r_ldr + 1.0 / par))
    night = res.night_designs[1]
    param = timing_param(night)
    assert night.values[param] == pytest.approx(expect, rel=1e-9)
    # the light's own figures are the night's: its timing resistance is the network's there
    assert res.lights[1].pick.design.values[param] == night.values[param]
    # each light at the switching levels its figures use (the median chip the solver aims at)
    draw = []
    for li, d in zip(res.lights, res.night_designs, strict=True):
        vtp, vtm = li.pick.aim_levels_v
        draw.append(float(np.ravel(d.fast(vt_plus=vtp, vt_minus=vtm).supply_avg_a)[0]))
    assert res.total_supply_a == pytest.approx(sum(draw), rel=1e-12)
    # a brighter night gives the light another period (the design file's night_lux)
    bright = night_designs(replace(breq, night_lux=10.0), res.picks, res.rates)
    assert float(bright[1].fast().period_s[0]) != pytest.approx(
        float(night.fast().period_s[0]), rel=0.01)


def _run(argv) -> tuple[int, str, str]:
    import contextlib
    import io

    from pulsepick.cli import main

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def test_a_limit_asked_decides_the_verdict_in_json_and_exit_status():
    import json

    code, out, err = _run(["solve", "three lights: every 2.7 s, every 4.1 s, every 6.3 s, "
                           "60 ms each", "--led", "amber", "--supply", "2.7V..1.8V",
                           "--max-lock-share", "0.1%", "--json"])
    doc = json.loads(out)
    share = doc["lock_share"]["lock_share"]
    assert share > 0.001  # three lights on one package: some builds come near a lock
    assert code == 3 and doc["success"] is False
    assert doc["max_lock_share"] == pytest.approx(0.001)
    assert doc["lock_grade"] == lock_grade(share)
    assert doc["message"].endswith(f"{share:.1%} of builds have a pair near a lock, above "
                                   "the 0.1% limit asked (--max-lock-share)")
    # every remedy offered lowers the share
    assert doc["lock_remedies"] and all(r["lock_share"] < share
                                        for r in doc["lock_remedies"])
    # one light: the option is refused
    code, _, err = _run(["solve", "every 2 s for 50 ms", "--max-lock-share", "5%"])
    assert code == 2 and "--max-lock-share applies to several lights" in err
