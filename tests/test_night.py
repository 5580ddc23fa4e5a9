"""The night simulation, load curves and cautions (pure API)."""

import math
from datetime import datetime

import numpy as np
import pytest

from pulsepick.analysis.cautions import (
    GENERAL_CAUTIONS,
    NOT_A_SAFETY_LIGHT,
    SERIES_BALANCING,
    storage_cautions,
)
from pulsepick.analysis.night import TIMELINE_POINTS, simulate_night, simulate_until_stop
from pulsepick.engine.loadcurve import LoadCurve, constant_load
from pulsepick.errors import CircuitError, PartError, RequestError
from pulsepick.parts.storage import custom_storage, get_storage

NIGHT_12H = 12 * 3600.0

# Backup-time worked example, Panasonic Gold Capacitors technical guide (ref:panasonic-gold-cap):
# T = C (V0 - V1) / (I + IL), C = 0.2 F, V0 = 2.5 V, V1 = 1.8 V, I = 10 uA, IL = 0.2 uA.
GOLD_C, GOLD_V0, GOLD_V1, GOLD_I, GOLD_IL = 0.2, 2.5, 1.8, 10e-6, 0.2e-6
GOLD_T_S = 13_725.0  # s, as printed in ref:panasonic-gold-cap


def fake_blinker(stop_v: float = 2.0) -> LoadCurve:
    """A made-up blinker for tests (demo numbers, not a reference): dark below ``stop_v``."""
    v = np.linspace(1.0, 3.0, 201)
    lit = v >= stop_v - 1e-9
    period = np.where(lit, 2.0 + (3.0 - v), np.nan)
    return LoadCurve(
        label="fake blinker",
        supply_v=v,
        supply_avg_a=5e-6 + 10e-6 * (v - 1.0),
        period_s=period,
        flash_s=np.where(lit, 0.05, np.nan),
        led_peak_a=np.where(lit, 10e-3 * (v - 1.0), np.nan),
        effective_a=np.where(lit, 2e-3 * (v - 1.0), np.nan),
        effective_cd=np.where(lit, 0.05 * (v - 1.0), np.nan),
        lit=lit,
        notes=("made-up demo curve",),
    )


# ------------------------------------------------------------------ the backup-time check

def test_constant_current_night_reproduces_the_backup_time_formula():
    result = simulate_night(
        custom_storage(GOLD_C), GOLD_V0, NIGHT_12H, None,
        extra_load_a=GOLD_I, storage_leak_a=GOLD_IL, stop_at_v=GOLD_V1,
    )
    assert not result.lasts_the_night
    assert result.runtime_s == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap, within 0.5 %
    assert result.v_end_v == pytest.approx(GOLD_V1, abs=1e-9)
    assert result.success


def test_backup_time_with_the_current_as_a_constant_load_curve():
    result = simulate_night(
        custom_storage(GOLD_C), GOLD_V0, NIGHT_12H, constant_load(GOLD_I),
        storage_leak_a=GOLD_IL, stop_at_v=GOLD_V1,
    )
    assert result.runtime_s == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap
    shares = result.shares()
    # charge shares follow the currents: I / (I + IL) (from the same formula)
    assert shares["circuit"] == pytest.approx(GOLD_I / (GOLD_I + GOLD_IL), rel=1e-6)
    assert shares["extra_load"] == 0.0


def test_open_ended_budget_reproduces_the_backup_time():
    result = simulate_until_stop(
        custom_storage(GOLD_C), GOLD_V0, None, stop_at_v=GOLD_V1,
        extra_load_a=GOLD_I, storage_leak_a=GOLD_IL,
    )
    assert result.runtime_s == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap
    assert result.duration_s > result.runtime_s
    assert result.stops_at is None


def test_usable_energy_fraction_2v7_to_1v8():
    # 1 - (1.8/2.7)^2 = 0.556 (E = C V^2 / 2; practice notes section C, derived)
    result = simulate_night(custom_storage(1.0), 2.7, NIGHT_12H, None,
                            extra_load_a=50e-6, storage_leak_a=0.0, stop_at_v=1.8)
    assert not result.lasts_the_night
    assert result.usable_energy_fraction == pytest.approx(0.556, abs=5e-4)
    # energy used is the drop in C V^2 / 2: 0.5 * 1 F * (2.7^2 - 1.8^2) = 2.025 J
    assert result.energy_used_j == pytest.approx(2.025, rel=1e-6)


