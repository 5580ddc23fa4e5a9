"""The night: a charged supercapacitor feeding a blinker from dusk to dawn.

The storage voltage obeys ``C dV/dt = -(I_load(V) + I_leak(V, t) + I_extra)``,
integrated with the Dormand-Prince 5(4) pair of :mod:`pulsepick.engine.dormand_prince`
(the method and step-size rule of scipy's ``solve_ivp`` RK45, which takes over only for
a night past that integrator's step bound, so a night needs no scipy import) and
stopped by a terminal event at the stop voltage: the larger of the user's ``stop_at_v`` and
the load curve's own stop voltage (below it the LED no longer reaches visible
current or the chip leaves its supply range). Flash count and the charge each
drain takes are integrated alongside the voltage.

With constant currents this reduces to the backup-time formula
``T = C (V0 - V1) / (I + IL)`` (Panasonic Gold Capacitors technical guide,
ref:panasonic-gold-cap), which the tests check.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from datetime import datetime, timedelta
from typing import Any

import numpy as np

from pulsepick.analysis.cautions import GENERAL_CAUTIONS, storage_cautions
from pulsepick.analysis.night_notes import (  # noqa: F401  (re-exported)
    DIM_BY_DAWN_SHARE,
    DIM_PREFIX,
    ESR_DROP_WARNING_V,
    LEAK_SHARE_WARNING,
    dimming_note,
    night_assumptions,
    night_warnings,
    solver_message,
    stop_reason,
)
from pulsepick.engine.dormand_prince import Stiff, integrate
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.errors import PartError, RequestError
from pulsepick.parts.storage import LEAK_LEVELS, Storage

# estimate: a solar-charged store is full by early afternoon, some six hours before dusk.
DEFAULT_T_SINCE_CHARGE_S = 6 * 3600.0
TIMELINE_POINTS = 200  # samples for a chart of the night
_RTOL = 1e-8  # the integration's relative tolerance; the budget checks need 0.5 %
_ATOL_V = 1e-9  # V


@dataclass(frozen=True)
class NightPoint:
    """The blinker at one moment of the night (dusk, midnight or dawn)."""

    label: str  # "dusk", "midnight" (the middle of the night), "dawn"; "start" in an open run
    t_s: float  # s after dusk
    clock: str | None  # "HH:MM" when the dusk clock time is known
    v_v: float  # V, storage voltage; nan once the light has stopped
    lit: bool  # the light is on
    supply_avg_a: float  # A, circuit average current; nan when off or bare
    period_s: float  # s
    flash_s: float  # s
    led_peak_a: float  # A
    effective_a: float  # A, effective LED current
    effective_cd: float  # cd, nan when the LED intensity is unknown


@dataclass(frozen=True, eq=False)
class NightTimeline:
    """The night sampled evenly for a chart; nan after the light stops."""

    t_s: np.ndarray  # s after dusk
    v_v: np.ndarray  # V
    effective_a: np.ndarray  # A, nan for a bare run
    effective_cd: np.ndarray  # cd, nan where unknown


@dataclass(frozen=True, eq=False)
class NightResult:
    """Outcome of :func:`simulate_night`, carrying its inputs."""

    # inputs
    storage: Storage
    load: LoadCurve | None
    v_start_v: float  # V
    duration_s: float  # s, dusk to dawn
    extra_load_a: float  # A
    storage_leak_a: float | None  # A, fixed leakage given by the user, or None for the model
    leak_level: str  # "settled" or "max" (used when storage_leak_a is None)
    t_since_charge_s: float  # s, from full charge to dusk
    capacitance_f: float  # F, capacitance used
    dusk: datetime | None
    # outcome
    v_stop_v: float  # V, the stop voltage used
    light_stop_v: float  # V, the load curve's stop voltage; nan when none
    lasts_the_night: bool
    runtime_s: float  # s, until the light stops, or the whole night
    stops_at: str | None  # "HH:MM" when it stops and dusk is known
    dawn_clock: str | None  # "HH:MM" when dusk is known
    stop_reason: str
    v_end_v: float  # V, at dawn or at the stop
    flashes: float  # flashes over the lit time
    usable_energy_fraction: float  # 1 - (v_end / v_start)^2
    energy_used_j: float  # J, 0.5 C (v_start^2 - v_end^2)
    charge_circuit_c: float  # C (coulomb), drawn by the circuit
    charge_leak_c: float  # C, lost to storage leakage
    charge_extra_c: float  # C, drawn by the extra load
    figures: tuple[NightPoint, ...]  # dusk, midnight, dawn; only "start" in an open-ended run
    timeline: NightTimeline
    assumptions: tuple[str, ...]
    warnings: tuple[str, ...]
    cautions: tuple[str, ...]
    success: bool  # the integrator finished
    message: str  # how the integration ended, in our words

    @property
    def charge_total_c(self) -> float:
        """All charge drained over the run, C (coulomb)."""
        return self.charge_circuit_c + self.charge_leak_c + self.charge_extra_c

    def shares(self) -> dict[str, float]:
        """Fraction of the drained charge taken by each drain (sums to 1; nan if none)."""
        total = self.charge_total_c
        parts = {
            "circuit": self.charge_circuit_c,
            "storage_leakage": self.charge_leak_c,
            "extra_load": self.charge_extra_c,
        }
        return {k: (v / total if total > 0 else math.nan) for k, v in parts.items()}


def _clock(dusk: datetime | None, t_s: float) -> str | None:
    if dusk is None:
        return None
    return (dusk + timedelta(seconds=round(t_s / 60.0) * 60.0)).strftime("%H:%M")


def _check_inputs(storage, v_start_v, duration_s, extra_load_a, storage_leak_a, stop_at_v,
                  t_since_charge_s, capacitance_f, leak_level) -> None:
    problems = []
    if not (math.isfinite(v_start_v) and v_start_v > 0):
        problems.append(f"start voltage {v_start_v!r} V (give a voltage above 0, such as 2.5V)")
    if not (math.isfinite(duration_s) and duration_s > 0):
        problems.append(f"night length {duration_s!r} s (give a length above 0, such as 12.5h)")
    if not (math.isfinite(extra_load_a) and extra_load_a >= 0):
        problems.append(f"extra load {extra_load_a!r} A (give 0 or more, such as 10uA)")
    if storage_leak_a is not None and not (math.isfinite(storage_leak_a) and storage_leak_a >= 0):
        problems.append(f"storage leakage {storage_leak_a!r} A (give 0 or more, such as 0.2uA)")
    if stop_at_v is not None:
        if not (math.isfinite(stop_at_v) and stop_at_v >= 0):
            problems.append(f"stop voltage {stop_at_v!r} V (give 0 V or more, such as 1.8V)")
        elif math.isfinite(v_start_v) and stop_at_v >= v_start_v:
            problems.append(
                f"stop voltage {stop_at_v:g} V is not below the start voltage {v_start_v:g} V "
                "(give a stop voltage under the start)"
            )
    if not (math.isfinite(t_since_charge_s) and t_since_charge_s >= 0):
        problems.append(f"time since charging {t_since_charge_s!r} s (give 0 or more)")
    if leak_level not in LEAK_LEVELS:
        problems.append(f"leakage level {leak_level!r} (accepted: {', '.join(LEAK_LEVELS)})")
    if problems:
        raise RequestError("cannot simulate the night: " + "; ".join(problems))
    if capacitance_f is not None and not (math.isfinite(capacitance_f) and capacitance_f > 0):
        raise PartError(
            f"capacitance {capacitance_f!r} F is impossible; give a value above 0, such as 0.22F"
        )


@dataclass(frozen=True, eq=False)
class _Run:
    """The integration of one night: the solution and how it ended."""

    dense: Any  # the state at any time of the run (a callable), or None when not started
    runtime: float  # s
    state_end: np.ndarray  # v, flashes, circuit, leakage and extra charge at the end
    success: bool
    stopped: bool
    message: str


def _stop_voltages(load: LoadCurve | None, stop_at_v: float | None) -> tuple[float, float, bool]:
    """The light's own stop voltage, the stop voltage used, and whether the light sets it."""
    light_stop = load.light_stops_below_v() if load is not None else math.nan
    user_stop = 0.0 if stop_at_v is None else float(stop_at_v)
    v_stop = user_stop if math.isnan(light_stop) else max(user_stop, light_stop)
    light_is_limit = not math.isnan(light_stop) and light_stop >= user_stop
    return light_stop, v_stop, light_is_limit


