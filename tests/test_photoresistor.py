"""Photoresistor model: the gamma definition, the table, the dark path and the corners."""

import math

import numpy as np
import pytest

from pulsepick.errors import PartError
from pulsepick.parts.photoresistor import (
    custom_photoresistor,
    gamma_from_points,
    get_photoresistor,
    photoresistor_keys,
    power_law_resistance,
)


def test_gamma_worked_example():
    # gamma = log10(R10/R100) (Token technical notes, ref:token-ldr-notes): with R10 = 15 kOhm and
    # gamma = 0.6, R(100 lux) = 15 kOhm / 10^0.6 = 3.77 kOhm.
    r100 = float(power_law_resistance(100.0, 15e3, 0.6))
    assert r100 == pytest.approx(15e3 / 10**0.6, rel=1e-12)
    assert r100 == pytest.approx(3.77e3, rel=1e-3)
    assert gamma_from_points(15e3, r100) == pytest.approx(0.6, abs=1e-12)


def test_power_law_at_reference_and_one_decade_down():
    # R(10 lux) = R10 by definition; one decade darker multiplies R by 10^gamma (ref:token-ldr-notes)
    assert float(power_law_resistance(10.0, 15e3, 0.6)) == pytest.approx(15e3, rel=1e-12)
    assert float(power_law_resistance(1.0, 15e3, 0.6)) == pytest.approx(15e3 * 10**0.6, rel=1e-12)


def test_table_rows_match_the_compiled_gl55xx_table():
    # R10 ranges and dark resistances: ref:gl55xx-table
    expected = {"gl5506": (2e3, 6e3, 0.15e6), "gl5516": (5e3, 10e3, 0.5e6),
                "gl5528": (10e3, 20e3, 1e6), "gl5537": (16e3, 50e3, 2e6),
                "gl5539": (30e3, 90e3, 5e6)}
    assert set(photoresistor_keys()) == set(expected)
    for key, (lo, hi, dark) in expected.items():
        p = get_photoresistor(key)
        assert (p.r10_min_ohm, p.r10_max_ohm, p.dark_min_ohm) == (lo, hi, dark)
        assert "from memory" in p.source  # the gamma values are labelled
        assert p.gamma_tol == 0.1  # ref:token-ldr-notes, ref:globe-cds-cell


def test_dark_path_limits_resistance_and_leaves_bright_power_law():
    p = custom_photoresistor(15e3, 0.6, dark_ohm=1e6)
    # in the dark the parallel path dominates: below the dark resistance, never above
    # R_pow(1e-9 lux) = 15 kOhm * 1e10^0.6 = 15e9 Ohm, so 1 MOhm || 15 GOhm = 1 MOhm - 67 Ohm
    assert float(p.resistance(1e-9)) < 1e6
    assert float(p.resistance(1e-9)) == pytest.approx(1e6, rel=1e-4)
    # bright: R_pow = 3.77 kOhm << 1 MOhm, so within 0.4 % of the power law
    assert float(p.resistance(100.0)) == pytest.approx(15e3 / 10**0.6, rel=4e-3)


def test_corners_bracket_typical_and_fall_with_light():
    p = get_photoresistor("gl5528")
    lux = np.logspace(-2, 2, 9)
    low, typ, high = (p.resistance(lux, c) for c in ("low", "typ", "high"))
    assert np.all(low <= typ) and np.all(typ <= high)
    assert np.all(np.diff(typ) < 0)
    # the typical R10 is the geometric middle of 10..20 kOhm (estimate in the module)
    assert p.r10_typ_ohm == pytest.approx(math.sqrt(10e3 * 20e3))


def test_bad_input_names_what_is_accepted():
    with pytest.raises(PartError, match="accepted: gl5506"):
        get_photoresistor("gl9999")
    with pytest.raises(PartError, match="gamma"):
        custom_photoresistor(15e3, 5.0)
    with pytest.raises(PartError, match="corner"):
        get_photoresistor("gl5528").resistance(1.0, "mid")
