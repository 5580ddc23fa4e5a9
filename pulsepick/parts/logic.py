"""Schmitt-trigger logic families: thresholds, output drive, supply and input currents.

A family is a row of ``data/parts/logic_families.csv`` plus its threshold rows in
``data/parts/logic_thresholds.csv`` (VT+, VT- and hysteresis limits at the
supplies the datasheets list). Everything here is vectorised over the supply so
an engine can evaluate millions of candidates, or one supply swept through a
night, in one call.

The thresholds set the period of a Schmitt RC oscillator; with the output
swinging rail to rail (onsemi MC14106B astable, ref:onsemi-mc14106b):

    T = R*C*[ln((VDD - VT-)/(VDD - VT+)) + ln(VT+/VT-)].

Two figures here are ESTIMATES that no datasheet in our sources gives as a
number, and are labelled so in the table: the extra supply current while the
input sits between the rails (square-law shoot-through) and how the output
resistance grows at low supply. Typical input leakage is also an estimate: the
datasheets guarantee only a maximum, orders of magnitude above real parts
(common practice).

References
----------
.. [1] NXP 74HC1G14 Table 7 (ref:nxp-74hc1g14); onsemi MC74HC14A (ref:onsemi-mc74hc14a).
.. [2] onsemi MC74VHC1G14 (ref:onsemi-mc74vhc1g14); NXP 74LVC3G17 Table 11 (ref:nxp-74lvc3g17).
.. [3] UTC CD40106 (ref:utc-cd40106); TI CD40106B SCHS097F (ref:ti-cd40106b); Fairchild CD40106BC (ref:fairchild-cd40106bc).
.. [4] onsemi MM74HC04 DC characteristics (ref:onsemi-mm74hc04).
"""

from __future__ import annotations

import dataclasses
import itertools
from dataclasses import dataclass
from functools import cache
from typing import Literal, get_args

import numpy as np

from pulsepick.errors import PartError
from pulsepick.tables import keyed_row, load_table

FamilyKey = Literal["hc", "ahc", "lvc", "4000n", "4000w"]
FAMILY_KEYS: tuple[str, ...] = get_args(FamilyKey)
Which = Literal["typ", "max"]

#: Gates in a Schmitt-inverter package: the 74HC14, 74AHC14, 74LVC14A and CD40106B are
#: hex inverters (common practice).
GATES_PER_PACKAGE = 6

_FAMILIES = "parts/logic_families.csv"
_THRESHOLDS = "parts/logic_thresholds.csv"
_THRESHOLD_FIELDS = (
    "vt_plus_min",
    "vt_plus_typ",
    "vt_plus_max",
    "vt_minus_min",
    "vt_minus_typ",
    "vt_minus_max",
    "vh_min",
    "vh_max",
)
# Below v_tn + this fraction of the reference overdrive the output resistance stops
# growing, so it stays finite at very low supply (estimate; the part is outside its
# supply range there anyway).
_ROUT_OVERDRIVE_FLOOR = 0.1


@dataclass(frozen=True)
class Thresholds:
    """Schmitt input thresholds at one or many supplies (arrays broadcast with vdd), V."""

    vt_plus_min: np.ndarray  # V, positive-going threshold, guaranteed minimum
    vt_plus_typ: np.ndarray  # V, positive-going threshold, typical
    vt_plus_max: np.ndarray  # V, positive-going threshold, guaranteed maximum
    vt_minus_min: np.ndarray  # V, negative-going threshold, guaranteed minimum
    vt_minus_typ: np.ndarray  # V, negative-going threshold, typical
    vt_minus_max: np.ndarray  # V, negative-going threshold, guaranteed maximum
    vh_min: np.ndarray  # V, hysteresis VT+ - VT-, guaranteed minimum
    vh_max: np.ndarray  # V, hysteresis VT+ - VT-, guaranteed maximum

    @property
    def vh_typ(self) -> np.ndarray:
        """Typical hysteresis VT+typ - VT-typ, V."""
        return self.vt_plus_typ - self.vt_minus_typ