def _night_rhs(storage, load, c, extra_load_a, storage_leak_a, t_since_charge_s, leak_level):
    """The right-hand side: storage voltage, flashes and the charge of each drain."""
    if load is not None:
        grid = load.supply_v
        current_tab = load.supply_avg_a
        runs = np.isfinite(load.period_s) & (load.period_s > 0)
        rate_tab = np.divide(1.0, load.period_s, out=np.zeros_like(grid), where=runs)
    leak_fixed = storage_leak_a

    def rhs(t, y):
        v = y[0]
        if load is not None:
            i_circuit = float(np.interp(v, grid, current_tab))
            rate = float(np.interp(v, grid, rate_tab))
        else:
            i_circuit = rate = 0.0
        if leak_fixed is not None:
            i_leak = leak_fixed
        else:
            i_leak = float(storage.leakage_a(v, t_since_charge_s + t, leak_level))
        return [-(i_circuit + i_leak + extra_load_a) / c, rate, i_circuit, i_leak, extra_load_a]

    return rhs


def _integrate_night(rhs, v_start_v: float, v_stop: float, duration_s: float) -> _Run:
    """Integrate from dusk until the stop voltage or dawn."""
    def reach_stop(t, y):
        return y[0] - v_stop

    reach_stop.terminal = True  # type: ignore[attr-defined]
    reach_stop.direction = -1  # type: ignore[attr-defined]

    if v_start_v <= v_stop:
        # The light is never on at this start voltage: nothing to integrate.
        return _Run(
            dense=None, runtime=0.0, state_end=np.array([v_start_v, 0.0, 0.0, 0.0, 0.0]),
            success=True, stopped=True,
            message="not started: the start voltage is at or below the stop voltage",
        )
    args = (rhs, (0.0, float(duration_s)), [float(v_start_v), 0.0, 0.0, 0.0, 0.0])
    kw = {"rtol": _RTOL, "atol": [_ATOL_V, 1e-9, 1e-15, 1e-15, 1e-15], "events": reach_stop}
    try:
        sol = integrate(*args, **kw)
        t_last = float(sol.sol.t[-1])
    except Stiff:  # stiff for it or past its step bound: scipy's RK45, the same method
        from scipy.integrate import solve_ivp

        sol = solve_ivp(*args, method="RK45", dense_output=True, **kw)
        t_last = float(sol.t[-1])
    dense = sol.sol
    success = bool(sol.success)
    stopped = len(sol.t_events[0]) > 0  # the one event is terminal
    if stopped:
        runtime = float(sol.t_events[0][0])
        state_end = np.asarray(sol.y_events[0][0], dtype=float)
        state_end[0] = v_stop  # exactly at the event, not a root-finder's neighbour
    else:
        runtime = t_last
        state_end = np.asarray(dense(t_last), dtype=float)
    message = solver_message(success, stopped, v_stop, runtime, duration_s)
    return _Run(dense=dense, runtime=runtime, state_end=state_end, success=success,
                stopped=stopped, message=message)


