"""Day charging, multi-day runs, and the irradiance profiles they use."""

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from pulsepick.analysis.day import (
    ChargePath,
    NightWindow,
    _Solver,
    charge_current,
    equilibrium_voltage,
    operating_point,
    simulate_day,
    simulate_days,
)
from pulsepick.analysis.irradiance import (
    WEATHER_WORDS,
    Profile,
    get_profile,
    irradiance_at,
    load_profile_csv,
    parse_profile_text,
    parse_weather,
)
from pulsepick.errors import RequestError
from pulsepick.parts.diode import get_diode
from pulsepick.parts.panel import get_panel
from pulsepick.parts.storage import custom_storage, get_storage

DARK = Profile(name="dark", hours=np.array([0.0, 24.0]), irradiance_w_m2=np.array([0.0, 0.0]))


# --------------------------------------------------------------------------- the charge path

@pytest.mark.parametrize("diode", ["schottky", "si"])
@pytest.mark.parametrize("bleed", [math.inf, 220e3])
def test_operating_point_solves_panel_and_diode_together(diode, bleed):
    path = ChargePath(get_panel("5v60ma"), get_diode(diode), bleed_ohm=bleed)
    d = get_diode(diode)
    for g in (1000.0, 100.0, 5.0):
        for v_store in (0.0, 1.5, 2.7, 3.5):
            op = operating_point(path, g, v_store)
            if op.charge_a <= 0:
                continue
            # Kirchhoff at the panel node, with the panel's own curve ...
            assert path.panel.current(op.panel_v, g) == pytest.approx(
                op.charge_a + op.bleed_a, rel=1e-9, abs=1e-12)
            # ... and the diode's Shockley curve across panel node minus storage.
            assert d.voltage(op.charge_a) == pytest.approx(op.panel_v - v_store, abs=1e-9)


def test_charge_slope_matches_a_finite_difference():
    path = ChargePath(get_panel("5v60ma"), get_diode("schottky"), bleed_ohm=1e6)
    for v in (1.0, 3.8, 4.5):
        op = operating_point(path, 800.0, v)
        h = 1e-6
        fd = (charge_current(path, 800.0, v + h) - charge_current(path, 800.0, v - h)) / (2 * h)
        assert op.dcharge_dv == pytest.approx(fd, rel=1e-4, abs=1e-9)


def test_reverse_biased_diode_leaks_out_of_the_storage():
    d = get_diode("schottky")
    path = ChargePath(get_panel("5v60ma"), d)
    op = operating_point(path, 0.0, 2.5)
    assert op.charge_a == pytest.approx(-float(d.reverse_current(2.5, "typ")), rel=1e-9)
    assert charge_current(path, np.array([0.0, 0.0]), np.array([1.0, 2.0])).shape == (2,)


def test_equilibrium_voltage_balances_charge_and_draw():
    store = custom_storage(1.0, v_rated_v=5.5, leak_a=0.0)
    path = ChargePath(get_panel("3v20ma"), get_diode("si"))
    for g, load in ((2.0, 20e-6), (0.5, 5e-6)):
        v_eq = equilibrium_voltage(path, store, g, load)
        assert 0 < v_eq < path.panel.voc(g)
        assert charge_current(path, g, v_eq) == pytest.approx(load, rel=1e-3)


# --------------------------------------------------------------------------- one day

def _reference_day(path, store, profile, v0, load_a, t0=6 * 3600.0, t1=18 * 3600.0):
    """scipy's Radau on the same equation (an independent integrator)."""
    solver = _Solver(path)
    c = store.capacitance_f
    clamp = path.clamp_v

    def rhs(t, y):
        net = solver.solve(irradiance_at(profile, t), y[0]).charge_a - load_a
        if clamp is not None and y[0] >= clamp and net > 0:
            return [0.0]
        return [net / c]

    return solve_ivp(rhs, (t0, t1), [v0], method="Radau", rtol=1e-8, atol=1e-9,
                     max_step=120.0, dense_output=True)


