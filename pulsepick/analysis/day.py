"""The day: charging the storage from the panel, and runs of many days and nights.

The charge path is the panel, an optional bleed resistor across it (the dusk detector's,
after the panel and before the diode), a series diode, and the storage with an optional shunt
clamp (a zener or TL431-style shunt that holds the storage at its set voltage and absorbs the
surplus current). At each moment the panel's single-diode curve and the diode's Shockley curve
are solved together for the current into the storage; the storage voltage then follows

    C dV/dt = I_charge(G(t), V) - I_day_load(V) - I_leak(V, t)      (clamped at V_clamp)

integrated with linearly implicit Euler steps (stable where the charge current falls steeply
near the panel's open-circuit voltage), each step limited in time and in voltage change.

A run of days alternates this with :func:`pulsepick.analysis.night.simulate_night` for the
lit part of each night; after the light stops the storage keeps draining (the circuit, its
leakage and the diode's reverse leakage) until dawn.

References
----------
Single-diode panel model and Voc against irradiance: ref:solar-cell-voc-exercise. Shockley diode and its
reverse leakage: pulsepick.parts.diode (ref:bat54, ref:1n4148). Energy of a capacitor E = CV²/2.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import datetime, timedelta
from typing import Literal

import numpy as np

from pulsepick.analysis.cautions import storage_cautions
from pulsepick.analysis.irradiance import DAY_S, Profile, get_profile, irradiance_at
from pulsepick.analysis.night import DEFAULT_T_SINCE_CHARGE_S, NightResult, simulate_night
from pulsepick.engine.loadcurve import LoadCurve, constant_load
from pulsepick.errors import RequestError
from pulsepick.parts.diode import DiodeModel
from pulsepick.parts.panel import PanelModel
from pulsepick.parts.storage import LEAK_LEVELS, Storage

DiodeLeak = Literal["typ", "max"]

# Integration limits (numerical choices, checked against scipy's Radau in the tests).
MAX_STEP_S = 300.0  # s, longest step
MAX_DV_PER_STEP_V = 0.01  # V, largest voltage change per step
MIN_STEP_S = 1e-3  # s, shortest step
TIMELINE_STEP_S = 600.0  # s, spacing of the timeline kept for charts
# Rated-light figures are at full sun (1000 W/m², the panel's rating conditions).
FULL_SUN_W_M2 = 1000.0
# Diode current at which its drop is quoted for "Voc minus the diode drop" (estimate: the
# charge current near the end of charging, when only the day load and leakage flow).
DIODE_DROP_AT_A = 1e-6
# A proposed clamp sits some 8 % under the rating, like the common 2.4 V zener across a 2.7 V
# cell (common practice); rounded down to 0.1 V.
CLAMP_DERATING = 0.92
# The storage counts as still charging while its voltage keeps rising by this much (V); the
# leakage decay after charging (storage model) starts when it stops.
RISE_STEP_V = 1e-3
MAX_AUTONOMY_NIGHTS = 60  # nights: the autonomy count stops here
MAX_DAYS = 366


# --------------------------------------------------------------------------- charge path

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


# --------------------------------------------------------------------------- one day

def _as_load(load: LoadCurve | float | None, what: str) -> LoadCurve:
    if load is None:
        return constant_load(0.0, label=f"no {what}")
    if isinstance(load, LoadCurve):
        return load
    value = float(load)
    if not (math.isfinite(value) and value >= 0):
        raise RequestError(f"{what} {load!r} A must be 0 or more, such as 2uA")
    return constant_load(value, label=f"{what} {value:g} A")


@dataclass(frozen=True, eq=False)
class DayResult:
    """One daylight period of charging, dawn to dusk, carrying its inputs."""

    profile_name: str  # weather word or user profile name
    dawn_s: float  # s after midnight, start of the day phase
    dusk_s: float  # s after midnight, end of the day phase
    v_start_v: float  # V, at dawn
    v_end_v: float  # V, at dusk
    v_max_v: float  # V, highest over the day
    v_full_v: float  # V, what counts as full: the clamp, or else the rated voltage
    full: bool  # the storage reached v_full_v
    time_to_full_s: float | None  # s after dawn, None when never full
    charge_in_c: float  # C (coulomb), delivered through the diode (net of reverse leakage)
    energy_in_j: float  # J, delivered into the storage node (∫ I·V dt)
    charge_clamp_c: float  # C, absorbed by the shunt clamp
    clamp_peak_w: float  # W, highest clamp dissipation over the day
    charge_load_c: float  # C, drawn by the day load
    charge_leak_c: float  # C, lost to storage leakage
    peak_irradiance_w_m2: float  # W/m², brightest moment inside the day phase
    v_eq_v: float  # V, where the charge current at the peak equals load + leakage
    t_last_charge_s: float  # s after midnight, when the voltage last rose (end of charging)
    timeline_t_s: np.ndarray  # s after midnight
    timeline_v_v: np.ndarray  # V
    timeline_g_w_m2: np.ndarray  # W/m²
    steps: int  # integration steps taken


def _net(solver: _Solver, storage: Storage, day_load: LoadCurve, leak_level: str,
         g: float, v: float, t_since_charge: float) -> tuple[float, float, OperatingPoint]:
    op = solver.solve(g, v)
    i_load = float(np.interp(v, day_load.supply_v, day_load.supply_avg_a))
    dv = 1e-4
    i_load2 = float(np.interp(v + dv, day_load.supply_v, day_load.supply_avg_a))
    i_leak = float(storage.leakage_a(v, t_since_charge, leak_level))
    i_leak2 = float(storage.leakage_a(v + dv, t_since_charge, leak_level))
    net = op.charge_a - i_load - i_leak
    slope = op.dcharge_dv - (i_load2 - i_load) / dv - (i_leak2 - i_leak) / dv
    return net, slope, op


def equilibrium_voltage(path: ChargePath, storage: Storage, irradiance_w_m2: float,
                        day_load: LoadCurve | float | None = None, *,
                        leak_level: str = "settled") -> float:
    """Storage voltage (V) where the charge current equals the day load plus leakage.

    In steady light the storage settles here (unless a clamp holds it lower): the
    equilibrium trap of weak light. Bisection on the falling net current.
    """
    solver = _Solver(path)
    load = _as_load(day_load, "day load")

    def net(v: float) -> float:
        return _net(solver, storage, load, leak_level,
                    irradiance_w_m2, v, 1e9)[0]

    lo = 0.0
    if net(lo) <= 0.0:
        return 0.0
    hi = max(path.panel.voc(max(irradiance_w_m2, 0.0)), 1e-3)
    while net(hi) > 0.0:
        hi *= 2.0
        if hi > 1e4:
            return math.inf
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if net(mid) > 0.0:
            lo = mid
        else:
            hi = mid
        if hi - lo < 1e-6:
            break
    return 0.5 * (lo + hi)


def _profile_knots_s(profile: Profile, t0: float, t1: float) -> list[float]:
    """Times (s after midnight of day 0) of the profile's corners within (t0, t1)."""
    knots = []
    base = math.floor(t0 / DAY_S) * DAY_S
    while base < t1:
        for h in profile.hours:
            t = base + float(h) * 3600.0
            if t0 < t < t1:
                knots.append(t)
        base += DAY_S
    return sorted(set(knots))


