"""Solving back for energy: what storage, or what load, lasts until dawn?

Each answer is a search over the night simulation (:func:`pulsepick.analysis.night.
simulate_night`), so it carries the same load curve, leakage and stop voltage as a night
run:

- the smallest capacitance that lasts the night plus a margin (default 20 %, common
  practice), by bisection on a log scale, with the given part's leakage (estimate: a
  larger part of the same family leaks more);
- the smallest standard supercapacitor from the storage table that lasts, each part with
  its own leakage and rating (parts rated under the start voltage are left out);
- the largest constant average load the given storage carries to dawn with the margin;
- the longest night of a date range (civil dusk to civil dawn, or as asked), to size for.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date as Date
from datetime import timedelta

from pulsepick.analysis.night import simulate_night
from pulsepick.engine.loadcurve import LoadCurve
from pulsepick.errors import RequestError
from pulsepick.hints import hint
from pulsepick.parts.storage import STORAGE_KEYS, Storage, get_storage

DEFAULT_MARGIN = 0.2  # the night plus 20 % (common practice)
MAX_CAPACITANCE_F = 1e4  # F, the search stops here
BISECTIONS = 40  # halvings of the bracket (log scale for capacitance)
MAX_RANGE_DAYS = 400  # dates in a range


@dataclass(frozen=True)
class SizeResult:
    """The answers of a sizing run, carrying its inputs."""

    night_s: float  # s, the night sized for (the longest of a range)
    margin: float  # fraction added to the night
    target_s: float  # s, night_s·(1 + margin)
    v_start_v: float  # V, at dusk
    v_stop_v: float  # V, the light's stop voltage used
    storage_key: str  # the given storage
    lasts_now: bool  # the given storage lasts the target
    min_capacitance_f: float | None  # F, None above MAX_CAPACITANCE_F
    suggested_storage: str | None  # key of the smallest table part that lasts
    suggested_name: str | None
    max_average_load_a: float  # A, largest constant load the given storage carries
    worst_date: Date | None  # the longest night's date (a range), else the date given
    notes: tuple[str, ...]  # assumptions in words


def _lasts(storage: Storage, v_start: float, target_s: float, load: LoadCurve | None,
           stop_at_v: float | None, options: dict, capacitance_f: float | None = None,
           extra_a: float | None = None) -> bool:
    opts = dict(options)
    if extra_a is not None:
        opts["extra_load_a"] = extra_a
    r = simulate_night(storage, v_start, target_s, load, stop_at_v=stop_at_v,
                       capacitance_f=capacitance_f, **opts)
    return r.lasts_the_night


def min_capacitance(storage: Storage, v_start_v: float, target_s: float,
                    load: LoadCurve | None, stop_at_v: float | None, **options) -> float | None:
    """Smallest capacitance (F) that lasts ``target_s`` (s), or None past 10 kF."""
    hi = storage.capacitance_f
    while not _lasts(storage, v_start_v, target_s, load, stop_at_v, options, hi):
        hi *= 4.0
        if hi > MAX_CAPACITANCE_F:
            return None
    lo = hi / 4.0
    while _lasts(storage, v_start_v, target_s, load, stop_at_v, options, lo):
        hi = lo
        lo /= 4.0
        if lo < 1e-9:
            return hi
    for _ in range(BISECTIONS):
        mid = math.sqrt(lo * hi)
        if _lasts(storage, v_start_v, target_s, load, stop_at_v, options, mid):
            hi = mid
        else:
            lo = mid
        if hi / lo < 1.0005:
            break
    return hi


def max_average_load(storage: Storage, v_start_v: float, target_s: float, v_stop_v: float,
                     **options) -> float:
    """Largest constant load (A) the storage carries from ``v_start_v`` to ``v_stop_v``
    for ``target_s`` (s), its leakage included."""
    opts = {k: v for k, v in options.items() if k != "extra_load_a"}
    if not v_start_v > v_stop_v:
        return 0.0
    if not _lasts(storage, v_start_v, target_s, None, v_stop_v, opts, extra_a=0.0):
        return 0.0
    lo, hi = 0.0, 2.0 * storage.capacitance_f * (v_start_v - v_stop_v) / target_s
    for _ in range(BISECTIONS):
        mid = 0.5 * (lo + hi)
        if _lasts(storage, v_start_v, target_s, None, v_stop_v, opts, extra_a=mid):
            lo = mid
        else:
            hi = mid
        if hi - lo <= 1e-4 * hi:
            break
    return lo


def longest_night(latitude_deg: float, first: Date, last: Date, longitude_deg=None,
                  utc_offset_h=None, turn_on: str = "civil") -> tuple[Date, float]:
    """The date whose night is longest within ``first``..``last`` and its length (s)."""
    from pulsepick.analysis.sun import night_span

    days = (last - first).days
    if not 0 <= days < MAX_RANGE_DAYS:
        raise RequestError(f"date range {first.isoformat()}..{last.isoformat()}: the last date "
                           f"must come on or after the first, within {MAX_RANGE_DAYS} days")
    worst, worst_s = first, -1.0
    for i in range(days + 1):
        d = first + timedelta(days=i)
        try:
            span = night_span(latitude_deg, d, longitude_deg, utc_offset_h, turn_on)
        except RequestError:
            continue  # midnight sun: no night that date
        if span.night_s > worst_s:
            worst, worst_s = d, span.night_s
    if worst_s <= 0:
        raise RequestError(f"no night between {first.isoformat()} and {last.isoformat()} at "
                           f"latitude {latitude_deg:g} (midnight sun throughout)")
    return worst, worst_s


def size_for_night(storage: Storage, v_start_v: float, night_s: float,
                   load: LoadCurve | None, *, stop_at_v: float | None,
                   margin: float = DEFAULT_MARGIN, worst_date: Date | None = None,
                   **options) -> SizeResult:
    """The four answers for one storage, night and load (see the module docstring)."""
    if not (math.isfinite(margin) and 0.0 <= margin <= 5.0):
        raise RequestError(f"margin {margin!r} must lie within 0..5 (0.2 is 20 %)")
    target = night_s * (1.0 + margin)
    light_stop = math.nan if load is None else load.light_stops_below_v()
    v_stop = max(stop_at_v or 0.0, 0.0 if math.isnan(light_stop) else light_stop)
    if v_stop <= 0.0:
        raise RequestError(f"sizing needs a stop voltage: give {hint('stop_at')} such as 1.8V, "
                           "or a circuit whose light stops")
    c_min = min_capacitance(storage, v_start_v, target, load, stop_at_v, **options)
    suggested = None
    for key in sorted(STORAGE_KEYS, key=lambda k: get_storage(k).capacitance_f):
        part = get_storage(key)
        if part.v_rated_v + 1e-9 < v_start_v:
            continue
        if _lasts(part, v_start_v, target, load, stop_at_v, options):
            suggested = part
            break
    lasts_now = _lasts(storage, v_start_v, target, load, stop_at_v, options)
    i_max = max_average_load(storage, v_start_v, target, v_stop, **options)
    notes = (
        f"the night {night_s / 3600:.2f} h plus a {margin:.0%} margin (common practice): "
        f"{target / 3600:.2f} h from {v_start_v:.2f} V down to {v_stop:.2f} V",
        "the smallest capacitance keeps the given part's leakage (estimate: a larger part "
        "leaks more); table parts each use their own",
        "the largest average load is a constant current on top of the storage's own leakage",
    )
    return SizeResult(
        night_s=night_s, margin=margin, target_s=target, v_start_v=v_start_v, v_stop_v=v_stop,
        storage_key=storage.key, lasts_now=lasts_now, min_capacitance_f=c_min,
        suggested_storage=None if suggested is None else suggested.key,
        suggested_name=None if suggested is None else suggested.name,
        max_average_load_a=i_max, worst_date=worst_date, notes=notes)