@pytest.mark.parametrize(
    "weather, panel, diode, bleed",
    [("overcast", "5v60ma", "si", 470e3), ("dim", "2v40ma", "schottky", math.inf),
     ("clear", "3v20ma", "si", 1e6)],
)
def test_day_matches_scipy_radau(weather, panel, diode, bleed):
    # Linearly implicit Euler with voltage-limited steps against Radau (rtol 1e-8): the
    # voltage at dusk and the highest voltage agree within 0.5 %.
    store = custom_storage(1.0, v_rated_v=5.5, leak_a=0.0)
    path = ChargePath(get_panel(panel), get_diode(diode), bleed_ohm=bleed)
    prof = get_profile(weather)
    ours = simulate_day(store, path, prof, v_start_v=0.0, day_load=3e-6)
    ref = _reference_day(path, store, prof, 0.0, 3e-6)
    t = np.linspace(6 * 3600.0, 18 * 3600.0, 4001)
    v_ref = ref.sol(t)[0]
    assert ours.v_end_v == pytest.approx(v_ref[-1], rel=0.005)
    assert ours.v_max_v == pytest.approx(v_ref.max(), rel=0.005)


def test_time_to_full_with_clamp_matches_scipy():
    store = get_storage("5f-2v7")
    path = ChargePath(get_panel("5v60ma"), get_diode("schottky"), clamp_v=2.5)
    prof = get_profile("overcast")
    ours = simulate_day(store, path, prof, v_start_v=0.0)
    ref = _reference_day(path, store, prof, 0.0, 0.0)
    t = np.linspace(6 * 3600.0, 18 * 3600.0, 200001)
    v = ref.sol(t)[0]
    t_full = t[np.argmax(v >= 2.5 - 1e-6)] - 6 * 3600.0
    assert ours.full
    assert ours.time_to_full_s == pytest.approx(t_full, rel=0.01)
    assert ours.v_max_v == pytest.approx(2.5, abs=1e-12)  # never above the clamp


def test_charge_balance_of_a_clamped_day():
    # Charge in = C·ΔV + clamp + load + leakage (conservation), within 1 %.
    store = get_storage("5f-2v7")
    path = ChargePath(get_panel("5v60ma"), get_diode("schottky"), clamp_v=2.5)
    day = simulate_day(store, path, get_profile("clear"), v_start_v=1.0, day_load=2e-6)
    stored = store.capacitance_f * (day.v_end_v - day.v_start_v)
    out = stored + day.charge_clamp_c + day.charge_load_c + day.charge_leak_c
    assert day.charge_in_c == pytest.approx(out, rel=0.01)
    assert day.charge_clamp_c > 0
    # the clamp's peak dissipation stays under V_clamp times the panel's full-sun Isc
    assert 0 < day.clamp_peak_w < 2.5 * 0.060


@pytest.mark.parametrize("weather, start", [("clear", 0.0), ("overcast", 1.0), ("dim", 0.3)])
def test_unclamped_day_accounting_adds_up(weather, start):
    # Conservation of charge (C·dV/dt = I_in - I_load - I_leak, summed over the steps):
    # charge_in = C·ΔV + leaked + delivered within 0.5 %, with a leaky storage and a day load.
    store = get_storage("1f-5v5")
    path = ChargePath(get_panel("5v60ma"), get_diode("schottky"))
    day = simulate_day(store, path, get_profile(weather), v_start_v=start, day_load=5e-6)
    stored = store.capacitance_f * (day.v_end_v - day.v_start_v)
    out = stored + day.charge_leak_c + day.charge_load_c + day.charge_clamp_c
    assert day.charge_leak_c > 0 and day.charge_load_c > 0
    assert day.charge_in_c == pytest.approx(out, rel=0.005)
    # energy in lies between the charge times the lowest and the highest voltage of the day
    assert min(day.v_start_v, day.v_end_v) * day.charge_in_c <= day.energy_in_j
    assert day.energy_in_j <= day.v_max_v * day.charge_in_c