def _integrate(solver: _Solver, storage: Storage, profile: Profile | None, t0: float, t1: float,
               v0: float, *, day_load: LoadCurve, leak_level: str, clamp_v: float | None,
               v_full: float, t_last_charge: float) -> dict:
    """Integrate the storage voltage from t0 to t1 (s after midnight of day 0)."""
    c = storage.capacitance_f
    v = float(v0)
    t = float(t0)
    knots = _profile_knots_s(profile, t0, t1) if profile is not None else []
    knots.append(t1)
    k = 0
    totals = {"in": 0.0, "energy": 0.0, "clamp": 0.0, "load": 0.0, "leak": 0.0}
    clamp_peak = 0.0
    v_max = v
    t_full = t0 if v >= v_full - 1e-9 else None
    tl_t = [t]
    tl_v = [v]
    tl_g = [irradiance_at(profile, t) if profile is not None else 0.0]
    next_sample = t + TIMELINE_STEP_S
    dt = 1.0
    steps = 0
    v_rise = v  # highest voltage since the start, in RISE_STEP_V steps
    while t < t1 - 1e-9:
        while knots[k] <= t + 1e-9:
            k += 1
        dt = min(dt * 2.0, MAX_STEP_S, knots[k] - t)
        while True:
            tm = t + 0.5 * dt
            g = irradiance_at(profile, tm) if profile is not None else 0.0
            net, slope, op = _net(solver, storage, day_load, leak_level, g, v,
                                  max(t - t_last_charge, 0.0))
            # Linearly implicit Euler: stable where the charge current falls steeply with V.
            dv = dt * net / (c - dt * min(slope, 0.0))
            held = clamp_v is not None and v >= clamp_v - 1e-12 and net > 0
            # An empty storage that the drains would pull below 0 V stays at 0 V: the step
            # needs no limit there (otherwise a small storage crawls through the night).
            empty = v <= 0.0 and net <= 0.0
            if held or empty or abs(dv) <= MAX_DV_PER_STEP_V or dt <= MIN_STEP_S:
                break
            dt = max(dt * MAX_DV_PER_STEP_V / abs(dv) * 0.9, MIN_STEP_S)
        v_new = v + dv
        clamp_c = 0.0
        if held:
            # Held at the clamp: the shunt takes the whole surplus at the clamp voltage.
            clamp_c = net * dt
            v_new = clamp_v
            clamp_peak = max(clamp_peak, clamp_v * net)
        elif clamp_v is not None and v_new > clamp_v:
            # The shunt takes whatever would lift the storage above its voltage.
            clamp_c = (v_new - clamp_v) * c
            v_new = clamp_v
            clamp_peak = max(clamp_peak, clamp_v * clamp_c / dt)
        v_new = max(v_new, 0.0)
        i_load = float(np.interp(v, day_load.supply_v, day_load.supply_avg_a))
        i_leak = float(storage.leakage_a(v, max(t - t_last_charge, 0.0), leak_level))
        if empty:
            # the drains get only what comes in; the storage stays at 0 V
            share = min(op.charge_a / (i_load + i_leak), 1.0) if i_load + i_leak > 0 else 0.0
            i_load, i_leak, v_new = i_load * max(share, 0.0), i_leak * max(share, 0.0), 0.0
            dv = v_new - v
        # The charge in is what this very step moved: the storage's change, what the clamp
        # took, and the drains over the step (so the totals add up to C·ΔV + drains).
        if held:
            charge_in = clamp_c + (i_load + i_leak) * dt
        else:
            charge_in = c * dv + (i_load + i_leak) * dt
        totals["in"] += charge_in
        totals["energy"] += charge_in * 0.5 * (v + v_new)
        totals["clamp"] += clamp_c
        totals["load"] += i_load * dt
        totals["leak"] += i_leak * dt
        if v_new > v_rise + RISE_STEP_V:
            # Still charging up: the leakage decay (storage model) restarts from here.
            v_rise = v_new
            t_last_charge = t + dt
        if t_full is None and v_new >= v_full - 1e-9:
            frac = 1.0 if v_new == v else min(max((v_full - v) / (v_new - v), 0.0), 1.0)
            t_full = t + frac * dt
        t += dt
        v = v_new
        v_max = max(v_max, v)
        steps += 1
        if t >= next_sample - 1e-9 or t >= t1 - 1e-9:
            tl_t.append(t)
            tl_v.append(v)
            tl_g.append(g)
            next_sample = t + TIMELINE_STEP_S
    return {"v": v, "v_max": v_max, "t_full": t_full, "totals": totals, "clamp_peak": clamp_peak,
            "t_last_charge": t_last_charge, "tl": (tl_t, tl_v, tl_g), "steps": steps}


