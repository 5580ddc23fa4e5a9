"""IEC 60063 series tables and the vectorised look-ups in pulsepick.series."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pulsepick.errors import PulsepickError, SeriesError
from pulsepick.series import (
    SERIES_NAMES,
    get_series,
    pick_error_pct,
    series_for_tolerance,
    which_series,
)
from pulsepick.tables import load_table

# --- the tables themselves ---------------------------------------------------------------------


def test_series_lengths():
    # IEC 60063: series En holds n values per decade (ref:iec-60063, ref:g4usp-preferred-values, ref:e192-discrepancy-note)
    for name in SERIES_NAMES:
        assert len(get_series(name).mantissas) == int(name[1:])


def test_e24_keeps_its_published_departures_from_the_formula():
    # ref:iec-60063 (IEC 60063 E24 list) and check value 1: these eight E24 values differ from
    # round(10**(i/24), 1), which gives 2.6 2.9 3.2 3.5 3.8 4.2 4.6 8.3 at i = 10..16 and 22.
    e24 = get_series("E24").mantissas
    published = {10: 2.7, 11: 3.0, 12: 3.3, 13: 3.6, 14: 3.9, 15: 4.3, 16: 4.7, 22: 8.2}
    formula = {10: 2.6, 11: 2.9, 12: 3.2, 13: 3.5, 14: 3.8, 15: 4.2, 16: 4.6, 22: 8.3}
    for i, value in published.items():
        assert e24[i] == value
        assert round(10 ** (i / 24), 1) == formula[i]
    # every other E24 value equals the rounded formula (derived from ref:iec-60063)
    others = [i for i in range(24) if i not in published]
    assert all(e24[i] == round(10 ** (i / 24), 1) for i in others)


def test_e24_e12_e6_e3_lists():
    # ref:iec-60063 (IEC 60063 lists), check value 2
    assert get_series("E24").mantissas == (
        1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
        3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
    )
    assert get_series("E12").mantissas == (
        1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2,
    )
    assert get_series("E6").mantissas == (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)
    assert get_series("E3").mantissas == (1.0, 2.2, 4.7)


def test_e12_departures_from_the_formula():
    # ref:e-series-rounding-note lists the E12 values that differ from round(10**(i/12), 1)
    e12 = get_series("E12").mantissas
    differ = sorted(m for i, m in enumerate(e12) if m != round(10 ** (i / 12), 1))
    assert differ == [2.7, 3.3, 3.9, 4.7, 8.2]


@pytest.mark.parametrize("name", ["E48", "E96"])
def test_e48_e96_equal_the_rounded_formula(name):
    # ref:g4usp-preferred-values, ref:e192-discrepancy-note: E48 and E96 are exactly round(10**(i/n), 2), no exceptions
    n = int(name[1:])
    assert get_series(name).mantissas == tuple(round(10 ** (i / n), 2) for i in range(n))


def test_e96_published_list_spot_values():
    # ref:g4usp-preferred-values (E96 list): a few values read from the published table
    e96 = get_series("E96").mantissas
    assert (e96[0], e96[33], e96[65], e96[95]) == (1.00, 2.21, 4.75, 9.76)


def test_e192_has_9_20_at_index_185():
    # ref:e192-discrepancy-note and check value 4: E192[185] is 9.20, the formula gives 9.19
    e192 = get_series("E192").mantissas
    assert e192[185] == 9.20
    assert round(10 ** (185 / 192), 2) == 9.19
    # every other value equals the rounded formula (ref:e192-discrepancy-note)
    assert [i for i in range(192) if e192[i] != round(10 ** (i / 192), 2)] == [185]


def test_nesting():
    # ref:iec-60063, ref:g4usp-preferred-values: E3 = every 8th E24; E6 = every 2nd E12; E12 = every 2nd E24;
    # E48 = every 2nd E96; E96 = every 2nd E192
    m = {n: get_series(n).mantissas for n in SERIES_NAMES}
    assert m["E3"] == m["E24"][::8]
    assert m["E6"] == m["E12"][::2]
    assert m["E12"] == m["E24"][::2]
    assert m["E48"] == m["E96"][::2]
    assert m["E96"] == m["E192"][::2]


def test_series_tolerances():
    # ref:e-series-tolerances (check value 5): E6 20 %, E12 10 %, E24 5 %, E48 2 %, E96 1 %, E192 0.5 %;
    # E3 above 20 %, given as 40 % (ref:iec-60063, ref:e-series-tolerances)
    tolerances = {n: get_series(n).tolerance_pct for n in SERIES_NAMES}
    assert tolerances == {
        "E3": 40.0, "E6": 20.0, "E12": 10.0, "E24": 5.0, "E48": 2.0, "E96": 1.0, "E192": 0.5,
    }


def test_tables_describe_themselves():
    for name in SERIES_NAMES:
        table = load_table(f"e_series/{name}.csv")
        assert table.columns == ("index", "value", "source")
        assert any(note.startswith("tolerance_pct:") for note in table.notes)
        assert any("IEC 60063" in note for note in table.notes)
        assert all("IEC 60063" in row["source"] for row in table.rows)
        assert "IEC 60063" in get_series(name).source


def test_get_series_is_case_insensitive_and_cached():
    assert get_series("e24") is get_series("E24")
    assert get_series(" E96 ").name == "E96"


@pytest.mark.parametrize("bad", ["E25", "E7", "", "X", "24"])
def test_unknown_series_names_the_accepted_ones(bad):
    with pytest.raises(SeriesError) as info:
        get_series(bad)
    message = str(info.value)
    assert f"unknown series {bad!r}" in message
    assert "accepted: E3, E6, E12, E24, E48, E96, E192" in message
    assert "\n" not in message


# --- values over a range -----------------------------------------------------------------------


def test_e24_resistors_10_ohm_to_10_megohm():
    # 6 decades of 24 values plus the closing 10 MΩ: 6 * 24 + 1 = 145 (IEC 60063 E24, ref:iec-60063)
    values = get_series("E24").values(10.0, 10e6)
    assert len(values) == 145
    assert values[0] == 10.0 and values[-1] == 10e6
    assert np.all(np.diff(values) > 0)


def test_values_are_exact_decimals():
    e24 = get_series("E24")
    values = e24.values(0.1, 1e7)
    # 4.7 kΩ is exactly 4700.0 and 0.47 Ω is the same double as float("0.47")
    assert 4700.0 in values.tolist()
    assert 0.47 in values.tolist()
    assert 4.7e6 in values.tolist()
    e24c = e24.values(1e-12, 1e-6)
    assert 2.2e-9 in e24c.tolist() and 4.7e-7 in e24c.tolist()


def test_values_range_ends_included_and_empty_inside():
    e12 = get_series("E12")
    assert e12.values(1000.0, 1000.0).tolist() == [1000.0]
    assert e12.values(1001.0, 1100.0).tolist() == []


@pytest.mark.parametrize(
    ("lo", "hi"), [(0.0, 10.0), (-1.0, 10.0), (10.0, 1.0), (math.nan, 10.0), (1.0, math.inf)]
)
def test_bad_ranges(lo, hi):
    with pytest.raises(SeriesError) as info:
        get_series("E24").values(lo, hi)
    assert "\n" not in str(info.value)


# --- nearest, bracket, contains ------------------------------------------------------------------


def test_nearest_up_down_in_e24():
    # neighbours from the E24 list (ref:iec-60063)
    e24 = get_series("E24")
    assert e24.nearest(4650.0) == 4700.0
    assert e24.nearest(4650.0, "up") == 4700.0
    assert e24.nearest(4650.0, "down") == 4300.0
    assert e24.bracket(4650.0) == (4300.0, 4700.0)
    assert e24.bracket(4700.0) == (4700.0, 4700.0)


def test_nearest_uses_log_distance():
    # between E24 1.0 and 1.1 (ref:iec-60063) the geometric midpoint is sqrt(1.1) = 1.0488:
    # 1.049 is nearer 1.0 on a linear scale but nearer 1.1 by ratio, which is the rule here
    e24 = get_series("E24")
    assert e24.nearest(1.049) == 1.1
    assert e24.nearest(1.048) == 1.0


def test_nearest_crosses_decades():
    # E24 ends at 9.1 and starts the next decade at 10 (ref:iec-60063)
    e24 = get_series("E24")
    assert e24.nearest(9.8e3) == 10e3
    assert e24.nearest(9.8e3, "down") == 9.1e3
    assert e24.bracket(0.95) == (0.91, 1.0)


@pytest.mark.parametrize("name", SERIES_NAMES)
def test_series_values_map_to_themselves(name):
    series = get_series(name)
    values = series.values(1e-13, 1e10)
    for rounding in ("nearest", "up", "down"):
        assert np.array_equal(series.nearest(values, rounding), values)
    assert np.all(series.contains(values))
    below, above = series.bracket(values)
    assert np.array_equal(below, values) and np.array_equal(above, values)
    # float noise around a series value still counts as that value
    noisy = values * (1 + 1e-13)
    assert np.array_equal(series.nearest(noisy, "up"), values)


def test_vectorised_keeps_shape():
    e12 = get_series("E12")
    x = np.array([[1.1e3, 2.0e3], [3.0e-9, 9.0e-9]])
    picked = e12.nearest(x)
    assert picked.shape == (2, 2)
    # E12 neighbours (ref:iec-60063), ratios by hand: 1.1k -> 1.2k (1.2/1.1 = 1.091 < 1.1),
    # 2k -> 2.2k (1.1 < 2/1.8 = 1.111), 3n -> 3n3 (1.1 < 1.111), 9n -> 8n2 (1.098 < 1.111)
    assert picked.tolist() == [[1.2e3, 2.2e3], [3.3e-9, 8.2e-9]]
    below, above = e12.bracket(x)
    assert below.shape == above.shape == (2, 2)


@settings(max_examples=300, derandomize=True, deadline=None)
@given(
    name=st.sampled_from(SERIES_NAMES),
    x=st.floats(min_value=1e-12, max_value=1e12, allow_nan=False, allow_infinity=False),
)
def test_bracket_property(name, x):
    series = get_series(name)
    below, above = series.bracket(x)
    assert below <= x * (1 + 1e-9) and above >= x * (1 - 1e-9)
    # no series value lies strictly between the two neighbours
    assert len(series.values(below, above)) <= 2
    assert series.nearest(x) in (below, above)
    assert series.nearest(x, "up") == above and series.nearest(x, "down") == below


def test_contains_and_which_series():
    # 4.7 is in E3..E24 (ref:iec-60063) and in E192 (4.70 = round(10**(129/192), 2), ref:e192-discrepancy-note); not in E48/E96
    assert which_series(4700.0) == ["E3", "E6", "E12", "E24", "E192"]
    # 4.75 is an E96 value (ref:g4usp-preferred-values), hence also E192 (E96 = every 2nd E192, ref:g4usp-preferred-values)
    assert which_series(4750.0) == ["E96", "E192"]
    assert which_series(4650.0) == []
    assert get_series("E24").contains(2.2e-9)
    assert not get_series("E24").contains(2.3e-9)


@pytest.mark.parametrize("bad", [0.0, -4.7, math.nan, math.inf, 1e30])
def test_nearest_refuses_impossible_values(bad):
    with pytest.raises(SeriesError) as info:
        get_series("E24").nearest(bad)
    assert "accepted: positive finite values" in str(info.value)


def test_unknown_rounding():
    with pytest.raises(SeriesError, match="accepted: nearest, up, down"):
        get_series("E24").nearest(1.0, "sideways")


def test_pick_error_pct():
    # (4700 - 4650) / 4650 * 100 = 1.0753 % (arithmetic)
    assert pick_error_pct(4700.0, 4650.0) == pytest.approx(1.075269, rel=1e-6)
    errors = pick_error_pct(np.array([4300.0, 4700.0]), np.array([4650.0, 4700.0]))
    assert errors == pytest.approx([-7.526882, 0.0], abs=1e-6)


@pytest.mark.parametrize(
    ("tolerance", "expected"),
    # the coarsest series whose usual tolerance fits (ref:iec-60063, ref:e-series-tolerances)
    [(50, "E3"), (20, "E6"), (10, "E12"), (5, "E24"), (3, "E48"), (2, "E48"), (1, "E96"),
     (0.5, "E192"), (0.1, "E192")],
)
def test_series_for_tolerance(tolerance, expected):
    assert series_for_tolerance(tolerance) == expected


@pytest.mark.parametrize("bad", [0, -5, math.nan, "5"])
def test_series_for_tolerance_refuses(bad):
    with pytest.raises(PulsepickError):
        series_for_tolerance(bad)
