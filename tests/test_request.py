"""The blink grammar, the flag form, request options and the parts drawer (pulsepick.request).

Reference numbers here are unit conversions of the phrases themselves (20 a minute is
one every 3 s: 60 s / 20) and the documented defaults of pulsepick.request.
"""

from __future__ import annotations

import math

import pytest

from pulsepick.errors import RequestError
from pulsepick.request import (
    ASSUMED_FLASH_S,
    ASSUMED_PEAK_A,
    PHRASE_EXAMPLES,
    make_request,
    merge_targets,
    parse_phrase,
    parse_stock,
    read_stock,
    targets_from_flags,
)

# ------------------------------------------------------------------------------ phrases

def test_one_flash_every_three_seconds():
    t = parse_phrase("one flash every 3 s")
    assert t.period_s == 3.0
    assert t.flash_s is None and t.brightness is None
    assert t.text == "one flash every 3 s"


def test_period_flash_and_peak():
    t = parse_phrase("flash every 2.5 s for 40 ms, 5 mA peak")
    assert t.period_s == pytest.approx(2.5, rel=1e-12)
    assert t.flash_s == pytest.approx(0.040, rel=1e-12)
    assert t.peak_a == pytest.approx(5e-3, rel=1e-12)


def test_count_per_minute_long_flash_and_steady_current():
    # 20 flashes a minute is one every 60/20 = 3 s
    t = parse_phrase("20 flashes a minute, 0.1 s long, as bright as a steady 1 mA")
    assert t.period_s == pytest.approx(3.0, rel=1e-12)
    assert t.flash_s == pytest.approx(0.1, rel=1e-12)
    assert t.effective_a == pytest.approx(1e-3, rel=1e-12)
    assert t.peak_a is None


def test_intensity_alone_is_the_effective_intensity():
    t = parse_phrase("every 4 s, 200 mcd")
    assert t.period_s == 4.0
    assert t.intensity_cd == pytest.approx(0.2, rel=1e-12)


@pytest.mark.parametrize("phrase", PHRASE_EXAMPLES)
def test_documented_examples_all_read(phrase):
    assert parse_phrase(phrase).period_s > 0


@pytest.mark.parametrize("phrase, period, flash", [
    ("blink every second", 1.0, None),
    ("every 2 minutes, lasting 30 ms", 120.0, 0.03),
    ("30/min, 20 ms flash", 2.0, 0.02),          # 60 s / 30
    ("0.5 Hz for 50 ms", 2.0, 0.05),             # 1 / 0.5 Hz
    ("EVERY 3 s FOR 40 ms", 3.0, 0.04),          # keywords in any case
    ("3 flashes per hour", 1200.0, None),        # 3600 s / 3
])
def test_other_forms(phrase, period, flash):
    t = parse_phrase(phrase)
    assert t.period_s == pytest.approx(period, rel=1e-12)
    if flash is None:
        assert t.flash_s is None
    else:
        assert t.flash_s == pytest.approx(flash, rel=1e-12)


@pytest.mark.parametrize("phrase, quoted", [
    ("one flash every 3 s, blue please", '"blue please"'),
    ("every 3 parsecs", '"3 parsecs"'),
    ("every 3 s for 40 mA", '"40 mA"'),
])
def test_unreadable_part_is_quoted_with_examples(phrase, quoted):
    with pytest.raises(RequestError) as info:
        parse_phrase(phrase)
    msg = str(info.value)
    assert quoted in msg
    assert "phrases that work" in msg and PHRASE_EXAMPLES[0] in msg
    assert "\n" not in msg


def test_phrase_without_period_is_refused():
    with pytest.raises(RequestError, match="how often"):
        parse_phrase("5 mA peak, for 40 ms")


def test_target_twice_is_refused():
    with pytest.raises(RequestError, match="second time"):
        parse_phrase("every 3 s, every 4 s")


def test_bare_time_is_ambiguous():
    with pytest.raises(RequestError, match="every 3 s"):
        parse_phrase("every 2 s, 3 s")


def test_two_brightness_targets_refused():
    with pytest.raises(RequestError, match="one brightness"):
        parse_phrase("every 3 s, 5 mA peak, 200 mcd")


# ------------------------------------------------------------------------------ flags

def test_flags_form_matches_phrase():
    a = targets_from_flags(every="2.5s", flash="40ms", peak="5mA")
    b = parse_phrase("flash every 2.5 s for 40 ms, 5 mA peak")
    assert (a.period_s, a.flash_s, a.peak_a) == pytest.approx((b.period_s, b.flash_s, b.peak_a))


def test_every_accepts_a_rate():
    assert targets_from_flags(every="20/min").period_s == pytest.approx(3.0)  # 60 / 20


def test_flags_collect_every_problem():
    with pytest.raises(RequestError) as info:
        targets_from_flags(every=None, flash="4 parsecs")
    msg = str(info.value)
    assert "--flash" in msg and "--every is missing" in msg


def test_phrase_and_flags_merge_and_conflict():
    t = merge_targets("one flash every 3 s", {"every": None, "flash": "40ms", "peak": None,
                                              "effective": None, "intensity": None})
    assert t.period_s == 3.0 and t.flash_s == pytest.approx(0.04)
    with pytest.raises(RequestError, match="give it once"):
        merge_targets("one flash every 3 s", {"every": "4s"})


# ------------------------------------------------------------------------------ requests