def _check_storage_voltage(v: float, what: str) -> None:
    if not (isinstance(v, (int, float)) and math.isfinite(v) and v >= 0):
        raise RequestError(f"{what} {v!r} V must be a voltage of 0 V or more, such as 0V or 2.5V")


def simulate_day(storage: Storage, path: ChargePath, profile: Profile, *, v_start_v: float,
                 dawn_s: float = 6 * 3600.0, dusk_s: float = 18 * 3600.0,
                 day_load: LoadCurve | float | None = None, leak_level: str = "settled",
                 t_last_charge_s: float | None = None) -> DayResult:
    """Charge the storage from dawn to dusk (clock seconds after midnight) under a profile.

    Parameters
    ----------
    storage : the supercapacitor.
    path : panel, bleed, diode and clamp.
    profile : the irradiance over the day.
    v_start_v : storage voltage at dawn (V).
    dawn_s, dusk_s : the day phase, s after midnight (dusk after dawn, within one day).
    day_load : what the storage feeds by day (A or a LoadCurve): the chip's quiescent
        current while the oscillators are gated off.
    leak_level : storage leakage level, "settled" or "max".
    t_last_charge_s : when the storage was last charged up (s after midnight, may be
        negative), for the leakage decay; default: long ago.
    """
    _check_storage_voltage(v_start_v, "start voltage")
    if not (0.0 <= dawn_s < dusk_s <= DAY_S + dawn_s):
        raise RequestError(f"day phase {dawn_s!r}..{dusk_s!r} s: dusk must come after dawn")
    if leak_level not in LEAK_LEVELS:
        raise RequestError(f"leakage level {leak_level!r}; accepted: {', '.join(LEAK_LEVELS)}")
    load = _as_load(day_load, "day load")
    solver = _Solver(path)
    v_full = path.clamp_v if path.clamp_v is not None else storage.v_rated_v
    v0 = float(v_start_v)
    if path.clamp_v is not None:
        v0 = min(v0, path.clamp_v)
    out = _integrate(solver, storage, profile, dawn_s, dusk_s, v0, day_load=load,
                     leak_level=leak_level, clamp_v=path.clamp_v, v_full=v_full,
                     t_last_charge=-1e9 if t_last_charge_s is None else t_last_charge_s)
    return _day_result(storage, path, profile, load, leak_level, dawn_s, dusk_s, v0, v_full, out)


def _day_result(storage, path, profile, load, leak_level, dawn_s, dusk_s, v0, v_full, out
                ) -> DayResult:
    ts = np.linspace(dawn_s, dusk_s, 97)
    g_peak = float(np.max(irradiance_at(profile, ts))) if profile is not None else 0.0
    v_eq = equilibrium_voltage(path, storage, g_peak, load, leak_level=leak_level)
    tot = out["totals"]
    tl_t, tl_v, tl_g = (np.array(x, dtype=float) for x in out["tl"])
    return DayResult(
        profile_name=profile.name if profile is not None else "dark",
        dawn_s=float(dawn_s), dusk_s=float(dusk_s), v_start_v=v0, v_end_v=out["v"],
        v_max_v=out["v_max"], v_full_v=v_full, full=out["t_full"] is not None,
        time_to_full_s=None if out["t_full"] is None else out["t_full"] - dawn_s,
        charge_in_c=tot["in"], energy_in_j=tot["energy"], charge_clamp_c=tot["clamp"],
        clamp_peak_w=out["clamp_peak"], charge_load_c=tot["load"], charge_leak_c=tot["leak"],
        peak_irradiance_w_m2=g_peak, v_eq_v=v_eq, t_last_charge_s=out["t_last_charge"],
        timeline_t_s=tl_t, timeline_v_v=tl_v, timeline_g_w_m2=tl_g, steps=out["steps"],
    )