def _night_figures(run: _Run, load, dusk, v_start_v: float, duration_s: float,
                   lasts: bool) -> tuple[NightPoint, ...]:
    """The blinker at dusk, midnight and dawn."""
    dense, runtime = run.dense, run.runtime

    def v_at(t: float) -> float:
        if dense is None:
            return v_start_v if t == 0.0 else math.nan
        return float(dense(t)[0]) if t <= runtime else math.nan

    def point(label: str, t: float) -> NightPoint:
        v = v_at(t)
        on = bool(math.isfinite(v) and (lasts or t < runtime))
        figs = load.at(v) if (load is not None and on) else None
        get = (lambda k: float(figs[k])) if figs else (lambda k: math.nan)
        return NightPoint(
            label=label, t_s=t, clock=_clock(dusk, t), v_v=v, lit=on,
            supply_avg_a=get("supply_avg_a"), period_s=get("period_s"), flash_s=get("flash_s"),
            led_peak_a=get("led_peak_a"), effective_a=get("effective_a"),
            effective_cd=get("effective_cd"),
        )

    return (point("dusk", 0.0), point("midnight", duration_s / 2), point("dawn", duration_s))


def _night_timeline(run: _Run, load, v_start_v: float, duration_s: float) -> NightTimeline:
    """The night sampled evenly for a chart."""
    dense = run.dense
    t_grid = np.linspace(0.0, duration_s, TIMELINE_POINTS)
    v_grid = np.full_like(t_grid, math.nan)
    if dense is not None:
        inside = t_grid <= run.runtime
        v_grid[inside] = dense(t_grid[inside])[0]
    else:
        v_grid[0] = v_start_v
    if load is not None and dense is not None:
        eff_a = np.interp(v_grid, load.supply_v, load.effective_a)
        eff_cd = np.interp(v_grid, load.supply_v, load.effective_cd)
        eff_a[~np.isfinite(v_grid)] = math.nan
        eff_cd[~np.isfinite(v_grid)] = math.nan
    else:
        eff_a = np.full_like(t_grid, math.nan)
        eff_cd = np.full_like(t_grid, math.nan)
    return NightTimeline(t_s=t_grid, v_v=v_grid, effective_a=eff_a, effective_cd=eff_cd)