@dataclass(frozen=True)
class ThresholdPoint:
    """One row of the threshold table: the limits at one supply, V."""

    vdd_v: float  # V, supply of this row
    vt_plus_min: float  # V
    vt_plus_typ: float  # V
    vt_plus_max: float  # V
    vt_minus_min: float  # V
    vt_minus_typ: float  # V
    vt_minus_max: float  # V
    vh_min: float  # V
    vh_max: float  # V
    source: str  # provenance

    def __post_init__(self) -> None:
        ok = (
            0 < self.vt_minus_min <= self.vt_minus_typ <= self.vt_minus_max
            and 0 < self.vt_plus_min <= self.vt_plus_typ <= self.vt_plus_max < self.vdd_v
            and self.vt_minus_typ < self.vt_plus_typ
            and 0 <= self.vh_min <= self.vh_max
        )
        if not ok:
            raise PartError(
                f"threshold row at {self.vdd_v} V is inconsistent; needs "
                "0 < VT-min <= VT-typ <= VT-max, VT+min <= VT+typ <= VT+max < VDD, "
                "VT-typ < VT+typ and 0 <= VHmin <= VHmax"
            )


@dataclass(frozen=True)
class LogicFamily:
    """A Schmitt-trigger logic family with its datasheet figures and estimates.

    Resistances are in ohm at ``rout_ref_vdd_v`` and 25 C; currents in A;
    ``cross_k_a_per_v2`` in A/V^2; voltages in V. ``threshold_points`` holds the
    threshold table rows in increasing supply order.
    """

    key: str  # family key (FAMILY_KEYS)
    name: str  # readable description
    vdd_min_v: float  # V, recommended minimum supply
    vdd_max_v: float  # V, recommended maximum supply
    rout_high_typ_ohm: float  # ohm, output high (pull-up), typical, at rout_ref_vdd_v
    rout_high_max_ohm: float  # ohm, output high, guaranteed maximum
    rout_low_typ_ohm: float  # ohm, output low (pull-down), typical
    rout_low_max_ohm: float  # ohm, output low, guaranteed maximum
    rout_ref_vdd_v: float  # V, supply at which the rout figures were derived
    iq_typ_a: float  # A, quiescent supply current, typical, 25 C
    iq_max_a: float  # A, quiescent supply current, guaranteed max, 25 C
    leak_typ_a: float  # A, input leakage, typical (estimate)
    leak_max_a: float  # A, input leakage, guaranteed max, 25 C
    leak_max_hot_a: float  # A, input leakage, guaranteed max, -40..85 C
    cross_k_a_per_v2: float  # A/V^2, shoot-through coefficient (estimate)
    cross_vt_v: float  # V, MOSFET threshold of the estimate models (estimate)
    source_notes: tuple[str, ...]  # provenance of the numbers
    threshold_points: tuple[ThresholdPoint, ...] = ()  # rows in increasing vdd

    def __post_init__(self) -> None:
        problems = []
        if not 0 < self.vdd_min_v < self.vdd_max_v:
            problems.append("supply range needs 0 < vdd_min < vdd_max")
        for side in ("high", "low"):
            typ = getattr(self, f"rout_{side}_typ_ohm")
            mx = getattr(self, f"rout_{side}_max_ohm")
            if not 0 < typ <= mx:
                problems.append(f"output resistance {side} needs 0 < typ <= max")
        if not 0 <= self.iq_typ_a <= self.iq_max_a:
            problems.append("quiescent current needs 0 <= typ <= max")
        if not 0 <= self.leak_typ_a <= self.leak_max_a <= self.leak_max_hot_a:
            problems.append("input leakage needs 0 <= typ <= max <= max over temperature")
        if not (self.cross_k_a_per_v2 >= 0 and 0 <= self.cross_vt_v < self.rout_ref_vdd_v):
            problems.append("crossing-current parameters need k >= 0 and 0 <= vt < rout_ref_vdd")
        supplies = [p.vdd_v for p in self.threshold_points]
        if not supplies or any(b <= a for a, b in itertools.pairwise(supplies)):
            problems.append("threshold rows must exist and rise strictly in supply")
        if problems:
            raise PartError(f"logic family {self.key}: " + "; ".join(problems))

    def thresholds(self, vdd) -> Thresholds:
        """Schmitt thresholds at supply ``vdd`` (V, scalar or array).

        Linear interpolation between the supplies of the threshold table.
        Outside the table the nearest row is scaled in proportion to the supply
        (thresholds of CMOS Schmitt inputs track the supply roughly
        proportionally); this is an extrapolation and the supply is then usually
        outside the recommended range too (see ``in_range``).

        Returns
        -------
        Thresholds with arrays shaped like ``vdd``, V.
        """
        v = np.asarray(vdd, dtype=float)
        supplies = np.array([p.vdd_v for p in self.threshold_points])
        v_in = np.clip(v, supplies[0], supplies[-1])
        scale = v / v_in
        values = {}
        for name in _THRESHOLD_FIELDS:
            column = np.array([getattr(p, name) for p in self.threshold_points])
            values[name] = np.interp(v_in, supplies, column) * scale
        return Thresholds(**values)

    def _rout(self, r_ref: float, vdd) -> np.ndarray:
        overdrive_ref = self.rout_ref_vdd_v - self.cross_vt_v
        overdrive = np.maximum(
            np.asarray(vdd, dtype=float) - self.cross_vt_v, _ROUT_OVERDRIVE_FLOOR * overdrive_ref
        )
        return r_ref * overdrive_ref / overdrive

    def rout_high(self, vdd, which: Which = "typ") -> np.ndarray:
        """Output resistance with the output high (ohm) at supply ``vdd`` (V).

        MOSFET on-resistance goes as 1/(VDD - Vtn) (estimate, Vtn = ``cross_vt_v``),
        scaled to equal the table value at ``rout_ref_vdd_v``; it stops growing
        once VDD - Vtn falls below 10 % of the reference overdrive.

        Parameters
        ----------
        vdd : supply, V (scalar or array).
        which : "typ" or "max" (the guaranteed limit at 25 C).
        """
        return self._rout(self._pick("rout_high", which), vdd)

    def rout_low(self, vdd, which: Which = "typ") -> np.ndarray:
        """Output resistance with the output low (ohm) at supply ``vdd`` (V).

        Same supply scaling as ``rout_high``.
        """
        return self._rout(self._pick("rout_low", which), vdd)

    def _pick(self, stem: str, which: str) -> float:
        if which not in ("typ", "max"):
            raise PartError(f"output resistance level {which!r} unknown; accepted: typ, max")
        return getattr(self, f"{stem}_{which}_ohm")

    def crossing_current(self, v_in, vdd) -> np.ndarray:
        """ESTIMATED extra supply current while the input sits between the rails, A.

        Square-law shoot-through of the input stage,

            I = k * max(0, min(v_in - vt, vdd - v_in - vt))**2,

        with k = ``cross_k_a_per_v2`` and vt = ``cross_vt_v``: zero near the
        rails, largest at mid-supply. The parameters are estimates per family
        (see the table's source column); a measured figure should replace them.

        Parameters
        ----------
        v_in : input voltage, V (scalar or array).
        vdd : supply, V (scalar or array, broadcast with ``v_in``).
        """
        v_in = np.asarray(v_in, dtype=float)
        vdd = np.asarray(vdd, dtype=float)
        overdrive = np.minimum(v_in - self.cross_vt_v, vdd - v_in - self.cross_vt_v)
        return self.cross_k_a_per_v2 * np.maximum(overdrive, 0.0) ** 2

    def in_range(self, vdd) -> np.ndarray:
        """True where ``vdd`` (V) is inside the recommended supply range."""
        v = np.asarray(vdd, dtype=float)
        return (v >= self.vdd_min_v) & (v <= self.vdd_max_v)