# --------------------------------------------------------------------------- many days

@dataclass(frozen=True)
class NightWindow:
    """When the light is on: dusk as clock seconds after midnight, and the night's length."""

    dusk_s: float  # s after midnight
    night_s: float  # s, dusk to dawn
    dusk_date: datetime | None = None  # the first evening's clock time, when known

    def __post_init__(self) -> None:
        if not (math.isfinite(self.night_s) and 0 < self.night_s < DAY_S):
            raise RequestError(
                f"night length {self.night_s!r} s must be above 0 and under 24 h, such as 12.5h")
        if not (math.isfinite(self.dusk_s) and 0 <= self.dusk_s < DAY_S):
            raise RequestError(f"dusk {self.dusk_s!r} s must lie within the day (0..86400 s)")

    @property
    def dawn_s(self) -> float:
        """Dawn, s after midnight of the morning after."""
        return (self.dusk_s + self.night_s) % DAY_S

    @classmethod
    def centred(cls, night_s: float) -> NightWindow:
        """A night of the given length centred on midnight (s)."""
        return cls(dusk_s=(DAY_S - night_s / 2.0) % DAY_S, night_s=night_s)

    @classmethod
    def from_times(cls, dusk: datetime, dawn: datetime) -> NightWindow:
        """From clock times (dawn before dusk means the next morning)."""
        if dawn <= dusk:
            dawn += timedelta(days=1)
        secs = (dusk - dusk.replace(hour=0, minute=0, second=0, microsecond=0)).total_seconds()
        return cls(dusk_s=secs, night_s=(dawn - dusk).total_seconds(), dusk_date=dusk)


@dataclass(frozen=True)
class DayRow:
    """One day and the night after it."""

    day: int  # 1, 2, ...
    weather: str  # profile name
    v_dawn_v: float  # V, at the start of the day
    v_max_v: float  # V, highest in the day
    full: bool  # reached full (clamp or rated voltage)
    time_to_full_s: float | None  # s after dawn
    charge_in_c: float  # C, harvested through the diode during the day
    energy_in_j: float  # J
    charge_clamp_c: float  # C, absorbed by the clamp
    v_dusk_v: float  # V, at dusk
    v_eq_v: float  # V, equilibrium at the day's peak light
    runtime_s: float  # s, light on during the night
    lasted: bool  # the light lasted until dawn
    flashes: float  # flashes in the night
    stops_at_s: float | None  # s after dusk, when the light stopped
    v_next_dawn_v: float  # V, at the next dawn
    dawn_s: float = math.nan  # s after midnight, this day's dawn (clock)
    dusk_s: float = math.nan  # s after midnight, this day's dusk (clock)
    night_s: float = math.nan  # s, the night after this day


@dataclass(frozen=True)
class Recovery:
    """Does the system restart from empty in weak light?"""

    weather: str  # the profile used (the weakest of the run, or dim)
    peak_irradiance_w_m2: float  # W/m²
    panel_voc_v: float  # V, at the peak of that light
    diode_drop_v: float  # V, at 1 µA (estimate of the end-of-charge current)
    headroom_v: float  # V, Voc - diode drop - stop voltage
    v_eq_v: float  # V, equilibrium at the peak with the day load
    v_dusk_from_empty_v: float  # V, after one such day starting at 0 V
    restarts: bool  # the light runs the night after such a day
    never_restarts: bool  # Voc - diode drop stays under the stop voltage: it never can


@dataclass(frozen=True, eq=False)
class DaysResult:
    """Outcome of :func:`simulate_days`, carrying its inputs."""

    storage: Storage
    path: ChargePath
    weather: tuple[str, ...]  # one word (profile name) per day
    night: NightWindow
    night_load: LoadCurve
    day_load: LoadCurve
    v_start_v: float  # V, at the first dawn
    v_stop_v: float  # V, the night's stop voltage
    leak_level: str  # storage leakage level
    rows: tuple[DayRow, ...]
    nights_lasted: int  # of the run
    autonomy_nights: int | None  # from full with no sun (None: not computed)
    autonomy_capped: bool  # autonomy reached MAX_AUTONOMY_NIGHTS
    recovery: Recovery | None
    v_possible_v: float  # V, highest the storage can reach (clamp, or Voc - diode drop)
    proposed_clamp_v: float | None  # V, a clamp to propose (over-voltage without a clamp)
    proposed_clamp_w: float | None  # W, its dissipation at the panel's full-sun Isc
    clamp_at_isc_w: float | None  # W, dissipation of the given clamp at the full-sun Isc
    timeline_t_s: np.ndarray  # s from the first dawn
    timeline_v_v: np.ndarray  # V
    assumptions: tuple[str, ...]
    warnings: tuple[str, ...]
    cautions: tuple[str, ...]
    nights: tuple[NightResult | None, ...] = field(default=(), repr=False)  # per night
    windows: tuple[NightWindow, ...] = ()  # the night window of each day (its own date's)


