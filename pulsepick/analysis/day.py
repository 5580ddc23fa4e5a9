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

The work is split by job: the charge path in :mod:`pulsepick.analysis.chargepath`, one day's
charging in :mod:`pulsepick.analysis.daycharge`, the night windows in
:mod:`pulsepick.analysis.daywindows`, the runner, autonomy and restart check in
:mod:`pulsepick.analysis.dayrunner`, and the over-voltage clamp in
:mod:`pulsepick.analysis.overvoltage`. This module runs the days and re-exports their names.

References
----------
Single-diode panel model and Voc against irradiance: ref:solar-cell-voc-exercise. Shockley
diode and its reverse leakage: pulsepick.parts.diode (ref:bat54, ref:1n4148). Energy of a
capacitor E = CV²/2.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import timedelta

import numpy as np

from pulsepick.analysis.cautions import storage_cautions
from pulsepick.analysis.chargepath import (  # noqa: F401  (re-exported)
    DIODE_DROP_AT_A,
    FULL_SUN_W_M2,
    ChargePath,
    DiodeLeak,
    OperatingPoint,
    _Solver,
    charge_current,
    diode_drop_v,
    operating_point,
)
from pulsepick.analysis.daycharge import (  # noqa: F401  (re-exported)
    MAX_DV_PER_STEP_V,
    MAX_STEP_S,
    MIN_STEP_S,
    RISE_STEP_V,
    TIMELINE_STEP_S,
    DayResult,
    _as_load,
    _check_storage_voltage,
    _integrate,
    equilibrium_voltage,
    simulate_day,
)
from pulsepick.analysis.dayrunner import (  # noqa: F401  (re-exported)
    CARRY_SHARE,
    MAX_AUTONOMY_NIGHTS,
    Recovery,
    _autonomy,
    _carry_s,
    _recovery,
    _Runner,
    _weakest_light,
)
from pulsepick.analysis.daywindows import (
    NightWindow,
    _day_windows,
    _dusk_times,
    _light_in_night,
)
from pulsepick.analysis.irradiance import DAY_S, Profile, get_profile, irradiance_at
from pulsepick.analysis.night import NightResult
from pulsepick.analysis.overvoltage import CLAMP_DERATING, clamp_advice  # noqa: F401
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.errors import RequestError
from pulsepick.parts.diode import DiodeModel
from pulsepick.parts.panel import PanelModel
from pulsepick.parts.storage import LEAK_LEVELS, Storage

MAX_DAYS = 366


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
    _check_days_inputs(v_start_v, leak_level, stop_at_v)
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

    warnings, v_first = _start_warnings(runner, night, v_start_v, clamp_v)
    rows, nights, tl_t, tl_v = _run_days(runner, profiles, windows, n_days, v_first)

    # Days of autonomy: from full at dusk, with no sun at all.
    autonomy_nights, capped = _autonomy(runner) if autonomy else (None, False)

    rec, restart_note = (_restart_check(runner, profiles, windows, n_days, weak_light)
                         if recovery else (None, None))

    advice, cautions, clamp_warnings = _clamp_checks(storage, panel, diode, clamp_v)
    warnings.extend(clamp_warnings)
    warnings.extend(_light_in_night_warnings(profiles, windows, n_days))
    assumptions = _days_assumptions(storage, panel, diode, diode_leak, leak_level, bleed_ohm,
                                    restart_note)

    return DaysResult(
        storage=storage, path=path, weather=tuple(profiles[i % len(profiles)].name
                                                  for i in range(n_days)),
        night=night, night_load=n_load, day_load=d_load, v_start_v=v_first,
        v_stop_v=runner.v_stop, leak_level=leak_level, rows=tuple(rows),
        nights_lasted=sum(1 for r in rows if r.lasted), autonomy_nights=autonomy_nights,
        autonomy_capped=capped, recovery=rec, v_possible_v=advice.v_possible_v,
        proposed_clamp_v=advice.proposed_clamp_v, proposed_clamp_w=advice.proposed_clamp_w,
        clamp_at_isc_w=clamp_v * advice.isc_a if clamp_v is not None else None,
        timeline_t_s=np.array(tl_t, dtype=float) - night.dawn_s, timeline_v_v=np.array(tl_v),
        assumptions=tuple(assumptions), warnings=tuple(warnings), cautions=tuple(cautions),
        nights=tuple(nights), windows=windows,
    )