def test_flashes_equal_runtime_over_period():
    period = 2.0  # s, a fixed-period load (check: flashes = runtime / period)
    stopped = simulate_night(custom_storage(0.47), 2.7, NIGHT_12H,
                             constant_load(30e-6, period_s=period),
                             storage_leak_a=0.0, stop_at_v=1.8)
    assert not stopped.lasts_the_night
    assert stopped.flashes == pytest.approx(stopped.runtime_s / period, rel=0.005)
    lasting = simulate_night(get_storage("5f-2v7"), 2.7, NIGHT_12H,
                             constant_load(20e-6, period_s=period), stop_at_v=1.8)
    assert lasting.lasts_the_night
    assert lasting.runtime_s == NIGHT_12H
    assert lasting.flashes == pytest.approx(NIGHT_12H / period, rel=0.005)


def test_lasting_night_ends_where_the_straight_line_says():
    # Constant current: V_end = V0 - I T / C (from C dV/dt = -I).
    result = simulate_night(custom_storage(5.0), 2.6, NIGHT_12H, None,
                            extra_load_a=12e-6, storage_leak_a=0.0)
    assert result.lasts_the_night
    assert result.v_end_v == pytest.approx(2.6 - 12e-6 * NIGHT_12H / 5.0, abs=1e-6)
    assert result.stops_at is None


def test_voltage_proportional_leakage_decays_exponentially():
    # Leakage alone, in proportion to voltage and fully settled: V = V0 exp(-t IL / (C Vr)),
    # the solution of C dV/dt = -IL V / Vr.
    cap = get_storage("1f-2v5")
    result = simulate_night(cap, 2.5, NIGHT_12H, None, t_since_charge_s=1e9, leak_level="max")
    expected = 2.5 * math.exp(-NIGHT_12H * cap.leak_max_a / (cap.capacitance_f * cap.v_rated_v))
    assert result.v_end_v == pytest.approx(expected, rel=1e-5)


def test_drained_charge_balances_the_voltage_drop():
    # Charge conservation: the sum of the drains equals C (V0 - V_end).
    cap = get_storage("1f-2v7")
    result = simulate_night(cap, 2.7, NIGHT_12H, fake_blinker(), extra_load_a=3e-6)
    assert result.charge_total_c == pytest.approx(
        cap.capacitance_f * (2.7 - result.v_end_v), rel=1e-6)
    assert sum(result.shares().values()) == pytest.approx(1.0, rel=1e-12)


# ------------------------------------------------------------------ the light stops

def test_light_stops_where_the_load_curve_goes_dark():
    dusk = datetime(2026, 12, 21, 17, 0)
    result = simulate_night(custom_storage(0.47), 2.7, 15 * 3600.0, fake_blinker(2.0),
                            dusk=dusk, storage_leak_a=0.0)
    assert not result.lasts_the_night
    assert result.v_stop_v == pytest.approx(2.0, abs=1e-9)
    assert result.v_end_v == pytest.approx(2.0, abs=1e-9)
    assert "LED" in result.stop_reason
    hours, minutes = map(int, result.stops_at.split(":"))
    elapsed = ((hours - 17) % 24) * 3600 + minutes * 60
    assert elapsed == pytest.approx(result.runtime_s, abs=31)
    assert result.dawn_clock == "08:00"


def test_user_stop_above_the_light_stop_wins():
    result = simulate_night(custom_storage(0.47), 2.7, NIGHT_12H, fake_blinker(2.0),
                            stop_at_v=2.3, storage_leak_a=0.0)
    assert result.v_stop_v == 2.3
    assert "stop voltage" in result.stop_reason


def test_figures_at_dusk_midnight_and_dawn():
    result = simulate_night(custom_storage(0.47), 2.7, NIGHT_12H, fake_blinker(2.0),
                            storage_leak_a=0.0)
    dusk, midnight, dawn = result.figures
    assert [p.label for p in result.figures] == ["dusk", "midnight", "dawn"]
    assert midnight.t_s == NIGHT_12H / 2 and dawn.t_s == NIGHT_12H
    assert dusk.lit and dusk.v_v == 2.7
    # made-up curve: period = 2 + (3 - V) s
    assert dusk.period_s == pytest.approx(2.0 + 0.3, rel=1e-9)
    assert result.runtime_s < NIGHT_12H
    assert not dawn.lit and math.isnan(dawn.v_v) and math.isnan(dawn.period_s)