def _weather_profiles(weather) -> list[Profile]:
    if isinstance(weather, (str, Profile)):
        weather = [weather]
    profiles = []
    for w in weather:
        profiles.append(w if isinstance(w, Profile) else get_profile(str(w)))
    if not profiles:
        raise RequestError("no weather given; accepted: a list of clear, overcast, dim or profiles")
    return profiles


def _night_stop(night_load: LoadCurve, stop_at_v: float | None) -> float:
    light_stop = night_load.light_stops_below_v()
    user = 0.0 if stop_at_v is None else float(stop_at_v)
    band = night_load.lit_band_v()
    if math.isinf(light_stop) and band is not None:
        # dark only above the band (over the chip's supply range): the light stops at
        # the band's bottom when the storage falls, never at "inf V"
        light_stop = band[0] if band[0] > night_load.supply_v[0] else math.nan
    return user if math.isnan(light_stop) else max(user, light_stop)


class _Runner:
    """Shared state for one multi-day run: the solver and the drains."""

    def __init__(self, storage, path, night_load, day_load, leak_level, window, stop_at_v):
        self.storage = storage
        self.path = path
        self.solver = _Solver(path)
        self.night_load = night_load
        self.day_load = day_load
        self.leak_level = leak_level
        self.window = window
        self.stop_at_v = stop_at_v
        self.v_stop = _night_stop(night_load, stop_at_v)
        self.v_full = path.clamp_v if path.clamp_v is not None else storage.v_rated_v

    def day(self, profile: Profile | None, t0: float, v0: float, t_last: float,
            t1: float | None = None) -> dict:
        dawn = t0
        dusk = t0 + (DAY_S - self.window.night_s) if t1 is None else max(t1, t0)
        return _integrate(self.solver, self.storage, profile, dawn, dusk, v0,
                          day_load=self.day_load, leak_level=self.leak_level,
                          clamp_v=self.path.clamp_v, v_full=self.v_full, t_last_charge=t_last)

    def night(self, t_dusk: float, v_dusk: float, t_last: float, dusk_dt: datetime | None,
              window: NightWindow | None = None):
        """Lit part with simulate_night, the rest dark; returns (result, v_dawn, tl)."""
        w = self.window if window is None else window
        diode_leak = float(self.path.diode.reverse_current(v_dusk, self.path.diode_leak))
        result = None
        t_lit = 0.0
        v = v_dusk
        tl_t: list[float] = []
        tl_v: list[float] = []
        if v_dusk > self.v_stop and v_dusk > 0:
            result = simulate_night(
                self.storage, v_dusk, w.night_s, self.night_load, extra_load_a=diode_leak,
                stop_at_v=self.stop_at_v if self.stop_at_v is not None and
                self.stop_at_v < v_dusk else None,
                dusk=dusk_dt, t_since_charge_s=max(t_dusk - t_last, 0.0),
                leak_level=self.leak_level)
            t_lit = result.runtime_s
            v = result.v_end_v
            keep = np.isfinite(result.timeline.v_v)
            tl_t = list(t_dusk + result.timeline.t_s[keep])
            tl_v = list(result.timeline.v_v[keep])
        if t_lit < w.night_s - 1e-6:
            # Dark until dawn: the circuit, its leakage and the diode's leakage keep draining.
            rest = _integrate(self.solver, self.storage, None, t_dusk + t_lit, t_dusk + w.night_s,
                              v, day_load=self.night_load, leak_level=self.leak_level,
                              clamp_v=None, v_full=math.inf, t_last_charge=t_last)
            v = rest["v"]
            tl_t.extend(rest["tl"][0])
            tl_v.extend(rest["tl"][1])
        return result, v, t_lit, (tl_t, tl_v)


#: A storage that carries the night load for less than this share of the night is
#: reported at once (estimate: a light that fails within the first minutes of a night).
CARRY_SHARE = 0.01


def _carry_s(runner: _Runner) -> float:
    """Seconds the full storage runs the night load down to the light's stop (the load
    current at full voltage throughout: a quick bound, not the simulation)."""
    v_full = min(runner.v_full, runner.storage.v_rated_v)
    i = float(np.interp(v_full, runner.night_load.supply_v, runner.night_load.supply_avg_a))
    dv = v_full - runner.v_stop
    if i <= 0 or dv <= 0:
        return math.inf
    return runner.storage.capacitance_f * dv / i


