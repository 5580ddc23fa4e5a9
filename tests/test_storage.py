"""Supercapacitor storage: the table, the leakage model, energy and custom parts."""

import math

import numpy as np
import pytest

from pulsepick.errors import PartError, PulsepickError
from pulsepick.parts.storage import (
    STORAGE_KEYS,
    Storage,
    custom_storage,
    get_storage,
)


def test_maxwell_5f_row_matches_its_datasheet():
    # Maxwell BCAP0005 P270 S01 datasheet (ref:maxwell-bcap0005): 4.5-6.0 F, 8 uA max leakage,
    # surge 2.85 V, ESR 45 mOhm max, 2.7 V rated.
    cap = get_storage("5f-2v7")
    assert cap.capacitance_min_f == pytest.approx(4.5, rel=1e-9)
    assert cap.capacitance_max_f == pytest.approx(6.0, rel=1e-9)
    assert cap.leak_max_a == pytest.approx(8e-6, rel=1e-9)
    assert cap.v_surge_v == pytest.approx(2.85, rel=1e-9)
    assert cap.esr_ohm == pytest.approx(0.045, rel=1e-9)
    assert cap.v_rated_v == pytest.approx(2.7, rel=1e-9)


def test_tolerances_and_ratings_of_other_rows():
    # CAP-XX HY 10 F: 0 % / +20 %, 2.7 V (ref:capxx-hy-10f)
    hy = get_storage("10f-2v7")
    assert (hy.tol_minus_pct, hy.tol_plus_pct, hy.v_rated_v) == (0.0, 20.0, 2.7)
    assert hy.v_surge_v is None
    # Nichicon UK: +-20 %, 2.5 V (ref:nichicon-uk)
    uk = get_storage("1f-2v5")
    assert (uk.tol_minus_pct, uk.tol_plus_pct, uk.v_rated_v) == (20.0, 20.0, 2.5)
    # 5.5 V coin stacks of two cells (ref:panasonic-gold-cap)
    for key in ("0f22-5v5", "1f-5v5"):
        coin = get_storage(key)
        assert coin.v_rated_v == 5.5 and coin.cells_in_series == 2


def test_every_row_loads_and_names_its_sources():
    assert len(STORAGE_KEYS) >= 7
    for key in STORAGE_KEYS:
        part = get_storage(key)
        assert part.key == key
        assert part.source_notes and all(note.strip() for note in part.source_notes)
        assert part.leak_settled_a <= part.leak_max_a


def test_unknown_key_lists_the_accepted_ones():
    with pytest.raises(PartError, match="5f-2v7") as info:
        get_storage("9f-9v9")
    assert isinstance(info.value, PulsepickError)


def test_leakage_settles_to_its_level_and_scales_with_voltage():
    cap = get_storage("5f-2v7")
    settled = cap.leakage_a(cap.v_rated_v, 1e9)  # long after charging
    assert settled == pytest.approx(cap.leak_settled_a, rel=1e-12)
    assert cap.leakage_a(cap.v_rated_v / 2, 1e9) == pytest.approx(cap.leak_settled_a / 2, rel=1e-12)
    assert cap.leakage_a(cap.v_rated_v, 1e9, "max") == pytest.approx(8e-6, rel=1e-12)  # ref:maxwell-bcap0005


def test_leakage_falls_with_time_after_charging():
    # Leakage decays after voltage is applied and then stabilises (ref:chemicon-leakage-faq).
    cap = get_storage("1f-2v7")
    t = np.array([0.0, 600.0, 3600.0, 6 * 3600.0, 72 * 3600.0])
    leak = cap.leakage_a(2.7, t)
    assert leak.shape == t.shape
    assert np.all(np.diff(leak) < 0)
    assert leak[0] == pytest.approx(cap.leak_initial_multiple * cap.leak_settled_a, rel=1e-12)
    assert leak[-1] == pytest.approx(cap.leak_settled_a, rel=1e-6)


def test_leakage_is_vectorised_over_voltage_and_time():
    cap = get_storage("0f47-2v7")
    v = np.linspace(0.0, 2.7, 5)[:, None]
    t = np.array([0.0, 3600.0, 36000.0])[None, :]
    leak = cap.leakage_a(v, t)
    assert leak.shape == (5, 3)
    assert np.all(leak[0] == 0.0)


def test_unknown_leakage_level_is_refused():
    with pytest.raises(PartError, match="settled, max"):
        get_storage("1f-2v7").leakage_a(2.0, 0.0, "typical")


def test_energy_is_half_c_v_squared():
    # E = C V^2 / 2, the energy of a capacitor (ref:panasonic-gold-cap context): 5 F at 2.7 V = 18.225 J.
    assert get_storage("5f-2v7").energy_j(2.7) == pytest.approx(18.225, rel=1e-12)


def test_usable_energy_fraction_from_2v7_to_1v8():
    # 1 - (1.8/2.7)^2 = 0.556 (E = C V^2 / 2; practice notes section C, derived).
    cap = get_storage("1f-2v7")
    fraction = 1 - cap.energy_j(1.8) / cap.energy_j(2.7)
    assert fraction == pytest.approx(0.556, abs=5e-4)


@pytest.mark.parametrize("capacitance", [0.0, -1.0, math.nan, math.inf])
def test_custom_storage_refuses_impossible_capacitance(capacitance):
    with pytest.raises(PartError, match="above 0"):
        custom_storage(capacitance)


def test_custom_storage_defaults():
    cap = custom_storage(0.2)
    assert cap.key == "custom"
    assert cap.v_rated_v == 2.7
    assert cap.capacitance_f == 0.2
    generic = get_storage("1f-2v7")
    # Leakage scaled in proportion to capacitance from the generic 1 F cell.
    assert cap.leak_settled_a == pytest.approx(0.2 * generic.leak_settled_a, rel=1e-12)
    assert cap.balanced
    pair = custom_storage(1.0, v_rated_v=5.4, cells=2)
    assert not pair.balanced
    fixed = custom_storage(0.2, leak_a=0.2e-6)
    assert fixed.leak_max_a == fixed.leak_settled_a == 0.2e-6


def test_custom_storage_refuses_three_cells_and_negative_leakage():
    with pytest.raises(PartError, match="1 or 2"):
        custom_storage(1.0, cells=3)
    with pytest.raises(PartError, match="0 or more"):
        custom_storage(1.0, leak_a=-1e-6)


def test_storage_checks_itself():
    with pytest.raises(PartError, match="surge"):
        Storage(key="x", name="x", capacitance_f=1.0, tol_minus_pct=0, tol_plus_pct=0,
                v_rated_v=2.7, v_surge_v=2.5, esr_ohm=0.1, leak_max_a=1e-6,
                leak_settled_a=1e-7, cells_in_series=1, balanced=True)
