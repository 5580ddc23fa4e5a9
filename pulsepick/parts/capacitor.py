"""Capacitor kinds: tolerance, temperature, DC bias, aging, leakage and ratings.

A kind is a dielectric family (C0G, film, class-2 ceramic, electrolytic,
tantalum) from ``data/parts/capacitor_kinds.csv``; a capacitor of that kind is
then just a value and a rated voltage, so every method takes them as arguments
and works on numpy arrays. Supercapacitors live in ``pulsepick.parts.storage``.

Temperature: class-1 and film kinds change linearly (ppm/K); class-2 ceramics
and electrolytics follow a smooth typical curve inside the band their code
guarantees (an estimate, instead of assuming the band edge everywhere). Class-2
ceramics also lose capacitance under DC bias and with age. Leakage is either
the electrolytic "0.01*C*V or a floor" limit or an insulation resistance.

References
----------
.. [1] Holy Stone MLCC "General Introduction" (EIA codes, aging), ref:holystone-mlcc.
.. [2] TDK FAQ "Temperature characteristics guide (3)", ref:tdk-tempchar-faq.
.. [3] MLCC DC-bias articles (Murata examples; Maxim AN5527), ref:maxim-an5527.
.. [4] United Chemi-Con leakage specification as quoted in ref:electrolytic-leakage-spec;
   Nippon Chemi-Con FAQ on leakage against time, ref:chemicon-leakage-faq.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Literal, get_args

import numpy as np

from pulsepick.errors import DataFileError, PartError
from pulsepick.tables import keyed_row

CapKindKey = Literal[
    "c0g", "film-pet", "film-pp", "x7r", "x5r", "y5v", "electrolytic", "tantalum"
]
CAP_KIND_KEYS: tuple[str, ...] = get_args(CapKindKey)
Level = Literal["typ", "min", "max"]

_TABLE = "parts/capacitor_kinds.csv"
# Rated voltage at least this multiple of the highest working voltage (common practice).
VOLTAGE_DERATING = 1.5
# Class-2 and electrolytic worst-case envelopes reach the full band this far from 25 C
# (estimate; the codes guarantee the band anywhere in their range, but near the
# reference temperature the change is small in real parts).
_ENVELOPE_RAMP_K = 10.0
_T_REF_C = 25.0


@dataclass(frozen=True)
class CapacitorKind:
    """A capacitor dielectric family with its tolerance, drift and leakage models.

    Percentages are in %, temperatures in C, capacitances in F, voltages in V,
    resistances in ohm, times in s.
    """

    key: str  # kind key (CAP_KIND_KEYS)
    name: str  # readable description
    tol_minus_pct: float  # %, usual lower tolerance (positive number)
    tol_plus_pct: float  # %, usual upper tolerance
    class2: bool  # class-2 ceramic: DC-bias loss and aging apply
    temp_model: str  # "linear" (ppm/K) or "curve" (typical curve inside a band)
    tempco_ppm_per_k: float  # ppm/K, typical slope (linear kinds)
    tempco_tol_ppm_per_k: float  # ppm/K, +/- spread of the slope (linear kinds)
    temp_lo_c: float  # C, cold end of the guaranteed range
    temp_hi_c: float  # C, hot end of the guaranteed range
    temp_typ_lo_pct: float  # %, typical change at temp_lo_c (curve kinds)
    temp_typ_hi_pct: float  # %, typical change at temp_hi_c (curve kinds)
    temp_band_minus_pct: float  # %, guaranteed lower band edge (curve kinds, positive)
    temp_band_plus_pct: float  # %, guaranteed upper band edge (curve kinds)
    aging_pct_per_decade: float  # %, loss per decade of hours
    dcbias_keep_at_rated: float  # fraction of C kept at the rated DC voltage
    leak_model: str  # "cv" (electrolytic-style limit) or "ir" (insulation resistance)
    leak_cv_ua_per_uf_v: float  # uA/(uF*V), "cv" limit coefficient
    leak_floor_a: float  # A, "cv" limit floor
    leak_ir_ohm: float  # ohm, "ir" ceiling of the insulation resistance
    leak_ir_rc_s: float  # s, "ir" minimum R_ins*C
    leak_typ_factor: float  # typical leakage / limit
    series_default: str  # usual E-series name
    c_min_f: float  # F, smallest practical value
    c_max_f: float  # F, largest practical value
    v_ratings: tuple[float, ...]  # V, usual rated voltages, increasing
    source_notes: tuple[str, ...]  # provenance

    def __post_init__(self) -> None:
        problems = []
        if self.temp_model not in ("linear", "curve"):
            problems.append(f"temperature model {self.temp_model!r} (accepted: linear, curve)")
        if self.leak_model not in ("cv", "ir"):
            problems.append(f"leakage model {self.leak_model!r} (accepted: cv, ir)")
        if not (0 <= self.tol_minus_pct < 100 and self.tol_plus_pct >= 0):
            problems.append("tolerance needs 0 <= minus < 100 and plus >= 0")
        if not self.temp_lo_c < _T_REF_C < self.temp_hi_c:
            problems.append("temperature range must contain 25 C")
        if self.temp_model == "curve" and not (
            -self.temp_band_minus_pct <= min(self.temp_typ_lo_pct, self.temp_typ_hi_pct)
            and max(self.temp_typ_lo_pct, self.temp_typ_hi_pct) <= self.temp_band_plus_pct
            and self.temp_band_minus_pct < 100
        ):
            problems.append("typical temperature curve must lie inside its band")
        if not 0 < self.dcbias_keep_at_rated <= 1:
            problems.append("DC-bias fraction kept must be in (0, 1]")
        if not 0 < self.leak_typ_factor <= 1:
            problems.append("typical leakage factor must be in (0, 1]")
        if not 0 < self.c_min_f < self.c_max_f:
            problems.append("value range needs 0 < c_min < c_max")
        if not self.v_ratings or list(self.v_ratings) != sorted(set(self.v_ratings)):
            problems.append("voltage ratings must be distinct and increasing")
        if problems:
            raise PartError(f"capacitor kind {self.key}: " + "; ".join(problems))

    def temperature_factor(self, temp_c, which: Level = "typ") -> np.ndarray:
        """C(T)/C(25 C) at temperature ``temp_c`` (C, scalar or array).

        Linear kinds: 1 + tempco*(T - 25), with the slope spread for "min"/"max".
        Curve kinds: "typ" is a smooth curve (quadratic in T - 25 on each side,
        flat at 25 C) through the typical changes at the ends of the guaranteed
        range (estimate); "min"/"max" are the guaranteed band edges, reached
        10 K from 25 C (estimate near 25 C). Outside the range the end value is
        held.

        Parameters
        ----------
        temp_c : temperature, C.
        which : "typ", "min" or "max".
        """
        if which not in ("typ", "min", "max"):
            raise PartError(f"temperature level {which!r} unknown; accepted: typ, min, max")
        t = np.asarray(temp_c, dtype=float)
        if self.temp_model == "linear":
            dt = t - _T_REF_C
            typ = 1.0 + self.tempco_ppm_per_k * 1e-6 * dt
            spread = self.tempco_tol_ppm_per_k * 1e-6 * np.abs(dt)
            return {"typ": typ, "min": typ - spread, "max": typ + spread}[which]
        tc = np.clip(t, self.temp_lo_c, self.temp_hi_c)
        cold = ((_T_REF_C - tc) / (_T_REF_C - self.temp_lo_c)).clip(0.0, 1.0)
        hot = ((tc - _T_REF_C) / (self.temp_hi_c - _T_REF_C)).clip(0.0, 1.0)
        typ = 1.0 + 0.01 * (self.temp_typ_lo_pct * cold**2 + self.temp_typ_hi_pct * hot**2)
        if which == "typ":
            return typ
        ramp = np.clip(np.abs(tc - _T_REF_C) / _ENVELOPE_RAMP_K, 0.0, 1.0)
        if which == "min":
            return np.minimum(1.0 - 0.01 * self.temp_band_minus_pct * ramp, typ)
        return np.maximum(1.0 + 0.01 * self.temp_band_plus_pct * ramp, typ)

    def dc_bias_factor(self, v_bias, v_rated) -> np.ndarray:
        """Fraction of capacitance kept under DC bias ``v_bias`` (V) on a ``v_rated`` part.

        Class-2 ceramics: keep = 1 - (1 - keep_at_rated)*|v_bias|/v_rated, a
        straight line (estimate) held at its rated-voltage value above the
        rating. Other kinds: 1. Arrays broadcast.
        """
        v = np.abs(np.asarray(v_bias, dtype=float))
        vr = np.asarray(v_rated, dtype=float)
        if np.any(vr <= 0):
            raise PartError("rated voltage must be above 0 V")
        if not self.class2:
            return np.ones(np.broadcast(v, vr).shape)
        x = np.clip(v / vr, 0.0, 1.0)
        return 1.0 - (1.0 - self.dcbias_keep_at_rated) * x

    def leakage_a(self, c_f, v, v_rated, which: Literal["typ", "max"] = "typ") -> np.ndarray:
        """Leakage current (A) of a ``c_f`` (F), ``v_rated`` (V) part held at ``v`` (V).

        "cv" kinds: the limit at rated voltage is
        max(k*C[uF]*V_rated[V] uA, floor) (electrolytic: k = 0.01, floor 3 uA,
        ref:electrolytic-leakage-spec); "typ" is ``leak_typ_factor`` * k*C*V_rated without the
        floor (estimate: the settled leakage of a real part scales with C*V).
        "ir" kinds: v / min(leak_ir_ohm, leak_ir_rc_s / C), "typ" scaled by
        ``leak_typ_factor``. Both scale linearly with v/v_rated (negative v
        counts as 0). Arrays broadcast.
        """
        if which not in ("typ", "max"):
            raise PartError(f"leakage level {which!r} unknown; accepted: typ, max")
        c = np.asarray(c_f, dtype=float)
        vr = np.asarray(v_rated, dtype=float)
        if np.any(vr <= 0) or np.any(c <= 0):
            raise PartError("capacitance and rated voltage must be above 0")
        frac = np.maximum(np.asarray(v, dtype=float), 0.0) / vr
        if self.leak_model == "cv":
            cv_a = self.leak_cv_ua_per_uf_v * 1e-6 * (c * 1e6) * vr
            at_rated = (
                np.maximum(cv_a, self.leak_floor_a)
                if which == "max"
                else self.leak_typ_factor * cv_a
            )
            return at_rated * frac
        r_ins = np.minimum(self.leak_ir_ohm, self.leak_ir_rc_s / c)
        at_rated = vr / r_ins * (1.0 if which == "max" else self.leak_typ_factor)
        return at_rated * frac

    def leak_conductance(self, c_f, v_rated, which: Literal["typ", "max"] = "typ") -> np.ndarray:
        """Leakage as a shunt conductance (S): I/V at the rated voltage."""
        vr = np.asarray(v_rated, dtype=float)
        return self.leakage_a(c_f, vr, vr, which) / vr


@cache
def get_cap_kind(key: str) -> CapacitorKind:
    """The capacitor kind for ``key`` (one of CAP_KIND_KEYS).

    Raises
    ------
    PartError
        for an unknown key; the message lists the accepted keys.
    """
    row = keyed_row(_TABLE, key, CAP_KIND_KEYS, "capacitor kind")
    floats = (
        "tol_minus_pct tol_plus_pct tempco_ppm_per_k tempco_tol_ppm_per_k temp_lo_c temp_hi_c "
        "temp_typ_lo_pct temp_typ_hi_pct temp_band_minus_pct temp_band_plus_pct "
        "aging_pct_per_decade dcbias_keep_at_rated leak_cv_ua_per_uf_v leak_floor_a "
        "leak_ir_ohm leak_ir_rc_s leak_typ_factor c_min_f c_max_f"
    ).split()
    try:
        ratings = tuple(float(x) for x in str(row["v_ratings"]).split())
    except ValueError as err:
        raise DataFileError(f"{_TABLE}: bad v_ratings for {key}") from err
    return CapacitorKind(
        key=key,
        name=str(row["name"]),
        class2=bool(row["class2"]),
        temp_model=str(row["temp_model"]),
        leak_model=str(row["leak_model"]),
        series_default=str(row["series_default"]),
        v_ratings=ratings,
        source_notes=(f"{key}: {row['source']}",),
        **{name: float(row[name]) for name in floats},
    )


def pick_voltage_rating(kind: CapacitorKind | str, v_max: float) -> float:
    """Smallest usual rated voltage of ``kind`` at least 1.5 x ``v_max`` (V).

    The 1.5 margin is common practice (derating for life and, on class-2
    ceramics, less DC-bias loss).

    Raises
    ------
    PartError
        when no usual rating is high enough; the message lists the ratings.
    """
    k = get_cap_kind(kind) if isinstance(kind, str) else kind
    need = VOLTAGE_DERATING * max(float(v_max), 0.0)
    for rating in k.v_ratings:
        if rating >= need:
            return rating
    listed = ", ".join(f"{r:g}" for r in k.v_ratings)
    raise PartError(
        f"{k.name} for {v_max:g} V needs a rating of at least {need:g} V; "
        f"usual ratings are {listed} V"
    )