def simulate_days(storage: Storage, panel: PanelModel, diode: DiodeModel, weather,
                  night_load: LoadCurve | float | None,
                  night: NightWindow | Sequence[NightWindow], v_start_v: float,
                  *, days: int | None = None, clamp_v: float | None = None,
                  bleed_ohm: float = math.inf, day_load: LoadCurve | float | None = None,
                  stop_at_v: float | None = None, leak_level: str = "settled",
                  diode_leak: DiodeLeak = "typ", autonomy: bool = True,
                  recovery: bool = True,
                  weak_light: Sequence[Profile] | None = None) -> DaysResult:
    """Alternate days of charging and nights of blinking.

    Parameters
    ----------
    storage, panel, diode : the parts.
    weather : weather words (clear, overcast, dim) or :class:`Profile` objects, one per
        day; repeated in turn when ``days`` is longer.
    night_load : the blinker at night (LoadCurve, or a constant current in A).
    night : the night window, the same every day; or one window per day (each date's own
        dusk and dawn), at least as many as the days. Day 1 runs from the first window's
        dawn clock time to its dusk; each later day from the night before's dawn to its own
        window's dusk.
    v_start_v : storage voltage at the first dawn (V); 0 for empty.
    days : number of days (default: one per weather entry).
    clamp_v : shunt clamp voltage (V), or None.
    bleed_ohm : dusk-detector bleed across the panel (Ω), inf for none.
    day_load : what the storage feeds by day (A or LoadCurve), e.g. the chip's quiescent.
    stop_at_v : the night's stop voltage (V); the load curve's own stop applies too.
    leak_level : storage leakage, "settled" or "max".
    diode_leak : the diode's reverse leakage figure, "typ" or "max".
    autonomy : also count the nights the storage lasts from full with no sun.
    recovery : also check the restart from empty in the weakest light of the run.
    weak_light : the weak light of each day (such as its date's clear sky times the dim
        clear-sky index), one per day or one for all; the restart check takes the weakest of
        these and the run's own days (default: the dim profile shape).
    """
    _check_storage_voltage(v_start_v, "start voltage")
    if leak_level not in LEAK_LEVELS:
        raise RequestError(f"leakage level {leak_level!r}; accepted: {', '.join(LEAK_LEVELS)}")
    if stop_at_v is not None and not (math.isfinite(stop_at_v) and stop_at_v >= 0):
        raise RequestError(f"stop voltage {stop_at_v!r} V must be 0 V or more, such as 1.8V")
    profiles = _weather_profiles(weather)
    n_days = len(profiles) if days is None else int(days)
    if not 1 <= n_days <= MAX_DAYS:
        raise RequestError(f"days {days!r}: accepted 1 to {MAX_DAYS}")
    windows = _day_windows(night, n_days)
    night = windows[0]
    path = ChargePath(panel=panel, diode=diode, bleed_ohm=bleed_ohm, clamp_v=clamp_v,
                      diode_leak=diode_leak)
    n_load = _as_load(night_load, "night load")
    d_load = _as_load(day_load, "day load")
    runner = _Runner(storage, path, n_load, d_load, leak_level, night, stop_at_v)

    warnings: list[str] = []
    carry_s = _carry_s(runner)
    if carry_s < CARRY_SHARE * night.night_s:
        warnings.append(
            f"the storage cannot carry the night load: from full ({runner.v_full:.2f} V) to "
            f"the light's stop ({runner.v_stop:.2f} V) it lasts about {carry_s:.3g} s of a "
            f"{night.night_s / 3600:.3g} h night; choose a larger storage or a lighter load")
    v = float(v_start_v)
    if clamp_v is not None and v > clamp_v:
        warnings.append(f"start voltage {v:.2f} V is above the clamp {clamp_v:.2f} V; "
                        "the clamp pulls it down at once")
        v = clamp_v
    v_first = v
    rows: list[DayRow] = []
    nights: list[NightResult | None] = []
    tl_t: list[float] = []
    tl_v: list[float] = []
    t_last = -1e9
    dawn_clock = night.dawn_s
    dusks = _dusk_times(windows, dawn_clock)  # clock seconds after midnight of day 1
    for i in range(n_days):
        prof = profiles[i % len(profiles)]
        w = windows[i]
        # Each day runs from the night before's dawn to its own date's dusk.
        t0 = dawn_clock if i == 0 else dusks[i - 1] + windows[i - 1].night_s
        v_dawn = v
        t_dusk = max(dusks[i], t0)
        d = runner.day(prof, t0, v, t_last, t_dusk)
        t_last = d["t_last_charge"]
        tl_t.extend(d["tl"][0])
        tl_v.extend(d["tl"][1])
        dusk_dt = (None if night.dusk_date is None
                   else night.dusk_date + timedelta(seconds=t_dusk - dusks[0]))
        ts = np.linspace(t0, t_dusk, 97)
        g_peak = float(np.max(irradiance_at(prof, ts)))
        v_eq = equilibrium_voltage(path, storage, g_peak, d_load, leak_level=leak_level)
        res, v_next, t_lit, ntl = runner.night(t_dusk, d["v"], t_last, dusk_dt, w)
        tl_t.extend(ntl[0])
        tl_v.extend(ntl[1])
        nights.append(res)
        lasted = res is not None and res.lasts_the_night
        tot = d["totals"]
        rows.append(DayRow(
            day=i + 1, weather=prof.name, v_dawn_v=v_dawn, v_max_v=d["v_max"],
            full=d["t_full"] is not None,
            time_to_full_s=None if d["t_full"] is None else d["t_full"] - t0,
            charge_in_c=tot["in"], energy_in_j=tot["energy"], charge_clamp_c=tot["clamp"],
            v_dusk_v=d["v"], v_eq_v=v_eq, runtime_s=t_lit, lasted=lasted,
            flashes=0.0 if res is None else res.flashes,
            stops_at_s=None if lasted else t_lit, v_next_dawn_v=v_next,
            dawn_s=t0 % DAY_S, dusk_s=t_dusk % DAY_S, night_s=w.night_s,
        ))
        v = v_next

    # Days of autonomy: from full at dusk, with no sun at all.
    autonomy_nights = None
    capped = False
    if autonomy:
        autonomy_nights, capped = _autonomy(runner)

    rec = None
    restart_note = None
    if recovery:
        weakest, weakest_night = _weakest_light(profiles, windows, n_days, weak_light)
        rec = _recovery(runner, weakest, weakest_night)
        if weak_light is not None:
            restart_note = f"restart check in the weakest light: {weakest.name}, {weakest.source}"

    # Over-voltage and the clamp.
    drop = diode_drop_v(diode)
    voc_full = float(panel.voc(FULL_SUN_W_M2))
    v_possible = clamp_v if clamp_v is not None else voc_full - drop
    cautions = list(storage_cautions(storage, v_possible,
                                     "The storage voltage the clamp allows" if clamp_v is not None
                                     else "The panel's open-circuit voltage minus the diode drop"))
    proposed = proposed_w = None
    isc = float(panel.isc(FULL_SUN_W_M2))
    if clamp_v is None and v_possible > storage.v_rated_v:
        proposed = math.floor(CLAMP_DERATING * storage.v_rated_v * 10.0 + 1e-9) / 10.0
        proposed_w = proposed * isc
        cautions.append(
            f"Proposed: a shunt clamp (zener or TL431-style shunt) across the storage at "
            f"{proposed:.1f} V; at the panel's full-sun short-circuit current {isc * 1e3:.0f} mA "
            f"it dissipates up to {proposed_w * 1e3:.0f} mW. Or choose a storage rated at "
            f"{v_possible:.1f} V or more.")
    clamp_w = clamp_v * isc if clamp_v is not None else None
    if clamp_v is not None and clamp_v > voc_full - drop:
        warnings.append(f"the clamp {clamp_v:.2f} V is above what the panel can reach through the "
                        f"diode ({voc_full - drop:.2f} V): it never conducts")

    assumptions = [
        f"panel {panel.name}: single-diode model, Voc {panel.voc_v:g} V and Isc "
        f"{panel.isc_a * 1e3:g} mA at 1000 W/m2, {panel.cells} cells, n {panel.n:g}, "
        f"Rs {panel.r_s_ohm:g} ohm, Rsh {panel.r_sh_ohm:g} ohm ({panel.source_notes})",
        f"diode {diode.name}: Shockley model; at night its reverse leakage ({diode_leak}) at the "
        "dusk voltage drains the storage",
        "weather profiles are repeated in turn; light in the profile outside the day window is "
        "ignored (the dusk detector decides when it is night)",
        "after the light stops, the circuit keeps drawing its current until dawn",
        f"storage leakage: {leak_level} level, higher right after charging (storage model)",
    ]
    if bleed_ohm != math.inf:
        assumptions.append(
            f"the dusk detector's bleed {bleed_ohm / 1e3:g} kohm takes panel current by day")
    shares: dict[str, float] = {}
    for i in range(n_days if len(set(windows)) > 1 else min(n_days, len(profiles))):
        prof = profiles[i % len(profiles)]
        shares[prof.name] = max(shares.get(prof.name, 0.0), _light_in_night(prof, windows[i]))
    for name, lit_in_night in shares.items():
        if lit_in_night > 0.05:
            warnings.append(
                f"{lit_in_night:.0%} of the {name} profile's light falls inside the night "
                "window and is not used; check the night times against the profile")
    if restart_note is not None:
        assumptions.append(restart_note)
    if storage.cells_in_series > 1:
        assumptions.append(f"{storage.cells_in_series} cells in series, balanced: "
                           f"{'yes' if storage.balanced else 'no'}")

    return DaysResult(
        storage=storage, path=path, weather=tuple(profiles[i % len(profiles)].name
                                                  for i in range(n_days)),
        night=night, night_load=n_load, day_load=d_load, v_start_v=v_first,
        v_stop_v=runner.v_stop, leak_level=leak_level, rows=tuple(rows),
        nights_lasted=sum(1 for r in rows if r.lasted), autonomy_nights=autonomy_nights,
        autonomy_capped=capped, recovery=rec, v_possible_v=v_possible, proposed_clamp_v=proposed,
        proposed_clamp_w=proposed_w, clamp_at_isc_w=clamp_w,
        timeline_t_s=np.array(tl_t, dtype=float) - dawn_clock, timeline_v_v=np.array(tl_v),
        assumptions=tuple(assumptions), warnings=tuple(warnings), cautions=tuple(cautions),
        nights=tuple(nights), windows=windows,
    )


