"""The machinery of a run of days: the runner that alternates day and night, the days of
autonomy from full, and the restart from empty in weak light.

A night runs :func:`pulsepick.analysis.night.simulate_night` for its lit part; after the
light stops the storage keeps draining (the circuit, its leakage and the diode's reverse
leakage) until dawn. Split out of :mod:`pulsepick.analysis.day`, which re-exports the public
names.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime

import numpy as np

from pulsepick.analysis.chargepath import _Solver, diode_drop_v
from pulsepick.analysis.daycharge import _integrate, equilibrium_voltage
from pulsepick.analysis.daywindows import NightWindow
from pulsepick.analysis.irradiance import DAY_S, Profile, get_profile, irradiance_at
from pulsepick.analysis.night import DEFAULT_T_SINCE_CHARGE_S, simulate_night
from pulsepick.engine.loadcurve import LoadCurve

MAX_AUTONOMY_NIGHTS = 60  # nights: the autonomy count stops here


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