def simulate_night(
    storage: Storage,
    v_start_v: float,
    duration_s: float,
    load: LoadCurve | None,
    *,
    extra_load_a: float = 0.0,
    storage_leak_a: float | None = None,
    stop_at_v: float | None = None,
    dusk: datetime | None = None,
    t_since_charge_s: float = DEFAULT_T_SINCE_CHARGE_S,
    capacitance_f: float | None = None,
    leak_level: str = "settled",
) -> NightResult:
    """Run the storage through one night and report when the light stops.

    Parameters
    ----------
    storage : the supercapacitor.
    v_start_v : storage voltage at dusk, V.
    duration_s : dusk to dawn, s.
    load : the circuit's :class:`LoadCurve`, or None for a bare storage budget.
    extra_load_a : a fixed extra current, A (a dusk detector, a diode's reverse leakage).
    storage_leak_a : a fixed storage leakage, A, replacing the leakage model (as
        ``IL`` in the backup-time formula, ref:panasonic-gold-cap).
    stop_at_v : stop when the storage falls to this voltage, V. The load curve's
        own stop voltage applies too; a bare run without it runs down to 0 V.
    dusk : clock time of dusk, for "stops at HH:MM".
    t_since_charge_s : time from full charge to dusk, s (the leakage model falls with it).
    capacitance_f : capacitance to use instead of the nominal one, F (tolerance corners).
    leak_level : ``"settled"`` or ``"max"`` leakage of the storage model.

    Returns
    -------
    NightResult

    References
    ----------
    Backup time T = C (V0 - V1) / (I + IL) and the energy E = C V^2 / 2: Panasonic
    Gold Capacitors technical guide (ref:panasonic-gold-cap).
    """
    _check_inputs(storage, v_start_v, duration_s, extra_load_a, storage_leak_a, stop_at_v,
                  t_since_charge_s, capacitance_f, leak_level)
    duration_s = float(duration_s)
    c = storage.capacitance_f if capacitance_f is None else float(capacitance_f)
    light_stop, v_stop, light_is_limit = _stop_voltages(load, stop_at_v)
    rhs = _night_rhs(storage, load, c, extra_load_a, storage_leak_a, t_since_charge_s,
                     leak_level)
    run = _integrate_night(rhs, v_start_v, v_stop, duration_s)
    runtime, state_end = run.runtime, run.state_end
    v_end = float(state_end[0])
    lasts = not run.stopped

    figures = _night_figures(run, load, dusk, v_start_v, duration_s, lasts)
    timeline = _night_timeline(run, load, v_start_v, duration_s)
    reason = stop_reason(load, v_start_v, v_stop, runtime, lasts, light_is_limit, stop_at_v)

    usable = 1.0 - (v_end / v_start_v) ** 2  # E = C V^2 / 2 (ref:panasonic-gold-cap)
    energy_used = float(storage.energy_j(v_start_v, c) - storage.energy_j(v_end, c))
    result_charges = state_end[2:5]
    assumptions = night_assumptions(storage, load, c, capacitance_f, storage_leak_a, leak_level,
                                    t_since_charge_s, light_stop)
    warnings = night_warnings(storage, load, v_start_v, result_charges, runtime, lasts, reason,
                              figures, run.success, run.message)
    cautions = tuple(storage_cautions(storage, v_start_v, "The start voltage")) + GENERAL_CAUTIONS

    return NightResult(
        storage=storage, load=load, v_start_v=float(v_start_v), duration_s=float(duration_s),
        extra_load_a=float(extra_load_a), storage_leak_a=storage_leak_a, leak_level=leak_level,
        t_since_charge_s=float(t_since_charge_s), capacitance_f=c, dusk=dusk,
        v_stop_v=v_stop, light_stop_v=light_stop, lasts_the_night=lasts, runtime_s=runtime,
        stops_at=None if lasts else _clock(dusk, runtime), dawn_clock=_clock(dusk, duration_s),
        stop_reason=reason, v_end_v=v_end, flashes=float(state_end[1]),
        usable_energy_fraction=float(usable), energy_used_j=energy_used,
        charge_circuit_c=float(result_charges[0]), charge_leak_c=float(result_charges[1]),
        charge_extra_c=float(result_charges[2]), figures=figures, timeline=timeline,
        assumptions=tuple(assumptions), warnings=tuple(warnings), cautions=cautions,
        success=run.success, message=run.message,
    )


