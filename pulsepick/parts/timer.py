"""The CMOS 555-class timer: comparator levels, switches, supply current.

In astable use the timing capacitor swings between the trigger level (about
VDD/3) and the threshold level (about 2*VDD/3), charging through RA + RB and
discharging through RB and the discharge switch (LMC555, ref:ti-lmc555; TLC555-Q1,
ref:ti-tlc555-q1). With the typical ratios both half-periods carry the factor ln 2
(bipolar 555 text, ref:maplin-555-notes); with real ratios

    t_high = (RA + RB)*C*ln((1 - trig)/(1 - thr)),   t_low = RB*C*ln(thr/trig).

The comparator levels come from one resistor divider, so threshold and trigger
move together in a real part: treating their limits as independent overstates
the spread of the period.

References
----------
.. [1] TI/National "LMC555 CMOS Timer" (ref:ti-lmc555).
.. [2] TI "TLC555 LinCMOS Timers" SLFS043 (ref:ti-tlc555).
.. [3] Philips "ICM7555 General purpose CMOS timer" (ref:philips-icm7555).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from functools import cache
from typing import Literal, get_args

import numpy as np

from pulsepick.errors import PartError
from pulsepick.tables import keyed_row

TimerKey = Literal["timer555"]
TIMER_KEYS: tuple[str, ...] = get_args(TimerKey)

_TABLE = "parts/timers.csv"


@dataclass(frozen=True)
class TimerModel:
    """A CMOS 555-class timer.

    Ratios are fractions of VDD; resistances in ohm; currents in A; voltages in V.
    ``idd_points`` holds (supply V, typ A, max A) triples in increasing supply.
    """

    key: str  # table key
    name: str  # readable description
    vdd_min_v: float  # V, minimum supply
    vdd_max_v: float  # V, maximum supply
    thr_ratio_min: float  # threshold level / VDD, minimum
    thr_ratio_typ: float  # threshold level / VDD, typical (2/3)
    thr_ratio_max: float  # threshold level / VDD, maximum
    trig_ratio_min: float  # trigger level / VDD, minimum
    trig_ratio_typ: float  # trigger level / VDD, typical (1/3)
    trig_ratio_max: float  # trigger level / VDD, maximum
    r_discharge_ohm: float  # ohm, discharge switch on-resistance (estimate)
    rout_high_ohm: float  # ohm, output resistance high (estimate)
    rout_low_ohm: float  # ohm, output resistance low (estimate)
    leak_a: float  # A, threshold + trigger pin input current
    source_notes: tuple[str, ...]  # provenance
    idd_points: tuple[tuple[float, float, float], ...] = ()  # (V, A typ, A max)

    def __post_init__(self) -> None:
        ok = (
            0 < self.vdd_min_v < self.vdd_max_v
            and 0 < self.trig_ratio_min <= self.trig_ratio_typ <= self.trig_ratio_max
            and self.trig_ratio_max < self.thr_ratio_min
            and self.thr_ratio_min <= self.thr_ratio_typ <= self.thr_ratio_max < 1
            and min(self.r_discharge_ohm, self.rout_high_ohm, self.rout_low_ohm) > 0
            and self.leak_a >= 0
            and len(self.idd_points) >= 2
            and all(0 <= typ <= mx for _, typ, mx in self.idd_points)
            and all(b[0] > a[0] > 0 for a, b in itertools.pairwise(self.idd_points))
        )
        if not ok:
            raise PartError(
                f"timer {self.key}: impossible parameters; needs 0 < trig min <= typ <= max "
                "< thr min <= typ <= max < 1, positive resistances, and supply-current "
                "points rising in supply with 0 <= typ <= max"
            )

    def supply_current(self, vdd, which: Literal["typ", "max"] = "typ") -> np.ndarray:
        """Supply current (A) at supply ``vdd`` (V, scalar or array), output unloaded.

        Linear interpolation between the published supplies (LMC555 at 1.5, 5 and
        12 V, ref:ti-lmc555; no figure exists between them, e.g. at 3 V, so the
        straight line is an assumption). Above the last point the last segment is
        extended; below the first point the current falls in proportion to the
        supply, reaching 0 A at 0 V.
        """
        if which not in ("typ", "max"):
            raise PartError(f"supply-current level {which!r} unknown; accepted: typ, max")
        col = 1 if which == "typ" else 2
        vs = np.array([p[0] for p in self.idd_points])
        cur = np.array([p[col] for p in self.idd_points])
        v = np.asarray(vdd, dtype=float)
        inside = np.interp(v, vs, cur)
        slope_hi = (cur[-1] - cur[-2]) / (vs[-1] - vs[-2])
        above = cur[-1] + slope_hi * (v - vs[-1])
        below = cur[0] * np.maximum(v, 0.0) / vs[0]
        return np.where(v > vs[-1], above, np.where(v < vs[0], below, inside))

    def in_range(self, vdd) -> np.ndarray:
        """True where ``vdd`` (V) is inside the supply range."""
        v = np.asarray(vdd, dtype=float)
        return (v >= self.vdd_min_v) & (v <= self.vdd_max_v)


@cache
def get_timer(key: str = "timer555") -> TimerModel:
    """The timer model for ``key`` (only "timer555" so far).

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    row = keyed_row(_TABLE, key, TIMER_KEYS, "timer")
    points = tuple(
        (row[f"idd_v_{n}"], row[f"idd_typ_a_{n}"], row[f"idd_max_a_{n}"]) for n in (1, 2, 3)
    )
    numeric = (
        "vdd_min_v vdd_max_v thr_ratio_min thr_ratio_typ thr_ratio_max trig_ratio_min "
        "trig_ratio_typ trig_ratio_max r_discharge_ohm rout_high_ohm rout_low_ohm leak_a"
    ).split()
    return TimerModel(
        key=key,
        name=str(row["name"]),
        **{name: float(row[name]) for name in numeric},
        source_notes=(f"{key}: {row['source']}",),
        idd_points=points,
    )