def test_dark_day_only_drains():
    store = custom_storage(1.0, leak_a=0.0)
    path = ChargePath(get_panel("5v60ma"), get_diode("si"))
    day = simulate_day(store, path, DARK, v_start_v=2.0, day_load=10e-6)
    # C dV = I dt with 10 µA for 12 h (plus a few nA of diode leakage): 0.432 V (hand)
    assert day.v_start_v - day.v_end_v == pytest.approx(10e-6 * 43200.0 / 1.0, rel=0.005)
    assert not day.full and day.time_to_full_s is None


# --------------------------------------------------------------------------- many days

def test_night_window_centred_on_midnight():
    w = NightWindow.centred(12.5 * 3600)
    assert w.dusk_s == pytest.approx(17.75 * 3600)  # 17:45 (hand)
    assert w.dawn_s == pytest.approx(6.25 * 3600)  # 06:15
    with pytest.raises(RequestError, match="under 24 h"):
        NightWindow.centred(25 * 3600)


def test_days_cycle_the_weather_and_chain_the_voltages():
    res = simulate_days(get_storage("5f-2v7"), get_panel("5v60ma"), get_diode("schottky"),
                        ["clear", "overcast", "dim"], 30e-6, NightWindow.centred(12 * 3600),
                        0.0, days=7, clamp_v=2.5, day_load=2e-6, stop_at_v=1.8)
    assert [r.weather for r in res.rows] == ["clear", "overcast", "dim"] * 2 + ["clear"]
    for a, b in zip(res.rows, res.rows[1:], strict=False):
        assert b.v_dawn_v == pytest.approx(a.v_next_dawn_v)
    assert res.rows[0].v_dawn_v == 0.0
    assert all(r.v_max_v <= 2.5 + 1e-12 for r in res.rows)
    assert res.nights_lasted == 7
    # no over-voltage caution with the clamp under the rating
    assert not any("above the storage rating" in c for c in res.cautions)


def test_autonomy_follows_the_backup_time_formula():
    # With no leakage and the same 100 µA by day and night the storage runs
    # T = C (V0 - V1) / I = 20 F x 0.9 V / 100 µA = 50 h from dusk (backup-time formula,
    # ref:panasonic-gold-cap): the nights 0-12 h and 24-36 h last, the one from 48 h stops at 50 h.
    store = custom_storage(20.0, v_rated_v=2.7, leak_a=0.0)
    res = simulate_days(store, get_panel("5v60ma"), get_diode("si"), [DARK], 100e-6,
                        NightWindow.centred(12 * 3600), 2.7, days=1, day_load=100e-6,
                        stop_at_v=1.8, recovery=False)
    assert res.autonomy_nights == 2
    # and with 30 F (75 h: nights at 0, 24 and 48 h last, 72-84 h stops at 75 h): 3
    store = custom_storage(30.0, v_rated_v=2.7, leak_a=0.0)
    res = simulate_days(store, get_panel("5v60ma"), get_diode("si"), [DARK], 100e-6,
                        NightWindow.centred(12 * 3600), 2.7, days=1, day_load=100e-6,
                        stop_at_v=1.8, recovery=False)
    assert res.autonomy_nights == 3


def test_a_failing_night_reports_its_runtime():
    # 0.47 F from 2.2 V at dusk to 1.8 V at 20 µA: 0.47 x 0.4 / 20 µA = 9400 s (backup-time
    # formula, ref:panasonic-gold-cap), well inside a 12 h night; the light stops, then the storage
    # keeps draining until dawn.
    store = custom_storage(0.47, leak_a=0.0)
    res = simulate_days(store, get_panel("5v60ma"), get_diode("si"), [DARK], 20e-6,
                        NightWindow.centred(12 * 3600), 2.2, days=1, stop_at_v=1.8,
                        autonomy=False, recovery=False)
    row = res.rows[0]
    assert not row.lasted
    assert row.runtime_s == pytest.approx(9400.0, rel=0.005)
    assert row.v_next_dawn_v < 1.8


