"""Daily irradiance profiles: the light that falls on the panel, hour by hour.

Three demo profiles ship in ``data/profiles/`` (clear, overcast, dim). They are illustrative
shapes that follow simple physics (a clear day as a sine of the sun's elevation; cloud and
shade as fractions of it), not measurements. A user profile is a CSV file with the header
``hour,irradiance_w_m2`` (an optional ``source`` column is allowed): hours after local midnight
from 0 to 24, rising; irradiance in W/m², zero or positive.

Between rows the irradiance is linear; outside the listed hours it is zero; the profile
repeats every 24 hours.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from pulsepick.errors import RequestError
from pulsepick.tables import load_table

WEATHER_WORDS = ("clear", "overcast", "dim")

# Above the solar constant (about 1361 W/m², from memory) a ground-level value is a mistake.
MAX_IRRADIANCE_W_M2 = 1500.0

DAY_S = 86400.0


@dataclass(frozen=True, eq=False)
class Profile:
    """Irradiance on the panel over one day (linear between points, zero outside them)."""

    name: str  # "clear", "overcast", "dim", or the user file's name
    hours: np.ndarray  # hours after local midnight (h), rising, within 0..24
    irradiance_w_m2: np.ndarray  # irradiance at those hours (W/m²), >= 0
    source: str = "estimate (illustrative shape)"  # where the numbers come from

    def __post_init__(self) -> None:
        h = np.asarray(self.hours, dtype=float)
        g = np.asarray(self.irradiance_w_m2, dtype=float)
        problems = []
        if h.ndim != 1 or h.shape != g.shape or h.size < 2:
            problems.append("hours and irradiance must be two lists of the same length, 2 or more")
        else:
            if not np.all(np.isfinite(h)) or h[0] < 0 or h[-1] > 24 or np.any(np.diff(h) <= 0):
                problems.append("hours must rise strictly within 0..24")
            if not np.all(np.isfinite(g)) or np.any(g < 0) or np.any(g > MAX_IRRADIANCE_W_M2):
                problems.append(f"irradiance must lie within 0..{MAX_IRRADIANCE_W_M2:g} W/m2")
        if problems:
            raise RequestError(f"profile {self.name!r}: " + "; ".join(problems))
        h.setflags(write=False)
        g.setflags(write=False)
        object.__setattr__(self, "hours", h)
        object.__setattr__(self, "irradiance_w_m2", g)

    @property
    def peak_w_m2(self) -> float:
        """Highest irradiance of the day (W/m²)."""
        return float(self.irradiance_w_m2.max())

    @property
    def insolation_wh_m2(self) -> float:
        """Energy per square metre over the day (Wh/m²), trapezoid rule."""
        g = self.irradiance_w_m2
        return float(np.sum(0.5 * (g[1:] + g[:-1]) * np.diff(self.hours)))


def irradiance_at(profile: Profile, t_s):
    """Irradiance (W/m²) at ``t_s`` seconds after local midnight (repeats every 24 h)."""
    h = (np.asarray(t_s, dtype=float) % DAY_S) / 3600.0
    g = np.interp(h, profile.hours, profile.irradiance_w_m2, left=0.0, right=0.0)
    return float(g) if g.ndim == 0 else g


def get_profile(name: str) -> Profile:
    """A shipped demo profile by weather word: clear, overcast or dim."""
    word = name.strip().lower()
    if word not in WEATHER_WORDS:
        raise RequestError(f"unknown weather {name!r}; accepted: {', '.join(WEATHER_WORDS)}")
    table = load_table(f"profiles/{word}.csv")
    return Profile(
        name=word,
        hours=np.array(table.column("hour"), dtype=float),
        irradiance_w_m2=np.array(table.column("irradiance_w_m2"), dtype=float),
        source="; ".join(sorted({str(s) for s in table.column("source")})),
    )


def parse_weather(text: str) -> list[str]:
    """A comma-separated list of weather words (``clear,overcast,dim``) to a list."""
    words = [w.strip().lower() for w in text.split(",")]
    bad = [w for w in words if w not in WEATHER_WORDS]
    if not words or bad:
        shown = ", ".join(repr(w) for w in bad) if bad else repr(text)
        raise RequestError(
            f"unknown weather {shown}; accepted: a comma-separated list of "
            f"{', '.join(WEATHER_WORDS)}")
    return words


def _number(text: str, what: str, where: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise RequestError(f"{where}: {what} {text!r} is not a number") from None
    if not math.isfinite(value):
        raise RequestError(f"{where}: {what} {text!r} is not a finite number")
    return value


def parse_profile_text(text: str, name: str) -> Profile:
    """Parse the text of a profile CSV (see module docstring); errors name the line."""
    from pulsepick.infile import BOM
    from pulsepick.limits import MAX_PROFILE_ROWS

    lines = [(i, line) for i, line in enumerate(text.removeprefix(BOM).splitlines(), start=1)
             if line.strip() and not line.strip().startswith("#")]
    accepted = "a header 'hour,irradiance_w_m2' (optional 'source'), then rows of numbers"
    if not lines:
        raise RequestError(f"profile {name}: no header row; accepted: {accepted}")
    if len(lines) > MAX_PROFILE_ROWS + 1:
        raise RequestError(f"profile {name}: {len(lines) - 1:,} rows; a profile takes 2 to "
                           f"{MAX_PROFILE_ROWS:,} rows")
    header_no, header = lines[0]
    try:
        columns = [c.strip().lower() for c in next(csv.reader(io.StringIO(header)))]
    except csv.Error:
        columns = []
    missing = [c for c in ("hour", "irradiance_w_m2") if c not in columns]
    extra = [c for c in columns if c not in ("hour", "irradiance_w_m2", "source")]
    if missing or extra:
        what = []
        if missing:
            what.append("missing column " + ", ".join(missing))
        if extra:
            what.append("unknown column " + ", ".join(repr(c) for c in extra))
        raise RequestError(
            f"profile {name} line {header_no}: {'; '.join(what)}; accepted: {accepted}")
    i_hour, i_g = columns.index("hour"), columns.index("irradiance_w_m2")
    hours: list[float] = []
    values: list[float] = []
    for number, line in lines[1:]:
        where = f"profile {name} line {number}"
        try:
            fields = [f.strip() for f in next(csv.reader(io.StringIO(line)))]
        except csv.Error:
            raise RequestError(f"{where}: not a CSV row; accepted: {accepted}") from None
        if len(fields) != len(columns):
            raise RequestError(f"{where}: {len(fields)} fields where the header has "
                               f"{len(columns)}; "
                               f"accepted: {accepted}")
        hour = _number(fields[i_hour], "hour", where)
        g = _number(fields[i_g], "irradiance", where)
        if not 0.0 <= hour <= 24.0:
            raise RequestError(
                f"{where}: hour {hour:g} is outside 0..24 (hours after local midnight)")
        if hours and hour <= hours[-1]:
            raise RequestError(f"{where}: hour {hour:g} does not come after {hours[-1]:g}; "
                               "accepted: hours in rising order")
        if g < 0:
            raise RequestError(f"{where}: irradiance {g:g} W/m2 is negative; "
                               "accepted: 0 (dark) or more W/m2")
        if g > MAX_IRRADIANCE_W_M2:
            raise RequestError(f"{where}: irradiance {g:g} W/m2 is above {MAX_IRRADIANCE_W_M2:g}; "
                               "full sun is about 1000 W/m2")
        hours.append(hour)
        values.append(g)
    if len(hours) < 2:
        raise RequestError(f"profile {name}: {len(hours)} data row(s); accepted: 2 or more rows")
    return Profile(name=name, hours=np.array(hours), irradiance_w_m2=np.array(values),
                   source=f"user file {name}")


def load_profile_csv(path: str | Path) -> Profile:
    """Read a user's hourly irradiance CSV (header ``hour,irradiance_w_m2``)."""
    from pulsepick.infile import read_text

    p = Path(path)
    text = read_text(str(p), "profile file", "a UTF-8 CSV file with a header "
                                              "'hour,irradiance_w_m2' and rows of numbers")
    return parse_profile_text(text, p.name)