def test_timeline_is_sampled_for_a_chart():
    result = simulate_night(custom_storage(0.47), 2.7, NIGHT_12H, fake_blinker(2.0),
                            storage_leak_a=0.0)
    tl = result.timeline
    assert tl.t_s.shape == tl.v_v.shape == tl.effective_cd.shape == (TIMELINE_POINTS,)
    after = tl.t_s > result.runtime_s
    assert np.all(np.isnan(tl.v_v[after]))
    before = ~after
    assert np.all(np.diff(tl.v_v[before]) < 0)


def test_light_that_never_starts():
    result = simulate_night(custom_storage(0.47), 1.9, NIGHT_12H, fake_blinker(2.0))
    assert result.runtime_s == 0.0 and not result.lasts_the_night
    assert result.flashes == 0.0
    assert any("never starts" in w for w in result.warnings)


# ------------------------------------------------------------------ warnings and cautions

def test_start_above_the_rating_is_a_warning_and_a_caution_not_an_error():
    cap = get_storage("5f-2v7")
    result = simulate_night(cap, 2.8, NIGHT_12H, None, extra_load_a=10e-6)
    assert any("above the storage rating" in w for w in result.warnings)
    assert any("vent" in c for c in result.cautions)  # PowerStor guidelines, ref:bussmann-powerstor-guide
    assert NOT_A_SAFETY_LIGHT in result.cautions


def test_large_leakage_share_is_warned():
    result = simulate_night(get_storage("1f-2v5"), 2.5, NIGHT_12H, constant_load(5e-6),
                            leak_level="max", stop_at_v=1.0)
    assert result.shares()["storage_leakage"] > 0.5
    assert any("storage leakage takes" in w for w in result.warnings)


def test_high_esr_storage_is_warned_for_led_pulses():
    # A 30 ohm coin stack feeding a 20 mA pulse drops 0.6 V (Ohm's law).
    result = simulate_night(get_storage("0f22-5v5"), 5.0, NIGHT_12H, fake_blinker(2.0))
    assert any("ESR" in w for w in result.warnings)


def test_storage_cautions():
    cap = get_storage("5f-2v7")
    assert storage_cautions(cap, 2.7) == []
    over = storage_cautions(cap, 3.0, "The charge voltage")
    assert len(over) == 1 and "The charge voltage 3.00 V" in over[0] and "vent" in over[0]
    assert "above its 2.85 V surge" in over[0]  # surge 2.85 V (ref:maxwell-bcap0005)
    pair = custom_storage(1.0, v_rated_v=5.4, cells=2)
    assert SERIES_BALANCING in storage_cautions(pair, 5.0)  # SPSCAP (ref:spscap-safety)
    assert NOT_A_SAFETY_LIGHT in GENERAL_CAUTIONS


# ------------------------------------------------------------------ bad input

@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"stop_at_v": 2.6}, "not below the start"),
        ({"extra_load_a": -1e-6}, "extra load"),
        ({"storage_leak_a": -1e-9}, "storage leakage"),
        ({"leak_level": "typical"}, "settled, max"),
    ],
)
def test_bad_requests_are_refused(kwargs, match):
    with pytest.raises(RequestError, match=match):
        simulate_night(custom_storage(1.0), 2.5, NIGHT_12H, None, **kwargs)


def test_zero_night_and_zero_capacitance_are_refused():
    with pytest.raises(RequestError, match="night length"):
        simulate_night(custom_storage(1.0), 2.5, 0.0, None)
    with pytest.raises(PartError, match="above 0"):
        simulate_night(custom_storage(1.0), 2.5, NIGHT_12H, None, capacitance_f=0.0)


def test_open_ended_run_needs_a_stop():
    with pytest.raises(RequestError, match="needs a stop"):
        simulate_until_stop(custom_storage(1.0), 2.5, None, stop_at_v=None)


# ------------------------------------------------------------------ load curves

def test_light_stops_below_v():
    assert math.isnan(constant_load(1e-6).light_stops_below_v())
    assert fake_blinker(2.0).light_stops_below_v() == pytest.approx(2.0, abs=1e-9)
    dark = fake_blinker(5.0)  # never lit on its grid (which ends at 3 V)
    assert dark.light_stops_below_v() == math.inf


def test_load_curve_interpolates_linearly():
    curve = fake_blinker(2.0)
    figs = curve.at(2.505)
    assert figs["supply_avg_a"] == pytest.approx(5e-6 + 10e-6 * 1.505, rel=1e-9)
    assert figs["lit"] is True
    assert curve.at(1.5)["lit"] is False