def _day_windows(night, n_days: int) -> tuple[NightWindow, ...]:
    """One night window per day: the same window repeated, or the ones given per day."""
    if isinstance(night, NightWindow):
        return (night,) * n_days
    windows = tuple(night)
    bad = [w for w in windows if not isinstance(w, NightWindow)]
    if bad or len(windows) < n_days:
        raise RequestError(f"night windows: give one NightWindow, or one per day ({n_days} "
                           f"days, {len(windows)} windows given)")
    return windows[:n_days]


def _dusk_times(windows: tuple[NightWindow, ...], dawn_clock: float) -> list[float]:
    """Each day's dusk as clock seconds after midnight of day 1.

    The first dusk follows the first dawn by a day less the first night (as a single window
    always did); later dusks keep their dates' distance from it, or fall one day apart with
    their own clock times when the windows carry no dates (or all the same date).
    """
    first = windows[0]
    out = [dawn_clock + DAY_S - first.night_s]
    # one dated window repeated (a design file's clock night) carries the first evening's
    # date on every day: its days fall one day apart, not on the first evening
    dated = (all(w.dusk_date is not None for w in windows)
             and len({w.dusk_date for w in windows}) == len(windows))
    for i, w in enumerate(windows[1:], start=1):
        if dated:
            out.append(out[0] + (w.dusk_date - first.dusk_date).total_seconds())
        else:
            out.append(out[0] + i * DAY_S + (w.dusk_s - first.dusk_s))
    return out


