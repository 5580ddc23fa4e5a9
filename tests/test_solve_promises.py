"""What the ranking promises: spread columns, estimates said once, misses flagged, part size."""

from __future__ import annotations

import json
import math

import pytest

from pulsepick.cli import main
from pulsepick.parts.capsize import size_class, size_rank
from pulsepick.request import make_request
from pulsepick.solve import MISS_FACTOR, assess, misses, solve


def test_json_carries_the_builds_median_and_yield(capsys):
    assert main(["solve", "one flash every 3 s", "--family", "hc", "--cores", "schmitt-steered",
                 "--stages", "direct", "--buffered", "--top", "1", "--json"]) == 0
    c = json.loads(capsys.readouterr().out)["candidates"][0]
    # the HC target: the Monte Carlo median within 3 % of the asked 3 s
    assert abs(c["median_period_s"] / 3.0 - 1) < 0.03
    assert c["p5_period_s"] < c["median_period_s"] < c["p95_period_s"]
    assert c["yield"] == pytest.approx(c["spread"]["yield"])
    assert 0.15 < c["yield"] < 0.5
    assert c["lasts_night"] is None  # no supply range asked
    vtp, vtm = c["aim_levels_v"]
    # the median chip sits inside the HC limits at 3 V (VT+ 1.45..2.15 V, VT- 0.5..1.4 V,
    # ref:onsemi-mc74hc14a)
    assert 1.45 <= vtp <= 2.15 and 0.5 <= vtm <= 1.4


def test_supply_range_gives_a_night_verdict(capsys):
    assert main(["solve", "one flash every 3 s, 40 ms long", "--supply", "2.7V..1.8V",
                 "--family", "timer555", "--stages", "direct", "--top", "1", "--json"]) == 0
    c = json.loads(capsys.readouterr().out)["candidates"][0]
    # runs at the end-of-night supply; whether the charge lasts needs a storage
    assert c["runs_at_end_supply"] is True and c["lasts_night"] is None
    assert c["end_of_night_figures"]["status"] == "runs"


def test_crossing_estimate_is_said_once(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    assert main(["solve", "one flash every 3 s"]) == 0
    text = capsys.readouterr().out
    assert text.count("ESTIMATE") == 1
    assert text.count("square-law model of the input stage") == 1
    head = next(line for line in text.splitlines() if line.strip().startswith("#"))
    for word in ("period", "P5..P95", "yield"):
        assert word in head


def test_a_far_miss_is_shown_only_when_nothing_closer_exists():
    # the steered core and the pulse stage make a 50 ms flash: nothing far off is shown
    req = make_request("one flash every 3 s", family="hc", stages="direct,pulse", top=5)
    cands = solve(req).candidates
    assert cands
    for c in cands:
        assert not c.misses
        assert abs(c.figures["flash_s"] / req.flash_s - 1) < MISS_FACTOR - 1
    # a plain Schmitt core lighting an LED directly flashes for about half the period: nothing
    # closer exists, so its candidates are shown, each flagged with the flash it gives
    req = make_request("one flash every 3 s", family="hc", cores="schmitt", stages="direct",
                       top=2)
    cands = solve(req).candidates
    assert cands and all(c.misses and c.misses[0].startswith("flash ") for c in cands)
    assert misses(req, {"flash_s": 0.09, "led_peak_a": 5e-3}) == ()
    assert misses(req, {"flash_s": 0.11, "led_peak_a": 5e-3}) == ("flash 110 ms",)


def test_a_peak_beyond_the_leds_rating_leaves_the_flash_to_decide(capsys, monkeypatch):
    # 50 mA is beyond the red LED's 20 mA rating (data/parts/leds.csv): every circuit
    # misses the stated peak, so the flash decides what is shown; the peak is judged
    # against the rating, and the limit is worded without a drive figure of "inf"
    monkeypatch.setenv("NO_COLOR", "1")
    req = make_request("one flash every 2 s, 50 mA peak", top=5)
    result = solve(req)
    assert result.candidates
    for c in result.candidates:
        assert abs(math.log(c.figures["flash_s"] / req.flash_s)) < math.log(MISS_FACTOR)
    assert misses(req, {"flash_s": 0.05, "led_peak_a": 19e-3}) == ()
    assert misses(req, {"flash_s": 0.05, "led_peak_a": 8e-3}) == ("peak 8 mA",)
    assert main(["solve", "one flash every 2 s, 50 mA peak", "--top", "3"]) == 0
    text = capsys.readouterr().out
    assert "continuous rating of 20 mA" in text and "inf A" not in text


def test_a_shown_miss_is_flagged_in_the_ranking_table(capsys, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    assert main(["solve", "one flash every 3 s", "--family", "hc", "--cores", "schmitt",
                 "--stages", "direct", "--top", "2"]) == 0
    text = " ".join(capsys.readouterr().out.split())  # the table wraps its cells
    assert "! flash" in text
    assert "more than 2x off its aim: shown because no circuit comes closer" in text


def test_size_classes():
    # common practice (data/parts/capacitor_sizes.csv): film above 1 µF is bulky, C0G above
    # 100 nF is rare, a small ceramic is small
    assert size_class("film-pp", 4.7e-6).name == "bulky"
    assert size_class("film-pet", 1e-6).name == "bulky"
    assert size_class("film-pet", 470e-9).name == "small"
    assert size_class("c0g", 220e-9).name == "rare"
    assert size_class("x7r", 10e-6).name == "small"
    assert list(size_rank("film-pp", [10e-9, 470e-9, 4.7e-6])) == [0, 1, 2]


def test_prefer_weighs_the_part_size():
    # the garden-marker demo: a 555 at 3 s; "figures" keeps the bulky 4.7 uF film part, the
    # default prefers a smaller one when the figures are otherwise equal
    common = dict(family="timer555", stages="direct", supply="2.7V..1.8V", top=1)
    wide = solve(make_request("one flash every 3 s, 40 ms long", prefer="figures", **common))
    small = solve(make_request("one flash every 3 s, 40 ms long", **common))
    c_wide = wide.candidates[0].design.values["c1"]
    c_small = small.candidates[0].design.values["c1"]
    kind = small.candidates[0].design.parts.timing_cap
    assert size_rank(kind, [c_small])[0] < size_rank(wide.candidates[0].design.parts.timing_cap,
                                                     [c_wide])[0]
    note = next(p.note for p in wide.candidates[0].parts if p.param == "c1")
    assert "bulky" in note
    with pytest.raises(ValueError, match="--prefer"):
        make_request("every 3 s", prefer="cheap")


def test_over_rating_never_ranks_first():
    # 20 mA peak asked of HC on 5 V: the pin limit (25 mA, ref:in74hc14a) and the LED's 20 mA
    req = make_request("one flash every 3 s, 20 mA peak", supply="5V", family="hc",
                       cores="schmitt", stages="direct", top=3)
    res = assess(solve(req))
    first = res.candidates[0]
    assert not any(w.startswith("over a rating") for w in first.warnings)