def test_malformed_load_curve_is_refused():
    with pytest.raises(CircuitError, match="ascending"):
        LoadCurve(label="bad", supply_v=np.array([2.0, 1.0]), supply_avg_a=np.zeros(2),
                  period_s=np.zeros(2), flash_s=np.zeros(2), led_peak_a=np.zeros(2),
                  effective_a=np.zeros(2), effective_cd=np.zeros(2), lit=np.ones(2, bool))
    with pytest.raises(CircuitError, match="shape"):
        LoadCurve(label="bad", supply_v=np.array([1.0, 2.0]), supply_avg_a=np.zeros(3),
                  period_s=np.zeros(2), flash_s=np.zeros(2), led_peak_a=np.zeros(2),
                  effective_a=np.zeros(2), effective_cd=np.zeros(2), lit=np.ones(2, bool))
    with pytest.raises(CircuitError, match="0 A or more"):
        constant_load(-1e-6)


def test_circuit_dark_over_its_whole_curve():
    result = simulate_night(custom_storage(0.47), 2.7, NIGHT_12H, fake_blinker(5.0))
    assert result.runtime_s == 0.0 and result.v_stop_v == math.inf
    assert "not lit even at 3.00 V" in result.stop_reason


def test_zero_period_entries_count_no_flashes():
    # A curve whose period is 0 where it does not run must not divide by zero.
    curve = constant_load(10e-6, period_s=0.0)
    result = simulate_night(custom_storage(1.0), 2.5, NIGHT_12H, curve)
    assert result.flashes == 0.0


# ------------------------------------------------------------------ the integrator's words

def test_the_integrator_outcome_is_in_our_words():
    stopped = simulate_night(custom_storage(GOLD_C), GOLD_V0, NIGHT_12H, None,
                             extra_load_a=GOLD_I, storage_leak_a=GOLD_IL, stop_at_v=GOLD_V1)
    assert stopped.message == (f"stopped at the stop voltage 1.80 V after "
                               f"{stopped.runtime_s:.0f} s")
    assert stopped.runtime_s == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap
    lasting = simulate_night(get_storage("5f-2v7"), 2.7, NIGHT_12H, constant_load(20e-6))
    assert lasting.lasts_the_night and lasting.success
    assert lasting.message == "ran to the end of the night (43200 s)"  # 12 h
    never = simulate_night(custom_storage(0.47), 1.9, NIGHT_12H, fake_blinker(2.0))
    assert never.message.startswith("not started")
    for result in (stopped, lasting, never):
        assert "event" not in result.message and "solver" not in result.message


def test_open_ended_run_has_only_a_start_figure():
    result = simulate_until_stop(
        custom_storage(GOLD_C), GOLD_V0, None, stop_at_v=GOLD_V1,
        extra_load_a=GOLD_I, storage_leak_a=GOLD_IL,
    )
    assert [p.label for p in result.figures] == ["start"]
    assert result.figures[0].t_s == 0.0 and result.figures[0].v_v == GOLD_V0
    assert result.runtime_s == pytest.approx(GOLD_T_S, rel=0.005)  # ref:panasonic-gold-cap


@pytest.mark.parametrize("stop_v", [2.0, 1.0])
def test_scipys_rk45_takes_over_where_our_integrator_hands_on(monkeypatch, stop_v):
    # the night integrates with the Dormand-Prince pair of engine/dormand_prince.py; where
    # that integrator hands on (stiff, or past its step bound), scipy's solve_ivp RK45
    # (scipy.integrate, the same method) runs the night instead, to the same figures
    # within the integration tolerance
    from pulsepick.analysis import night
    from pulsepick.engine.dormand_prince import Stiff

    args = (custom_storage(0.47), 2.7, 15 * 3600.0, fake_blinker(stop_v))
    ours = simulate_night(*args)

    def hands_on(*_a, **_k):
        raise Stiff("as past the step bound")

    monkeypatch.setattr(night, "integrate", hands_on)
    theirs = simulate_night(*args)
    assert ours.lasts_the_night == theirs.lasts_the_night == (stop_v < 1.5)
    assert ours.runtime_s == pytest.approx(theirs.runtime_s, rel=1e-6)
    assert ours.v_end_v == pytest.approx(theirs.v_end_v, rel=1e-6)
    assert ours.flashes == pytest.approx(theirs.flashes, rel=1e-6)
    assert np.allclose(ours.timeline.v_v, theirs.timeline.v_v, rtol=1e-6, equal_nan=True)