def _weakest_light(profiles, windows, n_days: int, weak_light) -> tuple[Profile, NightWindow]:
    """The weakest light of the run or of the given weak lights, with its day's window."""
    if weak_light is None:
        weak = [get_profile("dim")]
    elif isinstance(weak_light, Profile):
        weak = [weak_light]
    else:
        weak = list(weak_light)
    best: tuple[Profile, NightWindow] | None = None
    for i in range(n_days):
        for prof in (profiles[i % len(profiles)], weak[i % len(weak)] if weak else None):
            if prof is None:
                continue
            if best is None or prof.insolation_wh_m2 < best[0].insolation_wh_m2:
                best = (prof, windows[i])
    assert best is not None
    return best


def _trapezoid(y: np.ndarray, x: np.ndarray) -> float:
    return float(np.sum(0.5 * (y[1:] + y[:-1]) * np.diff(x)))


def _light_in_night(profile: Profile, night: NightWindow) -> float:
    """Share of the profile's daily light that falls inside the night window."""
    t = np.linspace(0.0, DAY_S, 24 * 12 + 1)
    g = irradiance_at(profile, t)
    total = _trapezoid(g, t)
    if total <= 0:
        return 0.0
    in_night = ((t - night.dusk_s) % DAY_S) < night.night_s
    gn = np.where(in_night, g, 0.0)
    part = _trapezoid(gn, t)
    return part / total


def _autonomy(runner: _Runner) -> tuple[int, bool]:
    """Nights lasted from full at the first dusk, with no sun at all."""
    w = runner.window
    day_len = DAY_S - w.night_s
    v = runner.v_full
    t = 0.0
    t_last = -DEFAULT_T_SINCE_CHARGE_S
    count = 0
    for _ in range(MAX_AUTONOMY_NIGHTS):
        res, v, _, _ = runner.night(t, v, t_last, None)
        if res is None or not res.lasts_the_night:
            return count, False
        count += 1
        t += w.night_s
        d = runner.day(None, t, v, t_last)
        v = d["v"]
        t += day_len
    return count, True


def _recovery(runner: _Runner, profile: Profile, night: NightWindow) -> Recovery:
    path = runner.path
    day_len = DAY_S - night.night_s
    t0 = night.dawn_s
    ts = np.linspace(t0, t0 + day_len, 97)
    g_peak = float(np.max(irradiance_at(profile, ts)))
    voc = float(path.panel.voc(g_peak))
    drop = diode_drop_v(path.diode)
    v_eq = equilibrium_voltage(path, runner.storage, g_peak, runner.day_load,
                               leak_level=runner.leak_level)
    d = runner.day(profile, t0, 0.0, -1e9, t0 + day_len)
    v_dusk = d["v"]
    return Recovery(
        weather=profile.name, peak_irradiance_w_m2=g_peak, panel_voc_v=voc, diode_drop_v=drop,
        headroom_v=voc - drop - runner.v_stop, v_eq_v=v_eq, v_dusk_from_empty_v=v_dusk,
        restarts=v_dusk > runner.v_stop, never_restarts=voc - drop <= runner.v_stop,
    )
