"""The charge path: a panel, an optional bleed resistor, a series diode and a shunt clamp.

The bleed resistor sits across the panel (the dusk detector's, after the panel and before the
diode); the shunt clamp (a zener or TL431-style shunt) across the storage. At each irradiance
and storage voltage the panel's single-diode curve and the diode's Shockley curve are solved
together for the current into the storage.

References
----------
Single-diode panel model and Voc against irradiance: ref:solar-cell-voc-exercise. Shockley
diode and its reverse leakage: pulsepick.parts.diode (ref:bat54, ref:1n4148).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from pulsepick.errors import RequestError
from pulsepick.parts.diode import DiodeModel
from pulsepick.parts.panel import PanelModel

DiodeLeak = Literal["typ", "max"]

# Rated-light figures are at full sun (1000 W/m², the panel's rating conditions).
FULL_SUN_W_M2 = 1000.0
# Diode current at which its drop is quoted for "Voc minus the diode drop" (estimate: the
# charge current near the end of charging, when only the day load and leakage flow).
DIODE_DROP_AT_A = 1e-6


@dataclass(frozen=True)
class ChargePath:
    """Panel, bleed resistor, series diode and optional shunt clamp."""

    panel: PanelModel
    diode: DiodeModel
    bleed_ohm: float = math.inf  # Ω, resistor across the panel (inf: none)
    clamp_v: float | None = None  # V, shunt clamp across the storage (None: none)
    diode_leak: DiodeLeak = "typ"  # which reverse-leakage figure of the diode to use

    def __post_init__(self) -> None:
        problems = []
        if not self.bleed_ohm > 0:
            problems.append(f"bleed resistor {self.bleed_ohm!r} ohm must be above 0 (inf for none)")
        if self.clamp_v is not None and not (math.isfinite(self.clamp_v) and self.clamp_v > 0):
            problems.append(f"clamp {self.clamp_v!r} V must be a voltage above 0, such as 2.5V")
        if self.diode_leak not in ("typ", "max"):
            problems.append(f"diode leakage {self.diode_leak!r}; accepted: typ, max")
        if problems:
            raise RequestError("charge path: " + "; ".join(problems))


@dataclass(frozen=True)
class OperatingPoint:
    """The charge path at one irradiance and storage voltage."""

    irradiance_w_m2: float  # W/m²
    storage_v: float  # V
    panel_v: float  # V, at the panel terminals (the bleed and the diode's anode)
    panel_a: float  # A, out of the panel
    bleed_a: float  # A, through the bleed resistor
    charge_a: float  # A, into the storage through the diode (negative: reverse leakage)
    dcharge_dv: float  # A/V, slope of charge_a against the storage voltage


class _Solver:
    """Scalar solution of panel + bleed + diode into a storage voltage (pure floats)."""

    def __init__(self, path: ChargePath) -> None:
        p = path.panel
        self.path = path
        self.a = p.diode_voltage_v
        self.i0 = p.saturation_current_a
        self.g_sh = 0.0 if math.isinf(p.r_sh_ohm) else 1.0 / p.r_sh_ohm
        self.rs = p.r_s_ohm
        self.g_b = 0.0 if math.isinf(path.bleed_ohm) else 1.0 / path.bleed_ohm
        j = path.diode.junction
        self.d_is = j.i_s
        self.d_nvt = j.n_vt
        self.d_rs = j.r_s
        self.il_per_w = p.photocurrent(1.0)  # A per W/m²
        self.iterations = 0  # forward-solve iterations, for tuning

    def _junction(self, vj: float, il: float) -> tuple[float, float, float, float]:
        """Panel current, its slope, terminal voltage and its slope at junction voltage vj."""
        e = math.exp(min(vj / self.a, 700.0))
        ip = il - self.i0 * (e - 1.0) - vj * self.g_sh
        dip = -self.i0 * e / self.a - self.g_sh
        return ip, dip, vj - self.rs * ip, 1.0 - self.rs * dip

    def open_junction(self, il: float) -> float:
        """Junction voltage with only the bleed across the panel (Newton from above)."""
        if il <= 0.0:
            return 0.0
        vj = self.a * math.log1p(il / self.i0)
        for _ in range(100):
            ip, dip, vt, dvt = self._junction(vj, il)
            h = ip - vt * self.g_b
            dh = dip - dvt * self.g_b
            step = h / dh
            vj -= step
            if abs(step) <= 1e-13 + 1e-12 * abs(vj):
                break
        return max(vj, 0.0)

    def reverse(self, v_r: float) -> float:
        return float(self.path.diode.reverse_current(max(v_r, 0.0), self.path.diode_leak))

    def solve(self, irradiance: float, v_store: float) -> OperatingPoint:
        il = self.il_per_w * max(irradiance, 0.0)
        vj_ob = self.open_junction(il)
        ip_ob, _, vp_ob, _ = self._junction(vj_ob, il)
        if vp_ob <= v_store:
            # The diode is reverse biased: only its leakage flows, out of the storage.
            # (The leakage lifts the panel node a little; that is neglected here.)
            v_r = v_store - vp_ob
            i_rev = self.reverse(v_r)
            eps = 1e-4
            slope = -(self.reverse(v_r + eps) - i_rev) / eps
            return OperatingPoint(irradiance, v_store, vp_ob, ip_ob, vp_ob * self.g_b, -i_rev,
                                  slope)
        # Forward: r(vj) = vt - vd(id) - v_store rises with vj; its root lies in [0, vj_ob].
        lo, hi = 0.0, vj_ob
        vj = vj_ob
        for _ in range(200):
            self.iterations += 1
            ip, dip, vt, dvt = self._junction(vj, il)
            i_d = ip - vt * self.g_b
            if i_d <= 0.0:  # at (or rounding past) the open point
                hi = vj
                vj = 0.5 * (lo + hi)
                continue
            d_id = dip - dvt * self.g_b
            r = vt - self.d_nvt * math.log1p(i_d / self.d_is) - i_d * self.d_rs - v_store
            dr = dvt - (self.d_nvt / (self.d_is + i_d) + self.d_rs) * d_id
            if r > 0:
                hi = vj
            else:
                lo = vj
            nxt = vj - r / dr
            if not lo < nxt < hi:
                nxt = 0.5 * (lo + hi)
            done = abs(nxt - vj) <= 1e-14 + 1e-13 * abs(vj)
            vj = nxt
            if done or hi - lo <= 1e-15:
                break
        ip, dip, vt, dvt = self._junction(vj, il)
        i_d = max(ip - vt * self.g_b, 0.0)
        d_id = dip - dvt * self.g_b
        dr = dvt - (self.d_nvt / (self.d_is + i_d) + self.d_rs) * d_id
        # Implicit differentiation: d(i_d)/d(v_store) = d_id / dr.
        slope = d_id / dr if dr > 0 else 0.0
        return OperatingPoint(irradiance, v_store, vt, ip, vt * self.g_b, i_d, slope)


def operating_point(path: ChargePath, irradiance_w_m2: float, v_store_v: float) -> OperatingPoint:
    """Solve the charge path at one irradiance (W/m²) and storage voltage (V)."""
    return _Solver(path).solve(float(irradiance_w_m2), float(v_store_v))


def charge_current(path: ChargePath, irradiance_w_m2, v_store_v):
    """Current into the storage (A) through the diode; broadcasts over both arguments.

    Negative values are the diode's reverse leakage out of the storage.
    """
    solver = _Solver(path)
    g, v = np.broadcast_arrays(np.asarray(irradiance_w_m2, dtype=float),
                               np.asarray(v_store_v, dtype=float))
    out = np.array([solver.solve(float(gi), float(vi)).charge_a
                    for gi, vi in zip(g.ravel(), v.ravel(), strict=True)])
    out = out.reshape(g.shape)
    return float(out) if out.ndim == 0 else out


def diode_drop_v(diode: DiodeModel, current_a: float = DIODE_DROP_AT_A) -> float:
    """The diode's forward drop (V) at a small current (default 1 µA, estimate)."""
    return float(diode.voltage(current_a))