def _point(row: dict) -> ThresholdPoint:
    return ThresholdPoint(
        vdd_v=row["vdd_v"],
        **{name: row[f"{name}_v"] for name in _THRESHOLD_FIELDS},
        source=str(row["source"]),
    )


@cache
def get_family(key: str) -> LogicFamily:
    """The logic family for ``key`` (one of FAMILY_KEYS).

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    row = keyed_row(_FAMILIES, key, FAMILY_KEYS, "logic family")
    points = sorted(
        (_point(r) for r in load_table(_THRESHOLDS).rows if r["family"] == key),
        key=lambda p: p.vdd_v,
    )
    numeric = {
        f.name: float(row[f.name])
        for f in dataclasses.fields(LogicFamily)
        if f.name.endswith(("_v", "_ohm", "_a", "_a_per_v2"))
    }
    notes = [f"{key}: {row['source']}"]
    notes += [f"{key} thresholds at {p.vdd_v:g} V: {p.source}" for p in points]
    return LogicFamily(
        key=key,
        name=str(row["name"]),
        **numeric,
        source_notes=tuple(notes),
        threshold_points=tuple(points),
    )


def custom_family(
    base: LogicFamily,
    vdd: float,
    vt_plus: float | None = None,
    vt_minus: float | None = None,
    rout: float | None = None,
) -> LogicFamily:
    """A family for a chip the user measured at the working supply ``vdd``.

    A measured threshold replaces the table: min = typ = max at ``vdd``, scaled
    in proportion to the supply elsewhere (``thresholds`` does this for a
    one-row table). A threshold not measured keeps the base family's limits at
    ``vdd``. A measured output resistance replaces both sides, typ and max, at
    ``vdd``. Currents and estimates are kept from ``base``.

    Parameters
    ----------
    base : the family the chip belongs to.
    vdd : supply at which the chip was measured, V.
    vt_plus, vt_minus : measured thresholds, V (None keeps the base family's).
    rout : measured output resistance, ohm (None keeps the base family's).

    Raises
    ------
    PartError
        unless 0 < VT- < VT+ < VDD and rout > 0.
    """
    _check_measurement(base, vdd, rout)
    t = base.thresholds(vdd)
    vp, vm, measured = _measured_thresholds(t, vdd, vt_plus, vt_minus)
    changes: dict[str, object] = {}
    if measured:
        changes["threshold_points"] = (
            _measured_point(t, vdd, vp, vm, vt_plus is None or vt_minus is None, measured),
        )
    if rout is not None:
        changes.update(
            rout_high_typ_ohm=rout,
            rout_high_max_ohm=rout,
            rout_low_typ_ohm=rout,
            rout_low_max_ohm=rout,
            rout_ref_vdd_v=float(vdd),
        )
        measured.append(f"rout {rout:g} ohm")
    if not measured:
        return base
    return dataclasses.replace(
        base,
        name=f"{base.name}, measured at {vdd:g} V",
        source_notes=(*base.source_notes, "user measurement: " + ", ".join(measured)),
        **changes,
    )


def _check_measurement(base: LogicFamily, vdd: float, rout: float | None) -> None:
    """Refuse a measurement supply or output resistance the family cannot take."""
    if not vdd > 0:
        raise PartError(f"measurement supply must be above 0 V, got {vdd} V")
    if rout is not None and not rout > 0:
        raise PartError(f"measured output resistance must be above 0 ohm, got {rout} ohm")
    if rout is not None and not vdd > base.cross_vt_v:
        raise PartError(
            f"output resistance measured at {vdd:g} V cannot be scaled; accepted: a supply "
            f"above {base.cross_vt_v:g} V (the family's transistor threshold estimate)"
        )


def _measured_thresholds(t, vdd: float, vt_plus: float | None, vt_minus: float | None):
    """(VT+ min, typ, max), (VT- min, typ, max) at ``vdd`` with the measured ones in place,
    and the measured thresholds in words."""
    measured = []
    if vt_plus is None:
        vp = (float(t.vt_plus_min), float(t.vt_plus_typ), float(t.vt_plus_max))
    else:
        vp = (vt_plus,) * 3
        measured.append(f"VT+ {vt_plus:g} V")
    if vt_minus is None:
        vm = (float(t.vt_minus_min), float(t.vt_minus_typ), float(t.vt_minus_max))
    else:
        vm = (vt_minus,) * 3
        measured.append(f"VT- {vt_minus:g} V")
    if not 0 < vm[1] < vp[1] < vdd:
        raise PartError(
            f"thresholds VT- {vm[1]:g} V and VT+ {vp[1]:g} V at {vdd:g} V are impossible; "
            "accepted: 0 < VT- < VT+ < VDD"
        )
    return vp, vm, measured


def _measured_point(t, vdd: float, vp, vm, one_measured: bool,
                    measured: list[str]) -> ThresholdPoint:
    """The threshold row at ``vdd`` for measured thresholds (``one_measured``: only one of
    the two was measured, the other keeps the base family's limits)."""
    # the hysteresis window implied by the thresholds, kept inside the base family's
    # VH limits where they overlap
    vh_lo = max(vp[0] - vm[2], 0.0)
    vh_hi = vp[2] - vm[0]
    if one_measured:
        lo, hi = max(vh_lo, float(t.vh_min)), min(vh_hi, float(t.vh_max))
        if lo <= hi:
            vh_lo, vh_hi = lo, hi
    # a measured threshold may sit outside the base row's limits: widen them to match
    return ThresholdPoint(
        vdd_v=float(vdd),
        vt_plus_min=vp[0],
        vt_plus_typ=vp[1],
        vt_plus_max=vp[2],
        vt_minus_min=min(vm[0], vm[1]),
        vt_minus_typ=vm[1],
        vt_minus_max=max(vm[2], vm[1]),
        vh_min=vh_lo,
        vh_max=max(vh_hi, vh_lo),
        source="user measurement: " + ", ".join(measured) + f" at {vdd:g} V",
    )