def test_weak_light_never_restarts_when_voc_minus_diode_is_under_the_stop():
    # Practice: the panel's Voc in the weakest light minus the diode drop must exceed the
    # stop voltage, or the light never restarts after a dark day.
    panel, diode = get_panel("2v40ma"), get_diode("schottky")
    res = simulate_days(get_storage("1f-2v7"), panel, diode, ["dim"], 10e-6,
                        NightWindow.centred(12 * 3600), 0.0, stop_at_v=1.8, autonomy=False)
    rec = res.recovery
    peak = get_profile("dim").peak_w_m2
    assert rec.panel_voc_v == pytest.approx(panel.voc(peak), rel=1e-9)
    assert rec.diode_drop_v == pytest.approx(diode.voltage(1e-6), rel=1e-9)
    assert rec.panel_voc_v - rec.diode_drop_v < 1.8
    assert rec.never_restarts and not rec.restarts
    assert rec.v_dusk_from_empty_v < 1.8


def test_strong_panel_restarts_from_empty():
    res = simulate_days(get_storage("1f-2v7"), get_panel("5v60ma"), get_diode("schottky"),
                        ["overcast"], 10e-6, NightWindow.centred(12 * 3600), 0.0,
                        clamp_v=2.5, stop_at_v=1.8, autonomy=False)
    assert res.recovery.restarts and not res.recovery.never_restarts
    assert res.recovery.weather == "dim"  # the weakest of the run, or dim at most


def test_over_voltage_caution_and_proposed_clamp():
    panel = get_panel("5v60ma")
    res = simulate_days(get_storage("5f-2v7"), panel, get_diode("schottky"), ["clear"], 30e-6,
                        NightWindow.centred(12 * 3600), 0.0, stop_at_v=1.8, autonomy=False,
                        recovery=False)
    assert res.v_possible_v > 2.7
    assert any("above the storage rating 2.70 V" in c for c in res.cautions)
    # 8 % under 2.7 V rounded down to 0.1 V: 2.4 V (the module's rule); dissipation at the
    # panel's 60 mA Isc: 2.4 V x 60 mA = 144 mW (hand).
    assert res.proposed_clamp_v == pytest.approx(2.4)
    assert res.proposed_clamp_w == pytest.approx(0.144, rel=1e-3)
    assert any("2.4 V" in c and "144 mW" in c for c in res.cautions)


def test_series_stack_without_balancing_gets_the_caution():
    store = custom_storage(1.0, v_rated_v=5.4, cells=2)
    res = simulate_days(store, get_panel("5v60ma"), get_diode("schottky"), ["clear"], 10e-6,
                        NightWindow.centred(12 * 3600), 0.0, stop_at_v=1.8, autonomy=False,
                        recovery=False)
    assert any("balancing" in c for c in res.cautions)


def test_clamp_above_the_panel_is_flagged():
    res = simulate_days(get_storage("1f-5v5"), get_panel("2v40ma"), get_diode("schottky"),
                        ["clear"], 10e-6, NightWindow.centred(12 * 3600), 0.0, clamp_v=5.0,
                        stop_at_v=1.0, autonomy=False, recovery=False)
    assert any("never conducts" in w for w in res.warnings)


@pytest.mark.parametrize(
    "kwargs, words",
    [
        ({"weather": ["sunny"]}, "unknown weather 'sunny'; accepted: clear, overcast, dim"),
        ({"v_start_v": -1.0}, "start voltage -1.0 V must be a voltage of 0 V or more"),
        ({"days": 0}, "days 0: accepted 1 to 366"),
        ({"stop_at_v": -0.5}, "stop voltage"),
        ({"leak_level": "worst"}, "accepted: settled, max"),
    ],
)
def test_bad_requests_are_refused(kwargs, words):
    args = {"weather": ["clear"], "v_start_v": 0.0}
    args.update(kwargs)
    with pytest.raises(RequestError, match=words):
        simulate_days(get_storage("1f-2v7"), get_panel("5v60ma"), get_diode("si"),
                      args.pop("weather"), 10e-6, NightWindow.centred(12 * 3600),
                      args.pop("v_start_v"), **args)


# --------------------------------------------------------------------------- profiles