MAX_BUDGET_S = 30 * 86400.0  # s, longest open-ended run (a month)


def simulate_until_stop(
    storage: Storage,
    v_start_v: float,
    load: LoadCurve | None,
    *,
    stop_at_v: float | None,
    max_duration_s: float = MAX_BUDGET_S,
    **options,
) -> NightResult:
    """Run until the light stops (or the stop voltage is reached), with no dawn.

    For checking a budget without a night: the run is open-ended up to
    ``max_duration_s`` (s) and the result's night ends a tenth of the runtime after
    the stop, so its timeline shows the whole run. The other keyword arguments are
    those of :func:`simulate_night`. A result that "lasts the night" here lasted
    ``max_duration_s``.

    With no night there is no dusk, midnight or dawn: the result's ``figures`` hold
    one point, labelled ``"start"`` (the start of the run); the end of the run is in
    ``runtime_s`` and ``v_end_v``.
    """
    if stop_at_v is None and (load is None or math.isnan(load.light_stops_below_v())):
        raise RequestError(
            "an open-ended run needs a stop: give a stop voltage such as 1.8V, or a night"
        )
    _check_inputs(storage, v_start_v, max_duration_s, options.get("extra_load_a", 0.0),
                  options.get("storage_leak_a"), stop_at_v,
                  options.get("t_since_charge_s", DEFAULT_T_SINCE_CHARGE_S),
                  options.get("capacitance_f"), options.get("leak_level", "settled"))
    c = options.get("capacitance_f") or storage.capacitance_f
    leak = options.get("storage_leak_a")
    if leak is None:
        leak = float(storage.leakage_a(v_start_v, 0.0, options.get("leak_level", "settled")))
    i_start = leak + options.get("extra_load_a", 0.0)
    if load is not None:
        i_start += float(load.current_a(v_start_v))
    v_stop = max(stop_at_v or 0.0, 0.0 if load is None else np.nan_to_num(
        load.light_stops_below_v(), nan=0.0, posinf=v_start_v))
    if i_start > 0 and v_start_v > v_stop:
        # The current is largest at the start (leakage falls with voltage and time), so
        # the linear estimate is a lower bound; ten times it covers the slowdown.
        horizon = min(max_duration_s, max(3600.0, 10 * c * (v_start_v - v_stop) / i_start))
    else:
        horizon = max_duration_s
    first = simulate_night(storage, v_start_v, horizon, load, stop_at_v=stop_at_v, **options)
    if first.lasts_the_night and horizon < max_duration_s:
        first = simulate_night(storage, v_start_v, max_duration_s, load, stop_at_v=stop_at_v,
                               **options)
    if not (first.lasts_the_night or first.runtime_s == 0.0):
        first = simulate_night(storage, v_start_v, 1.1 * first.runtime_s, load,
                               stop_at_v=stop_at_v, **options)
    return replace(first, figures=(replace(first.figures[0], label="start"),))
