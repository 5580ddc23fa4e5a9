"""One day of charging: the storage voltage from dawn to dusk through the charge path.

The storage voltage follows

    C dV/dt = I_charge(G(t), V) - I_day_load(V) - I_leak(V, t)      (clamped at V_clamp)

integrated with linearly implicit Euler steps (stable where the charge current falls steeply
near the panel's open-circuit voltage), each step limited in time and in voltage change. The
charge current comes from :mod:`pulsepick.analysis.chargepath`.

References
----------
Energy of a capacitor E = CV²/2.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pulsepick.analysis.chargepath import ChargePath, OperatingPoint, _Solver
from pulsepick.analysis.irradiance import DAY_S, Profile, irradiance_at
from pulsepick.engine.loadcurve import LoadCurve, constant_load
from pulsepick.errors import RequestError
from pulsepick.parts.storage import LEAK_LEVELS, Storage

# Integration limits (numerical choices, checked against scipy's Radau in the tests).
MAX_STEP_S = 300.0  # s, longest step
MAX_DV_PER_STEP_V = 0.01  # V, largest voltage change per step
MIN_STEP_S = 1e-3  # s, shortest step
TIMELINE_STEP_S = 600.0  # s, spacing of the timeline kept for charts
# The storage counts as still charging while its voltage keeps rising by this much (V); the
# leakage decay after charging (storage model) starts when it stops.
RISE_STEP_V = 1e-3


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

def _try_step(solver: _Solver, storage: Storage, profile: Profile | None, day_load: LoadCurve,
              leak_level: str, clamp_v: float | None, t: float, v: float, dt: float,
              t_last_charge: float):
    """Shorten the step until its voltage change is small enough; the step and its figures."""
    c = storage.capacitance_f
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
            return dt, g, net, op, dv, held, empty
        dt = max(dt * MAX_DV_PER_STEP_V / abs(dv) * 0.9, MIN_STEP_S)


def _take_step(storage: Storage, day_load: LoadCurve, leak_level: str, clamp_v: float | None,
               t: float, v: float, dt: float, t_last_charge: float, net: float,
               op: OperatingPoint, dv: float, held: bool, empty: bool):
    """Where one step's charge goes: (new voltage, clamp charge, clamp power or None,
    load current, leakage current, charge in)."""
    c = storage.capacitance_f
    v_new = v + dv
    clamp_c = 0.0
    clamp_w = None
    if held:
        # Held at the clamp: the shunt takes the whole surplus at the clamp voltage.
        clamp_c = net * dt
        v_new = clamp_v
        clamp_w = clamp_v * net
    elif clamp_v is not None and v_new > clamp_v:
        # The shunt takes whatever would lift the storage above its voltage.
        clamp_c = (v_new - clamp_v) * c
        v_new = clamp_v
        clamp_w = clamp_v * clamp_c / dt
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
    return v_new, clamp_c, clamp_w, i_load, i_leak, charge_in


def _integrate(solver: _Solver, storage: Storage, profile: Profile | None, t0: float, t1: float,
               v0: float, *, day_load: LoadCurve, leak_level: str, clamp_v: float | None,
               v_full: float, t_last_charge: float) -> dict:
    """Integrate the storage voltage from t0 to t1 (s after midnight of day 0)."""
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
        dt, g, net, op, dv, held, empty = _try_step(solver, storage, profile, day_load,
                                                    leak_level, clamp_v, t, v, dt, t_last_charge)
        v_new, clamp_c, clamp_w, i_load, i_leak, charge_in = _take_step(
            storage, day_load, leak_level, clamp_v, t, v, dt, t_last_charge, net, op, dv, held,
            empty)
        if clamp_w is not None:
            clamp_peak = max(clamp_peak, clamp_w)
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