def test_shipped_profiles():
    for word in WEATHER_WORDS:
        prof = get_profile(word)
        assert prof.hours[0] == 0 and prof.hours[-1] == 24
        assert "illustrative" in prof.source
    # overcast and dim are fractions of the clear shape (the files' stated construction)
    clear, overcast = get_profile("clear"), get_profile("overcast")
    assert overcast.peak_w_m2 == pytest.approx(0.2 * clear.peak_w_m2, rel=0.01)
    assert clear.insolation_wh_m2 > overcast.insolation_wh_m2 > get_profile("dim").insolation_wh_m2


def test_irradiance_is_linear_between_hours_and_repeats_daily():
    prof = Profile("p", np.array([6.0, 12.0, 18.0]), np.array([0.0, 600.0, 0.0]))
    assert irradiance_at(prof, 9 * 3600.0) == pytest.approx(300.0)
    assert irradiance_at(prof, (24 + 9) * 3600.0) == pytest.approx(300.0)
    assert irradiance_at(prof, 3 * 3600.0) == 0.0  # outside the listed hours: dark
    assert irradiance_at(prof, np.array([0.0, 12 * 3600.0])).tolist() == [0.0, 600.0]


def test_user_profile_round_trip(tmp_path):
    f = tmp_path / "garden.csv"
    f.write_text("# community garden path, south wall\nhour,irradiance_w_m2\n"
                 "6,0\n9,250\n12,400\n15,250\n18,0\n", encoding="utf-8")
    prof = load_profile_csv(f)
    assert prof.name == "garden.csv"
    assert irradiance_at(prof, 10.5 * 3600) == pytest.approx(325.0)


@pytest.mark.parametrize(
    "text, words",
    [
        ("hour,irradiance_w_m2\n6,0\n12,-5\n", "line 3: irradiance -5 W/m2 is negative"),
        ("hour,irradiance_w_m2\n6,0\n12,abc\n", "line 3: irradiance 'abc' is not a number"),
        ("hour,light\n6,0\n12,5\n", "missing column irradiance_w_m2"),
        ("hour,irradiance_w_m2,cloud\n6,0,1\n", "unknown column 'cloud'"),
        ("hour,irradiance_w_m2\n6,0\n6,5\n", "line 3: hour 6 does not come after 6"),
        ("hour,irradiance_w_m2\n6,0\n25,5\n", "line 3: hour 25 is outside 0..24"),
        ("hour,irradiance_w_m2\n6,0,1\n", "line 2: 3 fields where the header has 2"),
        ("hour,irradiance_w_m2\n6,0\n", "1 data row"),
        ("# only a comment\n", "no header row"),
        ("hour,irradiance_w_m2\n6,0\n12,5000\n", "above 1500"),
    ],
)
def test_bad_profiles_name_the_row(text, words):
    with pytest.raises(RequestError, match=words):
        parse_profile_text(text, "p.csv")


def test_missing_profile_file(tmp_path):
    with pytest.raises(RequestError, match="cannot read"):
        load_profile_csv(tmp_path / "nope.csv")


def test_weather_words():
    assert parse_weather("clear, Overcast,dim") == ["clear", "overcast", "dim"]
    with pytest.raises(RequestError, match="unknown weather 'sunny'; accepted"):
        parse_weather("clear,sunny")
    with pytest.raises(RequestError, match="unknown weather"):
        get_profile("foggy")


def test_a_proposed_clamp_under_the_start_says_where_the_night_then_starts():
    from pulsepick.analysis.overvoltage import clamp_advice

    # 5 V panel on a 2.7 V cell: a 2.4 V clamp is proposed (8 % under the rating, rounded
    # down); a night run from 2.6 V would start above it
    args = (get_storage("5f-2v7"), get_panel("5v60ma"), get_diode("schottky"))
    advice = clamp_advice(*args, start_v=2.6)
    assert advice.proposed_clamp_v == pytest.approx(2.4)
    assert "under the 2.60 V the night is run from" in advice.proposal
    assert "night is run from" not in clamp_advice(*args, start_v=2.4).proposal
