"""Days of autonomy: the panel and storage pair for the worst month at a latitude.

The worst month is the one whose mid-month clear-sky light on the panel's plane is least
(:mod:`pulsepick.analysis.sky`), taken on its 15th with that date's night. Then:

- storage: the light lasts ``N`` nights in a row from full with no sun at all (the days in
  between drain the day load and leakage), as :func:`pulsepick.analysis.day.simulate_days`
  counts autonomy. The smallest capacitance is found by bisection on a log scale with the
  given part's rating and leakage (estimate); the smallest standard part from the storage
  table each with its own;
- panel: the smallest panel of the panel table (by rated power) that charges that storage
  from the stop voltage to full (the clamp, or the rating) in one day of the worst month
  under the given clear-sky index; a panel that can pass the rating gets the proposed clamp.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from datetime import date as Date

from pulsepick.analysis.chargepath import ChargePath
from pulsepick.analysis.day import simulate_days
from pulsepick.analysis.daycharge import simulate_day
from pulsepick.analysis.daywindows import NightWindow
from pulsepick.analysis.irradiance import Profile
from pulsepick.analysis.overvoltage import clamp_advice
from pulsepick.analysis.sky import Site, daily_irradiation_wh_m2, day_profile
from pulsepick.errors import RequestError
from pulsepick.parts.diode import DiodeModel
from pulsepick.parts.panel import PanelModel, get_panel, panel_keys
from pulsepick.parts.storage import STORAGE_KEYS, Storage, get_storage

MAX_AUTONOMY = 30  # nights asked at most
BISECTIONS = 30


@dataclass(frozen=True)
class AutonomySize:
    """The pair for N nights of autonomy in the worst month, carrying its inputs."""

    nights: int  # N asked
    worst_date: Date  # the worst month's 15th
    night_s: float  # s, that date's night
    irradiation_wh_m2: float  # Wh/m², clear-sky light on the plane that day
    clear_sky_index: float  # the day's weather as a fraction of the clear sky
    min_capacitance_f: float | None  # F, with the given part's rating and leakage
    suggested_storage: str | None  # smallest table part with N nights
    suggested_storage_name: str | None
    storage_autonomy_nights: int | None  # what the suggested part gives
    suggested_panel: str | None  # smallest table panel that refills it in one such day
    suggested_panel_name: str | None
    clamp_v: float | None  # V, the clamp the pair needs (None: none)
    notes: tuple[str, ...]


def worst_month(site: Site, year: int) -> tuple[Date, float]:
    """The 15th of the month with the least clear-sky light on the plane, and that light."""
    best = None
    for month in range(1, 13):
        d = Date(year, month, 15)
        e = daily_irradiation_wh_m2(site, d, step_s=300.0)
        if best is None or e < best[1]:
            best = (d, e)
    assert best is not None
    return best


def _clamp_for(storage: Storage, panel: PanelModel, diode: DiodeModel,
               clamp_v: float | None) -> float | None:
    if clamp_v is not None:
        return clamp_v
    return clamp_advice(storage, panel, diode).proposed_clamp_v


def _autonomy(storage, panel, diode, night_load, window, v_stop_v, clamp_v, day_load,
              leak_level) -> int:
    dark = Profile(name="dark", hours=(0.0, 24.0), irradiance_w_m2=(0.0, 0.0))
    r = simulate_days(storage, panel, diode, [dark], night_load, window, 0.0, days=1,
                      clamp_v=_clamp_for(storage, panel, diode, clamp_v), day_load=day_load,
                      stop_at_v=v_stop_v, leak_level=leak_level, autonomy=True,
                      recovery=False)
    return int(r.autonomy_nights or 0)


def size_for_autonomy(nights: int, site: Site, year: int, storage: Storage,
                      panel: PanelModel, diode: DiodeModel, night_load, *,
                      v_stop_v: float, clamp_v: float | None = None, day_load=None,
                      clear_sky_index: float = 1.0, leak_level: str = "settled",
                      turn_on: str = "civil") -> AutonomySize:
    """The storage and panel for ``nights`` nights of autonomy in the worst month."""
    from pulsepick.analysis.sun import night_span

    if not (isinstance(nights, int) and 1 <= nights <= MAX_AUTONOMY):
        raise RequestError(f"autonomy {nights!r} nights: accepted a whole number from 1 to "
                           f"{MAX_AUTONOMY}")
    worst, light = worst_month(site, year)
    span = night_span(site.latitude_deg, worst, site.longitude_deg, site.utc_offset_h, turn_on)
    if span.night_s >= 86400.0:
        raise RequestError(f"{span.note}: no daylight in the worst month to recharge from")
    window = NightWindow.from_times(span.dusk, span.dawn)
    args = (diode, night_load, window, v_stop_v, clamp_v, day_load, leak_level)

    def lasts(c: float) -> bool:
        return _autonomy(replace(storage, capacitance_f=c), panel, *args) >= nights

    c_min = _min_capacitance(storage.capacitance_f, lasts)
    store, store_n = _smallest_storage(nights, panel, v_stop_v, args)
    chosen_panel = None
    chosen_clamp = None
    if store is not None:
        profile = day_profile(site, worst, clear_sky_index, name="worst month")
        chosen_panel, chosen_clamp = _smallest_panel(store, diode, profile, window, v_stop_v,
                                                     clamp_v, day_load, leak_level)
    notes = (
        f"the worst month: the 15th whose clear-sky light on the panel's plane is least "
        f"({light / 1e3:.2f} kWh/m² on {worst.isoformat()}), with that date's night",
        f"autonomy: the light lasts {nights} night(s) in a row from full with no sun",
        f"the panel charges the storage from the stop voltage {v_stop_v:.2f} V to full in one "
        f"such day at clear-sky index {clear_sky_index:g}",
        "the smallest capacitance keeps the given part's rating and leakage (estimate)",
    )
    return AutonomySize(
        nights=nights, worst_date=worst, night_s=window.night_s, irradiation_wh_m2=light,
        clear_sky_index=clear_sky_index, min_capacitance_f=c_min,
        suggested_storage=None if store is None else store.key,
        suggested_storage_name=None if store is None else store.name,
        storage_autonomy_nights=store_n,
        suggested_panel=None if chosen_panel is None else chosen_panel.key,
        suggested_panel_name=None if chosen_panel is None else chosen_panel.name,
        clamp_v=chosen_clamp, notes=notes)


def _min_capacitance(c_start: float, lasts) -> float | None:
    """The smallest capacitance that ``lasts`` (bisection on a log scale), None above 10 kF."""
    c_min: float | None = c_start
    while not lasts(c_min):
        c_min *= 4.0
        if c_min > 1e4:
            return None
    lo = c_min / 4.0
    while lasts(lo) and lo > 1e-6:
        c_min, lo = lo, lo / 4.0
    for _ in range(BISECTIONS):
        mid = math.sqrt(lo * c_min)
        if lasts(mid):
            c_min = mid
        else:
            lo = mid
        if c_min / lo < 1.002:
            break
    return c_min


def _smallest_storage(nights: int, panel: PanelModel, v_stop_v: float,
                      args) -> tuple[Storage | None, int | None]:
    """The smallest table storage that lasts ``nights`` nights, and the nights it lasts."""
    for key in sorted(STORAGE_KEYS, key=lambda k: get_storage(k).capacitance_f):
        part = get_storage(key)
        if part.v_rated_v + 1e-9 < v_stop_v:
            continue
        n = _autonomy(part, panel, *args)
        if n >= nights:
            return part, n
    return None, None


def _smallest_panel(store: Storage, diode: DiodeModel, profile: Profile, window: NightWindow,
                    v_stop_v: float, clamp_v: float | None, day_load,
                    leak_level: str) -> tuple[PanelModel | None, float | None]:
    """The smallest table panel that fills ``store`` from the stop voltage in one day, and
    the clamp it needs."""
    dawn_s = window.dawn_s
    dusk_s = dawn_s + (86400.0 - window.night_s)
    for key in sorted(panel_keys(), key=lambda k: get_panel(k).voc_v * get_panel(k).isc_a):
        p = get_panel(key)
        clamp = _clamp_for(store, p, diode, clamp_v)
        path = ChargePath(p, diode, clamp_v=clamp)
        day = simulate_day(store, path, profile, v_start_v=v_stop_v, dawn_s=dawn_s,
                           dusk_s=min(dusk_s, 86400.0 + dawn_s - 1.0), day_load=day_load,
                           leak_level=leak_level)
        if day.full:
            return p, clamp
    return None, None
