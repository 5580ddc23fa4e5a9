"""LED colours: forward I-V as a junction model, luminous intensity, visibility.

Each colour in ``data/parts/leds.csv`` is a ``Junction`` passing exactly through
the datasheet's typical forward voltage at its test current. The ideality
factor and series resistance are not in the sources; they are estimates chosen
so the voltage at 1 mA and below looks like real parts (a white LED needs about
2.7 V for 0.1 mA; a blue LED still glows at about 2.3 V and 0.2 uA).

Luminous intensity is taken proportional to current (datasheets plot relative
intensity against current on a near-linear axis, ref:avago-hlma-sh05). Real LEDs are
sub-linear at high current and super-linear at very low current; that is from
memory and not modelled.

References
----------
.. [1] 5 mm LED catalogue table (ref:led-5mm-catalogue); Cree LC513FWH1-60Q-A0 (ref:cree-lc513fwh1);
   R&D 135-00123 (ref:rnd-135-00123); Broadcom HSMx-A46x Tables 3-4 (ref:broadcom-hsmx-a46x).
.. [2] Avago HLMA-SH05 Figure 3, relative intensity against current (ref:avago-hlma-sh05).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache
from typing import Literal, get_args

import numpy as np

from pulsepick.errors import PartError
from pulsepick.parts.junction import Junction
from pulsepick.tables import keyed_row

LedKey = Literal[
    "red", "bright-red", "amber", "yellow", "green-gap", "green", "blue", "white"
]
LED_KEYS: tuple[str, ...] = get_args(LedKey)

_TABLE = "parts/leds.csv"
# Defaults for a user-described LED (estimates, like the table's n and RS columns).
CUSTOM_N = 2.0
CUSTOM_R_S_OHM = 5.0
CUSTOM_VISIBLE_A = 50e-6


@dataclass(frozen=True)
class LedModel:
    """One LED: junction model, test point, intensity and visibility.

    Parameters
    ----------
    junction : I-V model (i_s A, n, r_s ohm).
    vf_test_v, i_test_a : typical forward voltage (V) at the test current (A).
    mcd_per_a : luminous intensity per ampere, mcd/A, or None when unknown.
    visible_a : smallest steady current plainly visible at night, A (estimate).
    vf_min_v, vf_max_v : published VF limits at the test current, V, or None.
    i_max_a : maximum continuous forward current, A, or None when unknown.
    """

    key: str  # table key, or "custom"
    name: str  # readable description
    junction: Junction  # I-V model
    vf_test_v: float  # V, typical forward voltage at i_test_a
    i_test_a: float  # A, datasheet test current
    mcd_per_a: float | None  # mcd/A, intensity per current; None when unknown
    visible_a: float  # A, smallest plainly visible steady current (estimate)
    source_notes: tuple[str, ...]  # provenance
    vf_min_v: float | None = None  # V, published minimum VF at i_test_a
    vf_max_v: float | None = None  # V, published maximum VF at i_test_a
    i_max_a: float | None = None  # A, maximum continuous forward current; None when unknown

    def __post_init__(self) -> None:
        problems = []
        if not (self.i_test_a > 0 and self.vf_test_v > 0):
            problems.append("test point needs V > 0 and I > 0")
        if self.mcd_per_a is not None and not self.mcd_per_a > 0:
            problems.append("intensity per current must be > 0 or unknown")
        if not self.visible_a > 0:
            problems.append("visible current must be > 0 A")
        if self.vf_min_v is not None and not self.vf_min_v <= self.vf_test_v:
            problems.append("VF min above VF typ")
        if self.vf_max_v is not None and not self.vf_max_v >= self.vf_test_v:
            problems.append("VF max below VF typ")
        if self.i_max_a is not None and not (math.isfinite(self.i_max_a) and self.i_max_a > 0):
            problems.append("maximum current must be a number above 0 A or unknown")
        if problems:
            raise PartError(f"LED {self.key}: " + "; ".join(problems))

    def current(self, v, r_ext=0.0):
        """Forward current (A) at voltage ``v`` (V) with ``r_ext`` (ohm) in series."""
        return self.junction.current(v, r_ext)

    def voltage(self, i):
        """Forward voltage (V) at forward current ``i`` (A)."""
        return self.junction.voltage(i)

    def intensity_cd(self, i) -> np.ndarray:
        """Luminous intensity (cd) at current ``i`` (A), proportional to current.

        Returns NaN (of the shape of ``i``) where the intensity is unknown;
        negative currents give 0 cd.
        """
        i_arr = np.maximum(np.asarray(i, dtype=float), 0.0)
        if self.mcd_per_a is None:
            return np.full(i_arr.shape, np.nan)
        return self.mcd_per_a * 1e-3 * i_arr


def _opt(value: object) -> float | None:
    if value is None or value == "":
        return None
    return float(value)


@cache
def get_led(key: str) -> LedModel:
    """The LED model for colour ``key`` (one of LED_KEYS).

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    row = keyed_row(_TABLE, key, LED_KEYS, "LED colour")
    vf = float(row["vf_test_v"])
    i_test = float(row["i_test_a"])
    mcd = _opt(row["mcd"])
    mcd_at = _opt(row["mcd_at_a"])
    return LedModel(
        key=key,
        name=str(row["name"]),
        junction=Junction.from_point(vf, i_test, n=float(row["n"]), r_s=float(row["r_s_ohm"])),
        vf_test_v=vf,
        i_test_a=i_test,
        mcd_per_a=None if mcd is None or mcd_at is None else mcd / mcd_at,
        visible_a=float(row["visible_a"]),
        source_notes=(f"{key}: {row['source']}",),
        vf_min_v=_opt(row["vf_min_v"]),
        vf_max_v=_opt(row["vf_max_v"]),
        i_max_a=_opt(row["i_max_a"]),
    )