def test_defaults_are_recorded_and_aims_marked():
    req = make_request("one flash every 3 s")
    assert req.supply_v == 3.0 and req.supply_end_v is None
    assert req.families == ("hc", "timer555")
    assert req.led.key == "red"
    assert req.r_series == "E24" and req.c_series == "E12"
    assert req.r_min_ohm == 1e3 and req.r_max_ohm == 10e6
    assert req.c_min_f == pytest.approx(1e-9) and req.c_max_f == pytest.approx(1e-3)
    assert {"supply", "family", "led", "series", "cap_series"} <= set(req.defaults)
    aims = req.aims()
    assert aims["period_s"] == (3.0, True)
    assert aims["flash_s"] == (ASSUMED_FLASH_S, False)
    assert aims["led_peak_a"] == (ASSUMED_PEAK_A, False)
    a = req.assumptions()
    assert a["aims"]["flash_s"]["stated"] is False


def test_supply_range_and_family_any():
    req = make_request("every 3 s", supply="2.7V..1.8V", family="any")
    assert (req.supply_v, req.supply_end_v) == (2.7, 1.8)
    assert set(req.families) == {"hc", "ahc", "lvc", "4000n", "4000w", "timer555"}


def test_family_decides_cores():
    req = make_request("every 3 s", family="lvc")
    assert "timer555" not in req.cores
    req = make_request("every 3 s", family="timer555")
    assert req.cores == ("timer555",)
    with pytest.raises(RequestError, match="timer555"):
        make_request("every 3 s", family="hc", cores="timer555")


def test_rising_supply_range_is_refused():
    with pytest.raises(RequestError, match="full to the end"):
        make_request("every 3 s", supply="1.8V..2.7V")


def test_reversed_cap_range_is_refused_in_one_line():
    with pytest.raises(RequestError) as info:
        make_request("every 3 s", cap_range="1u..1n")
    msg = str(info.value)
    assert msg == "--cap-range 1u..1n: write the range from small to large, e.g. 1n..1m"
    req = make_request("every 3 s", cap_range="1n..1u")
    assert (req.c_min_f, req.c_max_f) == (pytest.approx(1e-9), pytest.approx(1e-6))
    assert "cap_range" not in req.defaults


def test_assumed_flash_shrinks_to_a_quarter_of_a_short_period():
    from pulsepick.request import ASSUMED_FLASH_SHARE

    assert ASSUMED_FLASH_SHARE == 0.25
    req = make_request("every 0.1 s")  # 50 ms would be half the period: 25 ms instead
    assert req.flash_s == pytest.approx(0.025, rel=1e-12) and req.flash_shortened
    assert req.aims()["flash_s"] == (pytest.approx(0.025, rel=1e-12), False)
    req = make_request("every 3 s")
    assert req.flash_s == ASSUMED_FLASH_S and not req.flash_shortened
    req = make_request("every 0.1 s, for 80 ms")  # a stated flash is kept as asked
    assert req.flash_s == pytest.approx(0.08, rel=1e-12) and not req.flash_shortened


def test_every_option_problem_is_reported_at_once():
    with pytest.raises(RequestError) as info:
        make_request("every 3 s", family="ttl", led="purple", timing_cap="paper",
                     stages="direct,sparkle")
    msg = str(info.value)
    for word in ("--family", "--led", "--timing-cap", "--stages"):
        assert word in msg


def test_intensity_needs_an_led_with_intensity_data():
    # the amber row of data/parts/leds.csv has no intensity figure
    with pytest.raises(RequestError, match="intensity"):
        make_request("every 4 s, 200 mcd", led="amber")
    assert make_request("every 4 s, 200 mcd", led="white").targets.intensity_cd == 0.2


def test_timing_cap_words():
    assert make_request("every 3 s", timing_cap="film").timing_caps == ("film-pet", "film-pp")
    assert make_request("every 3 s", timing_cap="c0g").timing_caps == ("c0g",)


# ------------------------------------------------------------------------------ stock

DRAWER = """# the community garden's parts drawer
kind,value,qty,dielectric
R,1M,4
resistor,4k7,
C,2u2,2,film
capacitor,100u,3,electrolytic
C,10n,0,c0g
"""


def test_stock_file_reads():
    stock = parse_stock(DRAWER, "drawer.csv")
    assert stock.resistors() == (4700.0, 1e6)
    assert stock.count("R", 1e6) == 4
    assert stock.count("R", 4700.0) is None  # empty qty: plenty
    assert stock.count("C", 10e-9) == 0
    caps = stock.capacitors(("film-pet", "film-pp", "electrolytic", "c0g"))
    values = {round(v, 12) for v, _ in caps}
    assert values == {2.2e-6, 100e-6}  # the 10 nF line has none in the drawer


@pytest.mark.parametrize("row, word", [
    ("X,4k7,1", "kind"),
    ("R,4q7,1", "line 3"),
    ("R,4k7,many", "qty"),
    ("C,1u,1,paper", "dielectric"),
    ("R,4k7,1,film", "no dielectric"),
])
def test_bad_stock_rows_are_named(row, word):
    text = "# drawer\nkind,value,qty,dielectric\n" + row + "\n"
    with pytest.raises(RequestError) as info:
        parse_stock(text, "drawer.csv")
    assert word in str(info.value)
    assert "drawer.csv" in str(info.value)


def test_bad_stock_header():
    with pytest.raises(RequestError, match="missing value"):
        parse_stock("kind,amount\nR,4k7\n", "drawer.csv")


def test_stock_file_on_disk(tmp_path):
    path = tmp_path / "drawer.csv"
    path.write_text(DRAWER, encoding="utf-8")
    req = make_request("every 3 s", stock=str(path))
    assert req.stock is not None and req.stock.source == str(path)
    with pytest.raises(RequestError, match="cannot read the stock file"):
        read_stock(str(tmp_path / "missing.csv"))


def test_period_is_positive_and_finite():
    with pytest.raises(RequestError):
        parse_phrase("every 0 s")
    assert math.isfinite(parse_phrase("every 1e3 s").period_s)
