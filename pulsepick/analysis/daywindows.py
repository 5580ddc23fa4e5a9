"""The night windows of a run of days: when each night falls, and the light it hides.

Split out of :mod:`pulsepick.analysis.day`, which re-exports :class:`NightWindow`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np

from pulsepick.analysis.irradiance import DAY_S, Profile, irradiance_at
from pulsepick.errors import RequestError


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
    their own clock times when the windows carry no dates.
    """
    first = windows[0]
    out = [dawn_clock + DAY_S - first.night_s]
    for i, w in enumerate(windows[1:], start=1):
        if w.dusk_date is not None and first.dusk_date is not None:
            out.append(out[0] + (w.dusk_date - first.dusk_date).total_seconds())
        else:
            out.append(out[0] + i * DAY_S + (w.dusk_s - first.dusk_s))
    return out


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