def custom_led(
    vf_v: float,
    at_a: float,
    n: float = CUSTOM_N,
    r_s: float = CUSTOM_R_S_OHM,
    mcd: float | None = None,
    mcd_at_a: float | None = None,
    visible_a: float = CUSTOM_VISIBLE_A,
    i_max_a: float | None = None,
) -> LedModel:
    """An LED described by the user: VF at one current, optional n, RS and intensity.

    Parameters
    ----------
    vf_v : forward voltage, V, at
    at_a : forward current, A.
    n : ideality factor (default 2, estimate).
    r_s : series resistance, ohm (default 5, estimate).
    mcd : luminous intensity, mcd, at ``mcd_at_a`` (A; defaults to ``at_a``).
    visible_a : smallest plainly visible current, A (default 50 uA, estimate).
    i_max_a : maximum continuous forward current, A (default None: unknown).

    Raises
    ------
    PartError
        for impossible values (e.g. RS dropping more than VF at the test current).
    """
    for label, value in (("VF", vf_v), ("test current", at_a), ("visible current", visible_a)):
        if not (math.isfinite(value) and value > 0):
            raise PartError(f"LED {label} must be a number above 0, got {value}")
    if mcd is not None and not (math.isfinite(mcd) and mcd > 0):
        raise PartError(f"LED intensity must be above 0 mcd, got {mcd}")
    if i_max_a is not None and not (math.isfinite(i_max_a) and i_max_a > 0):
        raise PartError(f"LED maximum current must be above 0 A (or not given), got {i_max_a}")
    at_i = at_a if mcd_at_a is None else mcd_at_a
    if mcd is not None and not at_i > 0:
        raise PartError(f"LED intensity current must be above 0 A, got {at_i}")
    junction = Junction.from_point(vf_v, at_a, n=n, r_s=r_s)
    notes = [f"custom: VF {vf_v:g} V at {at_a:g} A, n {n:g}, RS {r_s:g} ohm (user values)"]
    if mcd is not None:
        notes.append(f"custom: {mcd:g} mcd at {at_i:g} A (user value)")
    if i_max_a is not None:
        notes.append(f"custom: maximum continuous current {i_max_a:g} A (user value)")
    return LedModel(
        key="custom",
        name="custom LED",
        junction=junction,
        vf_test_v=vf_v,
        i_test_a=at_a,
        mcd_per_a=None if mcd is None else mcd / at_i,
        visible_a=visible_a,
        source_notes=tuple(notes),
        i_max_a=i_max_a,
    )