def _check_days_inputs(v_start_v: float, leak_level: str, stop_at_v: float | None) -> None:
    """Refuse a start voltage, leakage level or stop voltage out of range."""
    _check_storage_voltage(v_start_v, "start voltage")
    if leak_level not in LEAK_LEVELS:
        raise RequestError(f"leakage level {leak_level!r}; accepted: {', '.join(LEAK_LEVELS)}")
    if stop_at_v is not None and not (math.isfinite(stop_at_v) and stop_at_v >= 0):
        raise RequestError(f"stop voltage {stop_at_v!r} V must be 0 V or more, such as 1.8V")


def _start_warnings(runner: _Runner, night: NightWindow, v_start_v: float,
                    clamp_v: float | None) -> tuple[list[str], float]:
    """Warnings before the first day (a storage too small for the night, a start above the
    clamp), and the voltage the run starts at."""
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
    return warnings, v


def _run_days(runner: _Runner, profiles: list[Profile], windows: tuple[NightWindow, ...],
              n_days: int, v: float):
    """Each day and the night after it: (rows, night results, timeline times, voltages)."""
    night = windows[0]
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
        v_eq = equilibrium_voltage(runner.path, runner.storage, g_peak, runner.day_load,
                                   leak_level=runner.leak_level)
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
    return rows, nights, tl_t, tl_v


def _restart_check(runner: _Runner, profiles: list[Profile], windows: tuple[NightWindow, ...],
                   n_days: int, weak_light) -> tuple[Recovery, str | None]:
    """The restart from empty in the weakest light, and a note naming that light."""
    weakest, weakest_night = _weakest_light(profiles, windows, n_days, weak_light)
    rec = _recovery(runner, weakest, weakest_night)
    restart_note = None
    if weak_light is not None:
        restart_note = f"restart check in the weakest light: {weakest.name}, {weakest.source}"
    return rec, restart_note


def _clamp_checks(storage: Storage, panel: PanelModel, diode: DiodeModel,
                  clamp_v: float | None):
    """The clamp advice, the storage cautions (with a proposed clamp) and a clamp warning."""
    advice = clamp_advice(storage, panel, diode, clamp_v)
    cautions = list(storage_cautions(storage, advice.v_possible_v, advice.what))
    if advice.proposal is not None:
        cautions.append(advice.proposal)
    warnings = []
    reach = advice.v_unclamped_v
    if clamp_v is not None and clamp_v > reach:
        warnings.append(f"the clamp {clamp_v:.2f} V is above what the panel can reach through the "
                        f"diode ({reach:.2f} V): it never conducts")
    return advice, cautions, warnings


def _light_in_night_warnings(profiles: list[Profile], windows: tuple[NightWindow, ...],
                             n_days: int) -> list[str]:
    """A warning for each profile with much of its light inside the night window."""
    warnings = []
    shares: dict[str, float] = {}
    for i in range(n_days if len(set(windows)) > 1 else min(n_days, len(profiles))):
        prof = profiles[i % len(profiles)]
        shares[prof.name] = max(shares.get(prof.name, 0.0), _light_in_night(prof, windows[i]))
    for name, lit_in_night in shares.items():
        if lit_in_night > 0.05:
            warnings.append(
                f"{lit_in_night:.0%} of the {name} profile's light falls inside the night "
                "window and is not used; check the night times against the profile")
    return warnings


def _days_assumptions(storage: Storage, panel: PanelModel, diode: DiodeModel, diode_leak: str,
                      leak_level: str, bleed_ohm: float, restart_note: str | None) -> list[str]:
    """What a run of days took for granted, one line each."""
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
    if restart_note is not None:
        assumptions.append(restart_note)
    if storage.cells_in_series > 1:
        assumptions.append(f"{storage.cells_in_series} cells in series, balanced: "
                           f"{'yes' if storage.balanced else 'no'}")
    return assumptions
